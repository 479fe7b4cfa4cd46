"""Calibration of stated confidence: the ranking's posterior through a monotone map, so that a
finding stated at 90 % is right about 9 times in 10 on the diagnosis benchmark.

Method: Platt scaling (Platt 1999, "Probabilistic outputs for support vector machines"),
calibrated(p) = sigmoid(a·logit(p) + b) with a > 0 (so the order of confidences is kept),
fitted by maximum likelihood on the leading claims of a seeded benchmark run with the
calibration off (``bench/diag_calibrate.py``). The benchmark reports another seed, so the
figures it prints are not the ones the map was fitted on.
"""

from __future__ import annotations

import math

#: Fitted by bench/diag_calibrate.py --seed 7 --n 8 (every condition, 1298 leading claims;
#: Brier 0.084 uncalibrated -> 0.074 on that run). The benchmark reports seed 2026.
PLATT_A = 0.958
PLATT_B = 0.823
_EDGE = 1e-9


def calibrated(p: float) -> float:
    """The calibrated confidence of a posterior probability p (0..1); monotone increasing."""
    if not 0.0 <= p <= 1.0 + 1e-9:
        raise ValueError(f"p: {p!r} is not a probability")
    q = min(max(p, _EDGE), 1.0 - _EDGE)
    z = PLATT_A * math.log(q / (1.0 - q)) + PLATT_B
    return 1.0 / (1.0 + math.exp(-z))
