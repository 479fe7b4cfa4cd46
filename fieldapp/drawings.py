"""SVG drawings for the ring test: what to connect, the inferred ring, and the readings.

Pure functions from plain values (the dicts and lists of ``ringmath.diagnose``'s output, see
DEVELOPERS.md) to SVG markup. Every piece of text from a record is escaped, so the result can be
embedded inline in a page (it is returned as ``markupsafe.Markup``) or in a PDF.

The drawings are made for a phone first (``viewBox`` 360 units wide, ``width="100%"``, text of
at least 11 units) and for black-and-white print: no meaning rests on colour alone. Conductors
carry their text name and a line style (line solid, neutral dashed, CPC striped) beside the
harmonised core colours; suspect points carry a shape, a dashed halo and words.

Only presentation attributes and basic shapes are used (no ids, no CSS, no markers), so several
drawings can share one page and the PDF renderer draws them the same way.
"""

from __future__ import annotations

import math
import textwrap
from html import escape

from markupsafe import Markup

WIDTH = 360
FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
INK = "#1a1a1a"
MUTED = "#555555"
ALERT = "#b3261e"
BAND_FILL = "#e3e3e3"

#: Harmonised core colours of fixed wiring (line brown, neutral blue, protective conductor
#: green-and-yellow: BS 7671:2018 Table 51), each with a line style that survives grey print.
CORES = {
    "L": {"name": "line", "colour": "#7b4a1e", "dash": None},
    "N": {"name": "neutral", "colour": "#1f5fb4", "dash": "8 4"},
    "CPC": {"name": "cpc", "colour": "#2e7d32", "dash": None, "stripe": "#f2c200"},
}

#: Short words for the fault marks on the ring picture, by finding code.
FAULT_WORDS = {
    "interconnection": "bridge?",
    "open_conductor": "open?",
    "high_resistance_joint": "poor joint?",
    "unrecorded_spur": "spur?",
    "wrong_cross_connection": "ends crossed?",
    "reversed_polarity": "polarity?",
}

KIND_WORDS = {
    "twin_socket": "twin socket",
    "single_socket": "single socket",
    "fcu": "FCU",
    "junction_box": "junction box",
    "fixed_equipment": "fixed equipment",
}

ISOLATION_NOTE = (
    "Only on a circuit that is safely isolated, locked off and proved dead. "
    "Readings must be verified by a competent person; BS 7671 and local rules prevail."
)


# ---------------------------------------------------------------- small SVG helpers


def _esc(value) -> str:
    """Escape any value for text content or a double-quoted attribute."""
    return escape(str(value), quote=True)


def _num(x: float) -> str:
    """A coordinate with at most one decimal (short, stable markup)."""
    text = f"{x:.1f}"
    return text[:-2] if text.endswith(".0") else text


def _attrs(attrs: dict) -> str:
    parts = []
    for key, value in attrs.items():
        if value is None:
            continue
        name = key.rstrip("_").replace("_", "-")
        text = _num(value) if isinstance(value, float) else _esc(value)
        parts.append(f'{name}="{text}"')
    return " ".join(parts)


def _el(tag: str, content: str | None = None, **attrs) -> str:
    """One element; ``content`` is markup already made safe by the caller."""
    opening = f"<{tag} {_attrs(attrs)}" if attrs else f"<{tag}"
    if content is None:
        return opening + "/>"
    return f"{opening}>{content}</{tag}>"


def _text(x: float, y: float, words, size: float = 12, anchor: str = "start",
          weight: str | None = None, fill: str = INK, title: str | None = None) -> str:
    """A text element; ``words`` is escaped here. ``title`` adds a hover text (escaped too)."""
    inner = _esc(words)
    if title is not None:
        inner = _el("title", _esc(title)) + inner
    return _el("text", inner, x=float(x), y=float(y), font_size=float(size),
               text_anchor=None if anchor == "start" else anchor, font_weight=weight,
               fill=fill)


def _line(x1, y1, x2, y2, stroke: str = INK, width: float = 1.5, dash: str | None = None,
          cap: str | None = None) -> str:
    return _el("line", x1=float(x1), y1=float(y1), x2=float(x2), y2=float(y2), stroke=stroke,
               stroke_width=float(width), stroke_dasharray=dash, stroke_linecap=cap)


