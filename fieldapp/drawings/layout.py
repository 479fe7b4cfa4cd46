"""Ordering and placement shared by the drawings: ring points in ring order, spurs after,
and where each ring point sits round the loop (a fraction 0..1 from end 1).
"""

from __future__ import annotations

import math


def _points_in_order(diagnosis: dict) -> tuple[list[dict], list[dict]]:
    """Ring points in ``ring_order`` (then any others in list order), and spur points in list
    order. A point is on the ring when it has no ``spur_from``."""
    points = [p for p in (diagnosis.get("points") or []) if isinstance(p, dict)]
    ring = [p for p in points if not p.get("spur_from")]
    spurs = [p for p in points if p.get("spur_from")]
    by_id = {str(p.get("id")): p for p in ring}
    ordered, seen = [], set()
    for oid in diagnosis.get("ring_order") or []:
        key = str(oid)
        if key in by_id and key not in seen:
            ordered.append(by_id[key])
            seen.add(key)
    ordered += [p for p in ring if str(p.get("id")) not in seen]
    return ordered, spurs


def _number_map(ring: list[dict], spurs: list[dict],
                names: dict | None = None) -> dict[str, str]:
    """The short name each point carries in every drawing: its id, the name every screen and
    table uses for it (``fieldapp.labels``), unless ``names`` (by id) or the point's own
    ``name`` gives another."""
    names = names or {}
    return {str(p.get("id")): str(names.get(str(p.get("id")), p.get("name") or p.get("id")))
            for p in ring + spurs}


def point_names(diagnosis: dict) -> dict[str, str]:
    """The short name each point of a diagnosis carries in the ring picture and the readings
    plot (by point id), for a table printed beside them."""
    return _number_map(*_points_in_order(diagnosis))


def order_known(diagnosis: dict) -> bool:
    """True when the readings place the ring points (any point has a ``position``); else
    the drawings show them in the order they were entered."""
    ring, _ = _points_in_order(diagnosis)
    return any(_finite(p.get("position")) is not None for p in ring)


def _label(point: dict) -> str:
    return str(point.get("label") or point.get("id") or "")


def _finite(value) -> float | None:
    if isinstance(value, bool) or not isinstance(value, int | float):
        return None
    return float(value) if math.isfinite(value) else None


def _agrees_with_order(known: list[float | None]) -> bool:
    """Known positions rise along the ring order (equal ones only side by side)."""
    last_i, last_v = None, None
    for i, v in enumerate(known):
        if v is None:
            continue
        if last_v is not None and (v < last_v or (v == last_v and i != last_i + 1)):
            return False
        last_i, last_v = i, v
    return True


def _centre_ties(known: list[float | None], gap: float) -> list[float | None]:
    """Side-by-side points at the same position spread symmetrically about it."""
    out = list(known)
    i = 0
    while i < len(known):
        if known[i] is None:
            i += 1
            continue
        j = i
        while j + 1 < len(known) and known[j + 1] == known[i]:
            j += 1
        for m in range(i, j + 1):
            out[m] = known[i] + (m - (i + j) / 2) * gap
        i = j + 1
    return out


def ring_positions(diagnosis: dict) -> dict[str, float]:
    """Where each ring point is drawn, as a fraction 0..1 of the way round from end 1.

    Points' own ``position`` values are used when they agree with ``ring_order`` (rising along
    it); points without one are spread evenly between their known neighbours, and points sharing
    one position spread about it. When the positions contradict the order, or none is known,
    the points are spread evenly in ring order. Points always stay in order and a small step
    apart, so no two share a spot.
    """
    ring, _ = _points_in_order(diagnosis)
    n = len(ring)
    if not n:
        return {}
    margin = 0.03
    gap = min(0.05, (1 - 2 * margin) / max(n - 1, 1))
    known = [_finite(p.get("position")) for p in ring]
    known = [None if v is None else min(max(v, 0.0), 1.0) for v in known]
    if not _agrees_with_order(known):
        known = [None] * n
    known = _centre_ties(known, gap)
    anchors = [(-1, 0.0)] + [(i, v) for i, v in enumerate(known) if v is not None] + [(n, 1.0)]
    spread = list(known)
    for (i0, v0), (i1, v1) in zip(anchors, anchors[1:], strict=False):
        for k in range(i0 + 1, i1):
            spread[k] = v0 + (v1 - v0) * (k - i0) / (i1 - i0)
    placed = [min(max(v, margin), 1 - margin) for v in spread]
    for k in range(1, n):
        placed[k] = max(placed[k], placed[k - 1] + gap)
    placed[-1] = min(placed[-1], 1 - margin)
    for k in range(n - 2, -1, -1):
        placed[k] = min(placed[k], placed[k + 1] - gap)
    return {str(p.get("id")): v for p, v in zip(ring, placed, strict=True)}


def _first_fault(diagnosis: dict) -> dict | None:
    for finding in diagnosis.get("findings") or []:
        if isinstance(finding, dict) and finding.get("severity") == "fault":
            return finding
    return None
