"""Point symbols and the key under a drawing: each point's shape with its name inside, a
dashed halo for a suspect, a warning triangle for a point over its Zs limit, and the key line
with the full label and notes.
"""

from __future__ import annotations

from fieldapp.drawings.layout import _finite, _label
from fieldapp.drawings.svg import ALERT, INK, MUTED, _circle, _el, _esc, _polygon, _text
from fieldapp.labels import fed_from, kind_label, outlet_name

_NODE = 10.0



def _node(x: float, y: float, kind: str, name, label: str) -> str:
    """A point's symbol with its short name inside (the outlet's id, ``fieldapp.labels``):
    circle socket, square FCU, diamond junction box, rounded square fixed equipment. A name
    longer than three characters is cut with "…" inside the symbol; the key gives it whole."""
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
    name = str(name)
    size = 11 if len(name) <= 2 else 9 if len(name) == 3 else 8
    inside = name if len(name) <= 3 else name[:2] + "…"
    return "<g>" + _el("title", _esc(label)) + shape + _text(
        x, y + size / 3 + 0.5, inside, size=size, anchor="middle", weight="bold") + "</g>"


def _halo(x: float, y: float) -> str:
    """The suspect mark: a thick dashed ring round a point."""
    return _circle(x, y, _NODE + 6, fill="none", stroke=ALERT, width=3, dash="4 3")


def _zs_badge(x: float, y: float) -> str:
    """A warning triangle with '!' beside a point whose Zs is over its limit."""
    tx, ty = x + 12, y - 12
    return (_polygon([(tx, ty - 7), (tx + 7, ty + 5), (tx - 7, ty + 5)], fill="#ffffff",
                     stroke=ALERT, width=2)
            + _text(tx, ty + 4, "!", size=10, anchor="middle", weight="bold", fill=ALERT))


def _point_notes(point: dict, numbers: dict[str, str], suspects: set[str]) -> list[str]:
    notes = [kind_label(point.get("kind"), short=True)]
    if point.get("kind") == "fcu" and _finite(point.get("fuse_a")) is not None:
        notes[-1] += f" {point['fuse_a']:g} A"
    parent = point.get("spur_from")
    if parent:
        notes.append(fed_from(numbers.get(str(parent), parent)))
    protected = str(point.get("protected_by") or "")
    if protected.startswith("fcu:"):
        fcu = protected[4:]
        notes.append(f"beyond FCU {numbers.get(fcu, fcu)}")
    if point.get("ok") is False:
        zs, limit = _finite(point.get("zs_ohm")), _finite(point.get("zs_max_ohm"))
        if zs is not None and limit is not None:
            notes.append(f"Zs {zs:.2f} Ω over limit {limit:.2f} Ω")
        elif point.get("le_ohm") == "OL":
            notes.append("Zs fails: no earth path proved (step 3 OL)")
        else:
            notes.append("Zs fails")
    if str(point.get("id")) in suspects:
        notes.append("suspect")
    return notes


def _key(points: list[dict], numbers: dict[str, str], suspects: set[str], y: float,
         with_notes: bool = True) -> tuple[list[str], float]:
    """The key under a drawing: each point's symbol and name, its full name and notes."""
    out = []
    for point in points:
        oid = str(point.get("id"))
        label = _label(point)
        out.append(_node(20, y, point.get("kind", ""), numbers[oid], label))
        if oid in suspects:
            out.append(_halo(20, y))
        if point.get("ok") is False:
            out.append(_zs_badge(20, y))
        out.append(_text(42, y + 4, label, size=12, weight="bold", title=outlet_name(
            numbers[oid], label)))
        if with_notes:
            out.append(_text(42, y + 19, " · ".join(_point_notes(point, numbers, suspects)),
                             size=11, fill=MUTED))
            y += 38
        else:
            y += 26
    return out, y
