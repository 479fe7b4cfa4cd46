"""R1+R2 and predicted Zs at every point, each against its protective device; measured Zs.

Predicted earth fault loop impedance Zs = Ze + (R1+R2) (BS 7671:2018 411.4; IET Guidance
Note 3), checked against the limit for a measured value (devices.zs_max_ohm, 80 % of the
tabulated maximum).

R1+R2 at a point:

- measured: the step 3 reading as taken (the terminal re-measure when there is one,
  ``Outlet.le_used_ohm``), the figure a tester checks by hand: Ze 0.35 + 0.34 = 0.69 Ω. In
  service all four conductor ends are joined at the board, which can only lower the resistance
  between a point and the board (Rayleigh's monotonicity law), so the true in-service value is
  at most the reading's upper bound (``meter.upper_bound_ohm``). The meter's tolerance is its
  own judgement: ``zs_marginal`` when Ze + that upper bound reaches the limit while Ze + the
  reading passes ("marginal: re-measure");
- estimated (``r1r2_estimated``, no step 3 reading yet), a safe upper bound: on the ring,
  upper_bound((r1+r2)/4), the most a healthy ring point can read; on a spur, the parent's upper
  bound plus the spur's own line + cpc from the step 2 rise (upper bound of the spur reading
  less lower bound of the parent's) × the spur cable's (r_live + r_cpc)/(2 r_live)
  (``conductors.spur_cable``: the cpc is the twin-and-earth companion unless recorded);
- a step 3 reading of OL: no earth path is proved; R1+R2 unknown and the point fails.

Beyond an FCU the limit is the FCU's BS 1362 fuse (devices.fcu_limit). On a TT system with an
RCD the RCD limit 50 V / IΔn applies instead (BS 7671:2018 411.5.3). A device with no checked
figure gives no limit (never a guessed one). Measured (live) Zs and its cross-check against
the prediction: ``ringmath.live``. All ohm values are rounded to 0.01 Ω.
"""

from __future__ import annotations

import math
from typing import Any

from ringmath import zs_words
from ringmath.checks import finite
from ringmath.conductors import spur_cable
from ringmath.devices import DeviceLimit, NoCheckedLimit, device_limit, fcu_limit, rcd_limit
from ringmath.findings import Finding
from ringmath.insulation import insulation_findings, insulation_result
from ringmath.live import in_service_floor_ohm, live_findings, measured_values
from ringmath.meter import (
    GAIN_TOLERANCE,
    OFFSET_OHM,
    RESOLUTION_OHM,
    ceil_to_resolution,
    upper_bound_ohm,
)
from ringmath.rcd import rcd_findings, rcd_result
from ringmath.record import Outlet, RingTest, beyond_fcu, format_reading


def lower_bound_ohm(reading_ohm: float) -> float:
    """Lowest true resistance in ohms consistent with a displayed reading (the mirror of
    meter.upper_bound_ohm): max(0, (displayed − OFFSET − RESOLUTION/2) / (1 + GAIN))."""
    if reading_ohm < 0:
        raise ValueError(f"reading_ohm: {reading_ohm} is negative")
    return max(0.0, (reading_ohm - OFFSET_OHM - RESOLUTION_OHM / 2) / (1 + GAIN_TOLERANCE))


def circuit_limit(test: RingTest) -> DeviceLimit:
    """The limit for points protected by the circuit's own device (the RCD's on TT with an RCD)."""
    c = test.circuit
    if c.earthing == "TT" and c.rcd is not None:
        return rcd_limit(c.rcd.rated_ma)
    return device_limit(c.ocpd)


def _point_limit(test: RingTest, fcu: Outlet | None) -> DeviceLimit | None:
    """The limit at a point: circuit, or the FCU fuse (None where there is no checked figure)."""
    c = test.circuit
    try:
        if fcu is None or (c.earthing == "TT" and c.rcd is not None):
            return circuit_limit(test)
        assert fcu.fuse_a is not None  # the parser requires it for an FCU
        return fcu_limit(fcu.fuse_a)
    except NoCheckedLimit:
        return None


def _ring_estimate_ohm(test: RingTest) -> float | None:
    e = test.end_to_end
    if e.r1_ohm is not None and e.r2_ohm is not None and finite(e.r1_ohm) and finite(e.r2_ohm):
        return upper_bound_ohm((e.r1_ohm + e.r2_ohm) / 4)
    return None


