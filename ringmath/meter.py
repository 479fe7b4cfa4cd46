"""The low-resistance ohmmeter model used for fitting and for safe upper bounds.

A continuity tester shows 0.01 Ω steps. We model a displayed value as
``round(true * (1 + g) + e, 2)`` with a gain error |g| <= GAIN_TOLERANCE and an offset error
|e| <= OFFSET_OHM (lead nulling, contact resistance at the probe, last-digit noise).
The figures are our own working assumptions of a typical instrument's stated accuracy
(a "few digits" plus a percentage, common practice); they are not from a standard.
"""

from __future__ import annotations

import math

import numpy as np

RESOLUTION_OHM = 0.01
GAIN_TOLERANCE = 0.01
OFFSET_OHM = 0.01
#: Standard deviation of the reading noise used by the fit, ohms (digit noise, probe contact
#: and small workmanship variation between outlets), and the part proportional to the reading.
SIGMA_FLOOR_OHM = 0.012
SIGMA_RELATIVE = 0.015


def sigma_ohm(reading_ohm):
    """Standard deviation in ohms assumed for a displayed reading of ``reading_ohm`` ohms
    (a float, or an array of them for the fits).

    sigma = sqrt(SIGMA_FLOOR_OHM**2 + (SIGMA_RELATIVE * reading)**2).
    """
    value = np.asarray(reading_ohm, dtype=float)
    if np.any(value < 0):
        raise ValueError(f"reading_ohm: {reading_ohm} is negative")
    sigma = np.hypot(SIGMA_FLOOR_OHM, SIGMA_RELATIVE * value)
    return float(sigma) if sigma.ndim == 0 else sigma


def upper_bound_ohm(reading_ohm: float) -> float:
    """Highest true resistance in ohms consistent with a displayed reading, rounded up to 0.01 Ω.

    true <= (displayed + OFFSET_OHM + RESOLUTION_OHM / 2) / (1 - GAIN_TOLERANCE)
    """
    if reading_ohm < 0:
        raise ValueError(f"reading_ohm: {reading_ohm} is negative")
    if math.isinf(reading_ohm):
        return math.inf
    bound = (reading_ohm + OFFSET_OHM + RESOLUTION_OHM / 2) / (1 - GAIN_TOLERANCE)
    return ceil_to_resolution(bound)


def ceil_to_resolution(value_ohm: float) -> float:
    """Round ``value_ohm`` up to the next 0.01 Ω (a tiny float slack avoids 0.30000001 -> 0.31)."""
    return round(math.ceil(round(value_ohm / RESOLUTION_OHM, 6)) * RESOLUTION_OHM, 2)
