"""Storing one reading: parsed by ringmath, logged old -> new, idempotent on the client id."""

from __future__ import annotations

import math
from dataclasses import dataclass

from sqlalchemy.exc import IntegrityError

from fieldapp.changes.writes import (
    CIRCUIT_READINGS,
    LIVE_OUTLET_READINGS,
    OUTLET_READINGS,
    READING_FIELDS,
    Actor,
    check_client_id,
    log,
    seen,
    taken_time,
)
from fieldapp.extensions import db
from fieldapp.models import Circuit, Outlet
from ringmath import parse_reading


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

def reading_text(value: float | None) -> str | None:
    """A parsed reading as stored: "0.52", "OL" or None."""
    if value is None:
        return None
    if math.isinf(value):
        return "OL"
    return repr(round(float(value), 4))


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
