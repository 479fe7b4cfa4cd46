"""The status of every reading taken or due: expected value, band, deviation."""

from __future__ import annotations

import math

from ringmath.checks.end_to_end import STEP_CONDUCTORS, _end_to_end_limits
from ringmath.checks.expected import _reading, expected, finite, tolerance_ohm
from ringmath.checks.spurs import spur_excess_limit_ohm
from ringmath.record import Outlet, RingTest, format_reading


def _limits(test: RingTest, outlet: Outlet, step: str, exp: dict) -> tuple:
    """(expected, low, high) in ohms, unrounded, for an outlet's ``step`` reading."""
    if outlet.on_ring:
        band = exp[f"{step}_band_ohm"]
        return (exp[f"{step}_ohm"], *band) if band else (None, None, None)
    parent = test.outlet(outlet.spur_from)
    excess = spur_excess_limit_ohm(test, outlet, step)
    ref = _reading(test, parent, step)
    if finite(ref):
        tol = tolerance_ohm(ref)
        return ref, ref - tol, ref + excess + tol
    if ref is not None:  # parent reads OL: nothing to judge against
        return None, None, None
    ref, low, high = _limits(test, parent, step, exp)
    return ref, low, None if high is None else high + excess


def _status(value: float | None, low: float | None, high: float | None) -> str:
    if value is None:
        return "pending"
    if math.isinf(value):
        return "open"
    if low is None or high is None:
        return "pending"
    if value < low:
        return "low"
    return "high" if value > high else "ok"


def _check(outlet_id: str | None, step: str, value: float | None, limits: tuple) -> dict:
    ref, low, high = (None if x is None else round(x, 2) for x in limits)
    status = _status(value, low, high)
    if step == "r1" and status == "pending" and finite(value):
        status = "ok"  # r1 has no reference without a cable length; it is simply taken
    return {
        "outlet": outlet_id, "step": step, "value": format_reading(value),
        "expected_ohm": ref, "low_ohm": low, "high_ohm": high,
        "deviation_ohm": round(value - ref, 2) if finite(value) and ref is not None else None,
        "status": status,
    }


def reading_checks(test: RingTest) -> list[dict]:
    """One dict per reading taken or due, in the order they are taken (step 1, then step 2 at
    every outlet, then step 3): {"outlet", "step", "value", "expected_ohm", "low_ohm",
    "high_ohm", "deviation_ohm", "status"}, ohms rounded to 0.01 Ω.

    status: "ok", "high", "low", "open" (OL), or "pending" (not taken, or the readings it is
    judged against are not in yet). A ring point is judged against the ``expected`` band; a
    spur against its parent's reading (expected_ohm; deviation_ohm is then the spur's rise),
    from the parent's reading less tolerance to the parent's plus spur_excess_limit_ohm.
    rn is judged against r1 ± 0.05 Ω; r2 against r1 × the cable ratio (cpc_ratio_tolerance);
    r1 against the cable length when one is recorded (± 25 %).
    """
    e2e = _end_to_end_limits(test)
    checks = [_check(None, step, _reading(test, None, step), e2e[step])
              for step in STEP_CONDUCTORS]
    exp = expected(test)
    for step in ("ln", "le"):
        checks.extend(_check(o.id, step, _reading(test, o, step), _limits(test, o, step, exp))
                      for o in test.outlets)
    return checks
