"""Draws the app icons from one geometry: icon.svg and the PNG sizes the web manifest lists.

Run from the repository root: ``.venv/bin/python static/icons/draw_icons.py``. The picture is
the ring itself: a loop leaving a board at the top and coming back to it, with a tick inside.
The PNGs are palette images (a few colours): together a few kilobytes, not tens.
"""

from __future__ import annotations

import math
from pathlib import Path

from PIL import Image, ImageDraw

HERE = Path(__file__).resolve().parent
SIZE = 512
BACKGROUND = "#0d3b66"  # the theme colour in templates/base.html
INK = "#ffffff"
TICK = "#f2c200"
CORNER = 96
GAP_DEG = 26  # half the opening at the top of the loop, degrees


def geometry(scale: float = 1.0) -> dict:
    """Shapes on a 512 square; ``scale`` shrinks them about the centre (maskable safe zone)."""
    c = SIZE / 2

    def s(x: float, y: float) -> tuple[float, float]:
        return c + (x - c) * scale, c + (y - c) * scale

    cx, cy, r = 256, 300, 150
    gap = math.radians(GAP_DEG)
    end1 = s(cx - r * math.sin(gap), cy - r * math.cos(gap))
    end2 = s(cx + r * math.sin(gap), cy - r * math.cos(gap))
    return {
        "centre": s(cx, cy), "radius": r * scale, "stroke": 34 * scale,
        "ends": (end1, end2),
        "leads": ((end1, s(226, 118)), (end2, s(286, 118))),
        "board": (s(186, 58), s(326, 122)),
        "tick": (s(196, 300), s(240, 344), s(322, 256)),
    }


def svg() -> str:
    g = geometry()
    (x1, y1), (x2, y2) = g["ends"]
    r, w = g["radius"], g["stroke"]
    (bx1, by1), (bx2, by2) = g["board"]
    leads = "".join(
        f'<line x1="{a[0]:.1f}" y1="{a[1]:.1f}" x2="{b[0]:.1f}" y2="{b[1]:.1f}"/>'
        for a, b in g["leads"])
    tick = " ".join(f"{x:.1f},{y:.1f}" for x, y in g["tick"])
    return (
        f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {SIZE} {SIZE}">'
        f'<rect width="{SIZE}" height="{SIZE}" rx="{CORNER}" fill="{BACKGROUND}"/>'
        f'<g fill="none" stroke="{INK}" stroke-width="{w:.1f}" stroke-linecap="round">'
        f'<path d="M {x1:.1f} {y1:.1f} A {r:.1f} {r:.1f} 0 1 0 {x2:.1f} {y2:.1f}"/>{leads}</g>'
        f'<rect x="{bx1:.1f}" y="{by1:.1f}" width="{bx2 - bx1:.1f}" height="{by2 - by1:.1f}" '
        f'rx="12" fill="{INK}"/>'
        f'<polyline points="{tick}" fill="none" stroke="{TICK}" stroke-width="{w:.1f}" '
        f'stroke-linecap="round" stroke-linejoin="round"/></svg>\n'
    )


def png(size: int, *, maskable: bool = False) -> Image.Image:
    """The icon as a PNG drawn at 4x and scaled down (smooth edges)."""
    k = 4 * size / SIZE
    g = geometry(0.78 if maskable else 1.0)
    big = Image.new("RGBA", (4 * size, 4 * size), (0, 0, 0, 0))
    d = ImageDraw.Draw(big)
    if maskable:
        d.rectangle((0, 0, 4 * size, 4 * size), fill=BACKGROUND)
    else:
        d.rounded_rectangle((0, 0, 4 * size - 1, 4 * size - 1), radius=CORNER * k,
                            fill=BACKGROUND)
    (cx, cy), r, w = g["centre"], g["radius"], g["stroke"]
    # PIL draws an arc's width inside its box: grow the box so the stroke centres on r.
    # Its angles run clockwise from 3 o'clock; the opening is centred on 12 o'clock (270°).
    outer = r + w / 2
    box = ((cx - outer) * k, (cy - outer) * k, (cx + outer) * k, (cy + outer) * k)
    d.arc(box, start=270 + GAP_DEG, end=270 - GAP_DEG + 360, fill=INK, width=round(w * k))
    dots = list(g["ends"]) + [b for _, b in g["leads"]]
    for a, b in g["leads"]:
        d.line((a[0] * k, a[1] * k, b[0] * k, b[1] * k), fill=INK, width=round(w * k))
    for x, y in dots:
        d.ellipse(((x - w / 2) * k, (y - w / 2) * k, (x + w / 2) * k, (y + w / 2) * k),
                  fill=INK)
    (bx1, by1), (bx2, by2) = g["board"]
    d.rounded_rectangle((bx1 * k, by1 * k, bx2 * k, by2 * k), radius=12 * k, fill=INK)
    tick = [(x * k, y * k) for x, y in g["tick"]]
    d.line(tick, fill=TICK, width=round(w * k), joint="curve")
    for x, y in (tick[0], tick[-1]):
        rr = w * k / 2
        d.ellipse((x - rr, y - rr, x + rr, y + rr), fill=TICK)
    smooth = big.resize((size, size), Image.LANCZOS)
    # Four flat colours and their anti-aliased edges: a 32-colour palette looks the same and
    # is a fraction of the size of full RGBA.
    if maskable:  # opaque: no transparency in the palette
        smooth = smooth.convert("RGB")
    return smooth.quantize(colors=PALETTE_COLOURS, method=Image.Quantize.FASTOCTREE)


#: Colours kept in the PNG palette (background, ink, tick, transparency and edge blends).
PALETTE_COLOURS = 32


OUTPUTS = {
    "icon-192.png": (192, False),
    "icon-512.png": (512, False),
    "maskable-512.png": (512, True),
    "apple-touch-180.png": (180, True),
}


def main() -> None:
    (HERE / "icon.svg").write_text(svg(), encoding="utf-8")
    for name, (size, maskable) in OUTPUTS.items():
        png(size, maskable=maskable).save(HERE / name, optimize=True, compress_level=9)


if __name__ == "__main__":
    main()
