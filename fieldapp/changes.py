"""Every write to a job, circuit or outlet goes through here and leaves ChangeLog rows.

Forms, the JSON API and the importer all call these helpers, so nothing is overwritten without
a record of the old value, the new value, who made the change and from which device. A reading
write may carry a client-made id (idempotency key): a write whose id is already in the log is
not applied again.
"""

from __future__ import annotations

import datetime as dt
import logging
import math
import re
from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.exc import IntegrityError

from fieldapp import limits
from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Job, Outlet, utcnow
from ringmath import parse_reading

#: Circuit readings (step 1) and outlet readings (steps 2 and 3).
CIRCUIT_READINGS = ("r1", "rn", "r2")
OUTLET_READINGS = ("ln", "le")
READING_FIELDS = CIRCUIT_READINGS + OUTLET_READINGS
#: Outlet readings of the live tests step: measured Zs and a re-measure at the terminals.
LIVE_OUTLET_READINGS = ("zs_measured", "ln_terminals", "le_terminals")
#: Job statuses in which readings and details may still change.
EDITABLE_STATUSES = ("in_progress", "returned")
CLIENT_ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_-]{7,63}$")


log_ = logging.getLogger(__name__)


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


@dataclass(frozen=True)
class ReadingWrite:
    """What a reading write did. duplicate: the client id was seen before, nothing applied."""

    field: str
    old: str | None
    new: str | None
    duplicate: bool = False

    @property
    def changed(self) -> bool:
        return not self.duplicate and self.old != self.new


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


def reading_text(value: float | None) -> str | None:
    """A parsed reading as stored: "0.52", "OL" or None."""
    if value is None:
        return None
    if math.isinf(value):
        return "OL"
    return repr(round(float(value), 4))


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


def set_reading(circuit: Circuit, field: str, raw, actor: Actor, *, outlet: Outlet | None = None,
                client_id: str | None = None, taken_at=None) -> ReadingWrite:
    """Store one reading (raw as typed: "0.52", "0,52", "OL", a number, or None to clear).

    ValueError (nothing changed) for a bad value; a known client id is a no-op duplicate.
    Every write with a client id is logged, even when the value is unchanged, so that a late
    replay of the same id can never undo a later correction.
    """
    client_id = check_client_id(client_id)
    taken_at = taken_time(taken_at)
    target = _reading_target(circuit, field, outlet)
    path = field if outlet is None else f"{outlet.key}.{field}"
    new = reading_text(parse_reading(raw, path))
    old = getattr(target, field)
    earlier = seen(client_id)
    if earlier is not None:
        return ReadingWrite(field, earlier.old_value, earlier.new_value, duplicate=True)
    if old == new and client_id is None:
        return ReadingWrite(field, old, new)
    setattr(target, field, new)
    log(target, field, old, new, actor, client_id, taken_at)
    try:
        db.session.flush()
    except IntegrityError:  # the same id arrived twice at once: the other one won
        db.session.rollback()
        earlier = seen(client_id)
        if earlier is None:
            raise
        return ReadingWrite(field, earlier.old_value, earlier.new_value, duplicate=True)
    return ReadingWrite(field, old, new)


def _reading_target(circuit: Circuit, field: str, outlet: Outlet | None):
    if field in CIRCUIT_READINGS:
        if outlet is not None:
            raise ValueError(f"{field}: an end-to-end reading belongs to the circuit")
        return circuit
    if field in OUTLET_READINGS + LIVE_OUTLET_READINGS:
        if outlet is None or outlet.circuit_id != circuit.id or outlet.deleted_at is not None:
            raise ValueError(f"{field}: needs an outlet of this circuit")
        return outlet
    known = READING_FIELDS + LIVE_OUTLET_READINGS
    raise ValueError(f"step: {field!r} is not one of {', '.join(known)}")


def live_outlets(circuit: Circuit) -> list[Outlet]:
    """The circuit's outlets in visiting order, without deleted ones."""
    return [o for o in circuit.outlets if o.deleted_at is None]


def next_outlet_key(circuit: Circuit) -> str:
    """The first of a, b, ... z, aa, ab, ... not used by any outlet (deleted ones count)."""
    used = set(db.session.scalars(select(Outlet.key).where(Outlet.circuit_id == circuit.id)))
    n = 0
    while True:
        key, i = "", n
        while True:
            key = chr(ord("a") + i % 26) + key
            i = i // 26 - 1
            if i < 0:
                break
        if key not in used:
            return key
        n += 1


def add_outlet(circuit: Circuit, values: dict, actor: Actor,
               client_id: str | None = None) -> Outlet:
    """A new outlet at the end of the visiting order; a known client id returns the earlier one."""
    client_id = check_client_id(client_id)
    earlier = seen(client_id)
    if earlier is not None:
        return db.session.get(Outlet, earlier.entity_id)
    _check_spur_source(circuit, values.get("spur_from_key"), None)
    if len(live_outlets(circuit)) >= limits.MAX_OUTLETS_PER_CIRCUIT or sum(
            len(live_outlets(c)) for c in circuit.job.circuits) >= limits.MAX_OUTLETS_PER_JOB:
        raise Refused(f"A circuit holds at most {limits.MAX_OUTLETS_PER_CIRCUIT} outlets and a "
                      f"job {limits.MAX_OUTLETS_PER_JOB}.",
                      job_id=circuit.job_id, circuit_id=circuit.id)
    last = db.session.scalar(
        select(func.max(Outlet.position)).where(Outlet.circuit_id == circuit.id))
    fields = {"circuit_id": circuit.id, "position": (last or 0) + 1,
              "key": values.get("key") or next_outlet_key(circuit)}
    fields.update({k: v for k, v in values.items() if k != "key"})
    outlet = create(Outlet, fields, actor, client_id)
    db.session.refresh(circuit)
    return outlet


def edit_outlet(outlet: Outlet, values: dict, actor: Actor) -> list[str]:
    """Change an outlet's details (not its readings: use set_reading)."""
    if set(values) & set(OUTLET_READINGS + LIVE_OUTLET_READINGS):
        raise ValueError("readings change through set_reading")
    _check_spur_source(outlet.circuit, values.get("spur_from_key"), outlet)
    return update(outlet, values, actor)


def _check_spur_source(circuit: Circuit, key: str | None, outlet: Outlet | None) -> None:
    if not key:
        return
    keys = {o.key: o for o in live_outlets(circuit)}
    if key not in keys:
        raise ValueError(f"spur_from: no outlet {key!r} on this circuit")
    if outlet is None:
        return
    cur = keys[key]
    while cur is not None:  # the new feed must not lead back to the outlet itself
        if cur.key == outlet.key:
            raise ValueError("spur_from: an outlet cannot be fed from itself or its own spur")
        cur = keys.get(cur.spur_from_key) if cur.spur_from_key else None


def delete_outlet(outlet: Outlet, actor: Actor) -> None:
    """Soft delete: the outlet leaves the record, its row and history stay."""
    fed = [o.key for o in live_outlets(outlet.circuit) if o.spur_from_key == outlet.key]
    if fed:
        raise Refused(f"Outlet {outlet.key} feeds {', '.join(fed)}: "
                      "delete or move those spurs first.", circuit_id=outlet.circuit_id)
    update(outlet, {"deleted_at": utcnow()}, actor)


def history(circuit: Circuit) -> list[ChangeLog]:
    """The circuit's change log (its own rows and its outlets'), newest first."""
    return list(db.session.scalars(
        select(ChangeLog).where(ChangeLog.circuit_id == circuit.id)
        .order_by(ChangeLog.id.desc())))
