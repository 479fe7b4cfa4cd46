"""Expected readings and their bands: what a healthy ring point reads, from step 1.

Step 2 and step 3 readings at a point a fraction ``t`` of the way round a ring whose two
cross-connected conductors have end-to-end resistances ``a`` and ``b`` ohms (step 2: a = r1,
b = rn; step 3: a = r1, b = r2) are two paths in parallel, ``t·a + (1−t)·b`` and
``(1−t)·a + t·b``, so

    R(t) = [a·b + t(1−t)(a−b)²] / (a+b)

(series-parallel reduction of the cross-connected ring). It is lowest at the ends,
a·b/(a+b), and highest mid-ring, (a+b)/4. With a = b every point reads (a+b)/4: the familiar
"same reading at every socket". The band a ring point is checked against is that range widened
by the meter tolerance: BAND_SIGMAS × meter.sigma_ohm, never less than the common-practice
±0.05 Ω.

A spur point reads its parent's value plus its own spur cable (a dead end adds in series):
step 2 adds line + neutral of the spur, step 3 adds line + cpc. The same cable raises step 3
(1 + r2/r1) / (1 + rn/r1) times as much as step 2: 1.32 for 2.5/1.5 mm² twin and earth.
"""

from __future__ import annotations

import math

from ringmath.meter import sigma_ohm
from ringmath.record import Outlet, RingTest

#: Narrowest tolerance either side of an expected reading, ohms (common practice: step 2
#: readings "substantially the same", within 0.05 Ω).
MIN_TOLERANCE_OHM = 0.05
#: Width of the meter allowance in standard deviations (≈ 1 % two-sided for normal noise).
BAND_SIGMAS = 2.5
#: The spur-ratio check combines four readings and is our own addition to common practice, so

STEP_CONDUCTORS = {"r1": "line", "rn": "neutral", "r2": "cpc"}
STEP_NAMES = {"ln": "step 2 (L–N)", "le": "step 3 (L–CPC)"}


def finite(value: float | None) -> bool:
    """True for a reading that is a number (not None and not OL)."""
    return value is not None and math.isfinite(value)


def tolerance_ohm(reading_ohm: float) -> float:
    """Allowance in ohms either side of a reading of ``reading_ohm`` ohms:
    max(BAND_SIGMAS × meter.sigma_ohm(reading), MIN_TOLERANCE_OHM)."""
    return max(BAND_SIGMAS * sigma_ohm(reading_ohm), MIN_TOLERANCE_OHM)


def step_reading_ohm(a_ohm: float, b_ohm: float, t: float) -> float:
    """Healthy step 2/3 reading in ohms at fraction ``t`` (0..1) round a ring whose cross-connected
    conductors measure ``a_ohm`` and ``b_ohm`` end to end: [a·b + t(1−t)(a−b)²]/(a+b)."""
    if not 0.0 <= t <= 1.0:
        raise ValueError(f"t: {t!r} is not a ring fraction between 0 and 1")
    if a_ohm < 0 or b_ohm < 0:
        raise ValueError(f"a_ohm/b_ohm: negative resistance ({a_ohm!r}, {b_ohm!r})")
    total = a_ohm + b_ohm
    if total == 0:
        return 0.0
    return (a_ohm * b_ohm + t * (1 - t) * (a_ohm - b_ohm) ** 2) / total


def band_ohm(a_ohm: float, b_ohm: float) -> list[float]:
    """[low, high] in ohms for a ring point: from step_reading_ohm at the ends (t = 0) to
    mid-ring (t = 0.5), each widened by tolerance_ohm, rounded to 0.01 Ω (low never below 0)."""
    low = step_reading_ohm(a_ohm, b_ohm, 0.0)
    high = step_reading_ohm(a_ohm, b_ohm, 0.5)
    return [round(max(low - tolerance_ohm(low), 0.0), 2), round(high + tolerance_ohm(high), 2)]


def expected(test: RingTest) -> dict:
    """What a healthy ring point reads, from step 1 (ohms, rounded to 0.01 Ω).

    {"ln_ohm": (r1+rn)/4, "le_ohm": (r1+r2)/4, "ln_band_ohm": [lo, hi], "le_band_ohm": [lo, hi]};
    each entry is None until the two end-to-end readings it needs are in (and not OL).
    """
    e = test.end_to_end
    out = {}
    for step, other in (("ln", e.rn_ohm), ("le", e.r2_ohm)):
        if finite(e.r1_ohm) and finite(other):
            out[f"{step}_ohm"] = round((e.r1_ohm + other) / 4, 2)
            out[f"{step}_band_ohm"] = band_ohm(e.r1_ohm, other)
        else:
            out[f"{step}_ohm"] = None
            out[f"{step}_band_ohm"] = None
    return {k: out[k] for k in ("ln_ohm", "le_ohm", "ln_band_ohm", "le_band_ohm")}


def used_reading(outlet: Outlet, step: str) -> float | None:
    """The reading of ``step`` ("ln" or "le") the checks and the fit use: the re-measure at the
    terminals when one was taken, else the reading as recorded (``Outlet.ln_used_ohm`` /
    ``le_used_ohm`` where the record provides them)."""
    name = f"{step}_used_ohm"
    if hasattr(outlet, name):
        return getattr(outlet, name)
    return outlet.ln_ohm if step == "ln" else outlet.le_ohm


def _reading(test: RingTest, outlet: Outlet | None, step: str) -> float | None:
    """The recorded reading for ``step`` ("r1", "rn", "r2" with outlet None, "ln", "le")."""
    if outlet is None:
        return getattr(test.end_to_end, f"{step}_ohm")
    return used_reading(outlet, step)

