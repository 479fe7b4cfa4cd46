"""Point symbols and the key under a drawing: each point's shape with its name inside, a
dashed halo for a suspect, a warning triangle for a point over its Zs limit, and the key line
with the full label and notes.
"""

from __future__ import annotations

from fieldapp.drawings.layout import _finite, _label
from fieldapp.drawings.svg import ALERT, INK, MUTED, _circle, _el, _esc, _polygon, _text

_NODE = 10.0

KIND_WORDS = {
    "twin_socket": "twin socket",
    "single_socket": "single socket",
    "fcu": "FCU",
    "junction_box": "junction box",
    "fixed_equipment": "fixed equipment",
}


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