def _circle(x, y, r, fill: str = "#ffffff", stroke: str = INK, width: float = 1.5,
            dash: str | None = None) -> str:
    return _el("circle", cx=float(x), cy=float(y), r=float(r), fill=fill, stroke=stroke,
               stroke_width=float(width), stroke_dasharray=dash)


def _polygon(points, fill: str = "#ffffff", stroke: str = INK, width: float = 1.5) -> str:
    coords = " ".join(f"{_num(float(x))},{_num(float(y))}" for x, y in points)
    return _el("polygon", points=coords, fill=fill, stroke=stroke, stroke_width=float(width))


def _svg(height: float, title: str, body: list[str]) -> Markup:
    """The outer element: 360 units wide, scales to its container, labelled for screen readers."""
    head = (
        f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {WIDTH} {_num(float(height))}" '
        f'width="100%" role="img" aria-label="{_esc(title)}" font-family="{FONT}">'
    )
    return Markup(head + _el("title", _esc(title)) + "".join(body) + "</svg>")


def _wrapped(x: float, y: float, words: str, chars: int, size: float = 12,
             fill: str = INK, weight: str | None = None) -> tuple[list[str], float]:
    """Word-wrapped lines of text from (x, y) down; returns the elements and the next free y."""
    out = []
    for line in textwrap.wrap(words, chars) or [""]:
        out.append(_text(x, y, line, size=size, fill=fill, weight=weight))
        y += size * 1.35
    return out, y


def _core(x1, y1, x2, y2, core: str, width: float = 4) -> str:
    """A conductor in its core colour and line style (CPC: green with a yellow stripe)."""
    style = CORES[core]
    parts = [_line(x1, y1, x2, y2, stroke=style["colour"], width=width, dash=style["dash"])]
    if "stripe" in style:
        parts.append(_line(x1, y1, x2, y2, stroke=style["stripe"], width=width, dash="5 5"))
    return "".join(parts)


def _meter(x, y, caption: str | None = None) -> str:
    """An ohmmeter: a circle with the ohm sign, and an optional caption beneath."""
    parts = [_circle(x, y, 12, width=2), _text(x, y + 5, "Ω", size=14, anchor="middle",
                                               weight="bold")]
    if caption:
        parts.append(_text(x, y + 26, caption, size=11, anchor="middle"))
    return "".join(parts)


# ---------------------------------------------------------------- step connection diagrams

_ROWS = {"L": 78, "N": 128, "CPC": 178}
_LEFT_TERMINAL = 112
_RIGHT_TERMINAL = 248

_STEPS = {
    "e2e": {
        "title": "Step 1: end-to-end readings r1, rn, r2",
        "links": (),
        "lines": [
            "Nothing joined. Measure across each pair of ends in turn:",
            "1. L1 to L2: r1 (line)",
            "2. N1 to N2: rn (neutral)",
            "3. CPC1 to CPC2: r2 (cpc)",
            "r1 and rn should match within about 0.05 Ω; for 2.5/1.5 mm² cable r2 is "
            "about 1.67 × r1.",
        ],
        "outlet": None,
    },
    "ln": {
        "title": "Step 2: join L1 to N2 and L2 to N1",
        "links": (("L", "N"), ("N", "L")),
        "lines": [
            "Join L1 to N2 and L2 to N1 at the board.",
            "Then measure L to N at every outlet: each should read about (r1 + rn) / 4, "
            "nearly the same everywhere.",
        ],
        "outlet": "N",
    },
    "le": {
        "title": "Step 3: join L1 to CPC2 and L2 to CPC1",
        "links": (("L", "CPC"), ("CPC", "L")),
        "lines": [
            "Join L1 to CPC2 and L2 to CPC1 at the board.",
            "Then measure L to CPC at every outlet: each should read about (r1 + r2) / 4; "
            "this reading is the outlet's R1+R2.",
        ],
        "outlet": "CPC",
    },
}


