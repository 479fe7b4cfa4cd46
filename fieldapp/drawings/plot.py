"""The readings plot: step 2 (L–N) and step 3 (L–CPC) outlet by outlet against the
expected band.
"""

from __future__ import annotations

import math

from markupsafe import Markup

from fieldapp.drawings.key import _key
from fieldapp.drawings.layout import _finite, _label, _number_map, _points_in_order
from fieldapp.drawings.svg import (
    ALERT,
    BAND_FILL,
    INK,
    MUTED,
    RESULT_NOTE,
    WIDTH,
    _circle,
    _el,
    _esc,
    _line,
    _polygon,
    _svg,
    _text,
    _wrapped,
)
from fieldapp.labels import reading_name

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


def _statuses(diagnosis: dict, step: str) -> dict[str, str]:
    """Each outlet's status for one step as ringmath judged it (``readings[].status``)."""
    return {str(e["outlet"]): str(e.get("status") or "pending")
            for e in diagnosis.get("readings") or []
            if isinstance(e, dict) and e.get("step") == step and e.get("outlet") is not None}


def _verdict(value, status: str | None) -> str:
    """The mark to draw: "open" (OL), "high", "low", "ok" as ringmath judged the reading,
    "unknown" (taken, nothing to judge it by yet) or "missing" (not taken)."""
    if isinstance(value, str) and value.strip().upper() == "OL":
        return "open"
    if _finite(value) is None:
        return "open" if isinstance(value, float) and math.isinf(value) else "missing"
    return status if status in ("ok", "high", "low") else "unknown"


def _ohms(value: float) -> str:
    return f"{value:.2f}" if value < 10 else f"{value:.1f}"


def _panel(diagnosis: dict, step: str, top: float, ring: list[dict], spurs: list[dict],
           numbers: dict[str, str]) -> list[str]:
    """One step's panel: band, expected line, a marker per outlet, axes in ohms."""
    field, name = f"{step}_ohm", reading_name(step)
    expected = diagnosis.get("expected") or {}
    band = _band(expected.get(f"{step}_band_ohm"))
    centre = _finite(expected.get(field))
    ranges = _reading_ranges(diagnosis, step)
    statuses = _statuses(diagnosis, step)
    points = ring + spurs
    judged = []
    for p in points:
        oid = str(p.get("id"))
        own = band if not p.get("spur_from") and band else ranges.get(oid)
        judged.append((p, own, _verdict(p.get(field), statuses.get(oid))))

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
    if value is None:
        raise ValueError(f"value: a {verdict!r} reading of {label} needs a number")
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


def readings_plot(diagnosis: dict, *, names: dict | None = None) -> Markup:
    """Step 2 (L–N) and step 3 (L–CPC) readings outlet by outlet, in ring order then spurs,
    against the expected band. In range: a filled dot. Out of range: a triangle pointing the
    way it is out, with the word "high" or "low". OL: a triangle on the top edge with "OL".
    Not taken: a dash on the axis. Readings above the scale are pinned to the top edge.
    """
    ring, spurs = _points_in_order(diagnosis)
    numbers = _number_map(ring, spurs, names)
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
    lines, y = _wrapped(8, y, RESULT_NOTE, 56, size=11, fill=MUTED)
    body += lines
    return _svg(y + 4, "Step 2 and step 3 readings against the expected range", body)
