"""A job to and from its ``ringtest/1`` job document.

Export: the record builder's job document (fieldapp.records) plus each circuit's safety checks,
put through the schema so every key is present. Import: the schema and ringmath check the whole
document first (nothing is written when anything is wrong), then fieldapp.importer writes the
job through fieldapp.changes (every value logged as a change from nothing), and the safety
checks are restored as recorded, logged the same way.
"""

from __future__ import annotations

from sqlalchemy import select

from fieldapp import changes, importer, records
from fieldapp.extensions import db
from fieldapp.models import Circuit, Job, User
from fieldapp.transfer.schemas import (
    DocumentError,
    document_errors,
    dump_document,
    load_document,
)

#: Document key -> Circuit column, for the safety checks made before any reading.
SAFETY_COLUMNS = {
    "isolated": "safety_isolated",
    "locked_off": "safety_locked_off",
    "proved_dead": "safety_proved_dead",
    "confirmed_at": "safety_confirmed_at",
}


def safety_block(circuit: Circuit) -> dict:
    block = {key: getattr(circuit, column) for key, column in SAFETY_COLUMNS.items()}
    block["confirmed_by"] = circuit.safety_confirmed_by.name if circuit.safety_confirmed_by \
        else None
    return block


def export_document(job: Job) -> dict:
    """The job as a complete JSON job document (every key present, readings as recorded)."""
    doc = records.job_document(job)
    for record, circuit in zip(doc["circuits"], job.circuits, strict=True):
        record["circuit"]["safety"] = safety_block(circuit)
    return dump_document(doc)


def file_name(job: Job, suffix: str = ".ringtest.json") -> str:
    """A download name made from the reference (letters, digits, '-', '_' and '.')."""
    safe = "".join(ch if ch.isalnum() or ch in "-_." else "_" for ch in job.reference)
    return f"{safe or 'job'}{suffix}"


def _user_named(name: str | None) -> User | None:
    if not name:
        return None
    users = list(db.session.scalars(select(User).where(User.name == name).limit(2)))
    return users[0] if len(users) == 1 else None


def _restore_safety(circuit: Circuit, block: dict, actor: changes.Actor) -> list[str]:
    """Set the recorded safety checks, each logged from nothing; notes for names not known."""
    notes = []
    for key, column in SAFETY_COLUMNS.items():
        value = block[key]
        if value:
            setattr(circuit, column, value)
            changes.log(circuit, column, None, value, actor)
    name = block.get("confirmed_by")
    user = _user_named(name)
    if user is not None:
        circuit.safety_confirmed_by_id = user.id
        changes.log(circuit, "safety_confirmed_by_id", None, user.id, actor)
    elif name:
        notes.append(f"circuit {records.circuit_reference(circuit)}: the safety checks were "
                     f"confirmed by {name!r}, who has no account here; the name is not kept")
    return notes


def _feed_order_errors(doc) -> list[str]:
    """Spurs listed before the outlet that feeds them: the app keeps outlets in visiting
    order and adds each spur under an outlet it already has."""
    errors = []
    for i, rec in enumerate(doc["circuits"]):
        earlier = set()
        for j, outlet in enumerate(rec["outlets"]):
            feed = outlet["spur_from"]
            if feed and feed not in earlier:
                errors.append(f"circuits[{i}].outlets[{j}].spur_from: {feed!r} comes later in "
                              "the list; list the outlet that feeds a spur before the spur")
            earlier.add(outlet["id"])
    return errors


def import_errors(doc) -> list[str]:
    """Every reason the document cannot be imported (empty when it can)."""
    errors = document_errors(doc)
    if not errors:
        errors = _feed_order_errors(doc)
    job = doc.get("job") if isinstance(doc, dict) else None
    reference = job.get("reference") if isinstance(job, dict) else None
    if isinstance(reference, str) and reference.strip() and db.session.scalar(
            select(Job.id).where(Job.reference == reference.strip())) is not None:
        errors.append(f"job.reference: a job {reference.strip()!r} already exists "
                      "(import it under another reference)")
    return errors


def import_job(doc, actor: changes.Actor, importer_user: User) -> tuple[Job, list[str]]:
    """A new job (in progress, tested by the importer) from a job document; not committed.

    ``DocumentError`` listing every problem when the document is wrong; nothing is written
    then (the session is rolled back if a write had started).
    """
    errors = import_errors(doc)
    if errors:
        raise DocumentError(errors)
    data = load_document(doc)
    canonical = dump_document(data)
    notes = []
    named = data["job"].get("tester")
    if named and named != importer_user.name:
        notes.append(f"job.tester: the file names {named!r}; the job is now tested by "
                     f"{importer_user.name} (the importer)")
    try:
        job = importer.import_document(canonical, actor, tester_id=importer_user.id)
        circuits = db.session.scalars(
            select(Circuit).where(Circuit.job_id == job.id).order_by(Circuit.position))
        for circuit, rec in zip(circuits, data["circuits"], strict=True):
            notes += _restore_safety(circuit, rec["circuit"]["safety"], actor)
        db.session.flush()
    except ValueError as exc:
        db.session.rollback()
        raise DocumentError([str(exc)]) from exc
    db.session.refresh(job)
    return job, notes
