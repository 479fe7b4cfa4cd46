"""Measured (live) Zs at an outlet: the check against the limit, and the cross-check against the
prediction Ze + (R1+R2) from the dead tests.

The trade compares a measured Zs with the same limit as a predicted one (80 % of the tabulated
maximum, ``devices.zs_max_ohm``). The cross-check is our own: the dead tests and the live test
measure the same loop, so a live reading outside what the instruments, the conductor
temperature and the ring itself allow says something the dead tests cannot:

    true loop   = [Ze_lo + floor × (1 − α ΔT),  Ze_hi + R1R2_hi × (1 + α ΔT)]
    shown range = [lo × (1 − LOOP_GAIN) − LOOP_OFFSET_OHM,  hi × (1 + LOOP_GAIN) + LOOP_OFFSET_OHM]

Ze_lo / Ze_hi are the true Ze behind its reading (Ze is measured with a loop tester too),
R1R2_hi the upper bound of the step 3 reading (``meter.upper_bound_ohm``: in service the four
ends are joined, which can only lower it), α the copper coefficient (0.00393 /K) and ΔT =
TEMPERATURE_SPAN_K. The floor is the least the point's in-service R1+R2 can be, and it is not
the step 3 reading: in service both legs of the ring carry the fault current, so a point a
fraction t round the ring has R1+R2 = t(1−t)(r1 + r2), near 0 beside the board, while its
cross-connected step 3 reading is never below r1·r2/(r1 + r2). The floor of a ring point is
t(1−t)(r1+r2) at the least t(1−t) its step 3 reading allows, [S(r1+r2) − r1·r2]/(r1−r2)²
(the series-parallel reduction in ``ringmath.checks``), taken at the corners of the readings'
tolerances; a spur adds the least rise of its own step 3 reading over its ring point's. Readings
rarely pin t, so for ring points the floor is often 0 and only a live Zs below Ze itself shows:
a parallel path is best seen at spurs and radial-like ends.

- measured below the shown range: ``parallel_earth_path`` (bonding, metal pipework or
  containment in parallel with the cpc). The continuity figures still stand; the measured value
  cannot prove the cpc.
- measured above it: ``zs_measured_high`` (a poor connection at that outlet, a changed Ze, or
  the wrong point measured).

LOOP_GAIN and LOOP_OFFSET_OHM are our working assumption of a loop tester's stated accuracy on
its low range (a few percent plus a few digits, common practice), not a figure from a standard;
ΔT is chosen: a lightly used circuit between the dead and live tests (20 K covers a circuit
tested cold and re-tested after an hour's use).
"""

from __future__ import annotations

import math
from typing import Any

from ringmath.checks import finite
from ringmath.conductors import ALPHA_COPPER_PER_K
from ringmath.findings import Finding
from ringmath.meter import GAIN_TOLERANCE, OFFSET_OHM, RESOLUTION_OHM
from ringmath.record import Outlet, RingTest, ring_root

#: Loop tester tolerance (working assumption): ± LOOP_GAIN of the reading ± LOOP_OFFSET_OHM.
LOOP_GAIN = 0.03
LOOP_OFFSET_OHM = 0.03
#: Largest conductor temperature difference between the dead and live tests, kelvin (chosen).
TEMPERATURE_SPAN_K = 20.0


def _continuity_bounds(r1r2_ohm: float) -> tuple[float, float]:
    """(lowest, highest) true R1+R2 in ohms behind a continuity reading (the meter model)."""
    low = max(0.0, (r1r2_ohm - OFFSET_OHM - RESOLUTION_OHM / 2) / (1 + GAIN_TOLERANCE))
    high = (r1r2_ohm + OFFSET_OHM + RESOLUTION_OHM / 2) / (1 - GAIN_TOLERANCE)
    return low, high


def loop_true_bounds(shown_ohm: float) -> tuple[float, float]:
    """(lowest, highest) true loop impedance in ohms behind a loop tester's reading:
    (shown − offset) / (1 + gain) to (shown + offset) / (1 − gain)."""
    return (max(0.0, (shown_ohm - LOOP_OFFSET_OHM) / (1 + LOOP_GAIN)),
            (shown_ohm + LOOP_OFFSET_OHM) / (1 - LOOP_GAIN))


def loop_shown_bounds(low_ohm: float, high_ohm: float) -> tuple[float, float]:
    """(lowest, highest) a loop tester may show for a true loop between ``low_ohm`` and
    ``high_ohm``: low × (1 − gain) − offset to high × (1 + gain) + offset."""
    return (max(0.0, low_ohm * (1 - LOOP_GAIN) - LOOP_OFFSET_OHM),
            high_ohm * (1 + LOOP_GAIN) + LOOP_OFFSET_OHM)


def expected_range_ohm(ze_ohm: float, r1r2_ohm: float,
                       floor_ohm: float | None = None) -> tuple[float, float]:
    """(low, high) in ohms that a live Zs reading at the point may show, given the Ze reading,
    the point's R1+R2 reading and the least its in-service R1+R2 can be (``floor_ohm``; None:
    the reading's own lower bound, as on a radial), rounded outwards to 0.01 Ω."""
    ze_lo, ze_hi = loop_true_bounds(ze_ohm)
    r_lo, r_hi = _continuity_bounds(r1r2_ohm)
    floor = r_lo if floor_ohm is None else floor_ohm
    warm = ALPHA_COPPER_PER_K * TEMPERATURE_SPAN_K
    low, high = loop_shown_bounds(ze_lo + floor * (1 - warm), ze_hi + r_hi * (1 + warm))
    return math.floor(round(low * 100, 6)) / 100, math.ceil(round(high * 100, 6)) / 100


