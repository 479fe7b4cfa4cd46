"""Zs limits for protective devices against BS 7671:2018 Tables 41.2 and 41.3."""

import pytest

from ringmath.devices import device_limit, fcu_limit, measured_limit_ohm, rcd_limit
from ringmath.record import Ocpd


@pytest.mark.parametrize(
    ("standard", "curve", "rating_a", "tabulated_ohm"),
    [
        # BS 7671:2018 Table 41.3 (circuit-breakers, 0.4 s, Cmin 0.95).
        ("BS EN 60898", "B", 32, 1.37),
        ("BS EN 60898", "B", 6, 7.28),
        ("BS EN 60898", "B", 16, 2.73),
        ("BS EN 60898", "B", 20, 2.19),
        ("BS EN 60898", "B", 40, 1.09),
        ("BS EN 60898", "C", 32, 0.68),
        ("BS EN 60898", "C", 16, 1.37),
        ("BS EN 60898", "D", 32, 0.34),
        ("BS EN 60898", "D", 6, 1.82),
        # RCBOs to BS EN 61009 share the Table 41.3 figures.
        ("BS EN 61009", "B", 32, 1.37),
        ("BS EN 61009", "C", 20, 1.09),
    ],
)
def test_breaker_limits_match_table_41_3(standard, curve, rating_a, tabulated_ohm):
    limit = device_limit(Ocpd(standard, curve, rating_a))
    assert limit.zs_tabulated_ohm == tabulated_ohm
    assert limit.curve == curve
    assert "Table 41.3" in limit.source


def test_32a_type_b_measured_limit():
    # 80 % of 1.37 Ω = 1.10 Ω (IET On-Site Guide rule of thumb; 1.37 from Table 41.3).
    limit = device_limit(Ocpd("BS EN 60898", "B", 32))
    assert (limit.zs_tabulated_ohm, limit.zs_max_ohm) == (1.37, 1.10)
    assert limit.description == "32 A type B circuit-breaker (BS EN 60898)"


@pytest.mark.parametrize(
    ("standard", "rating_a", "tabulated_ohm", "measured_ohm"),
    [
        # BS 7671:2018 Table 41.2, 0.4 s (from memory; 80 % values as in the On-Site Guide).
        ("BS 1362", 13, 2.30, 1.84),
        ("BS 1362", 3, 15.33, 12.26),
        ("BS 3036", 30, 1.09, 0.87),
        ("BS 3036", 20, 1.77, 1.42),
        ("BS 88-3", 32, 1.03, 0.82),
    ],
)
def test_fuse_limits_match_table_41_2(standard, rating_a, tabulated_ohm, measured_ohm):
    limit = device_limit(Ocpd(standard, None, rating_a))
    assert (limit.zs_tabulated_ohm, limit.zs_max_ohm) == (tabulated_ohm, measured_ohm)
    assert "Table 41.2" in limit.source and "from memory" in limit.source


def test_fcu_13a_fuse():
    # BS 7671:2018 Table 41.2: BS 1362 13 A 2.30 Ω; 80 % gives 1.84 Ω.
    limit = fcu_limit(13)
    assert (limit.standard, limit.zs_tabulated_ohm, limit.zs_max_ohm) == ("BS 1362", 2.30, 1.84)


def test_fcu_3a_fuse():
    assert fcu_limit(3.0).zs_tabulated_ohm == 15.33  # BS 7671:2018 Table 41.2 (from memory)


@pytest.mark.parametrize("fuse_a", [1, 2, 5, 7, 10, 20, "13", None])
def test_fcu_ratings_without_a_source_are_refused(fuse_a):
    with pytest.raises(ValueError, match=r"^fuse_a:"):
        fcu_limit(fuse_a)


def test_standard_spelling_is_normalised():
    assert device_limit(Ocpd("bs en  60898-1", "b", 32)).zs_tabulated_ohm == 1.37


def test_measured_fraction_rounds_to_hundredths():
    assert measured_limit_ohm(2.73) == 2.18  # 0.8 × 2.73 = 2.184


def test_tt_rcd_limit():
    # BS 7671:2018 411.5.3: 50 V / 30 mA = 1667 Ω (Table 41.5, from memory).
    limit = rcd_limit(30)
    assert limit.zs_tabulated_ohm == pytest.approx(1666.67)
    assert limit.zs_max_ohm == limit.zs_tabulated_ohm
    assert rcd_limit(100).zs_tabulated_ohm == 500.0


@pytest.mark.parametrize(
    ("ocpd", "field"),
    [
        (Ocpd("BS 88-2", None, 32), "circuit.ocpd.standard"),
        (Ocpd("BS EN 60947-2", "B", 32), "circuit.ocpd.standard"),
        (Ocpd("BS EN 60898", "K", 32), "circuit.ocpd.curve"),
        (Ocpd("BS EN 60898", None, 32), "circuit.ocpd.curve"),
        (Ocpd("BS 3036", "B", 30), "circuit.ocpd.curve"),
        (Ocpd("BS EN 60898", "B", 33), "circuit.ocpd.rating_a"),
        (Ocpd("BS EN 60898", "B", 63), "circuit.ocpd.rating_a"),
        (Ocpd("BS 3036", None, 32), "circuit.ocpd.rating_a"),
        (Ocpd("BS 88-3", None, 30), "circuit.ocpd.rating_a"),
        (Ocpd("BS 1362", None, 5), "circuit.ocpd.rating_a"),
    ],
)
def test_unknown_device_names_the_field(ocpd, field):
    with pytest.raises(ValueError, match=rf"^{field}:"):
        device_limit(ocpd)


@pytest.mark.parametrize("rated_ma", [0, -30, True, float("inf")])
def test_bad_rcd_rating(rated_ma):
    with pytest.raises(ValueError, match=r"^circuit\.rcd\.rated_ma:"):
        rcd_limit(rated_ma)
