"""The batched ring network model against the closed forms of the three-step test."""

from __future__ import annotations

import numpy as np
import pytest

from ringmath.network import Layout, step_resistance
from ringmath.nodal import Netlist

PLAIN = Layout(1, (False,))
T = np.linspace(0.02, 0.98, 25)


N_T = len(T)


def _ring(r1, rn, r2, n=N_T):
    return np.tile([r1, rn, r2], (n, 1))


@pytest.mark.parametrize(("r1", "rn", "r2"), [(0.52, 0.52, 0.85), (0.40, 0.46, 0.66),
                                              (0.9, 0.9, 1.47)])
def test_step_two_closed_form(r1, rn, r2):
    # Step 2 reading at fraction t: [r1·rn + t(1−t)(r1−rn)²]/(r1+rn); (r1+rn)/4 when r1 = rn
    # (common practice: every outlet reads about (r1+rn)/4).
    got = step_resistance(PLAIN, "ln", T[:, None], _ring(r1, rn, r2))
    want = (r1 * rn + T * (1 - T) * (r1 - rn) ** 2) / (r1 + rn)
    np.testing.assert_allclose(got, want, atol=1e-5)


def test_step_three_rises_mid_ring_when_r1_differs_from_r2():
    r1, r2 = 0.52, 0.85
    got = step_resistance(PLAIN, "le", T[:, None], _ring(r1, r1, r2))
    want = (r1 * r2 + T * (1 - T) * (r1 - r2) ** 2) / (r1 + r2)
    np.testing.assert_allclose(got, want, atol=1e-5)
    assert got.max() == pytest.approx((r1 + r2) / 4, abs=2e-3)
    assert got.min() < (r1 + r2) / 4 - 0.01


@pytest.mark.parametrize("step", ["ln_wrong", "le_wrong"])
def test_wrong_cross_connection_closed_form(step):
    # Ends joined L1–N1, L2–N2: reading t(1−t)(r1+rn), falling to nothing at the ends.
    r1, rn, r2 = 0.5, 0.5, 0.82
    other = rn if step == "ln_wrong" else r2
    got = step_resistance(PLAIN, step, T[:, None], _ring(r1, rn, r2))
    np.testing.assert_allclose(got, T * (1 - T) * (r1 + other), atol=1e-5)


def test_in_service_r1_plus_r2_closed_form_and_bound():
    # In service both ends are at the board: R1+R2 = t(1−t)(r1+r2), never above step 3.
    r1, r2 = 0.52, 0.85
    service = step_resistance(PLAIN, "service", T[:, None], _ring(r1, r1, r2))
    np.testing.assert_allclose(service, T * (1 - T) * (r1 + r2), atol=1e-5)
    step3 = step_resistance(PLAIN, "le", T[:, None], _ring(r1, r1, r2))
    assert np.all(service <= step3 + 1e-5)


def test_step_three_bounds_service_on_bridged_rings():
    # Rayleigh's monotonicity: joining all four ends can only lower the resistance, so the
    # step 3 reading is an upper bound of the in-service R1+R2 on any network.
    rng = np.random.default_rng(3)
    lay = Layout(3, (False, False, False), extras=((1, 2),))
    pos = rng.random((200, 3))
    ring = np.tile([0.5, 0.5, 0.82], (200, 1))
    frac = rng.uniform(0.01, 0.5, (200, 1))
    step3 = step_resistance(lay, "le", pos, ring, extra_fraction=frac)
    service = step_resistance(lay, "service", pos, ring, extra_fraction=frac)
    assert np.all(service <= step3 + 1e-5)


def test_bridge_layout_matches_an_explicit_netlist():
    a, b, frac, t, r = 0.2, 0.6, 0.1, 0.4, (0.5, 0.5, 0.82)
    lay = Layout(3, (False, False, False), extras=((1, 2),))
    got = step_resistance(lay, "ln", np.array([[t, a, b]]), np.array([r]),
                          extra_fraction=np.array([[frac]]))[0]
    net = Netlist()
    for c, rc in (("L", r[0]), ("N", r[1])):
        pts = [(0, "0"), (a, "a"), (t, "t"), (b, "b"), (1, "1")]
        for (p0, n0), (p1, n1) in zip(pts, pts[1:], strict=False):
            net.add(f"{c}{n0}", f"{c}{n1}", (p1 - p0) * rc)
        net.add(f"{c}a", f"{c}b", frac * rc)
    net.add("L0", "N1", 0.0)
    net.add("L1", "N0", 0.0)
    assert got == pytest.approx(net.resistance("Lt", "Nt"), abs=1e-5)


def test_open_conductor_reads_ol_end_to_end():
    lay = Layout(2, (False, True))
    series = np.full((1, 3, 2), 1e6)
    series[0, 2, 1] = 0.0  # cpc broken at the second mark
    pos = np.array([[0.3, 0.6]])
    ring = np.array([[0.5, 0.5, 0.82]])
    assert np.isinf(step_resistance(lay, "e2e:cpc", pos, ring, series_s=series)[0])
    assert np.isfinite(step_resistance(lay, "e2e:line", pos, ring, series_s=series)[0])
    # With the cpc broken at 0.6, an outlet at 0.3 reaches the cpc only through end 1:
    # L(0.3) → L2 → CPC1 → CPC(0.3): 0.7·r1 + 0.3·r2.
    le = step_resistance(lay, "le", pos, ring, series_s=series)[0]
    assert le == pytest.approx(0.7 * 0.5 + 0.3 * 0.82, abs=1e-5)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"step": "step9"}, "step"),
    ({"positions": np.array([[1.5]])}, "positions"),
    ({"ring_ohm": np.array([[0.0, 0.5, 0.8]])}, "ring_ohm"),
])
def test_bad_arguments_name_the_field(kwargs, field):
    args = {"step": "ln", "positions": np.array([[0.5]]), "ring_ohm": np.array([[0.5, 0.5, 0.8]])}
    args.update(kwargs)
    with pytest.raises(ValueError, match=field):
        step_resistance(PLAIN, args["step"], args["positions"], args["ring_ohm"])


def test_layout_rejects_a_split_probe():
    with pytest.raises(ValueError, match="probe"):
        Layout(1, (True,))
