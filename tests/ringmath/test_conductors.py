"""Conductor resistance table and what it predicts, against BS EN 60228 figures."""

import math

import pytest

from ringmath.conductors import cpc_ratio, expected_end_to_end_ohm, resistance_mohm_per_m


@pytest.mark.parametrize(
    ("csa_mm2", "mohm_per_m"),
    [
        # BS EN 60228 maximum DC resistance at 20 °C, class 1/2 plain copper (from memory).
        (1.0, 18.10),
        (1.5, 12.10),
        (2.5, 7.41),
        (4, 4.61),
        (6, 3.08),
        (10, 1.83),
        (16, 1.15),
    ],
)
def test_table_values(csa_mm2, mohm_per_m):
    assert resistance_mohm_per_m(csa_mm2) == mohm_per_m


def test_twin_and_earth_ratio_is_table_ratio_not_area_ratio():
    # 12.10 / 7.41 = 1.633 (BS EN 60228 values), not 2.5 / 1.5 = 1.667.
    ratio = cpc_ratio(2.5, 1.5)
    assert ratio == pytest.approx(1.633, abs=5e-4)
    assert abs(ratio - 2.5 / 1.5) > 0.03


def test_same_size_cpc_ratio_is_one():
    assert cpc_ratio(2.5, 2.5) == 1.0


def test_end_to_end_for_a_50_m_ring():
    # 50 m of 2.5 mm² at 7.41 mΩ/m = 0.37 Ω (worked from the BS EN 60228 value).
    assert expected_end_to_end_ohm(50, 2.5) == pytest.approx(0.3705)
    # 50 m of 1.5 mm² cpc: 0.605 Ω.
    assert expected_end_to_end_ohm(50, 1.5) == pytest.approx(0.605)


def test_end_to_end_rises_with_temperature():
    # Copper 0.00393 /K (BS EN 60228 Annex B, from memory): +30 K is +11.8 %.
    warm = expected_end_to_end_ohm(50, 2.5, temperature_c=50)
    assert warm / expected_end_to_end_ohm(50, 2.5) == pytest.approx(1 + 30 * 0.00393)


@pytest.mark.parametrize(
    ("call", "field"),
    [
        (lambda: resistance_mohm_per_m(2.0), "csa_mm2"),
        (lambda: resistance_mohm_per_m("2.5"), "csa_mm2"),
        (lambda: resistance_mohm_per_m(True), "csa_mm2"),
        (lambda: cpc_ratio(3.0, 1.5), "live_csa_mm2"),
        (lambda: cpc_ratio(2.5, 0.75), "cpc_csa_mm2"),
        (lambda: expected_end_to_end_ohm(0, 2.5), "length_m"),
        (lambda: expected_end_to_end_ohm(-5, 2.5), "length_m"),
        (lambda: expected_end_to_end_ohm(math.nan, 2.5), "length_m"),
        (lambda: expected_end_to_end_ohm(None, 2.5), "length_m"),
        (lambda: expected_end_to_end_ohm(40, 3), "csa_mm2"),
        (lambda: expected_end_to_end_ohm(40, 2.5, temperature_c=500), "temperature_c"),
        (lambda: expected_end_to_end_ohm(40, 2.5, temperature_c="20"), "temperature_c"),
    ],
)
def test_bad_input_names_the_field(call, field):
    with pytest.raises(ValueError, match=rf"^{field}:"):
        call()
