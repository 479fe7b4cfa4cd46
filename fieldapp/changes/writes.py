"""The change log and the lock: every write to a job, circuit or outlet is logged here.

``log`` appends one ChangeLog row (old -> new, user, device) after ``check_writable``, the
server's one lock; ``create`` and ``update`` write a row's fields through it. Readings are
written by ``reading_writes.set_reading`` and outlets by ``outlet_writes``, both through ``log``.
"""

from __future__ import annotations

import datetime as dt
import logging
import math
import re
from dataclasses import dataclass

from sqlalchemy import select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Job, Outlet, utcnow

#: Circuit readings (step 1) and outlet readings (steps 2 and 3).
CIRCUIT_READINGS = ("r1", "rn", "r2")
OUTLET_READINGS = ("ln", "le")
READING_FIELDS = CIRCUIT_READINGS + OUTLET_READINGS
#: Outlet readings of the live tests step: measured Zs and a re-measure at the terminals.
LIVE_OUTLET_READINGS = ("zs_measured", "ln_terminals", "le_terminals")
#: Job statuses in which readings and details may still change.
EDITABLE_STATUSES = ("in_progress", "returned")
CLIENT_ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_-]{7,63}$")


log_ = logging.getLogger("fieldapp.changes")


class Refused(Exception):
    """A write that the current state does not allow; the message is meant for the user.
    Every refusal is logged with the job and circuit it concerns."""

    def __init__(self, message: str, *, job_id: int | None = None,
                 circuit_id: int | None = None):
        super().__init__(message)
        self.job_id, self.circuit_id = job_id, circuit_id
        log_.info("refused write (job %s, circuit %s): %s", job_id, circuit_id, message)


@dataclass(frozen=True)
class Actor:
    """Who makes a change and from which device (user agent or a device label)."""

    user_id: int | None
    device: str = ""



def entity_name(obj) -> str:
    """"job", "circuit" or "outlet" for a model instance."""
    for cls, name in ((Job, "job"), (Circuit, "circuit"), (Outlet, "outlet")):
        if isinstance(obj, cls):
            return name
    raise TypeError(f"no change log for {type(obj).__name__}")


def _circuit_id(obj) -> int | None:
    if isinstance(obj, Circuit):
        return obj.id
    if isinstance(obj, Outlet):
        return obj.circuit_id
    return None


def as_text(value) -> str | None:
    """The change-log form of a value (None stays None)."""
    if value is None:
        return None
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, dt.datetime | dt.date):
        return value.isoformat()
    if isinstance(value, float):
        return "OL" if math.isinf(value) else repr(value)
    return str(value)



#: Job fields that submitting, reviewing and reopening change: writable on a locked job.
REVIEW_FIELDS = ("status", "submitted_at", "reviewed_by_id", "reviewed_at", "review_comment",
                 "approved_by_id", "approved_at", "submit_reason", "approve_reason",
                 "submit_problems", "approve_problems")


def _job_of(obj) -> Job | None:
    if isinstance(obj, Job):
        return obj
    circuit = obj if isinstance(obj, Circuit) else db.session.get(Circuit, obj.circuit_id)
    return circuit.job if circuit is not None else None


#: db.session.info key: ids of the jobs created in this session (built, not yet locked).
NEW_JOBS = "fieldapp.new_jobs"


def check_writable(obj, field: str) -> None:
    """The server's one lock, checked on every logged write: Refused when the job is not
    editable (submitted or approved), except for the job's own review fields and a job that
    this same session is creating."""
    job = _job_of(obj)
    if job is None or (obj is job and field in REVIEW_FIELDS):
        return
    if job.id not in db.session.info.get(NEW_JOBS, ()):
        check_editable(job, _circuit_id(obj))