def _cable_end(side: str) -> list[str]:
    """One ring end at the board: the sheath and three conductors ending in terminals."""
    left = side == "1"
    sheath_x = 8 if left else WIDTH - 52
    terminal = _LEFT_TERMINAL if left else _RIGHT_TERMINAL
    stub_from = sheath_x + 44 if left else sheath_x
    out = [
        _el("rect", x=float(sheath_x), y=52.0, width=44.0, height=150.0, rx=10.0,
            fill="#d9d9d9", stroke=INK, stroke_width=1.5),
        _text(sheath_x + 22, 44, f"End {side}", size=12, anchor="middle", weight="bold"),
    ]
    for core, y in _ROWS.items():
        out.append(_core(stub_from, y, terminal, y, core))
        out.append(_circle(terminal, y, 6, width=2))
        label_x = stub_from + 4 if left else stub_from - 4
        out.append(_text(label_x, y - 9, f"{core}{side}", size=12,
                         anchor="start" if left else "end", weight="bold"))
    return out


def _outlet_face(x: float, y: float, other: str) -> list[str]:
    """A socket outlet seen from the front with the meter on L and ``other`` (N or CPC)."""
    pins = {"CPC": (x + 40, y + 16), "N": (x + 20, y + 40), "L": (x + 60, y + 40)}
    names = {"CPC": "E", "N": "N", "L": "L"}
    out = [_el("rect", x=float(x), y=float(y), width=80.0, height=58.0, rx=6.0,
               fill="#ffffff", stroke=INK, stroke_width=2.0)]
    for core, (px, py) in pins.items():
        used = core in ("L", other)
        out.append(_el("rect", x=float(px - 5), y=float(py - 7), width=10.0, height=14.0,
                       fill=INK if used else "#ffffff", stroke=INK, stroke_width=1.5))
        if core == "CPC":
            out.append(_text(px + 9, py + 4, names[core], size=11))
        else:
            out.append(_text(px, py + 20, names[core], size=11, anchor="middle"))
    meter_x, meter_y = x + 150, y + 30
    for core in ("L", other):
        px, py = pins[core]
        out.append(_core(px, py, meter_x - 12, meter_y, core, width=3))
    out.append(_meter(meter_x, meter_y, f"L–{other}"))
    return out


def connection_diagram(step: str) -> Markup:
    """What to connect at the board for one step of the ring test.

    ``step`` is "e2e" (step 1, ends measured pair by pair), "ln" (step 2, L1–N2 and L2–N1 joined,
    L–N measured at each outlet) or "le" (step 3, L1–CPC2 and L2–CPC1 joined, L–CPC measured at
    each outlet). Raises ValueError for any other step.
    """
    if step not in _STEPS:
        raise ValueError(f"step: {step!r} is not one of {', '.join(_STEPS)}")
    spec = _STEPS[step]
    body = [_text(WIDTH / 2, 22, spec["title"], size=14, anchor="middle", weight="bold")]
    body += _cable_end("1") + _cable_end("2")
    if step == "e2e":
        middle = (_LEFT_TERMINAL + _RIGHT_TERMINAL) / 2
        readings = zip(_ROWS.values(), ("r1", "rn", "r2"), strict=True)
        for number, (y, reading) in enumerate(readings, start=1):
            body.append(_line(_LEFT_TERMINAL + 6, y, middle - 12, y, dash="2 3"))
            body.append(_line(middle + 12, y, _RIGHT_TERMINAL - 6, y, dash="2 3"))
            body.append(_meter(middle, y, f"{number}: {reading}"))
    for left_core, right_core in spec["links"]:
        x1, y1 = _LEFT_TERMINAL, _ROWS[left_core]
        x2, y2 = _RIGHT_TERMINAL, _ROWS[right_core]
        body.append(_line(x1, y1, x2, y2, width=4, cap="round"))
        body.append(_circle(x1, y1, 4, fill=INK))
        body.append(_circle(x2, y2, 4, fill=INK))
    if spec["links"]:
        body.append(_text(WIDTH / 2, 218, "black lines: temporary links", size=11,
                          anchor="middle", fill=MUTED))
    y = 244
    if spec["outlet"]:
        body += _outlet_face(24, y, spec["outlet"])
        body.append(_text(24, y - 6, "At each outlet:", size=12, weight="bold"))
        y += 96
    for line in spec["lines"]:
        lines, y = _wrapped(12, y, line, 52)
        body += lines
    lines, y = _wrapped(12, y + 4, ISOLATION_NOTE, 56, size=11, fill=MUTED)
    body += lines
    return _svg(y + 4, spec["title"], body)