def _ring_floor_ohm(test: RingTest, step3_ohm: float) -> float:
    """The least in-service R1+R2 of a ring point whose step 3 reads ``step3_ohm`` (see the
    module docstring); 0 when step 1 is not complete."""
    e = test.end_to_end
    if not (finite(e.r1_ohm) and finite(e.r2_ohm)):
        return 0.0
    assert e.r1_ohm is not None and e.r2_ohm is not None
    least = math.inf
    for s in _continuity_bounds(step3_ohm):
        for a in _continuity_bounds(e.r1_ohm):
            for b in _continuity_bounds(e.r2_ohm):
                spread = (a - b) ** 2
                u = 0.0 if spread < 1e-6 else min(max((s * (a + b) - a * b) / spread, 0.0), 0.25)
                least = min(least, u * (a + b))
    return least


def in_service_floor_ohm(test: RingTest, outlet: Outlet) -> float | None:
    """The least in-service R1+R2 in ohms at ``outlet`` (None without a step 3 reading there
    and at its ring point)."""
    root = ring_root(test, outlet)
    s, s_root = outlet.le_used_ohm, root.le_used_ohm
    if s is None or s_root is None or math.isinf(s) or math.isinf(s_root):
        return None
    floor = _ring_floor_ohm(test, s_root)
    if root is not outlet:
        floor += max(0.0, _continuity_bounds(s)[0] - _continuity_bounds(s_root)[1])
    return floor


def measured_values(zs_measured_ohm: float | None, zs_max_ohm: float | None,
                    ze_ohm: float | None, r1r2_ohm: float | None, r1r2_estimated: bool,
                    floor_ohm: float | None) -> dict[str, Any]:
    """The live part of one point: {"zs_measured_ohm": float | "OL" | None, "zs_measured_ok":
    True | False | None, "zs_expected_range_ohm": [lo, hi] | None, "zs_cross_check": "agrees" |
    "low" | "high" | None}. OL fails (no loop); the cross-check needs a measured R1+R2 (an
    estimate is only an upper bound) and Ze."""
    shown: float | str | None = zs_measured_ohm
    ok: bool | None = None
    if zs_measured_ohm is not None and math.isinf(zs_measured_ohm):
        shown, ok = "OL", False
    elif zs_measured_ohm is not None and zs_max_ohm is not None:
        ok = zs_measured_ohm <= zs_max_ohm
    expected = None
    check = None
    if ze_ohm is not None and r1r2_ohm is not None and not r1r2_estimated:
        expected = list(expected_range_ohm(ze_ohm, r1r2_ohm, floor_ohm))
        if isinstance(shown, float | int):
            check = ("low" if shown < expected[0] else "high" if shown > expected[1]
                     else "agrees")
    return {"zs_measured_ohm": shown, "zs_measured_ok": ok, "zs_expected_range_ohm": expected,
            "zs_cross_check": check}


_BASIS = (f"allowing ±({LOOP_GAIN:.0%} + {LOOP_OFFSET_OHM:.2f} Ω) for the loop tester, the "
          "continuity meter's own tolerance, a conductor temperature difference of "
          f"{TEMPERATURE_SPAN_K:g} K and, on a ring, both legs sharing the fault current")


def live_findings(points: list[dict[str, Any]]) -> list[Finding]:
    """"zs_measured_over_limit" (fault), "parallel_earth_path" (warning) and "zs_measured_high"
    (warning) for the points whose live Zs says so."""
    out = []
    for p in points:
        where, m = p["id"], p["zs_measured_ohm"]
        if p["zs_measured_ok"] is False:
            out.append(Finding(
                code="zs_measured_over_limit", severity="fault", outlets=(where,),
                conductor="cpc",
                message=(f"Measured Zs at {where} is {m if m == 'OL' else f'{m:.2f} Ω'}, above "
                         f"the {p['zs_max_ohm']:.2f} Ω limit for a measured value. The "
                         "protective device may not disconnect within 0.4 s on an earth fault."
                         if m != "OL" else
                         f"The live Zs test at {where} shows OL: no earth fault loop."),
                next_check=("Isolate, then check the cpc and line terminations at and towards "
                            "this point before putting it into service.")))
        low, high = p["zs_expected_range_ohm"] or (None, None)
        if p["zs_cross_check"] == "low":
            out.append(Finding(
                code="parallel_earth_path", severity="warning", outlets=(where,), conductor="cpc",
                message=(f"Measured Zs at {where} ({m:.2f} Ω) is well below Ze + R1+R2 "
                         f"({low:.2f}–{high:.2f} Ω, {_BASIS}): a parallel earth path (bonding, "
                         "metal pipework or containment) is carrying part of the loop. The "
                         "continuity figures still stand; the measured value cannot prove the "
                         "cpc."),
                next_check=("Rely on R1+R2 from the dead test for this point; look for metalwork "
                            "touching the accessory or its box, and do not use this live "
                            "reading as proof of the cpc.")))
        elif p["zs_cross_check"] == "high":
            out.append(Finding(
                code="zs_measured_high", severity="warning", outlets=(where,), conductor="cpc",
                message=(f"Measured Zs at {where} ({m:.2f} Ω) is well above Ze + R1+R2 "
                         f"({low:.2f}–{high:.2f} Ω, {_BASIS}): a poor connection at that outlet, "
                         "a changed Ze, or a different point measured."),
                next_check=("Re-measure at the same point; check Ze again at the origin; isolate "
                            "and check the terminations at this outlet.")))
    return out
