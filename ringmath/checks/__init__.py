"""Instant checks of each reading against what a healthy ring of the recorded cable would give.

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

The checks live in one module per topic: ``expected`` (bands), ``end_to_end`` (step 1),
``readings`` (the status of each reading), ``spurs`` (a spur's cable) and ``spur_findings``.
"""

from ringmath.checks.end_to_end import (
    CABLE_LENGTH_INFO,
    CABLE_LENGTH_WARNING,
    CPC_RATIO_TOLERANCE,
    ENDS_TOLERANCE_OHM,
    STEP_CONDUCTORS,
    cpc_ratio_tolerance,
    end_to_end_findings,
    ring_cpc_ratio,
)
from ringmath.checks.expected import (
    BAND_SIGMAS,
    MIN_TOLERANCE_OHM,
    band_ohm,
    expected,
    finite,
    step_reading_ohm,
    tolerance_ohm,
    used_reading,
)
from ringmath.checks.readings import reading_checks
from ringmath.checks.spur_findings import SPUR_RATIO_SIGMAS, STEP_NAMES, spur_findings
from ringmath.checks.spurs import (
    SPUR_MAX_LENGTH_M,
    le_per_ln_factor,
    spur_cable_per_m_ohm,
    spur_excess_limit_ohm,
)

__all__ = [
    "BAND_SIGMAS", "CABLE_LENGTH_INFO", "CABLE_LENGTH_WARNING", "CPC_RATIO_TOLERANCE",
    "ENDS_TOLERANCE_OHM", "MIN_TOLERANCE_OHM", "SPUR_MAX_LENGTH_M", "SPUR_RATIO_SIGMAS",
    "STEP_CONDUCTORS", "STEP_NAMES", "band_ohm", "cpc_ratio_tolerance", "end_to_end_findings",
    "expected", "finite", "le_per_ln_factor", "reading_checks", "ring_cpc_ratio",
    "spur_cable_per_m_ohm", "spur_excess_limit_ohm", "spur_findings", "step_reading_ohm",
    "tolerance_ohm", "used_reading",
]