# ---------------------------------------------------------------- ordering shared by drawings


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


def _number_map(ring: list[dict], spurs: list[dict]) -> dict[str, int]:
    """The number each point carries in every drawing: ring order first, then spurs."""
    return {str(p.get("id")): i for i, p in enumerate(ring + spurs, start=1)}


def point_numbers(diagnosis: dict) -> dict[str, int]:
    """The number each point of a diagnosis carries in the ring picture and the readings plot
    (by point id), so a table printed beside them can use the same numbers."""
    return _number_map(*_points_in_order(diagnosis))


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


# ---------------------------------------------------------------- the ring picture

_CX, _CY, _R = 180.0, 190.0, 98.0
_END_GAP = 0.36  # radians left open at the top where the two ends go to the board
_NODE = 10.0


def _angle(position: float) -> float:
    return _END_GAP / 2 + position * (2 * math.pi - _END_GAP)


def _on_ring(position: float, radius: float = _R) -> tuple[float, float]:
    """Screen point for a ring fraction: end 1 at top left, round anticlockwise to end 2."""
    a = _angle(position)
    return _CX - radius * math.sin(a), _CY - radius * math.cos(a)


def _node(x: float, y: float, kind: str, number: int, label: str) -> str:
    """A point's symbol with its number inside: circle socket, square FCU, diamond junction box,
    rounded square fixed equipment."""
    s = _NODE
    if kind == "fcu":
        shape = _el("rect", x=x - s, y=y - s, width=2 * s, height=2 * s, fill="#ffffff",
                    stroke=INK, stroke_width=2.5)
    elif kind == "junction_box":
        shape = _polygon([(x, y - s - 3), (x + s + 3, y), (x, y + s + 3), (x - s - 3, y)])
    elif kind == "fixed_equipment":
        shape = _el("rect", x=x - s, y=y - s, width=2 * s, height=2 * s, rx=5.0,
                    fill="#ffffff", stroke=INK, stroke_width=1.5)
    else:
        shape = _circle(x, y, s)
    return "<g>" + _el("title", _esc(label)) + shape + _text(
        x, y + 4, number, size=11, anchor="middle", weight="bold") + "</g>"


def _halo(x: float, y: float) -> str:
    """The suspect mark: a thick dashed ring round a point."""
    return _circle(x, y, _NODE + 6, fill="none", stroke=ALERT, width=3, dash="4 3")


def _zs_badge(x: float, y: float) -> str:
    """A warning triangle with '!' beside a point whose Zs is over its limit."""
    tx, ty = x + 12, y - 12
    return (_polygon([(tx, ty - 7), (tx + 7, ty + 5), (tx - 7, ty + 5)], fill="#ffffff",
                     stroke=ALERT, width=2)
            + _text(tx, ty + 4, "!", size=10, anchor="middle", weight="bold", fill=ALERT))


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


def _point_notes(point: dict, numbers: dict[str, int], suspects: set[str]) -> list[str]:
    notes = [KIND_WORDS.get(point.get("kind"), str(point.get("kind") or "outlet"))]
    if point.get("kind") == "fcu" and _finite(point.get("fuse_a")) is not None:
        notes[-1] += f" {point['fuse_a']:g} A"
    parent = point.get("spur_from")
    if parent:
        notes.append(f"spur off {numbers.get(str(parent), parent)}")
    protected = str(point.get("protected_by") or "")
    if protected.startswith("fcu:"):
        fcu = protected[4:]
        notes.append(f"beyond FCU {numbers.get(fcu, fcu)}")
    if point.get("ok") is False:
        zs, limit = _finite(point.get("zs_ohm")), _finite(point.get("zs_max_ohm"))
        if zs is not None and limit is not None:
            notes.append(f"Zs {zs:.2f} Ω over limit {limit:.2f} Ω")
        else:
            notes.append("Zs over limit")
    if str(point.get("id")) in suspects:
        notes.append("suspect")
    return notes


