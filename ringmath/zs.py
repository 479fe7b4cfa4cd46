"""R1+R2 and predicted Zs at every point, each against its protective device.

Predicted earth fault loop impedance Zs = Ze + (R1+R2) (BS 7671:2018 411.4; IET Guidance
Note 3), checked against the limit for a measured value (devices.zs_max_ohm, 80 % of the
tabulated maximum).

The R1+R2 used at a point must never be lower than the true in-service value there:

- measured: the step 3 reading. In service all four conductor ends are joined at the board,
  which can only lower the resistance between a point and the board (Rayleigh's monotonicity
  law: adding a connection never raises the resistance of a resistor network), so the step 3
  reading, raised for meter error with ``meter.upper_bound_ohm``, is a safe upper bound;
- estimated (no step 3 reading yet), ring point: upper_bound((r1+r2)/4), the most a healthy
  ring point can read (checks.step_reading_ohm is highest mid-ring);
- estimated, spur point: its parent's value plus the spur's own line + cpc, from the step 2 rise
  (upper bound of the spur reading less lower bound of the parent's) × checks.le_per_ln_factor;
- a step 3 reading of OL: no earth path is proved; R1+R2 unknown and the point fails.

Beyond an FCU the limit is the FCU's BS 1362 fuse (devices.fcu_limit). On a TT system with an
RCD the RCD limit 50 V / IΔn applies instead (BS 7671:2018 411.5.3). All ohm values are rounded
to 0.01 Ω.
"""

from __future__ import annotations

import math

from ringmath.checks import finite, le_per_ln_factor
from ringmath.devices import DeviceLimit, device_limit, fcu_limit, rcd_limit
from ringmath.findings import Finding
from ringmath.meter import (
    GAIN_TOLERANCE,
    OFFSET_OHM,
    RESOLUTION_OHM,
    ceil_to_resolution,
    upper_bound_ohm,
)
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
    """The limit at a point: circuit, or the FCU fuse (None where that fuse has no figure)."""
    c = test.circuit
    if fcu is None or (c.earthing == "TT" and c.rcd is not None):
        return circuit_limit(test)
    try:
        return fcu_limit(fcu.fuse_a)
    except ValueError:
        return None


def _ring_estimate_ohm(test: RingTest) -> float | None:
    e = test.end_to_end
    if finite(e.r1_ohm) and finite(e.r2_ohm):
        return upper_bound_ohm((e.r1_ohm + e.r2_ohm) / 4)
    return None


def _r1r2(test: RingTest, outlet: Outlet, memo: dict) -> tuple[float | None, str | None]:
    """(R1+R2 in ohms, "measured" | "estimated" | None) for one outlet, memoised by id."""
    if outlet.id in memo:
        return memo[outlet.id]
    if outlet.le_used_ohm is not None:  # the terminal re-measure when taken (CONTRACT.md)
        le = outlet.le_used_ohm
        value = None if math.isinf(le) else (upper_bound_ohm(le), "measured")
    elif outlet.on_ring:
        estimate = _ring_estimate_ohm(test)
        value = None if estimate is None else (estimate, "estimated")
    else:
        value = _spur_estimate(test, outlet, memo)
    memo[outlet.id] = value or (None, None)
    return memo[outlet.id]


def _spur_estimate(test: RingTest, outlet: Outlet, memo: dict) -> tuple[float, str] | None:
    parent = test.outlet(outlet.spur_from)
    base, _ = _r1r2(test, parent, memo)
    if base is None or not finite(outlet.ln_ohm) or not finite(parent.ln_ohm):
        return None
    rise_ohm = max(0.0, upper_bound_ohm(outlet.ln_ohm) - lower_bound_ohm(parent.ln_ohm))
    return ceil_to_resolution(base + rise_ohm * le_per_ln_factor(test, outlet)), "estimated"


def _zs(ze_ohm: float | None, r1r2_ohm: float | None) -> float | None:
    if ze_ohm is None or r1r2_ohm is None:
        return None
    return round(ze_ohm + r1r2_ohm, 2)


