"""Load a ``ringtest/1`` document (one circuit record or a job document) into the database.

The document is checked by ringmath's parser first; then every row is written through
fieldapp.changes, so an imported job has the same history as one typed in.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from sqlalchemy import select

from fieldapp import changes
from fieldapp.extensions import db
from fieldapp.models import Circuit, Job, Outlet, utcnow
from ringmath import parse_document, parse_reading


def _split_reference(reference: str) -> tuple[str, str]:
    board, _, way = reference.rpartition("/")
    return (board, way) if board else ("", reference)


def circuit_fields(block: dict) -> dict:
    """Circuit columns from a record's ``circuit`` block (already checked by the parser)."""
    # imported here: fieldapp.live is a blueprint package (it loads its views, which reach
    # back to the packages that import this module)
    from fieldapp.live.values import live_circuit_fields

    ocpd: dict[str, Any] = block.get("ocpd") or {}
    rcd = block.get("rcd") or {}
    board, way = _split_reference(str(block.get("reference") or ""))
    return {
        "board": board, "way": way, "description": block.get("description") or "",
        "ocpd_standard": ocpd.get("standard"), "ocpd_curve": ocpd.get("curve") or None,
        "ocpd_rating_a": float(ocpd["rating_a"]),  # required by the parser
        "rcd_rated_ma": float(rcd["rated_ma"]) if rcd.get("rated_ma") else None,
        "rcd_type": rcd.get("type") or None,
        "live_csa_mm2": float(block.get("live_csa_mm2", 2.5)),
        "cpc_csa_mm2": float(block.get("cpc_csa_mm2", 1.5)),
        "ze_ohm": None if block.get("ze_ohm") is None else float(block["ze_ohm"]),
        "ze_source": block.get("ze_source") or "measured",
        "earthing": block.get("earthing") or None,
        "cable_length_m": block.get("cable_length_m"),
        **live_circuit_fields(block),
    }


def _outlet_fields(doc: dict) -> dict:
    return {
        "key": str(doc["id"]), "label": doc.get("label") or "",
        "kind": doc.get("kind") or "twin_socket", "spur_from_key": doc.get("spur_from") or None,
        "fuse_a": doc.get("fuse_a"), "spur_csa_mm2": doc.get("spur_csa_mm2"),
        "spur_cpc_csa_mm2": doc.get("spur_cpc_csa_mm2"), "taken_at": doc.get("taken_at") or None,
    }


def _create_all(model, rows: list[dict], actor: changes.Actor) -> list:
    """Insert many rows with one flush, each logged as changes.create logs one."""
    objs = [model(**values) for values in rows]
    db.session.add_all(objs)
    db.session.flush()
    for obj, values in zip(objs, rows, strict=True):
        changes.log(obj, "created", None, getattr(obj, "key", None) or obj.id, actor)
        for name, value in values.items():
            if value is not None and value != "":
                changes.log(obj, name, None, value, actor)
    return objs


def _readings(doc: dict, names: tuple[str, ...], path: str) -> dict:
    """Stored text of the readings present ("0.52", "OL"), parsed as set_reading does."""
    out = {}
    for name in names:
        text = changes.reading_text(parse_reading(doc.get(name), f"{path}.{name}"))
        if text is not None:
            out[name] = text
    return out


def import_circuit(job: Job, record: dict, actor: changes.Actor, position: int) -> Circuit:
    """One circuit record into ``job``, every value logged as a change from nothing.

    The safety checks are left unticked: an import confirms nothing about isolation on site.
    The circuit is marked imported (who, when), so its readings show as taken elsewhere.
    Outlets are written with one flush per circuit (the document was checked whole first:
    spur order and topology), so a large job holds the database's write lock briefly.
    """
    fields = circuit_fields(record["circuit"])
    fields.update({"job_id": job.id, "position": position, "current_step": "safety",
                   "imported_by_id": actor.user_id, "imported_at": utcnow()})
    fields.update(_readings(record.get("end_to_end") or {}, changes.CIRCUIT_READINGS,
                            "end_to_end"))
    circuit = changes.create(Circuit, fields, actor)
    rows = []
    for n, doc in enumerate(record.get("outlets") or (), start=1):
        row = {"circuit_id": circuit.id, "position": n, **_outlet_fields(doc)}
        row.update(_readings(doc, changes.OUTLET_READINGS + changes.LIVE_OUTLET_READINGS,
                             f"outlets[{n - 1}]"))
        rows.append(row)
    if rows:
        _create_all(Outlet, rows, actor)
    return circuit


def import_document(doc: dict, actor: changes.Actor, *, tester_id: int | None = None) -> Job:
    """A new Job from a ``ringtest/1`` document. ValueError when it does not parse or the
    job reference is already taken (the caller rolls the session back)."""
    parse_document(doc)  # raises ValueError naming the field
    records = doc["circuits"] if "circuits" in doc else [doc]
    job_doc = doc.get("job") or records[0].get("job") or {}
    reference = str(job_doc.get("reference") or "").strip()
    if not reference:
        raise ValueError("job.reference: is required")
    if db.session.scalar(select(Job.id).where(Job.reference == reference)) is not None:
        raise ValueError(f"job.reference: {reference!r} already exists")
    date = job_doc.get("date")
    job = changes.create(Job, {
        "reference": reference, "site": str(job_doc.get("site") or ""),
        "client": str(job_doc.get("client") or ""),
        "date": dt.date.fromisoformat(date) if date else None,
        "notes": str(job_doc.get("notes") or ""),
        "created_by": actor.user_id, "tester_id": tester_id, "status": "in_progress",
    }, actor)
    for position, record in enumerate(records, start=1):
        import_circuit(job, record, actor, position)
    return job

