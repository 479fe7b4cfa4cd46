"""The ring picture: the ring as the readings draw it, board at the top, outlets round the
loop from end 1 to end 2, spurs branching inward, the first fault drawn on it, and a key.
"""

from __future__ import annotations

import math

from markupsafe import Markup

from fieldapp.drawings.key import _NODE, _halo, _key, _node, _zs_badge
from fieldapp.drawings.layout import (
    _finite,
    _first_fault,
    _label,
    _number_map,
    _points_in_order,
    order_known,
    ring_positions,
)
from fieldapp.drawings.svg import (
    ALERT,
    INK,
    MUTED,
    RESULT_NOTE,
    WIDTH,
    _circle,
    _el,
    _line,
    _num,
    _svg,
    _text,
    _wrapped,
)

#: Short words for the fault marks on the ring picture, by finding code.
FAULT_WORDS = {
    "interconnection": "bridge?",
    "open_conductor": "open?",
    "high_resistance_joint": "poor joint?",
    "unrecorded_spur": "spur?",
    "wrong_cross_connection": "ends crossed?",
    "reversed_polarity": "polarity?",
}

_CX, _CY, _R = 180.0, 190.0, 98.0
_END_GAP = 0.36  # radians left open at the top where the two ends go to the board


def _angle(position: float) -> float:
    return _END_GAP / 2 + position * (2 * math.pi - _END_GAP)


def _on_ring(position: float, radius: float = _R) -> tuple[float, float]:
    """Screen point for a ring fraction: end 1 at top left, round anticlockwise to end 2."""
    a = _angle(position)
    return _CX - radius * math.sin(a), _CY - radius * math.cos(a)








def _short(text: str, chars: int) -> str:
    return text if len(text) <= chars else text[: chars - 1].rstrip() + "…"


def _outer_labels(positions: list[tuple[float, str]],
                  points: list[tuple[float, float]]) -> tuple[list[str], float]:
    """Short labels just outside the ring, anchored away from the centre. A label that would
    overlap another point's symbol (``points``, the labelled ones first and in the same order)
    or a label placed before it moves outward a line at a time. Returns the elements and the
    lowest y any label reaches."""
    pad = _NODE + 6  # room for a suspect halo
    symbols = [(x - pad, y - pad, x + pad, y + pad) for x, y in points]
    boxes: list[tuple] = []
    out, lowest = [], _CY + _R
    for own, (position, label) in enumerate(positions):
        others = symbols[:own] + symbols[own + 1:] + boxes
        side = math.sin(_angle(position))
        anchor = "end" if side > 0.35 else "start" if side < -0.35 else "middle"
        # outward a line at a time; when six lines are not enough, try again shorter
        for longest, step in [(16, k) for k in range(6)] + [(7, k) for k in range(6)]:
            x, y = _on_ring(position, _R + _NODE + 7 + 13 * step)
            if anchor == "middle":
                y += 4 if y > _CY else -2
                room = min(2 * min(x, WIDTH - x), 90)
            else:
                y += 4
                room = x if anchor == "end" else WIDTH - x
            text = _short(label, min(max(int((room - 4) / 6.6), 4), longest))
            width = len(text) * 6.6
            left = {"end": x - width, "start": x, "middle": x - width / 2}[anchor]
            box = (left - 2, y - 11, left + width + 2, y + 3)
            if not any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3]
                       for b in others):
                break
        boxes.append(box)
        lowest = max(lowest, box[3])
        out.append(_text(x, y, text, size=11, anchor=anchor, title=label))
    return out, lowest


def _spur_layout(spurs: list[dict], anchors: dict[str, tuple]) -> list[tuple]:
    """Place spur points on branches pointing into the ring from their parent.

    ``anchors`` maps a placed point's id to (x, y, ux, uy): its place and the inward direction.
    Returns (point, parent_xy, xy) for each spur that traces back to a placed point.
    """
    children: dict[str, list[dict]] = {}
    for p in spurs:
        children.setdefault(str(p.get("spur_from")), []).append(p)
    placed, queue = [], list(anchors)
    while queue:
        parent = queue.pop(0)
        kids = children.pop(parent, [])
        px, py, ux, uy = anchors[parent]
        for k, child in enumerate(kids):
            offset = (k - (len(kids) - 1) / 2) * 24
            x = px + ux * 34 - uy * offset
            y = py + uy * 34 + ux * offset
            anchors[str(child.get("id"))] = (x, y, ux, uy)
            placed.append((child, (px, py), (x, y)))
            queue.append(str(child.get("id")))
    return placed






