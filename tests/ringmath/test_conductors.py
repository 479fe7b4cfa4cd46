"""Conductor resistance table and what it predicts, against BS EN 60228 figures."""

import math

import pytest

from ringmath.conductors import cpc_ratio, expected_end_to_end_ohm, resistance_mohm_per_m


@pytest.mark.parametrize(
    ("csa_mm2", "mohm_per_m"),
    [
        # IEC 60228 / BS EN 60228 Table 1, class 1/2 plain copper at 20 °C.
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


# IEC 60228 / BS EN 60228 Table 1, maximum resistance at 20 °C (mΩ/m), stated independently
# of the data file: 1.0 18.1, 1.5 12.1, 2.5 7.41, 4 4.61, 6 3.08, 10 1.83 (16 mm² 1.15 as
# reproduced in the Cembre catalogue's IEC 60228:2004 tables).
BS_EN_60228_TABLE_1 = {1.0: 18.1, 1.5: 12.1, 2.5: 7.41, 4.0: 4.61, 6.0: 3.08, 10.0: 1.83,
                       16.0: 1.15}


def test_every_copper_row_against_the_standard():
    from ringmath.tables import COPPER

    assert set(COPPER) == set(BS_EN_60228_TABLE_1)
    for size, row in COPPER.items():
        assert row.mohm_per_m_20c == BS_EN_60228_TABLE_1[size]
        assert row.where_checked and "60228" in row.edition
    # physical invariant: resistance falls as the cross-section grows, roughly as 1/area
    sizes = sorted(COPPER)
    values = [COPPER[s].mohm_per_m_20c for s in sizes]
    assert values == sorted(values, reverse=True)
    assert all(0.9 < COPPER[s].mohm_per_m_20c * s / 18.1 < 1.1 for s in sizes)


def test_tables_are_read_only():
    from ringmath.tables import COPPER, FUSES

    with pytest.raises(TypeError):
        COPPER[2.0] = None  # type: ignore[index]
    with pytest.raises(TypeError):
        FUSES[("BS 1362", 13)] = None  # type: ignore[index]


def test_the_one_r2_figure():
    from ringmath.conductors import r2_per_r1

    # 12.10 / 7.41 = 1.633 for 2.5/1.5 mm²; 18.1 / 12.1 = 1.496 for 1.5/1.0 mm².
    assert r2_per_r1() == 1.633
    assert r2_per_r1(1.5, 1.0) == 1.496


def test_spur_cable_defaults_to_the_twin_and_earth_companion():
    from ringmath.conductors import spur_cable

    # a 1.5 mm² spur off a 2.5/1.5 ring is 1.5/1.0 twin and earth, not 1.5/1.5
    cable = spur_cable(1.5, None, ring_live_csa_mm2=2.5)
    assert (cable.live_csa_mm2, cable.cpc_csa_mm2) == (1.5, 1.0)
    assert cable.cpc_ratio == pytest.approx(18.1 / 12.1)
    assert cable.le_per_ln == pytest.approx((12.1 + 18.1) / (2 * 12.1))
    # nothing recorded: the ring's live size with its companion
    assert (spur_cable(ring_live_csa_mm2=2.5).cpc_csa_mm2, spur_cable().le_per_ln) == (
        1.5, pytest.approx((7.41 + 12.1) / (2 * 7.41)))
    assert spur_cable(2.5, 2.5).le_per_ln == 1.0
    with pytest.raises(ValueError, match="^live_csa_mm2"):
        spur_cable(0.75)
    with pytest.raises(ValueError, match="^spur_cpc_csa_mm2"):
        spur_cable(2.5, 0.75)