def _key(points: list[dict], numbers: dict[str, int], suspects: set[str], y: float,
         with_notes: bool = True) -> tuple[list[str], float]:
    """The key under a drawing: each point's symbol and number, its full label and notes."""
    out = []
    for point in points:
        oid = str(point.get("id"))
        label = _label(point)
        out.append(_node(20, y, point.get("kind", ""), numbers[oid], label))
        if oid in suspects:
            out.append(_halo(20, y))
        if point.get("ok") is False:
            out.append(_zs_badge(20, y))
        out.append(_text(42, y + 4, label, size=12, weight="bold"))
        if with_notes:
            out.append(_text(42, y + 19, " · ".join(_point_notes(point, numbers, suspects)),
                             size=11, fill=MUTED))
            y += 38
        else:
            y += 26
    return out, y


def _fault_marks(fault: dict, ring_xy) -> tuple[list[str], list[str]]:
    """The chord of a bridged section (drawn under the points) or the cross at a break or
    joint (drawn over them, so a point on the spot cannot hide it)."""
    out = []
    word = FAULT_WORDS.get(fault.get("code"), "fault?")
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


def ring_picture(diagnosis: dict, *, key: bool = True) -> Markup:
    """The ring as inferred from the readings: board at the top, outlets round the loop from
    end 1 (left) to end 2 (right), spurs branching inward from their parent, FCUs as squares,
    points over their Zs limit with a warning triangle, and the first fault finding drawn on
    it (a chord across a bridged section, a cross at a break or joint, dashed halos round the
    outlets it names). A numbered key underneath gives every label in full and the fault in
    words; ``key=False`` leaves both out, for a page that lists the points and findings itself.
    """
    ring, spurs = _points_in_order(diagnosis)
    numbers = _number_map(ring, spurs)
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
    lines, y = _wrapped(12, y + 2, "Layout inferred from the readings, not surveyed: verify on "
                        "site. " + ISOLATION_NOTE, 56, size=11, fill=MUTED)
    body += lines
    return _svg(y + 4, "Ring layout inferred from the readings", body)


# ---------------------------------------------------------------- the readings plot

_PLOT_LEFT, _PLOT_RIGHT = 50.0, WIDTH - 12.0
_PANEL_HEIGHT = 130.0


def _nice_step(span: float) -> float:
    """A round tick step giving three to six ticks over ``span``."""
    raw = span / 4
    magnitude = 10 ** math.floor(math.log10(raw))
    for factor in (1, 2, 2.5, 5, 10):
        if raw <= factor * magnitude:
            return factor * magnitude
    return 10 * magnitude


def _band(value) -> tuple[float, float] | None:
    if isinstance(value, list | tuple) and len(value) == 2:
        lo, hi = _finite(value[0]), _finite(value[1])
        if lo is not None and hi is not None and hi >= lo:
            return lo, hi
    return None


def _reading_ranges(diagnosis: dict, step: str) -> dict[str, tuple[float, float]]:
    """Per-outlet expected ranges for one step from ``diagnosis["readings"]``, where given."""
    out = {}
    for entry in diagnosis.get("readings") or []:
        if not isinstance(entry, dict) or entry.get("step") != step:
            continue
        band = _band([entry.get("low_ohm"), entry.get("high_ohm")])
        if band and entry.get("outlet") is not None:
            out[str(entry["outlet"])] = band
    return out


def _verdict(value, band: tuple[float, float] | None) -> str:
    """ "open", "high", "low", "ok", "unknown" (no range to judge by) or "missing"."""
    if isinstance(value, str) and value.strip().upper() == "OL":
        return "open"
    number = _finite(value)
    if number is None:
        return "open" if isinstance(value, float) and math.isinf(value) else "missing"
    if band is None:
        return "unknown"
    if number > band[1]:
        return "high"
    if number < band[0]:
        return "low"
    return "ok"


def _ohms(value: float) -> str:
    return f"{value:.2f}" if value < 10 else f"{value:.1f}"


