"""Instant reading checks: the band closed form, step 1 findings, spur checks."""

import pytest
from ring_records import E2E, point, record, resistance_between

from ringmath import checks
from ringmath.meter import sigma_ohm
from ringmath.record import Circuit, EndToEnd, Ocpd, Outlet, RingTest


def _by(test, outlet, step):
    return next(c for c in checks.reading_checks(test)
                if c["outlet"] == outlet and c["step"] == step)


def _codes(findings):
    return [f.code for f in findings]


# ------------------------------------------------------------------ expected values and bands


def test_worked_example_expected_values():
    # Worked example: r1 = rn = 0.52 Ω, r2 = 0.85 Ω; step 2 (r1+rn)/4 = 0.26 Ω, step 3
    # (r1+r2)/4 = 0.3425 Ω (the three-step ring test, IET Guidance Note 3).
    exp = checks.expected(record())
    assert exp["ln_ohm"] == 0.26
    assert exp["le_ohm"] == 0.34
    # ln: every point 0.26 Ω, ± the common-practice 0.05 Ω.
    assert exp["ln_band_ohm"] == [0.21, 0.31]
    # le: from r1·r2/(r1+r2) = 0.3226 Ω at the ends to 0.3425 Ω mid-ring, ± 0.05 Ω.
    assert exp["le_band_ohm"] == [0.27, 0.39]


@pytest.mark.parametrize("t", [0.0, 0.1, 0.25, 0.4, 0.5, 0.8, 1.0])
def test_closed_form_matches_a_resistor_network(t):
    # Outside check: the cross-connected ring (L1–CPC2, L2–CPC1) solved as a resistor network
    # with the Laplacian pseudo-inverse (Klein & Randić 1993), against the closed form.
    a, b, n = 0.52, 0.85, 20
    k = round(t * n)
    edges = [(("L", i), ("L", i + 1), a / n) for i in range(n)]
    edges += [(("E", i), ("E", i + 1), b / n) for i in range(n)]
    # The cross-connections are joined at the board: L end 0 with E end n, L end n with E end 0.
    edges = [(_join(u, n), _join(v, n), r) for u, v, r in edges]
    network = resistance_between(edges, _join(("L", k), n), _join(("E", k), n))
    assert checks.step_reading_ohm(a, b, k / n) == pytest.approx(network, rel=1e-9)


def _join(node, n):
    return {("E", n): ("L", 0), ("E", 0): ("L", n)}.get(node, node)


def test_closed_form_ends_and_middle():
    # Lowest a·b/(a+b) at the ends, highest (a+b)/4 mid-ring (series-parallel reduction).
    assert checks.step_reading_ohm(0.52, 0.85, 0.0) == pytest.approx(0.52 * 0.85 / 1.37)
    assert checks.step_reading_ohm(0.52, 0.85, 0.5) == pytest.approx(1.37 / 4)
    assert checks.step_reading_ohm(0.52, 0.52, 0.3) == pytest.approx(0.26)


def test_long_ring_band_uses_meter_sigma():
    # r1 = rn = 2.4 Ω: 2.5 σ at 1.2 Ω is above 0.05 Ω, so the meter allowance sets the band.
    test = record(end_to_end={"r1": 2.4, "rn": 2.4, "r2": 3.92})
    tol = 2.5 * sigma_ohm(1.2)
    assert tol > 0.05
    assert checks.expected(test)["ln_band_ohm"] == [round(1.2 - tol, 2), round(1.2 + tol, 2)]


def test_expected_needs_step_1():
    exp = checks.expected(record(end_to_end={"r1": 0.52, "rn": 0.52, "r2": None}))
    assert exp["ln_ohm"] == 0.26
    assert exp["le_ohm"] is None and exp["le_band_ohm"] is None
    assert checks.expected(record(end_to_end={"r1": "OL", "rn": 0.5, "r2": 0.8}))["ln_ohm"] is None


