"""A job to and from its ``ringtest/1`` job document.

Export: the record builder's job document (fieldapp.records) plus each circuit's safety checks,
put through the schema so every key is present. Import: the schema and ringmath check the whole
document first (nothing is written when anything is wrong), then fieldapp.importer writes the
job through fieldapp.changes (every value logged as a change from nothing).

An import never asserts that a person confirmed safe isolation: the file's safety block is kept
as the file's statement (``Circuit.imported_safety``, logged), the circuit is marked imported
by the importer at that time, and its safety checks stay unticked until someone confirms them
here. The export gives the file's statement back unchanged until then (so a file passes
through exactly); the pages and the sheet say "imported from a file by X at T".
"""

from __future__ import annotations

import json

from sqlalchemy import select

from fieldapp import changes, importer, records
from fieldapp.extensions import db
from fieldapp.models import Circuit, Job, User
from fieldapp.transfer.schemas import (
    DocumentError,
    SafetySchema,
    document_errors,
    dump_document,
    load_document,
)


def dump_safety(block: dict) -> dict:
    return SafetySchema().dump(block)

#: The device label of every change an import writes: "imported from a file".
IMPORT_DEVICE = "imported from a file"
#: Document key -> Circuit column, for the safety checks made before any reading.
SAFETY_COLUMNS = {
    "isolated": "safety_isolated",
    "locked_off": "safety_locked_off",
    "proved_dead": "safety_proved_dead",
    "confirmed_at": "safety_confirmed_at",
}


def imported_note(circuit: Circuit) -> str | None:
    """"Imported from a file by X at T" for a circuit that came from a file, else None."""
    if circuit.imported_at is None:
        return None
    who = circuit.imported_by.name if circuit.imported_by else "someone"
    return f"imported from a file by {who} at {circuit.imported_at:%Y-%m-%d %H:%M} UTC"


def file_safety_claim(circuit: Circuit) -> dict | None:
    """The safety block the file carried, for an imported circuit not yet confirmed here."""
    if circuit.imported_safety is None or circuit.safety_confirmed_by_id is not None \
            or changes.safety_confirmed(circuit):
        return None
    return json.loads(circuit.imported_safety)


def safety_block(circuit: Circuit) -> dict:
    claim = file_safety_claim(circuit)
    if claim is not None:
        return claim
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


def sheet_document(job: Job) -> dict:
    """The export document for the job sheet: a file's safety statement is printed as what it
    is, "imported from a file by X at T", never as a confirmation."""
    doc = export_document(job)
    for record, circuit in zip(doc["circuits"], job.circuits, strict=True):
        if file_safety_claim(circuit) is not None:
            record["circuit"]["safety"] = {**{key: False for key in SAFETY_COLUMNS},
                                           "confirmed_at": None,
                                           "confirmed_by": imported_note(circuit)}
    return doc


def _keep_file_safety(circuit: Circuit, block: dict, actor: changes.Actor) -> list[str]:
    """Keep the file's safety block as its statement (logged), tick nothing; a note when it
    claims a confirmation."""
    claim = {key: (value.isoformat() if hasattr(value, "isoformat") else value)
             for key, value in block.items()}
    if not any(claim.values()):
        return []
    text = json.dumps(claim, sort_keys=True)
    changes.update(circuit, {"imported_safety": text}, actor)
    if not any(claim.get(key) for key in ("isolated", "locked_off", "proved_dead")):
        return []
    who = f" by {claim['confirmed_by']!r}" if claim.get("confirmed_by") else ""
    return [f"circuit {records.circuit_reference(circuit)}: the file says the safety checks "
            f"were done{who}; that is the file's statement, not a confirmation: confirm safe "
            "isolation here before taking more readings"]


def _feed_order_errors(doc) -> list[str]:
    """Spurs listed before the outlet that feeds them: the app keeps outlets in visiting
    order and adds each spur under an outlet it already has."""
    errors = []
    for i, rec in enumerate(doc["circuits"]):
        earlier = set()
        for j, outlet in enumerate(rec.get("outlets") or []):  # both keys are optional
            feed = outlet.get("spur_from")
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
    # every row the import writes says where it came from (the history shows the device)
    actor = changes.Actor(actor.user_id, IMPORT_DEVICE)
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
            notes += _keep_file_safety(circuit, dump_safety(rec["circuit"]["safety"]), actor)
        db.session.flush()
    except ValueError as exc:
        db.session.rollback()
        raise DocumentError([str(exc)]) from exc
    db.session.refresh(job)
    return job, notes
