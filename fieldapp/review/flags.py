"""What the supervisor's job list shows at a glance: the sign-off problems of each job
(fieldapp/review/gate.py) counted by kind, and whether someone went on despite them."""

from __future__ import annotations

from typing import Any

from fieldapp.review.gate import CircuitProblems


def job_flags(groups: list[CircuitProblems], submit_reason: str | None = None,
              approve_reason: str | None = None) -> dict:
    """Flags for one job from its problems.

    faults: per circuit not satisfactory or not assessed, its assessment in words;
    findings: how many fault and check findings they carry; zs_fail / zs_unproved: outlets
    whose Zs fails / is not proved; missing: readings (or whole steps) still due; safety:
    circuits whose safe isolation is not confirmed; despite: "submitted" / "approved" when a
    reason was given to go on with problems; all_clear: no problem at all.
    """
    flags: dict[str, Any] = {"faults": [], "findings": 0, "zs_fail": 0, "zs_unproved": 0,
                             "missing": 0, "safety": 0, "despite": [],
                             "problems": sum(len(g.problems) for g in groups)}
    for group in groups:
        for problem in group.problems:
            if problem.kind in ("verdict", "not_assessed"):
                flags["faults"].append(f"{group.circuit}: {problem.text}")
            elif problem.kind == "finding":
                flags["findings"] += 1
            elif problem.kind == "steps_missing":
                flags["missing"] += problem.count
            elif problem.kind == "safety":
                flags["safety"] += 1
            else:
                flags[problem.kind] += problem.count
    if submit_reason:
        flags["despite"].append("submitted")
    if approve_reason:
        flags["despite"].append("approved")
    flags["all_clear"] = not flags["problems"]
    return flags
