"""The star reduction of the fitting's networks against nodal analysis and closed forms."""

from __future__ import annotations

import numpy as np
import pytest

from ringmath.network import STEPS, Layout, step_resistance
from ringmath.star import BRIDGE, PLAIN, SPLIT, step_readings

#: Nodal analysis carries ideal links of SHORT_OHM (1e-6 Ω) at the board joins; the two
#: methods agree to a few of those.
TOL_OHM = 5e-6
CHAINS = [PLAIN, SPLIT, Layout(4, (True, False, True, False), probe=1)]


def _random(rng, layout: Layout, batch: int = 300, open_share: float = 0.1):
    pos = rng.uniform(0, 1, (batch, layout.n_marks))
    ring = rng.uniform(0.05, 2.0, (batch, 3))
    series = 1.0 / rng.uniform(0.001, 1.0, (batch, 3, layout.n_marks))
    series[rng.uniform(size=series.shape) < open_share] = 0.0  # breaks
    extra = rng.uniform(0.001, 1.0, (batch, len(layout.extras)))
    return pos, ring, series, extra


@pytest.mark.parametrize("layout", CHAINS, ids=["plain", "split", "two-series"])
@pytest.mark.parametrize("step", STEPS)
def test_chains_equal_nodal_analysis(layout, step):
    # Reference: network.step_resistance (nodal analysis of the same network), random seeded
    # networks with joints and breaks.
    pos, ring, series, _ = _random(np.random.default_rng(11), layout)
    want = step_resistance(layout, step, pos, ring, series)
    got = step_readings(layout, step, pos, ring, series)
    np.testing.assert_array_equal(np.isinf(got), np.isinf(want))
    fin = np.isfinite(want)
    np.testing.assert_allclose(got[fin], want[fin], rtol=0, atol=TOL_OHM)


@pytest.mark.parametrize("step", STEPS)
def test_bridge_equals_nodal_analysis(step):
    pos, ring, _, extra = _random(np.random.default_rng(12), BRIDGE)
    want = step_resistance(BRIDGE, step, pos, ring, extra_fraction=extra)
    got = step_readings(BRIDGE, step, pos, ring, extra_fraction=extra)
    np.testing.assert_allclose(got, want, rtol=0, atol=TOL_OHM)


def test_sound_ring_closed_form():
    # Step 2 at fraction t: [r1·rn + t(1−t)(r1−rn)²]/(r1+rn) (series-parallel reduction of the
    # cross-connected ring; common practice: about (r1+rn)/4 at every socket when r1 = rn).
    t = np.linspace(0.0, 1.0, 21)
    r1, rn = 0.52, 0.47
    got = step_readings(PLAIN, "ln", t[:, None], np.tile([r1, rn, 0.8], (21, 1)))
    np.testing.assert_allclose(got, (r1 * rn + t * (1 - t) * (r1 - rn) ** 2) / (r1 + rn),
                               atol=TOL_OHM)  # a zero gap is an ideal link of SHORT_OHM


def test_bridge_of_zero_resistance_shortens_the_ring():
    # A bridge of nothing between a and b removes the ring between them: step 1 reads
    # (1 - (b - a)) x r (series resistances add).
    a, b, r = 0.3, 0.6, 0.5
    got = step_readings(BRIDGE, "e2e:line", np.array([[0.1, a, b]]), np.full((1, 3), r),
                        extra_fraction=np.array([[0.0]]))
    assert got[0] == pytest.approx((1 - (b - a)) * r, abs=1e-6)


def test_one_break_leaves_one_path_and_two_breaks_read_open():
    # Line broken at 0.7 (probe at 0.3): step 2 has only the path through end 1 of the line
    # and end 2 of the neutral: 0.3·r1 + 0.7·rn (series), not the parallel pair.
    r1 = rn = 0.5
    series = np.full((1, 3, 2), 1e6)
    series[0, 0, 1] = 0.0
    got = step_readings(SPLIT, "ln", np.array([[0.3, 0.7]]), np.full((1, 3), r1), series)
    assert got[0] == pytest.approx(0.3 * r1 + 0.7 * rn, abs=1e-5)
    series[0, 1, 1] = 0.0  # the neutral broken too, beyond the point: no path left
    got = step_readings(SPLIT, "ln", np.array([[0.3, 0.7]]), np.full((1, 3), r1), series)
    assert np.isinf(got[0])


def test_readings_are_symmetric_end_for_end():
    # Physical invariant: turning the ring round (t -> 1 - t for every mark) swaps the two
    # ends, which step 2 treats alike, so every reading is unchanged.
    pos, ring, _, extra = _random(np.random.default_rng(13), BRIDGE, batch=50)
    a = step_readings(BRIDGE, "ln", pos, ring, extra_fraction=extra)
    b = step_readings(BRIDGE, "ln", 1.0 - pos, ring, extra_fraction=extra)
    np.testing.assert_allclose(a, b, atol=1e-12)


@pytest.mark.parametrize(("layout", "kwargs", "field"), [
    (Layout(3, (False, True, False), extras=((1, 2),)), {}, "layout"),
    (Layout(4, (False,) * 4, extras=((1, 2), (2, 3))), {}, "layout"),
    (PLAIN, {"step": "step9"}, "step"),
    (PLAIN, {"positions": np.array([[1.5]])}, "positions"),
    (PLAIN, {"ring_ohm": np.array([[0.5, 0.0, 0.8]])}, "ring_ohm"),
])
def test_bad_input_names_the_field(layout, kwargs, field):
    args = {"step": "ln", "positions": np.full((1, layout.n_marks), 0.5),
            "ring_ohm": np.array([[0.5, 0.5, 0.8]])} | kwargs
    with pytest.raises(ValueError, match=f"^{field}:"):
        step_readings(layout, args["step"], args["positions"], args["ring_ohm"])
