"""Outlets as the building is walked: added at the end of the visiting order with the next
free letter, edited (not their readings), soft deleted; every change logged."""

from __future__ import annotations

from sqlalchemy import func, select

from fieldapp import limits
from fieldapp.changes.writes import (
    LIVE_OUTLET_READINGS,
    OUTLET_READINGS,
    Actor,
    Refused,
    check_client_id,
    create,
    seen,
    update,
)
from fieldapp.extensions import db
from fieldapp.models import Circuit, Outlet, utcnow


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
