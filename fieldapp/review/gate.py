"""What is wrong with a job before it is signed off: the one rule, used by submitting,
approving, the review list's flags and the printed sheet.

A job may be submitted or approved only when every circuit is satisfactory, every outlet's Zs
is proved within its limit, every reading is taken and the safe-isolation checks are
confirmed. Otherwise the user sees these problems, circuit by circuit, and must type a reason
to go on (stored on the job, logged in the history and printed on the sheet).

Plain values in (a ``ringtest/1`` job document, one ``ringmath.diagnose`` result per circuit or
None with the reason why not), plain values out. ``job_problems(job)`` gathers them from the
database.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from fieldapp import labels
from fieldapp.labels import outlet_name

#: Problem kinds, in the order they are listed for a circuit.
KINDS = ("not_assessed", "safety", "steps_missing", "zs_fail", "zs_unproved", "verdict",
         "finding")
#: Verdict words: the app's one set (fieldapp/labels.py, ringmath's own).
VERDICT_WORDS = labels.VERDICT_WORDS
SAFETY_CHECKS = (("isolated", "isolated"), ("locked_off", "locked off"),
                 ("proved_dead", "proved dead"))
STEP1_WORDS = labels.CONDUCTOR_NAMES
STEP_WORDS = {field: labels.step_reading(field) for field in ("ln", "le")}
#: Findings already said by a Zs problem.
ZS_CODES = ("zs_over_limit",)
#: Outlets named in full in one problem before "and N more".
NAMED = 6


@dataclass(frozen=True)
class Problem:
    """One plain statement of what is wrong. count: how many readings or outlets it covers."""

    kind: str
    text: str
    count: int = 1


@dataclass(frozen=True)
class CircuitProblems:
    circuit: str
    problems: tuple[Problem, ...] = field(default_factory=tuple)


def _names(rec: dict) -> dict[str, str]:
    """Each outlet by the app's one name for it (fieldapp/labels.py): "c · Kitchen"."""
    return {str(o["id"]): outlet_name(o["id"], o.get("label"), o.get("kind"))
            for o in rec.get("outlets") or []}


def _listed(names: list[str]) -> str:
    shown = ", ".join(names[:NAMED])
    return shown + (f" and {len(names) - NAMED} more" if len(names) > NAMED else "")


def _ohm(value) -> str:
    return labels.ohm(value)


def _safety(rec: dict) -> list[Problem]:
    safety = (rec.get("circuit") or {}).get("safety")
    if safety is None:
        return [Problem("safety", "Safe isolation checks not recorded.")]
    missing = [words for key, words in SAFETY_CHECKS if not safety.get(key)]
    if not missing:
        return []
    return [Problem("safety", "Safe isolation not confirmed: " + ", ".join(missing)
                    + " not ticked.")]


def _steps_missing(rec: dict, names: dict[str, str]) -> list[Problem]:
    e2e = rec.get("end_to_end") or {}
    problems = []
    step1 = [words for key, words in STEP1_WORDS.items() if e2e.get(key) is None]
    if step1:
        problems.append(Problem("steps_missing", "Step 1 not taken: " + ", ".join(step1) + ".",
                                len(step1)))
    outlets = rec.get("outlets") or []
    if not outlets:
        problems.append(Problem("steps_missing", "No outlets recorded: steps 2 and 3 not done."))
        return problems
    for step, words in STEP_WORDS.items():
        due = [names[str(o["id"])] for o in outlets if o.get(step) is None]
        if due:
            problems.append(Problem(
                "steps_missing", f"{words} not taken at {len(due)} outlet"
                f"{'s' if len(due) != 1 else ''}: {_listed(due)}.", len(due)))
    return problems