def _panel(diagnosis: dict, step: str, top: float, ring: list[dict], spurs: list[dict],
           numbers: dict[str, int]) -> list[str]:
    """One step's panel: band, expected line, a marker per outlet, axes in ohms."""
    field, name = ("ln_ohm", "L–N") if step == "ln" else ("le_ohm", "L–CPC")
    expected = diagnosis.get("expected") or {}
    band = _band(expected.get(f"{step}_band_ohm"))
    centre = _finite(expected.get(field))
    ranges = _reading_ranges(diagnosis, step)
    points = ring + spurs
    judged = []
    for p in points:
        oid = str(p.get("id"))
        own = band if not p.get("spur_from") and band else ranges.get(oid)
        judged.append((p, own, _verdict(p.get(field), own)))

    scale_values = [v for v in (_finite(p.get(field)) for p in points) if v is not None]
    references = [v for b in [band, *ranges.values()] if b for v in b]
    references += [centre] if centre is not None else []
    ceiling = max(references + scale_values + [0.1])
    ring_refs = [v for v in (*(band or ()), centre) if v is not None] or references
    if ring_refs:
        ceiling = min(ceiling, 3 * max(ring_refs))
    step_size = _nice_step(ceiling * 1.1)
    y_max = step_size * math.ceil(ceiling * 1.1 / step_size)
    plot_top, plot_bottom = top + 30, top + _PANEL_HEIGHT

    def y_of(v: float) -> float:
        return plot_bottom - (min(v, y_max) / y_max) * (plot_bottom - plot_top)

    out = [_text(8, top + 14, f"Step {2 if step == 'ln' else 3}: {name} at each outlet (Ω)",
                 size=13, weight="bold")]
    if band:
        out.append(_el("rect", x=_PLOT_LEFT, y=y_of(band[1]), width=_PLOT_RIGHT - _PLOT_LEFT,
                       height=max(y_of(band[0]) - y_of(band[1]), 1.0), fill=BAND_FILL))
        for edge in band:
            out.append(_line(_PLOT_LEFT, y_of(edge), _PLOT_RIGHT, y_of(edge), stroke=MUTED,
                             width=1, dash="4 3"))
        caption = f"expected {_ohms(band[0])}–{_ohms(band[1])} Ω"
        out.append(_text(_PLOT_RIGHT, top + 26, caption, size=11, anchor="end", fill=MUTED))
    else:
        out.append(_text(_PLOT_RIGHT, top + 26, "expected range not known yet", size=11,
                         anchor="end", fill=MUTED))
    if centre is not None:
        out.append(_line(_PLOT_LEFT, y_of(centre), _PLOT_RIGHT, y_of(centre), stroke=INK,
                         width=1, dash="10 3 2 3"))
    tick = 0.0
    while tick <= y_max + 1e-9:
        out.append(_line(_PLOT_LEFT - 4, y_of(tick), _PLOT_LEFT, y_of(tick)))
        out.append(_text(_PLOT_LEFT - 6, y_of(tick) + 4, f"{tick:g}", size=11, anchor="end"))
        tick += step_size
    out.append(_line(_PLOT_LEFT, plot_top, _PLOT_LEFT, plot_bottom))
    out.append(_line(_PLOT_LEFT, plot_bottom, _PLOT_RIGHT, plot_bottom))
    out.append(_text(12, (plot_top + plot_bottom) / 2, "Ω", size=12, anchor="middle"))

    if not points:
        out.append(_text((_PLOT_LEFT + _PLOT_RIGHT) / 2, (plot_top + plot_bottom) / 2,
                         "No outlet readings yet", size=12, anchor="middle", fill=MUTED))
        return out
    column = (_PLOT_RIGHT - _PLOT_LEFT) / len(points)
    every = max(1, math.ceil(20 / column))  # number every column only where they fit
    if spurs and ring:
        x = _PLOT_LEFT + column * len(ring)
        out.append(_line(x, plot_top, x, plot_bottom, stroke=MUTED, width=1, dash="2 2"))
        out.append(_text(x + 3, plot_top + 10, "spurs", size=10, fill=MUTED))
    for k, (point, own, verdict) in enumerate(judged):
        x = _PLOT_LEFT + column * (k + 0.5)
        oid = str(point.get("id"))
        if k % every == 0:
            out.append(_text(x, plot_bottom + 14, numbers[oid], size=11, anchor="middle"))
        if point.get("spur_from") and own:
            out.append(_el("rect", x=x - 5, y=y_of(own[1]), width=10.0,
                           height=max(y_of(own[0]) - y_of(own[1]), 1.0), fill=BAND_FILL,
                           stroke=MUTED, stroke_width=1.0))
        out.append(_marker(x, verdict, _finite(point.get(field)), y_of, plot_top, y_max,
                           _label(point), short=_crowded(len(points))))
    return out