# ------------------------------------------------------------------ reading statuses


@pytest.mark.parametrize(
    ("ln", "status"),
    [(0.26, "ok"), (0.31, "ok"), (0.32, "high"), (0.20, "low"), ("OL", "open"), (None, "pending")],
)
def test_ring_point_status(ln, status):
    check = _by(record([point("a", ln=ln)]), "a", "ln")
    assert check["status"] == status
    assert (check["expected_ohm"], check["low_ohm"], check["high_ohm"]) == (0.26, 0.21, 0.31)


def test_ring_point_pending_without_step_1():
    test = record([point("a", ln=0.26)], end_to_end={"r1": None, "rn": None, "r2": None})
    assert _by(test, "a", "ln")["status"] == "pending"
    assert _by(test, None, "r1")["status"] == "pending"


def test_one_check_per_reading_in_test_order():
    test = record([point("a"), point("b")])
    order = [(c["outlet"], c["step"]) for c in checks.reading_checks(test)]
    assert order == [(None, "r1"), (None, "rn"), (None, "r2"), ("a", "ln"), ("b", "ln"),
                     ("a", "le"), ("b", "le")]


def test_spur_is_judged_against_its_parent():
    # 25 m of 2.5 mm² line + neutral adds at most 25 × 2 × 7.41 mΩ = 0.37 Ω (BS EN 60228).
    test = record([point("a", ln=0.26), point("s", "a", ln=0.33), point("t", "a", ln=0.20),
                   point("u", "a", ln=0.70)])
    ok = _by(test, "s", "ln")
    assert ok["status"] == "ok" and ok["expected_ohm"] == 0.26 and ok["deviation_ohm"] == 0.07
    assert ok["high_ohm"] == round(0.26 + 0.3705 + 0.05, 2)
    assert _by(test, "t", "ln")["status"] == "low"
    assert _by(test, "u", "ln")["status"] == "high"


def test_spur_without_parent_reading_uses_ring_band():
    check = _by(record([point("a"), point("s", "a", le=0.30)]), "s", "le")
    # The parent's band low end (0.27 Ω) still applies; the high end grows by 25 m of 2.5/1.5.
    assert check["status"] == "ok"
    assert check["low_ohm"] == 0.27
    assert check["high_ohm"] == round(0.3925 + 25 * (7.41 + 12.10) / 1000, 2)


def test_rn_against_r1():
    # Common practice: r1 and rn agree within 0.05 Ω.
    assert _by(record(end_to_end={**E2E, "rn": 0.57}), None, "rn")["status"] == "ok"
    assert _by(record(end_to_end={**E2E, "rn": 0.58}), None, "rn")["status"] == "high"
    assert _by(record(end_to_end={**E2E, "rn": "OL"}), None, "rn")["status"] == "open"


# ------------------------------------------------------------------ step 1 findings


def test_healthy_step_1_has_no_findings():
    assert checks.end_to_end_findings(record(cable_length_m=70)) == []


@pytest.mark.parametrize(("step", "conductor"), [("r1", "line"), ("rn", "neutral"), ("r2", "cpc")])
def test_open_end_to_end_is_a_fault(step, conductor):
    findings = checks.end_to_end_findings(record(end_to_end={**E2E, step: "OL"}))
    assert _codes(findings) == ["open_conductor"]
    f = findings[0]
    assert (f.severity, f.conductor, f.step) == ("fault", conductor, None)
    assert f"broken in the {conductor} conductor" in f.message


@pytest.mark.parametrize(("rn", "higher"), [(0.60, "neutral"), (0.44, "line")])
def test_ends_mismatch_names_the_higher_conductor(rn, higher):
    findings = checks.end_to_end_findings(record(end_to_end={**E2E, "rn": rn}))
    assert _codes(findings) == ["ends_mismatch"]
    assert findings[0].conductor == higher
    assert findings[0].message.startswith(f"The {higher} end-to-end reading is 0.08 Ω higher")