def _zs(rec: dict, diagnosis: dict, names: dict[str, str]) -> list[Problem]:
    problems = []
    points = diagnosis.get("points") or []
    for p in points:
        if p.get("ok") is not False:
            continue
        name = names.get(str(p.get("id")), str(p.get("id")))
        if p.get("le_ohm") == "OL" or p.get("zs_ohm") is None:
            problems.append(Problem("zs_fail", f"Zs fails at {name}: step 3 reads OL, no earth "
                                               "path proved."))
        else:
            problems.append(Problem("zs_fail", f"Zs over the limit at {name}: "
                                               f"{_ohm(p['zs_ohm'])} against "
                                               f"{_ohm(p['zs_max_ohm'])}."))
    summary = diagnosis.get("circuit") or {}
    if not points and summary.get("zs_ok") is False:  # the diagnosis' own result
        problems.append(Problem("zs_fail", f"Zs over the limit for the circuit: "
                                           f"{_ohm(summary['zs_ohm'])} against "
                                           f"{_ohm(summary['zs_max_ohm'])}."))
    ze_missing = (rec.get("circuit") or {}).get("ze_ohm") is None
    reasons: dict[str, list[str]] = {}
    for p in points:
        name = names.get(str(p.get("id")), str(p.get("id")))
        estimated = p.get("r1r2_estimated") or p.get("r1r2_source") == "estimated"
        if p.get("ok") is None:
            if ze_missing:
                why = "Ze not recorded"
            elif p.get("zs_max_ohm") is None and p.get("zs_ohm") is not None:
                why = "no tabulated limit for its protective device"
            else:
                why = "no step 3 reading to work it out from"
            reasons.setdefault(why, []).append(name)
        elif p.get("ok") is True and estimated:
            reasons.setdefault("worked out from an estimate, not a step 3 reading", []).append(
                name)
    if not points and ze_missing:
        reasons["Ze not recorded"] = ["the circuit"]
    for why, where in reasons.items():
        problems.append(Problem("zs_unproved", f"Zs not proved at {_listed(where)}: {why}.",
                                len(where)))
    return problems


def _verdict(diagnosis: dict, listed: list[Problem]) -> list[Problem]:
    verdict = diagnosis.get("verdict")
    if verdict == "satisfactory":
        # a fault the readings suggest but do not establish: signing off needs a reason (the
        # check made) as any other problem does
        return [Problem("finding", f"Not ruled out: {f.get('message') or ''}")
                for f in diagnosis.get("findings") or []
                if f.get("possible") and f.get("severity") == "warning"]
    if verdict == "incomplete" and any(p.kind == "steps_missing" for p in listed):
        return []  # the missing steps say it already
    word = VERDICT_WORDS.get(verdict or "", str(verdict))
    problems = [Problem("verdict", f"Assessment: {word}, not {VERDICT_WORDS['satisfactory']}. "
                                   f"{diagnosis.get('summary') or ''}".strip())]
    for finding in diagnosis.get("findings") or []:
        if finding.get("severity") in ("fault", "warning") and finding.get(
                "code") not in ZS_CODES:
            label = labels.severity_word(finding["severity"])
            problems.append(Problem("finding", f"{label}: {finding.get('message') or ''}"))
    return problems


def circuit_problems(rec: dict, diagnosis: dict | None,
                     not_assessed: str | None = None) -> list[Problem]:
    """Everything that stands in the way of signing off one circuit (empty: nothing)."""
    names = _names(rec)
    problems = _safety(rec) + _steps_missing(rec, names)
    if diagnosis is None:
        return [Problem("not_assessed", f"Not assessed: {not_assessed or 'no diagnosis'}.")
                ] + problems
    problems += _zs(rec, diagnosis, names)
    problems += _verdict(diagnosis, problems)
    return sorted(problems, key=lambda p: KINDS.index(p.kind))


def document_problems(document: dict, diagnoses: list,
                      not_assessed: list | None = None) -> list[CircuitProblems]:
    """Per circuit with problems, its problems; a job without circuits is one problem."""
    records = document.get("circuits") or []
    if not records:
        return [CircuitProblems("Job", (Problem("steps_missing", "No circuits recorded."),))]
    not_assessed = list(not_assessed or [None] * len(records))
    out = []
    for i, (rec, diagnosis, why) in enumerate(zip(records, diagnoses, not_assessed,
                                                  strict=True), start=1):
        problems = circuit_problems(rec, diagnosis, why)
        if problems:
            reference = (rec.get("circuit") or {}).get("reference") or f"Circuit {i}"
            out.append(CircuitProblems(reference, tuple(problems)))
    return out


def job_problems(job) -> list[CircuitProblems]:
    """The problems of a stored job (fieldapp.models.Job), as ``document_problems``."""
    from fieldapp.sheets.inputs import job_inputs

    inputs = job_inputs(job)
    return document_problems(inputs["document"], inputs["diagnoses"], inputs["problems"])


def kinds(groups: list[CircuitProblems]) -> set[str]:
    return {p.kind for group in groups for p in group.problems}
