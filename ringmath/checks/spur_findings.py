"""Findings on recorded spurs, each judged against the point that feeds it."""

from __future__ import annotations

import math

from ringmath.checks.expected import MIN_TOLERANCE_OHM, _reading, expected, finite
from ringmath.checks.readings import _check, _limits
from ringmath.checks.spurs import SPUR_MAX_LENGTH_M, le_per_ln_factor, spur_excess_limit_ohm
from ringmath.findings import Finding
from ringmath.meter import sigma_ohm
from ringmath.record import Outlet, RingTest

#: it waits for a clearer gap (3 sigma) before it warns.
SPUR_RATIO_SIGMAS = 3.0
STEP_NAMES = {"ln": "step 2 (L–N)", "le": "step 3 (L–CPC)"}


def _spur_excesses(test: RingTest, outlet: Outlet) -> dict[str, tuple[float, float, float]]:
    """step -> (spur reading, parent reading, rise) in ohms where both readings are numbers."""
    parent = test.outlet(outlet.spur_from)
    out = {}
    for step in ("ln", "le"):
        value, ref = _reading(test, outlet, step), _reading(test, parent, step)
        if finite(value) and finite(ref):
            out[step] = (value, ref, value - ref)
    return out


def spur_findings(test: RingTest) -> list[Finding]:
    """Findings on recorded spurs, each against the point that feeds it.

    "spur_below_parent": a spur reads lower than its parent by more than tolerance_ohm (a dead
    end cannot lower the reading). "spur_excess_high": its rise is more than
    spur_excess_limit_ohm + tolerance (the "low" and "high" of reading_checks). "spur_excess":
    the step 3 rise disagrees with le_per_ln_factor × the step 2 rise by more than
    max(SPUR_RATIO_SIGMAS × sigma of the difference, MIN_TOLERANCE_OHM): extra resistance in the
    spur's cpc (rise too big) or neutral (too small).
    """
    findings = []
    exp = expected(test)
    for outlet in test.outlets:
        if outlet.on_ring:
            continue
        rises = _spur_excesses(test, outlet)
        status = {s: _check(outlet.id, s, rises[s][0], _limits(test, outlet, s, exp))["status"]
                  for s in rises}
        low = [s for s in rises if status[s] == "low"]
        high = [s for s in rises if status[s] == "high"]
        if low:
            findings.append(_spur_below(outlet, low, rises))
        if high:
            findings.append(_spur_high(test, outlet, high, rises))
        if len(rises) == 2 and not low and not high:
            findings.extend(_spur_ratio(test, outlet, rises))
    return findings


def _steps_text(steps: list[str]) -> str:
    return " and ".join(STEP_NAMES[s] for s in steps)


def _spur_below(outlet: Outlet, steps: list[str], rises: dict) -> Finding:
    drops = ", ".join(f"{-rises[s][2]:.2f} Ω on {STEP_NAMES[s]}" for s in steps)
    return Finding(
        code="spur_below_parent", severity="warning", outlets=(outlet.id, outlet.spur_from),
        step=steps[0] if len(steps) == 1 else None,
        message=(f"{_name(outlet)} is recorded as a spur from {outlet.spur_from} but reads lower "
                 f"than it ({drops}). A spur adds its own cable to its parent's reading, so it "
                 "cannot read lower: the point is probably on the ring itself or fed from "
                 "another point."),
        next_check=(f"Check where the cable to {_name(outlet)} comes from (open the back box) and "
                    "correct the record."),
    )


def _spur_high(test: RingTest, outlet: Outlet, steps: list[str], rises: dict) -> Finding:
    rises_text = ", ".join(
        f"{rises[s][2]:.2f} Ω on {STEP_NAMES[s]} (at most "
        f"{spur_excess_limit_ohm(test, outlet, s):.2f} Ω expected)" for s in steps)
    return Finding(
        code="spur_excess_high", severity="warning", outlets=(outlet.id, outlet.spur_from),
        step=steps[0] if len(steps) == 1 else None,
        message=(f"{_name(outlet)} reads far above {outlet.spur_from}, which feeds it: "
                 f"{rises_text}, more than {SPUR_MAX_LENGTH_M:g} m of spur cable would add. "
                 "It suggests a poor joint in the spur, or that it is fed from somewhere else."),
        next_check=(f"Check the terminations of the spur cable at both ends and confirm "
                    f"{_name(outlet)} is fed from {outlet.spur_from}."),
    )


def _spur_ratio(test: RingTest, outlet: Outlet, rises: dict) -> list[Finding]:
    (ln, ln_ref, ln_rise), (le, le_ref, le_rise) = rises["ln"], rises["le"]
    factor = le_per_ln_factor(test, outlet)
    expected_le_rise = factor * ln_rise
    sigma = math.hypot(factor * math.hypot(sigma_ohm(ln), sigma_ohm(ln_ref)),
                       math.hypot(sigma_ohm(le), sigma_ohm(le_ref)))
    gap = le_rise - expected_le_rise
    if abs(gap) <= max(SPUR_RATIO_SIGMAS * sigma, MIN_TOLERANCE_OHM):
        return []
    if gap > 0:
        conductor, where = "cpc", "the cpc (loose earth terminal, or a smaller cpc than recorded)"
    else:
        conductor, where = "neutral", ("the neutral (loose neutral terminal): step 2 includes the "
                                       "neutral and step 3 does not")
    return [Finding(
        code="spur_excess", severity="warning", outlets=(outlet.id, outlet.spur_from),
        conductor=conductor, step="le" if gap > 0 else "ln",
        message=(f"The spur to {_name(outlet)} raises step 3 by {le_rise:.2f} Ω and step 2 by "
                 f"{ln_rise:.2f} Ω. The same cable would raise step 3 about {factor:.2f} times as "
                 f"much as step 2 ({expected_le_rise:.2f} Ω). It suggests extra resistance in "
                 f"{where}."),
        next_check=(f"Check the {conductor} terminations of the spur cable at {_name(outlet)} "
                    f"and at {outlet.spur_from}."),
    )]


def _name(outlet: Outlet) -> str:
    return f"{outlet.label} ({outlet.id})" if outlet.label else outlet.id
