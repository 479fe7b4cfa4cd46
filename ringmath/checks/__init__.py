"""Instant checks of each reading against what a healthy ring of the recorded cable would give.

The formula for a healthy ring point, R(t) = [a·b + t(1−t)(a−b)²] / (a+b), its band and a
spur's excess are stated once, in ``expected``.

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
