"""The plain inputs of a job's sheet and review page, gathered from the database.

``job_inputs(job)`` gives the job document (as the JSON export has it), one diagnosis per
circuit (or None with the reason why not) and the people and dates of the job.
"""

from __future__ import annotations

import copy
import functools
import json

from fieldapp import records
from fieldapp.models import Circuit, Job
from fieldapp.transfer.documents import export_document
from ringmath.diagnose import diagnose


@functools.lru_cache(maxsize=512)
def _diagnose_text(record_json: str) -> dict:
    return diagnose(json.loads(record_json))


def diagnosis_of(circuit: Circuit) -> tuple[dict | None, str | None]:
    """(diagnosis, None), or (None, reason) when ringmath cannot assess the record.

    The supervisor's list diagnoses every circuit of every job on each view, so results are
    kept per distinct record (a changed reading is a different record); callers get a copy.
    """
    record = records.circuit_record(circuit, with_job=False)
    try:
        result = _diagnose_text(json.dumps(record, sort_keys=True))
    except ValueError as error:
        return None, f"The record cannot be assessed yet: {error}"
    return copy.deepcopy(result), None


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
    }


def job_diagnoses(job: Job) -> tuple[list, list]:
    """(diagnoses, problems): one of each per circuit, in the job's order."""
    results = [diagnosis_of(circuit) for circuit in job.circuits]
    return [diagnosis for diagnosis, _ in results], [problem for _, problem in results]


def job_inputs(job: Job) -> dict:
    """Keyword arguments for ``sheet_context``: document, diagnoses, people, problems."""
    diagnoses, problems = job_diagnoses(job)
    return {"document": export_document(job), "diagnoses": diagnoses, "problems": problems,
            "people": job_people(job)}