def _crowded(count: int) -> bool:
    """True when the plot's columns are too narrow for the words "high" and "low"."""
    return count > 0 and (_PLOT_RIGHT - _PLOT_LEFT) / count < 26


def _marker(x: float, verdict: str, value: float | None, y_of, plot_top: float, y_max: float,
            label: str, short: bool = False) -> str:
    """One reading's mark: dot in range, triangle and word out of range, OL at the top edge."""
    if verdict == "missing":
        return _text(x, y_of(0) - 4, "–", size=12, anchor="middle", fill=MUTED,
                     title=f"{label}: not taken")
    if verdict == "open":
        y = plot_top
        return (_polygon([(x, y - 2), (x + 7, y + 10), (x - 7, y + 10)], fill=ALERT,
                         stroke=INK, width=1)
                + _text(x, y + 24, "OL", size=11, anchor="middle", weight="bold", fill=ALERT,
                        title=f"{label}: OL (open)"))
    y = y_of(value)
    tip = f"{label}: {_ohms(value)} Ω"
    if verdict in ("high", "low"):
        up = verdict == "high"
        d = -1 if up else 1
        shape = _polygon([(x, y + 7 * d), (x + 7, y - 5 * d), (x - 7, y - 5 * d)], fill=ALERT,
                         stroke=INK, width=1)
        word = verdict[0].upper() if short else verdict
        if up and value > y_max:
            word_y = y + 22
            word = word if short else f"{verdict} {_ohms(value)}"
        elif up:
            word_y = y - 12
        else:
            word_y = y + 20 if y + 20 < y_of(0) - 2 else y - 10
        near_edge = x > _PLOT_RIGHT - 24
        return shape + _text(x + 8 if near_edge else x, word_y, word, size=10,
                             anchor="end" if near_edge else "middle", weight="bold",
                             fill=ALERT, title=f"{tip} ({verdict})")
    fill = INK if verdict == "ok" else "#ffffff"
    return _el("g", _el("title", _esc(tip)) + _circle(x, y, 4.5, fill=fill, width=1.5))


_LEGEND = (
    "● in range   ○ no range to judge by   – not taken",
    "▲ high  ▼ low: out of range   ▲ OL: open, at the top edge",
    "grey band: expected range   dash-dot line: expected value",
)


def readings_plot(diagnosis: dict) -> Markup:
    """Step 2 (L–N) and step 3 (L–CPC) readings outlet by outlet, in ring order then spurs,
    against the expected band. In range: a filled dot. Out of range: a triangle pointing the
    way it is out, with the word "high" or "low". OL: a triangle on the top edge with "OL".
    Not taken: a dash on the axis. Readings above the scale are pinned to the top edge.
    """
    ring, spurs = _points_in_order(diagnosis)
    numbers = _number_map(ring, spurs)
    body = []
    top = 6.0
    for step in ("ln", "le"):
        body += _panel(diagnosis, step, top, ring, spurs, numbers)
        top += _PANEL_HEIGHT + 30
    y = top
    crowded = ("H, L: high, low where the columns are narrow",)
    for line in _LEGEND + (crowded if _crowded(len(ring + spurs)) else ()):
        body.append(_text(8, y, line, size=11, fill=MUTED))
        y += 15
    key, y = _key(ring + spurs, numbers, set(), y + 14, with_notes=False)
    body += key
    lines, y = _wrapped(8, y, "Advice only: readings must be verified by a competent person; "
                        "BS 7671 and local rules prevail.", 56, size=11, fill=MUTED)
    body += lines
    return _svg(y + 4, "Step 2 and step 3 readings against the expected range", body)