def test_ends_within_005_pass():
    assert checks.end_to_end_findings(record(end_to_end={**E2E, "rn": 0.57})) == []


def test_cpc_ratio_is_the_table_ratio():
    # 12.10 / 7.41 = 1.633 for 2.5/1.5 mm² (BS EN 60228).
    assert checks.ring_cpc_ratio(record()) == pytest.approx(1.633, abs=5e-4)


@pytest.mark.parametrize(("r2", "word"), [(1.00, "smaller than recorded"),
                                          (0.60, "larger than recorded")])
def test_cpc_ratio_out_of_tolerance(r2, word):
    # 0.52 × 1.633 = 0.85 Ω expected; 1.00 Ω is +18 %, 0.60 Ω is -29 %.
    findings = checks.end_to_end_findings(record(end_to_end={**E2E, "r2": r2}))
    assert _codes(findings) == ["cpc_ratio"]
    assert word in findings[0].message


def test_cpc_ratio_within_ten_percent_passes():
    assert checks.end_to_end_findings(record(end_to_end={**E2E, "r2": 0.91})) == []  # +7 %


def test_cpc_ratio_tolerance_widens_for_short_rings():
    # r1 = 0.10 Ω, r2 = 0.19 Ω is +16 % but within the meter's error at such low readings.
    assert checks.cpc_ratio_tolerance(0.10, 0.19) > 0.16
    assert checks.end_to_end_findings(record(end_to_end={"r1": 0.10, "rn": 0.10, "r2": 0.19})) == []


@pytest.mark.parametrize(
    ("r1", "severity"),
    # 50 m of 2.5 mm² = 0.37 Ω at 20 °C (BS EN 60228 7.41 mΩ/m).
    [(0.40, None), (0.50, "info"), (0.60, "warning"), (0.25, "info"), (0.15, "warning")],
)
def test_cable_length(r1, severity):
    findings = checks.end_to_end_findings(
        record(end_to_end={"r1": r1, "rn": r1, "r2": round(r1 * 1.633, 2)}, cable_length_m=50))
    assert [f.severity for f in findings if f.code == "cable_length"] == (
        [] if severity is None else [severity])


# ------------------------------------------------------------------ spur findings


def test_le_per_ln_factor_for_twin_and_earth():
    # (1 + r2/r1) / (1 + rn/r1) = (1 + 1.633) / 2 = 1.32 for 2.5/1.5 mm².
    test = record([point("a"), point("s", "a")])
    assert checks.le_per_ln_factor(test, test.outlet("s")) == pytest.approx(1.316, abs=1e-3)


def _spur(ln_rise, le_rise):
    return record([point("a", ln=0.26, le=0.34),
                   point("s", "a", ln=round(0.26 + ln_rise, 2), le=round(0.34 + le_rise, 2))])


def test_genuine_spur_has_no_finding():
    # 8 m of 2.5/1.5: step 2 rises 8 × 14.82 mΩ = 0.12 Ω, step 3 8 × 19.51 mΩ = 0.16 Ω.
    assert checks.spur_findings(_spur(0.12, 0.16)) == []


def test_spur_excess_points_at_the_cpc():
    findings = checks.spur_findings(_spur(0.12, 0.40))
    assert _codes(findings) == ["spur_excess"]
    assert (findings[0].conductor, findings[0].step, findings[0].outlets) == ("cpc", "le",
                                                                              ("s", "a"))


def test_spur_excess_points_at_the_neutral():
    findings = checks.spur_findings(_spur(0.30, 0.10))
    assert _codes(findings) == ["spur_excess"] and findings[0].conductor == "neutral"


def test_spur_below_parent():
    findings = checks.spur_findings(_spur(-0.08, 0.0))
    assert _codes(findings) == ["spur_below_parent"] and findings[0].step == "ln"


def test_spur_excess_high():
    findings = checks.spur_findings(_spur(0.20, 0.70))
    assert _codes(findings) == ["spur_excess_high"] and findings[0].step == "le"