#: (R1+R2 to show in ohms, its safe upper bound in ohms, estimated?) or None: not known.
R1R2 = tuple[float, float, bool] | None


def _r1r2(test: RingTest, outlet: Outlet, memo: dict[str, R1R2]) -> R1R2:
    """R1+R2 of one outlet (see the module docstring), memoised by id."""
    if outlet.id in memo:
        return memo[outlet.id]
    le = outlet.le_used_ohm
    value: R1R2
    if le is not None:
        value = None if math.isinf(le) else (round(le, 2), upper_bound_ohm(le), False)
    elif outlet.on_ring:
        estimate = _ring_estimate_ohm(test)
        value = None if estimate is None else (estimate, estimate, True)
    else:
        value = _spur_estimate(test, outlet, memo)
    memo[outlet.id] = value
    return value


def _spur_estimate(test: RingTest, outlet: Outlet, memo: dict[str, R1R2]) -> R1R2:
    assert outlet.spur_from is not None
    parent = test.outlet(outlet.spur_from)
    base = _r1r2(test, parent, memo)
    ln, parent_ln = outlet.ln_used_ohm, parent.ln_used_ohm
    if base is None or ln is None or parent_ln is None or not (finite(ln) and finite(parent_ln)):
        return None
    rise_ohm = max(0.0, upper_bound_ohm(ln) - lower_bound_ohm(parent_ln))
    cable = spur_cable(outlet.spur_csa_mm2, outlet.spur_cpc_csa_mm2,
                       ring_live_csa_mm2=test.circuit.live_csa_mm2)
    estimate = ceil_to_resolution(base[1] + rise_ohm * cable.le_per_ln)
    return estimate, estimate, True


def _zs(ze_ohm: float | None, r1r2_ohm: float | None) -> float | None:
    if ze_ohm is None or r1r2_ohm is None:
        return None
    return round(ze_ohm + r1r2_ohm, 2)


def _point(test: RingTest, o: Outlet, memo: dict[str, R1R2]) -> dict[str, Any]:
    fcu = beyond_fcu(test, o)
    point_limit = _point_limit(test, fcu)
    ze = test.circuit.ze_ohm
    r = _r1r2(test, o, memo)
    r1r2, bound, estimated = (None, None, False) if r is None else r
    zs = _zs(ze, r1r2)
    zs_max = None if point_limit is None else point_limit.zs_max_ohm
    le = o.le_used_ohm
    ok: bool | None
    if le is not None and math.isinf(le):
        ok = False
    else:
        ok = None if zs is None or zs_max is None else zs <= zs_max
    with_tolerance = _zs(ze, bound)
    marginal = bool(ok and not estimated and with_tolerance is not None
                    and zs_max is not None and with_tolerance >= zs_max)
    return {
        "id": o.id, "label": o.label, "kind": o.kind, "on_ring": o.on_ring,
        "spur_from": o.spur_from,
        "protected_by": "circuit" if fcu is None else f"fcu:{fcu.id}",
        "ln_ohm": format_reading(o.ln_ohm), "le_ohm": format_reading(o.le_ohm),
        "ln_terminals_ohm": format_reading(o.ln_terminals_ohm),
        "le_terminals_ohm": format_reading(o.le_terminals_ohm), "taken_at": o.taken_at,
        "r1r2_ohm": r1r2, "r1r2_source": None if r is None else (
            "estimated" if estimated else "measured"),
        "r1r2_estimated": estimated, "r1r2_bound_ohm": bound, "zs_ohm": zs,
        "zs_max_ohm": zs_max, "ok": ok, "zs_marginal": marginal,
        **measured_values(o.zs_measured_ohm, zs_max, ze, r1r2, estimated,
                          None if estimated else in_service_floor_ohm(test, o)),
    }


def _circuit_ok(summary: dict[str, Any], points: list[dict[str, Any]]) -> bool | None:
    """Pass/fail for the whole circuit: any point failing (predicted or measured) -> False, any
    unknown -> None, else True; with no points, the circuit's own estimate."""
    if not points:
        if summary["zs_ohm"] is None or summary["zs_max_ohm"] is None:
            return None
        return bool(summary["zs_ohm"] <= summary["zs_max_ohm"])
    if any(p["ok"] is False or p["zs_measured_ok"] is False for p in points):
        return False
    if any(p["ok"] is None for p in points):
        return None
    return True


