"""The verdict and the headline, made to agree with the findings beneath them.

Verdicts: "retest" when the leading finding doubts the readings, or a set-up check is due and
no credible fault stands; "investigate" for a credible fault; "incomplete" with steps or Ze
missing; else "satisfactory" (which may carry warnings: checks to make).

Agreement (``agree``): a wiring finding stated at CREDIBLE_P or more (the calibrated figure of a
posterior of 0.9 on the finding's basis) is a credible fault even where its severity is a
warning (a joint under 0.10 Ω, an outlet read from the front): a satisfactory verdict never
sits above it, the verdict is "investigate". A fitted fault graded a warning because other
explanations fit nearly as well heads the summary as "Not established, but possible". Under a
"retest"
verdict every wiring finding beneath the lead is a warning and its confidence is scaled by
(1 − p/2), p the lead's confidence: the readings it was inferred from are themselves in doubt
(the same halving the diagnosis applies when the best explanation needs too many faults).
"""

from __future__ import annotations

from dataclasses import replace

from ringmath import messages
from ringmath.calibration import CAP, calibrated
from ringmath.findings import BASES, Finding
from ringmath.record import RingTest

#: Findings that doubt the readings themselves: they lead, and the verdict is "retest".
LEADING_CODES = frozenset({"setup_instrument", "setup_readings_inconsistent",
                           "setup_cross_join_open"})
#: Set-up findings that call for a re-test when no credible fault stands.
RETEST_CODES = frozenset({"setup_lead_offset", "setup_lead_offset_step", "setup_socket_contacts",
                          "end_to_end_zero"})
#: Findings about the wiring itself (the fault classes of the model).
WIRING_CODES = frozenset({"interconnection", "open_conductor", "wrong_cross_connection",
                          "unrecorded_spur", "reversed_polarity", "high_resistance_joint"})
#: A wiring finding whose posterior is at least this is credible whatever its severity: more
#: likely than not by nine to one. Judged on the stated (calibrated) confidence, CREDIBLE_P: the
#: same findings, so calibrating the figures moves no verdict. 0.8 found one more small joint
#: on the quick typical-site run and called one more healthy ring of 40 "investigate" on the
#: full one (bench/diagnosis.py --quick --healthy 40, typical 2.5 % -> 5.0 %).
CREDIBLE_POSTERIOR = 0.9
#: basis -> the stated figure of CREDIBLE_POSTERIOR on that basis' calibration map, never above
#: the highest figure ever stated (``calibration.CAP``: else a map that lifts 0.9 past it would
#: leave no finding on that basis credible).
CREDIBLE_P = {basis: min(calibrated(CREDIBLE_POSTERIOR, basis), CAP) for basis in BASES}


def complete(test: RingTest) -> bool:
    """Every step, every outlet reading and Ze recorded."""
    e = test.end_to_end
    return (e.complete() and bool(test.outlets) and test.circuit.ze_ohm is not None
            and all(o.ln_ohm is not None and o.le_ohm is not None for o in test.outlets))


def credible(f: Finding) -> bool:
    """A wiring finding stated at CREDIBLE_P of its basis or more (any severity but info)."""
    return (f.code in WIRING_CODES and f.severity in ("fault", "warning")
            and (f.confidence or 0.0) >= CREDIBLE_P[f.basis or "ring"])


def verdict(test: RingTest, findings: list[Finding]) -> str:
    """The verdict of these findings (see the module docstring)."""
    if findings and findings[0].code in LEADING_CODES:
        return "retest"
    # a Zs over the limit at outlets whose readings look like worn socket contacts waits for
    # the re-measure at the terminals (a front reading overstates R1+R2): a re-test, never a
    # pass. Worn contacts named as such, where not read at the terminals; an outlet fault
    # waiting for that re-measure, where read from the front
    where = {o.id: o.taken_at for o in test.outlets}
    worn = {o for f in findings if _front_suspect(f) for o in f.outlets
            if where.get(o) == "front" or (f.code == "setup_socket_contacts"
                                           and where.get(o) != "terminals")}
    waiting = [f for f in findings if f.severity == "fault" and f.code == "zs_over_limit"
               and f.outlets and set(f.outlets) <= worn]
    if any(f.severity == "fault" and f not in waiting for f in findings):
        return "investigate"
    if any(credible(f) for f in findings):
        return "investigate"
    if waiting or any(f.code in RETEST_CODES and f.severity == "warning" for f in findings):
        return "retest"
    return "satisfactory" if complete(test) else "incomplete"


def _front_suspect(f: Finding) -> bool:
    """A warning about outlets whose readings may be their socket contacts: worn contacts
    named as such, or an outlet fault that waits for the re-measure at the terminals."""
    return f.severity == "warning" and f.code in (
        "setup_socket_contacts", "unrecorded_spur", "high_resistance_joint")


def _retest_lead(findings: list[Finding]) -> Finding:
    """The finding a "retest" verdict is about: the first that doubts the readings or calls for
    a set-up check, else the first whose outlets wait for a re-measure at the terminals, else
    the first finding (``findings`` is not empty)."""
    return next((f for f in findings if f.code in LEADING_CODES | RETEST_CODES),
                next((f for f in findings if _front_suspect(f)), findings[0]))


def agree(test: RingTest, findings: list[Finding]) -> tuple[str, list[Finding]]:
    """The verdict and the findings made consistent with it (see the module docstring); under
    "retest" its lead comes first."""
    result = verdict(test, findings)
    if result != "retest" or not findings:
        return result, findings
    lead = _retest_lead(findings)
    scale = 1.0 - (lead.confidence or 0.0) / 2.0
    out = [lead] + [
        replace(f, severity="warning" if f.severity == "fault" else f.severity,
                confidence=None if f.confidence is None else f.confidence * scale)
        if f.code in WIRING_CODES else f
        for f in findings if f is not lead]
    return result, out


def summary(result: str, findings: list[Finding], names: dict[str, str]) -> str:
    """The headline: the lead of a re-test, else the first fault or credible wiring finding,
    else a whole-ring fault the readings suggest but do not establish."""
    if result == "retest" and findings:
        lead = _retest_lead(findings)
        shown = [names.get(o, o) for o in lead.outlets] if len(lead.outlets) <= 2 else []
        said = messages.possible_headline if lead.possible else messages.headline
        return said(lead.code, lead.conductor, lead.step, shown)
    faults = [f for f in findings if f.severity == "fault"] or [
        f for f in findings if credible(f)]
    if faults:
        top = faults[0]
        shown = [names.get(o, o) for o in top.outlets] if len(top.outlets) <= 2 else []
        return messages.headline(top.code, top.conductor, top.step, shown)
    possible = [f for f in findings if f.possible and f.severity == "warning"]
    if possible:
        top = possible[0]
        shown = [names.get(o, o) for o in top.outlets] if len(top.outlets) <= 2 else []
        return messages.possible_headline(top.code, top.conductor, top.step, shown)
    if result == "incomplete":
        return "No fault found so far; the test is not finished."
    if any(f.severity == "warning" for f in findings):
        return "The readings fit a sound ring; some checks need attention."
    return "The readings fit a sound ring with the recorded spurs."
