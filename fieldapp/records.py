"""The bridge to ringmath: a circuit's rows as a ``ringtest/1`` record, and its diagnosis."""

from __future__ import annotations

import logging
from typing import Any

from flask import current_app

from fieldapp import background, diagnoses
from fieldapp.changes import live_outlets
from fieldapp.models import Circuit, Job
from ringmath import FORMAT

log = logging.getLogger(__name__)


def reading_value(text: str | None):
    """A stored reading ("0.52", "OL", None) in record form: float, "OL" or None."""
    if text is None:
        return None
    if text == "OL":
        return "OL"
    return float(text)


def circuit_reference(circuit: Circuit) -> str:
    """Board and way as one reference, e.g. "DB1/3"."""
    return "/".join(part for part in (circuit.board, circuit.way) if part)


def job_block(job: Job) -> dict:
    return {
        "reference": job.reference,
        "site": job.site,
        "client": job.client,
        "date": job.date.isoformat() if job.date else None,
        "tester": job.tester.name if job.tester else "",
        "notes": job.notes or "",
    }


def ir_value(text: str | None):
    """A stored insulation resistance ("200", ">999", None) in record form: float, ">999"
    (the instrument showed "> value") or None."""
    if text is None:
        return None
    return text if text.startswith(">") else float(text)


def insulation_block(circuit: Circuit) -> dict | None:
    """The insulation test in record form, or None when nothing of it is recorded."""
    block = {"test_v": circuit.ir_test_v, "ln_mohm": ir_value(circuit.ir_ln_mohm),
             "le_mohm": ir_value(circuit.ir_le_mohm), "ne_mohm": ir_value(circuit.ir_ne_mohm)}
    return block if any(v is not None for v in block.values()) else None


def circuit_block(circuit: Circuit) -> dict:
    rcd = None
    if circuit.rcd_rated_ma:
        rcd = {"rated_ma": circuit.rcd_rated_ma, "type": circuit.rcd_type or None,
               "trip_ms": circuit.rcd_trip_ms, "button_ok": circuit.rcd_button_ok}
    return {
        "reference": circuit_reference(circuit),
        "description": circuit.description,
        "ocpd": {"standard": circuit.ocpd_standard, "curve": circuit.ocpd_curve or None,
                 "rating_a": circuit.ocpd_rating_a},
        "rcd": rcd,
        "live_csa_mm2": circuit.live_csa_mm2,
        "cpc_csa_mm2": circuit.cpc_csa_mm2,
        "ze_ohm": circuit.ze_ohm,
        "ze_source": circuit.ze_source,
        "earthing": circuit.earthing or None,
        "cable_length_m": circuit.cable_length_m,
        "cpc_kind": circuit.cpc_kind or "cable_core",
        "parallel_paths": bool(circuit.parallel_paths),
        "pfc_ka": circuit.pfc_ka,
        "insulation": insulation_block(circuit),
    }


def circuit_record(circuit: Circuit, *, with_job: bool = True) -> dict:
    """The circuit as a plain ``ringtest/1`` record dict (deleted outlets left out)."""
    record: dict[str, Any] = {"format": FORMAT}
    if with_job:
        record["job"] = job_block(circuit.job)
    record["circuit"] = circuit_block(circuit)
    record["end_to_end"] = {f: reading_value(getattr(circuit, f)) for f in ("r1", "rn", "r2")}
    record["outlets"] = [
        {
            "id": o.key, "label": o.label, "kind": o.kind, "spur_from": o.spur_from_key or None,
            "fuse_a": o.fuse_a, "spur_csa_mm2": o.spur_csa_mm2,
            "spur_cpc_csa_mm2": o.spur_cpc_csa_mm2,
            "ln": reading_value(o.ln), "le": reading_value(o.le),
            "zs_measured": reading_value(o.zs_measured), "taken_at": o.taken_at or None,
            "ln_terminals": reading_value(o.ln_terminals),
            "le_terminals": reading_value(o.le_terminals),
        }
        for o in live_outlets(circuit)
    ]
    return record


def job_document(job: Job) -> dict:
    """A whole job as one ``ringtest/1`` job document."""
    return {"format": FORMAT, "job": job_block(job),
            "circuits": [circuit_record(c, with_job=False) for c in job.circuits]}


def diagnose_circuit(circuit: Circuit) -> tuple[dict | None, str | None]:
    """(diagnosis, None) from ringmath.diagnose, or (None, reason) when it cannot run.

    Computed once per distinct record and engine and stored in the database
    (``fieldapp.diagnoses``), so every worker and server shares it; callers get a copy.
    """
    record = circuit_record(circuit, with_job=False)  # the job block plays no part
    try:
        return diagnoses.diagnosis_for(record), None
    except ValueError as error:
        log.info("diagnosis of circuit %s refused: %s", circuit.id, error)
        return None, f"The record cannot be diagnosed yet: {error}"
    except Exception:  # one bad circuit must never take a page or the job list down
        log.exception("diagnosis of circuit %s failed", circuit.id)
        return None, "The diagnosis failed for this circuit; the readings are kept."


def record_hash(circuit: Circuit) -> str:
    """The key the circuit's current record is stored under."""
    return diagnoses.record_key(circuit_record(circuit, with_job=False))[1]


def diagnosis_or_instant(circuit: Circuit, *, saved: bool = True) -> tuple[dict | None, bool]:
    """What a save answers with: (full diagnosis, False) when it is stored already or the app
    diagnoses inline; else (the instant checks, True) with the circuit queued for the
    background thread, so the save does not wait for the fit. ``saved=False`` (a poll) queues
    the circuit only if it is not waiting already."""
    queue = background.queue(current_app)
    if queue is None:
        return diagnose_circuit(circuit)[0], False
    record = circuit_record(circuit, with_job=False)
    done = diagnoses.stored(record)
    if done is not None:
        return done, False
    if not saved and queue.failed.get(circuit.id) == diagnoses.record_key(record)[1]:
        return None, False  # it cannot be diagnosed: stop the page asking
    (queue.submit if saved else queue.ensure)(circuit.id)
    return diagnoses.instant(record), True