def log(obj, field: str, old, new, actor: Actor, client_id: str | None = None,
        taken_at: dt.datetime | None = None) -> ChangeLog:
    """Append one ChangeLog row for obj.field (old -> new); Refused on a locked job.
    taken_at: when a reading queued on the phone was taken (else it was taken as it arrived)."""
    check_writable(obj, field)
    row = ChangeLog(
        at=utcnow(), user_id=actor.user_id, device=(actor.device or "")[:200],
        entity=entity_name(obj), entity_id=obj.id, circuit_id=_circuit_id(obj), field=field,
        old_value=as_text(old), new_value=as_text(new), client_id=client_id,
        taken_at=taken_time(taken_at),
    )
    db.session.add(row)
    return row


def taken_time(value) -> dt.datetime | None:
    """A taken-at time (datetime or ISO text, with or without a zone) as naive UTC; None stays
    None; ValueError for text that is not an ISO time."""
    if value in (None, ""):
        return None
    if isinstance(value, str):
        try:
            value = dt.datetime.fromisoformat(value.replace("Z", "+00:00"))
        except ValueError:
            raise ValueError(f"taken_at: {value!r} is not an ISO date and time") from None
    if value.tzinfo is not None:
        value = value.astimezone(dt.UTC).replace(tzinfo=None)
    return value


def update(obj, values: dict, actor: Actor) -> list[str]:
    """Set the given attributes, logging each one that really changes; returns their names."""
    changed = []
    for name, new in values.items():
        if not hasattr(obj, name):
            raise AttributeError(f"{type(obj).__name__} has no field {name!r}")
        old = getattr(obj, name)
        if as_text(old) == as_text(new):
            continue
        setattr(obj, name, new)
        log(obj, name, old, new, actor)
        changed.append(name)
    return changed


def create(model, values: dict, actor: Actor, client_id: str | None = None):
    """Insert a row and log its creation plus every field given (old value None)."""
    obj = model(**values)
    db.session.add(obj)
    db.session.flush()
    if isinstance(obj, Job):
        db.session.info.setdefault(NEW_JOBS, set()).add(obj.id)
    log(obj, "created", None, getattr(obj, "reference", None) or getattr(obj, "key", None)
        or obj.id, actor, client_id)
    for name, value in values.items():
        if value is not None and value != "":
            log(obj, name, None, value, actor)
    return obj


def seen(client_id: str | None) -> ChangeLog | None:
    """The change-log row written under this client id, if any."""
    if not client_id:
        return None
    return db.session.scalar(select(ChangeLog).where(ChangeLog.client_id == client_id))


def check_client_id(client_id: str | None) -> str | None:
    """A client id as given, or None; ValueError for a malformed one."""
    if client_id in (None, ""):
        return None
    if not isinstance(client_id, str) or not CLIENT_ID_PATTERN.match(client_id):
        raise ValueError("client_id: expected 8 to 64 letters, digits, '-' or '_'")
    return client_id


def check_editable(job: Job, circuit_id: int | None = None) -> None:
    """Refused unless the job is still being worked on."""
    if job.status not in EDITABLE_STATUSES:
        raise Refused(f"Job {job.reference} is {job.status.replace('_', ' ')}: "
                      "it can no longer be changed.", job_id=job.id, circuit_id=circuit_id)


def check_ready_for_readings(circuit: Circuit) -> None:
    """Refused until the job is editable and the safety checks are ticked."""
    check_editable(circuit.job, circuit.id)
    if not safety_confirmed(circuit):
        raise Refused("Confirm safe isolation first: isolated, locked off and proved dead.",
                      job_id=circuit.job_id, circuit_id=circuit.id)


def safety_confirmed(circuit: Circuit) -> bool:
    return bool(circuit.safety_isolated and circuit.safety_locked_off
                and circuit.safety_proved_dead)



def history(circuit: Circuit) -> list[ChangeLog]:
    """The circuit's change log (its own rows and its outlets'), newest first."""
    return list(db.session.scalars(
        select(ChangeLog).where(ChangeLog.circuit_id == circuit.id)
        .order_by(ChangeLog.id.desc())))
