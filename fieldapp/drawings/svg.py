"""Small SVG helpers shared by every drawing: escaping, elements, text, conductors, a meter.

Only presentation attributes and basic shapes (no ids, no CSS, no markers), so several drawings
can share one page and the PDF renderer draws them the same way. Every piece of text is escaped
here, so callers hand in plain words.
"""

from __future__ import annotations

import textwrap
from html import escape
from typing import NotRequired, TypedDict

from markupsafe import Markup

from ringmath.messages import CAUTIONS

WIDTH = 360
FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
INK = "#1a1a1a"
MUTED = "#555555"
ALERT = "#b3261e"
BAND_FILL = "#e3e3e3"

#: Harmonised core colours of fixed wiring (line brown, neutral blue, protective conductor
#: green-and-yellow: BS 7671:2018 Table 51), each with a line style that survives grey print.

class CoreStyle(TypedDict):
    """How one core is drawn: its name, colour, dash pattern and (CPC) stripe colour."""

    name: str
    colour: str
    dash: str | None
    stripe: NotRequired[str]


CORES: dict[str, CoreStyle] = {
    "L": {"name": "line", "colour": "#7b4a1e", "dash": None},
    "N": {"name": "neutral", "colour": "#1f5fb4", "dash": "8 4"},
    "CPC": {"name": "cpc", "colour": "#2e7d32", "dash": None, "stripe": "#f2c200"},
}


#: The cautions a drawing carries: the core's own words (safe isolation on the connection
#: drawings; verification and the standard's precedence under results).
ISOLATION_NOTE = CAUTIONS[0]
RESULT_NOTE = f"{CAUTIONS[3]} {CAUTIONS[2]}"



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
