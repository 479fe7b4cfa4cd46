"""Connection drawings: what to join at the board for each step of the ring test.

Step 1 measures each conductor end to end; step 2 joins L1 to N2 and L2 to N1 and measures
L–N at every outlet; step 3 joins L1 to CPC2 and L2 to CPC1 and measures L–CPC at every outlet
(the three-step ring final circuit continuity test, common practice).
"""

from __future__ import annotations

from typing import Any

from markupsafe import Markup

from fieldapp.drawings.svg import (
    INK,
    ISOLATION_NOTE,
    MUTED,
    WIDTH,
    _circle,
    _core,
    _el,
    _line,
    _meter,
    _svg,
    _text,
    _wrapped,
)
from ringmath.conductors import cpc_ratio

_ROWS = {"L": 78, "N": 128, "CPC": 178}
_LEFT_TERMINAL = 112
_RIGHT_TERMINAL = 248

_STEPS: dict[str, dict[str, Any]] = {
    "e2e": {
        "title": "Step 1: end-to-end readings r1, rn, r2",
        "links": (),
        "lines": [
            "Nothing joined. Measure across each pair of ends in turn:",
            "1. L1 to L2: r1 (line)",
            "2. N1 to N2: rn (neutral)",
            "3. CPC1 to CPC2: r2 (cpc)",
            "r1 and rn should match within about 0.05 Ω; for 2.5/1.5 mm² cable r2 is "
            f"about {cpc_ratio(2.5, 1.5):.2f} × r1.",
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
        for number, (row_y, reading) in enumerate(readings, start=1):
            body.append(_line(_LEFT_TERMINAL + 6, row_y, middle - 12, row_y, dash="2 3"))
            body.append(_line(middle + 12, row_y, _RIGHT_TERMINAL - 6, row_y, dash="2 3"))
            body.append(_meter(middle, row_y, f"{number}: {reading}"))
    for left_core, right_core in spec["links"]:
        x1, y1 = _LEFT_TERMINAL, _ROWS[left_core]
        x2, y2 = _RIGHT_TERMINAL, _ROWS[right_core]
        body.append(_line(x1, y1, x2, y2, width=4, cap="round"))
        body.append(_circle(x1, y1, 4, fill=INK))
        body.append(_circle(x2, y2, 4, fill=INK))
    if spec["links"]:
        body.append(_text(WIDTH / 2, 218, "black lines: temporary links", size=11,
                          anchor="middle", fill=MUTED))
    y: float = 244
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
