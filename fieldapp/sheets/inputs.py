"""The plain inputs of a job's sheet and review page, gathered from the database.

``job_inputs(job)`` gives the job document (as the JSON export has it), one diagnosis per
circuit (or None with the reason why not) and the people and dates of the job.
"""

from __future__ import annotations

from fieldapp import records
from fieldapp.models import Job
from fieldapp.transfer.documents import sheet_document


def _name(user) -> str | None:
    return user.name if user is not None else None


def job_people(job: Job) -> dict:
    """Who tested, submitted, reviewed and approved the job, and when (plain values)."""
    return {
        "status": job.status,
        "tester": _name(job.tester),
        "submitted_at": job.submitted_at,
        "reviewed_by": _name(job.reviewed_by),
        "reviewed_at": job.reviewed_at,
        "approved_by": _name(job.approved_by),
        "approved_at": job.approved_at,
        "review_comment": job.review_comment,
        "instrument_model": job.instrument_model,
        "instrument_serial": job.instrument_serial,
        "submit_reason": job.submit_reason,
        "approve_reason": job.approve_reason,
    }


def job_diagnoses(job: Job) -> tuple[list, list]:
    """(diagnoses, problems): one of each per circuit, in the job's order."""
    results = [records.diagnose_circuit(circuit) for circuit in job.circuits]
    return [diagnosis for diagnosis, _ in results], [problem for _, problem in results]


def job_inputs(job: Job) -> dict:
    """Keyword arguments for ``sheet_context``: document, diagnoses, people, problems."""
    diagnoses, problems = job_diagnoses(job)
    return {"document": sheet_document(job), "diagnoses": diagnoses, "problems": problems,
            "people": job_people(job)}