# ------------------------------------------------------------------ bad input


def _direct(outlets=(), **circuit):
    c = {"ocpd": Ocpd("BS EN 60898", "B", 32), **circuit}
    return RingTest(circuit=Circuit(**c), end_to_end=EndToEnd(0.52, 0.52, 0.85),
                    outlets=tuple(outlets))


@pytest.mark.parametrize(
    ("call", "field"),
    [
        (lambda: checks.reading_checks(_direct(live_csa_mm2=3.0)), r"circuit\.live_csa_mm2"),
        (lambda: checks.reading_checks(_direct(cpc_csa_mm2=0.75)), r"circuit\.cpc_csa_mm2"),
        (lambda: checks.reading_checks(_direct(
            [Outlet("a"), Outlet("s", spur_from="a", spur_csa_mm2=2.0)])),
         r"outlets\[1\]\.spur_csa_mm2"),
        (lambda: checks.spur_findings(_direct(
            [Outlet("a", ln_ohm=0.26),
             Outlet("s", spur_from="a", ln_ohm=0.3, spur_cpc_csa_mm2=9)])),
         r"outlets\[1\]\.spur_cpc_csa_mm2"),
        (lambda: checks.step_reading_ohm(0.5, 0.8, 1.5), "t"),
        (lambda: checks.step_reading_ohm(-0.5, 0.8, 0.5), "a_ohm"),
    ],
)
def test_bad_input_names_the_field(call, field):
    with pytest.raises(ValueError, match=rf"^{field}"):
        call()


@pytest.mark.parametrize("step", ["rn", "r2"])
def test_reading_status_and_findings_agree(step):
    # Sweep one end-to-end reading through its band: the readings list and the findings must
    # flag exactly the same values.
    codes = {"rn": {"ends_mismatch"}, "r2": {"cpc_ratio", "parallel_earth_path"}}[step]
    flagged = []
    for hundredths in range(40, 110):
        test = record(end_to_end={**E2E, step: hundredths / 100})
        status = _by(test, None, step)["status"]
        found = bool(codes & set(_codes(checks.end_to_end_findings(test))))
        assert (status != "ok") == found, hundredths
        flagged.append(found)
    assert any(flagged) and not all(flagged)


def test_cable_length_status_and_finding_agree():
    for hundredths in range(20, 60):
        r1 = hundredths / 100
        test = record(end_to_end={"r1": r1, "rn": r1, "r2": round(r1 * 1.633, 2)},
                      cable_length_m=50)
        found = "cable_length" in _codes(checks.end_to_end_findings(test))
        assert (_by(test, None, "r1")["status"] != "ok") == found, r1


@pytest.mark.parametrize(("cpc_kind", "severity"), [("cable_core", "warning"),
                                                    ("conduit", "info")])
def test_tiny_r2_is_a_parallel_earth_path_not_a_joint(cpc_kind, severity):
    # Steel conduit as cpc: r2 0.03 Ω against r1 0.31 Ω (2.5/1.5 cable would give 0.51 Ω,
    # BS EN 60228 12.10/7.41 mΩ/m). The tolerance comes from the expected r2, so it fires.
    test = record(end_to_end={"r1": 0.31, "rn": 0.31, "r2": 0.03}, cpc_kind=cpc_kind)
    found = [f for f in checks.end_to_end_findings(test) if f.code == "parallel_earth_path"]
    assert [f.severity for f in found] == [severity]
    assert "Zs" in found[0].message and "0.03" in found[0].message
    assert checks.cpc_ratio_tolerance(0.31, 0.31 * 1.633) < 0.2


def test_declared_metallic_cpc_with_normal_r2_raises_nothing():
    test = record(end_to_end={"r1": 0.52, "rn": 0.52, "r2": 0.70}, cpc_kind="armour")
    assert "cpc_ratio" not in _codes(checks.end_to_end_findings(test))