def point_values(test: RingTest) -> tuple[dict, list[dict]]:
    """(circuit summary, one dict per outlet) of R1+R2 and predicted Zs, ohms to 0.01 Ω.

    Summary: {"r1r2_ohm", "zs_ohm", "zs_max_ohm", "zs_tabulated_ohm", "device", "limit_source"},
    r1r2 the highest among points protected by the circuit's device (upper_bound((r1+r2)/4) when
    there are none with a value yet). Per outlet: {"id", "label", "kind", "on_ring",
    "spur_from", "protected_by", "ln_ohm", "le_ohm", "r1r2_ohm", "r1r2_source", "zs_ohm",
    "zs_max_ohm", "ok"}; ok is zs ≤ zs_max, False for an OL step 3, None while not known.
    ValueError naming circuit.ocpd.* for a device with no tabulated limit.
    """
    limit = circuit_limit(test)
    ze = test.circuit.ze_ohm
    memo: dict = {}
    points = []
    for o in test.outlets:
        fcu = beyond_fcu(test, o)
        point_limit = _point_limit(test, fcu)
        r1r2, source = _r1r2(test, o, memo)
        zs = _zs(ze, r1r2)
        zs_max = None if point_limit is None else point_limit.zs_max_ohm
        if o.le_used_ohm is not None and math.isinf(o.le_used_ohm):
            ok = False
        else:
            ok = None if zs is None or zs_max is None else zs <= zs_max
        points.append({
            "id": o.id, "label": o.label, "kind": o.kind, "on_ring": o.on_ring,
            "spur_from": o.spur_from,
            "protected_by": "circuit" if fcu is None else f"fcu:{fcu.id}",
            "ln_ohm": format_reading(o.ln_ohm), "le_ohm": format_reading(o.le_ohm),
            "r1r2_ohm": r1r2, "r1r2_source": source, "zs_ohm": zs, "zs_max_ohm": zs_max, "ok": ok,
        })
    known = [p["r1r2_ohm"] for p in points
             if p["protected_by"] == "circuit" and p["r1r2_ohm"] is not None]
    circuit_r1r2 = max(known) if known else _ring_estimate_ohm(test)
    summary = {
        "r1r2_ohm": circuit_r1r2, "zs_ohm": _zs(ze, circuit_r1r2),
        "zs_max_ohm": limit.zs_max_ohm, "zs_tabulated_ohm": limit.zs_tabulated_ohm,
        "device": limit.description, "limit_source": limit.source,
    }
    return summary, points


def zs_findings(test: RingTest) -> list[Finding]:
    """Findings on Zs: "zs_over_limit" per point over its limit (fault when from a step 3
    reading, warning when estimated: take the reading), one for the circuit when it has no
    points yet, "zs_limit_unknown" (info) beyond an FCU fuse with no tabulated figure, "rcd"
    (info) when the circuit has an RCD, "ze_source" (warning) when Ze is declared or missing."""
    summary, points = point_values(test)
    findings = [_over_limit(p) for p in points if p["ok"] is False and p["zs_ohm"] is not None]
    if not points and summary["zs_ohm"] is not None and summary["zs_ohm"] > summary["zs_max_ohm"]:
        findings.append(_over_limit({**summary, "id": None, "r1r2_source": "estimated"}))
    unknown = [p for p in points if p["zs_max_ohm"] is None]
    if unknown:
        fcus = sorted({p["protected_by"].removeprefix("fcu:") for p in unknown})
        findings.append(Finding(
            code="zs_limit_unknown", severity="info", outlets=tuple(p["id"] for p in unknown),
            message=(f"No tabulated Zs limit for the fuse in FCU {', '.join(fcus)}: BS 7671 Table "
                     "41.2 lists BS 1362 fuses of 3 A and 13 A only."),
            next_check="Check the predicted Zs against the fuse maker's time-current data.",
        ))
    findings.extend(_rcd_finding(test))
    findings.extend(_ze_finding(test))
    return findings


def _over_limit(point: dict) -> Finding:
    where = "the circuit's worst point" if point["id"] is None else point["id"]
    estimated = point["r1r2_source"] == "estimated"
    return Finding(
        code="zs_over_limit", severity="warning" if estimated else "fault",
        outlets=() if point["id"] is None else (point["id"],), conductor="cpc", step="le",
        message=(f"Predicted Zs at {where} is {point['zs_ohm']:.2f} Ω, above the "
                 f"{point['zs_max_ohm']:.2f} Ω limit for a measured value"
                 + (" (R1+R2 estimated, no step 3 reading yet)." if estimated else ".")
                 + " The protective device may not disconnect within 0.4 s on an earth fault."),
        next_check=("Take the step 3 reading there to confirm." if estimated else
                    "Check the cpc and line terminations towards this point, confirm Ze, and "
                    "review the device rating or cable size before putting it into service."),
    )


def _rcd_finding(test: RingTest) -> list[Finding]:
    c = test.circuit
    if c.rcd is None:
        return []
    if c.earthing == "TT":
        message = (f"TT system with a {c.rcd.rated_ma:g} mA RCD: the RCD gives fault protection "
                   "and the limit used is 50 V / IΔn (BS 7671:2018 411.5.3). An electrode "
                   "resistance above about 200 Ω may not be stable (IET On-Site Guide, from "
                   "memory).")
    else:
        message = (f"The circuit has a {c.rcd.rated_ma:g} mA RCD. It gives additional protection; "
                   "the Zs limits for the circuit's overcurrent device still apply for fault "
                   "protection.")
    return [Finding(code="rcd", severity="info", message=message,
                    next_check="Test the RCD's operation as part of the installation tests.")]


def _ze_finding(test: RingTest) -> list[Finding]:
    c = test.circuit
    if c.ze_ohm is None:
        message = "Ze is not recorded, so Zs cannot be predicted at any point."
    elif c.ze_source == "declared":
        message = (f"Ze {c.ze_ohm:.2f} Ω is the supplier's declared value, not a measurement; "
                   "predicted Zs may be lower than the real value.")
    else:
        return []
    return [Finding(code="ze_source", severity="warning", message=message,
                    next_check=("Measure Ze at the origin with the main earthing conductor "
                                "disconnected (installation isolated), then reconnect it."))]
