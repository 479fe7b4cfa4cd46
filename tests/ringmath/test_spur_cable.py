"""The one spur-cable model: every R1+R2 estimate for a spur is at or above the true in-service
value, proved against the project's network solve (ringmath.network, nodal analysis)."""

from __future__ import annotations

import numpy as np
import pytest
from ring_records import record

from ringmath import zs
from ringmath.network import Layout, step_resistance

#: IEC 60228 Table 1, ohms per metre at 20 °C.
R_2_5, R_1_5, R_1_0 = 7.41e-3, 12.1e-3, 18.1e-3
RING_M = 70.0
SPUR_M = 14.0


def _ring(t: float) -> dict[str, float]:
    """Step 2, step 3 and in-service R1+R2 (ohms) at fraction t of a 70 m 2.5/1.5 mm² ring."""
    ring = np.array([[RING_M * R_2_5, RING_M * R_2_5, RING_M * R_1_5]])
    pos = np.array([[t]])
    layout = Layout(n_marks=1, split=(False,))
    return {step: float(step_resistance(layout, step, pos, ring)[0])
            for step in ("ln", "le", "service")}


def _shown(true_ohm: float, gain: float, offset: float) -> float:
    """A meter's display: round(true × (1 + g) + e, 2) (the model of ringmath.meter)."""
    return round(max(true_ohm * (1 + gain) + offset, 0.0), 2)


@pytest.mark.parametrize("t", [0.05, 0.25, 0.5, 0.8])
@pytest.mark.parametrize(("recorded", "cable_ohm_per_m"), [
    ((1.5, None), (R_1_5, R_1_0)),   # 1.5/1.0 spur, only its live size recorded
    ((1.5, 1.0), (R_1_5, R_1_0)),    # both sizes recorded
    ((None, None), (R_2_5, R_1_5)),  # nothing recorded, wired in the ring's 2.5/1.5 cable
])
def test_spur_estimates_are_never_below_the_in_service_value(t, recorded, cable_ohm_per_m):
    """A 14 m spur off a 70 m 2.5/1.5 mm² ring, readings shown by a meter within its stated
    error (seeded draws): the estimate from its step 2 reading must cover the true value."""
    rng = np.random.default_rng(7)
    base = _ring(t)
    live, cpc = cable_ohm_per_m
    spur_live_cpc = SPUR_M * (live + cpc)   # a dead end adds in series
    true_in_service = base["service"] + spur_live_cpc
    spur_ln_true = base["ln"] + SPUR_M * 2 * live
    e2e_true = (RING_M * R_2_5, RING_M * R_2_5, RING_M * R_1_5)
    worst_margin = np.inf
    for _ in range(40):
        g = rng.uniform(-0.01, 0.01, size=6)
        e = rng.uniform(-0.01, 0.01, size=6)
        e2e = {k: _shown(v, g[i], e[i]) for i, (k, v) in enumerate(zip(("r1", "rn", "r2"),
                                                                       e2e_true, strict=True))}
        outlets = [
            {"id": "p", "ln": _shown(base["ln"], g[3], e[3]), "le": _shown(base["le"], g[4], e[4])},
            {"id": "s", "spur_from": "p", "spur_csa_mm2": recorded[0],
             "spur_cpc_csa_mm2": recorded[1],
             "ln": _shown(spur_ln_true, g[5], e[5])},   # no step 3 yet: R1+R2 is estimated
        ]
        points = {p["id"]: p for p in zs.point_values(record(outlets, end_to_end=e2e))[1]}
        s = points["s"]
        assert s["r1r2_source"] == "estimated"
        worst_margin = min(worst_margin, s["r1r2_ohm"] - true_in_service)
    assert worst_margin >= 0.0


def test_the_old_ring_cpc_assumption_was_optimistic():
    """The disagreement this model removes: assuming the ring's 1.5 mm² cpc for the spur gives
    0.75 Ω-ish against a true 0.765 Ω-ish; the companion cpc gives a safe figure."""
    base = _ring(0.5)
    true_in_service = base["service"] + SPUR_M * (R_1_5 + R_1_0)
    ring_cpc_guess = base["service"] + SPUR_M * (R_1_5 + R_1_5)
    assert ring_cpc_guess < true_in_service
