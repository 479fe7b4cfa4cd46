"""How the outlets of a record hang together: ring points, spurs, the FCU a point is behind."""

from __future__ import annotations

from ringmath.record.model import Outlet, RingTest
from ringmath.record.values import RecordError


def check_topology(outlets: tuple[Outlet, ...], path: str) -> None:
    """Refuse duplicate ids, a spur fed from an id that is not there, and spur loops
    (RecordError kind "topology" naming ``<path>[i].id`` or ``<path>[i].spur_from``)."""
    index: dict[str, int] = {}
    for i, o in enumerate(outlets):
        if o.id in index:
            raise RecordError(f"{path}[{i}].id", "topology", f"duplicate id {o.id!r}")
        index[o.id] = i
    for i, o in enumerate(outlets):
        if o.spur_from is None:
            continue
        if o.spur_from not in index:
            raise RecordError(f"{path}[{i}].spur_from", "topology",
                              f"no outlet with id {o.spur_from!r}")
        seen = {o.id}
        cur = o
        while cur.spur_from is not None:
            if cur.spur_from in seen:
                raise RecordError(f"{path}[{i}].spur_from", "topology",
                                  f"spurs form a loop through {o.id!r}")
            seen.add(cur.spur_from)
            cur = outlets[index[cur.spur_from]]


def ring_outlets(test: RingTest) -> tuple[Outlet, ...]:
    """The outlets on the ring itself, in visiting order."""
    return tuple(o for o in test.outlets if o.on_ring)


def ring_root(test: RingTest, outlet: Outlet) -> Outlet:
    """The ring point a spur outlet is fed from (the outlet itself when on the ring)."""
    by_id = {o.id: o for o in test.outlets}
    cur = outlet
    while cur.spur_from is not None:
        cur = by_id[cur.spur_from]
    return cur


def beyond_fcu(test: RingTest, outlet: Outlet) -> Outlet | None:
    """The nearest FCU upstream of this outlet on its spur chain, or None."""
    by_id = {o.id: o for o in test.outlets}
    cur = outlet
    while cur.spur_from is not None:
        cur = by_id[cur.spur_from]
        if cur.kind == "fcu":
            return cur
    return None