def point_values(test: RingTest) -> tuple[dict[str, Any], list[dict[str, Any]]]:
    """(circuit summary, one dict per outlet) of R1+R2 and Zs, ohms to 0.01 Ω.

    Summary: {"r1r2_ohm", "zs_ohm", "zs_max_ohm", "zs_tabulated_ohm", "device", "limit_source",
    "zs_ok", "insulation", "rcd"}; r1r2 the highest among points protected by the circuit's
    device (upper_bound((r1+r2)/4) when there are none with a value yet); zs_max None when the
    device has no checked figure; insulation / rcd from ``ringmath.insulation`` /
    ``ringmath.rcd`` (None when not tested / no RCD). Per outlet: {"id", "label", "kind",
    "on_ring", "spur_from", "protected_by", "ln_ohm", "le_ohm", "ln_terminals_ohm",
    "le_terminals_ohm", "taken_at", "r1r2_ohm", "r1r2_source", "r1r2_estimated",
    "r1r2_bound_ohm" (the safe upper bound: never below the true in-service value), "zs_ohm",
    "zs_max_ohm", "ok", "zs_marginal", "zs_measured_ohm", "zs_measured_ok",
    "zs_expected_range_ohm", "zs_cross_check"}; ok is zs ≤ zs_max, False for an OL step 3,
    None while not known.
    """
    limit = _point_limit(test, None)
    memo: dict[str, R1R2] = {}
    points = [_point(test, o, memo) for o in test.outlets]
    known = [p["r1r2_ohm"] for p in points
             if p["protected_by"] == "circuit" and p["r1r2_ohm"] is not None]
    circuit_r1r2 = max(known) if known else _ring_estimate_ohm(test)
    summary = {
        "r1r2_ohm": circuit_r1r2, "zs_ohm": _zs(test.circuit.ze_ohm, circuit_r1r2),
        "zs_max_ohm": None if limit is None else limit.zs_max_ohm,
        "zs_tabulated_ohm": None if limit is None else limit.zs_tabulated_ohm,
        "device": _device_words(test) if limit is None else limit.description,
        "limit_source": _no_limit_words(test) if limit is None else limit.source,
    }
    summary["zs_ok"] = _circuit_ok(summary, points)
    summary["insulation"] = insulation_result(test)
    summary["rcd"] = rcd_result(test)
    return summary, points


def _device_words(test: RingTest) -> str:
    o = test.circuit.ocpd
    return f"{o.rating_a:g} A {o.standard}" + (f" type {o.curve}" if o.curve else "")


def _no_limit_words(test: RingTest) -> str:
    try:
        device_limit(test.circuit.ocpd)
    except NoCheckedLimit as exc:
        return str(exc)
    return ""


Values = tuple[dict[str, Any], list[dict[str, Any]]]


def zs_findings(test: RingTest, values: Values | None = None) -> list[Finding]:
    """Findings on Zs, insulation and the RCD, from ``values`` (``point_values(test)``, computed
    here when not given): "zs_over_limit" per point over its limit (fault from a step 3 reading,
    warning when estimated), one for the circuit when it has no points yet, "zs_marginal",
    "zs_limit_unknown" (info), the live checks of ``ringmath.live``, "insulation_low",
    "rcd_slow", "rcd_button", "rcd" (info) and "ze_source" (warning)."""
    summary, points = point_values(test) if values is None else values
    findings = [zs_words.over_limit(p) for p in points
                if p["ok"] is False and p["zs_ohm"] is not None]
    if (not points and summary["zs_ohm"] is not None and summary["zs_max_ohm"] is not None
            and summary["zs_ohm"] > summary["zs_max_ohm"]):
        findings.append(zs_words.over_limit({**summary, "id": None, "r1r2_estimated": True}))
    findings += [zs_words.marginal(p) for p in points if p["zs_marginal"]]
    findings += zs_words.limit_unknown(points, summary["limit_source"])
    findings += live_findings(points)
    findings += insulation_findings(summary["insulation"])
    findings += rcd_findings(summary["rcd"])
    findings += zs_words.rcd_info(test)
    findings += zs_words.ze_source(test)
    return findings