def _fault_marks(fault: dict, ring_xy) -> tuple[list[str], list[str]]:
    """The chord of a bridged section (drawn under the points) or the cross at a break or
    joint (drawn over them, so a point on the spot cannot hide it)."""
    out = []
    word = FAULT_WORDS.get(str(fault.get("code")), "fault?")
    conductor = fault.get("conductor")
    if conductor in ("line", "neutral", "cpc") and fault.get("code") == "open_conductor":
        word = f"open {conductor}?"
    section = fault.get("section")
    if isinstance(section, list | tuple) and len(section) == 2 and all(
            _finite(v) is not None for v in section):
        a, b = (min(max(float(v), 0.0), 1.0) for v in section)
        (x1, y1), (x2, y2) = ring_xy(a), ring_xy(b)
        out.append(_line(x1, y1, x2, y2, stroke=ALERT, width=4, dash="9 5", cap="round"))
        for x, y in ((x1, y1), (x2, y2)):
            out.append(_circle(x, y, 5, fill=ALERT, stroke=ALERT))
        mx, my = (x1 + x2) / 2, (y1 + y2) / 2
        out.append(_el("rect", x=mx - 36, y=my - 10, width=72.0, height=16.0, fill="#ffffff",
                       stroke="none"))
        out.append(_text(mx, my + 3, word, size=11, anchor="middle", weight="bold",
                         fill=ALERT))
        return out, []
    position = _finite(fault.get("position"))
    if position is not None:
        position = min(max(position, 0.0), 1.0)
        x, y = ring_xy(position)
        out.append(_circle(x, y, 7, fill="#ffffff", stroke="none"))
        for dx, dy in ((-7, -7), (-7, 7)):
            out.append(_line(x + dx, y + dy, x - dx, y - dy, stroke=ALERT, width=3.5,
                             cap="round"))
        ix, iy = _on_ring(position, _R - 28)
        out.append(_text(ix, iy + 4, word, size=11, anchor="middle", weight="bold",
                         fill=ALERT))
    return [], out


def ring_picture(diagnosis: dict, *, key: bool = True, names: dict | None = None) -> Markup:
    """The ring as inferred from the readings: board at the top, outlets round the loop from
    end 1 (left) to end 2 (right), spurs branching inward from their parent, FCUs as squares,
    points over their Zs limit with a warning triangle, and the first fault finding drawn on
    it (a chord across a bridged section, a cross at a break or joint, dashed halos round the
    outlets it names). A key underneath gives every point's name and label in full and the fault in
    words; ``key=False`` leaves both out, for a page that lists the points and findings itself.
    ``names`` (id -> short name) replaces the ids inside the symbols, for a sheet that numbers
    its rows.
    """
    ring, spurs = _points_in_order(diagnosis)
    numbers = _number_map(ring, spurs, names)
    positions = ring_positions(diagnosis)
    fault = _first_fault(diagnosis)
    suspects = {str(o) for o in (fault.get("outlets") or [])} if fault else set()
    under, over = _fault_marks(fault, _on_ring) if fault else ([], [])

    (e1x, e1y), (e2x, e2y) = _on_ring(0.0), _on_ring(1.0)
    body = [
        _el("rect", x=130.0, y=8.0, width=100.0, height=30.0, rx=4.0, fill="#ffffff",
            stroke=INK, stroke_width=2.0),
        _text(_CX, 28, "Board", size=13, anchor="middle", weight="bold"),
        _line(_CX - 16, 38, e1x, e1y, width=3),
        _line(_CX + 16, 38, e2x, e2y, width=3),
        _text(e1x - 8, 62, "end 1", size=11, anchor="end"),
        _text(e2x + 8, 62, "end 2", size=11),
        _el("path", d=f"M {_num(e1x)} {_num(e1y)} A {_num(_R)} {_num(_R)} 0 1 0 "
                      f"{_num(e2x)} {_num(e2y)}",
            fill="none", stroke=INK, stroke_width=3.0),
    ]
    if not ring:
        body.append(_text(_CX, _CY + 4, "No outlets recorded yet", size=12, anchor="middle",
                          fill=MUTED))
    body += under
    anchors = {}
    for point in ring:
        oid = str(point.get("id"))
        x, y = _on_ring(positions[oid])
        anchors[oid] = (x, y, (_CX - x) / _R, (_CY - y) / _R)
    spur_places = _spur_layout(spurs, dict(anchors))
    for _, (px, py), (x, y) in spur_places:
        body.append(_line(px, py, x, y, width=2))
    drawn = [(p, anchors[str(p.get("id"))][:2]) for p in ring]
    drawn += [(p, xy) for p, _, xy in spur_places]
    for point, (x, y) in drawn:
        oid = str(point.get("id"))
        body.append(_node(x, y, point.get("kind", ""), numbers[oid], _label(point)))
        if oid in suspects:
            body.append(_halo(x, y))
        if point.get("ok") is False:
            body.append(_zs_badge(x, y))
    labels, lowest = _outer_labels([(positions[str(p.get("id"))], _label(p)) for p in ring],
                                   [xy for _, xy in drawn])
    body += labels + over

    y = max(_CY + _R + 40, lowest + 24)
    if fault and key:
        # the headline only: the full finding and what to check next sit beside the picture
        headline = diagnosis.get("summary") or fault.get("message") or fault.get("code", "")
        lines, y = _wrapped(12, y, "Suspected: " + str(headline), 50, weight="bold", fill=ALERT)
        body += lines
        y += 8
    if key:
        rows, y = _key(ring + spurs, numbers, suspects, y + 6)
        body += rows
    if order_known(diagnosis):
        title = "Ring layout inferred from the readings"
        note = "Layout inferred from the readings, not surveyed: verify on site."
    else:
        title = "Ring outlets in the order as entered"
        note = ("Order as entered: these readings cannot tell where each outlet is on the "
                "ring (a sound ring reads alike all round). Not surveyed.")
    lines, y = _wrapped(12, y + 2, f"{note} {RESULT_NOTE}", 56, size=11, fill=MUTED)
    body += lines
    return _svg(y + 4, title, body)

