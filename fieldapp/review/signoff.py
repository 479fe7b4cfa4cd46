"""Submitting and approving through the sign-off rule (fieldapp/review/gate.py): a job with
problems goes on only with a reason, and the reason and the problems it overrode are kept."""

from __future__ import annotations

from fieldapp import changes
from fieldapp.review.gate import CircuitProblems, job_problems

#: stage -> (the job column holding the reason, the change-log field listing the problems)
STAGES = {"submit": ("submit_reason", "submit_problems"),
          "approve": ("approve_reason", "approve_problems")}


def problems_text(groups: list[CircuitProblems]) -> str:
    """The problems as lines of text, circuit by circuit (what the history keeps)."""
    return "\n".join(f"{g.circuit}: {p.text}" for g in groups for p in g.problems)


def sign_off(job, stage: str, values: dict, reason: str | None,
             actor: changes.Actor) -> tuple[list[CircuitProblems], bool]:
    """(problems, done): apply ``values`` to the job (logged) unless it has problems and no
    reason was given; with problems, the reason is stored on the job and the problems are
    logged beside it; without, any earlier reason for this stage is cleared."""
    reason_field, log_field = STAGES[stage]
    groups = job_problems(job)
    reason = (reason or "").strip()
    if groups and not reason:
        return groups, False
    changes.update(job, {**values, reason_field: reason if groups else None}, actor)
    if groups:
        changes.log(job, log_field, None, problems_text(groups), actor)
    return groups, True
