"""R1+R2 and predicted Zs at every point: as measured, safe upper bounds, the device limits."""

import numpy as np
import pytest
from ring_records import point, record, resistance_between

from ringmath import zs
from ringmath.meter import upper_bound_ohm

LIVE_OHM_PER_M = 7.41e-3  # IEC 60228 Table 1, 2.5 mm²
CPC_OHM_PER_M = 12.10e-3  # IEC 60228 Table 1, 1.5 mm²


def _points(test):
    return {p["id"]: p for p in zs.point_values(test)[1]}


def _codes(test):
    return [(f.code, f.severity) for f in zs.zs_findings(test)]


def test_measured_point_worked_example():
    # The hand check (IET Guidance Note 3 method, Zs = Ze + R1+R2): Ze 0.35 + 0.34 = 0.69 Ω
    # against 1.10 Ω (32 A type B, 80 % of the 1.37 Ω of BS 7671:2018 Table 41.3). The safe
    # bound behind the reading: (0.34 + 0.01 + 0.005) / 0.99 = 0.359 -> 0.36 Ω (meter model).
    p = _points(record([point("a", ln=0.26, le=0.34)]))["a"]
    assert (p["r1r2_ohm"], p["r1r2_source"], p["r1r2_estimated"], p["zs_ohm"], p["zs_max_ohm"],
            p["ok"], p["zs_marginal"]) == (0.34, "measured", False, 0.69, 1.10, True, False)
    assert p["r1r2_bound_ohm"] == 0.36
    assert (p["protected_by"], p["ln_ohm"], p["le_ohm"]) == ("circuit", 0.26, 0.34)


def test_terminal_re_measure_is_the_r1r2():
    p = _points(record([point("a", ln=0.26, le=0.41, le_terminals=0.34, taken_at="front")]))["a"]
    assert (p["r1r2_ohm"], p["zs_ohm"], p["le_ohm"], p["le_terminals_ohm"]) == (
        0.34, 0.69, 0.41, 0.34)


@pytest.mark.parametrize(("le", "ze", "ok", "marginal"), [
    # limit 1.10 Ω; bound(le) = ceil((le + 0.015) / 0.99)
    (0.74, 0.35, True, True),    # 0.35 + 0.74 = 1.09 passes; 0.35 + bound 0.77 = 1.12 reaches
    (0.72, 0.35, True, True),    # 1.07 passes; 0.35 + 0.75 = 1.10 reaches the limit
    (0.70, 0.35, True, False),   # 1.05; 0.35 + 0.73 = 1.08 stays below
    (0.76, 0.35, False, False),  # 1.11 fails outright: a fail, not a marginal pass
])
def test_marginal_is_its_own_judgement(le, ze, ok, marginal):
    test = record([point("a", ln=0.3, le=le)], ze_ohm=ze)
    p = _points(test)["a"]
    assert (p["ok"], p["zs_marginal"]) == (ok, marginal)
    codes = [c for c, _ in _codes(test)]
    assert ("zs_marginal" in codes) == marginal
    assert ("zs_over_limit" in codes) == (not ok)


def test_ring_point_without_step_3_is_the_healthy_maximum():
    # (r1 + r2) / 4 = 0.3425 Ω, raised for meter error: 0.3611 -> 0.37 Ω.
    p = _points(record([point("a", ln=0.26)]))["a"]
    assert (p["r1r2_ohm"], p["r1r2_source"], p["r1r2_estimated"], p["zs_ohm"]) == (
        0.37, "estimated", True, 0.72)


def test_spur_without_step_3_adds_its_rise():
    # Parent 0.36 Ω; step 2 rise at most upper(0.40) − lower(0.26) = 0.4192 − 0.2426 Ω,
    # × 1.316 for 2.5/1.5 cable = 0.2324 Ω -> 0.36 + 0.2324 = 0.60 Ω (rounded up).
    p = _points(record([point("a", ln=0.26, le=0.34), point("s", "a", ln=0.40)]))["s"]
    assert (p["r1r2_ohm"], p["r1r2_source"]) == (0.60, "estimated")


def test_spur_without_any_reading_is_unknown():
    p = _points(record([point("a", ln=0.26, le=0.34), point("s", "a")]))["s"]
    assert (p["r1r2_ohm"], p["r1r2_source"], p["zs_ohm"], p["ok"]) == (None, None, None, None)


def test_open_step_3_fails_without_a_value():
    p = _points(record([point("a", ln=0.26, le="OL")]))["a"]
    assert (p["le_ohm"], p["r1r2_ohm"], p["zs_ohm"], p["ok"]) == ("OL", None, None, False)


def test_beyond_an_fcu_uses_the_fuse_limit():
    # BS 1362 13 A: 2.18 Ω checked figure, 1.74 Ω measured limit (ringmath/data/zs_fuses.csv).
    test = record([point("a", ln=0.26, le=0.34), point("f", "a", kind="fcu", fuse_a=13),
                   point("x", "f", kind="fixed_equipment", ln=0.9, le=1.2)])
    points = _points(test)
    assert (points["f"]["protected_by"], points["f"]["zs_max_ohm"]) == ("circuit", 1.10)
    x = points["x"]
    # 0.35 + 1.2 = 1.55 Ω: over the circuit's 1.10 Ω, within the fuse's 1.74 Ω.
    assert (x["protected_by"], x["zs_max_ohm"], x["zs_ohm"], x["ok"]) == ("fcu:f", 1.74, 1.55,
                                                                          True)
    # The circuit figure leaves out the point behind the FCU fuse: its worst point is a.
    summary = zs.point_values(test)[0]
    assert (summary["r1r2_ohm"], summary["zs_ohm"]) == (0.34, 0.69)
    assert summary["zs_ok"] is None  # f has no readings yet: not proved


def test_fcu_fuse_without_a_tabulated_figure():
    test = record([point("a"), point("f", "a", kind="fcu", fuse_a=5),
                   point("x", "f", ln=0.5, le=0.6)])
    x = _points(test)["x"]
    assert (x["zs_max_ohm"], x["ok"]) == (None, None)
    assert ("zs_limit_unknown", "info") in _codes(test)


def test_circuit_summary():
    summary, _ = zs.point_values(record([point("a", le=0.34), point("b", le=0.30)]))
    assert summary == {
        "r1r2_ohm": 0.34, "zs_ohm": 0.69, "zs_max_ohm": 1.10, "zs_tabulated_ohm": 1.37,
        "device": "32 A type B circuit-breaker (BS EN 60898)",
        "limit_source": summary["limit_source"], "zs_ok": True, "insulation": None, "rcd": None,
    }
    assert "Table 41.3" in summary["limit_source"]


def test_circuit_summary_before_any_outlet():
    summary, points = zs.point_values(record())
    assert points == [] and summary["r1r2_ohm"] == 0.37
    assert zs.point_values(record(end_to_end={"r1": None, "rn": None, "r2": None}))[0][
        "r1r2_ohm"] is None


def test_over_limit_measured_is_a_fault_estimated_a_warning():
    # Ze 0.80 Ω + 0.42 Ω = 1.22 Ω > 1.10 Ω (32 A type B, Table 41.3 × 80 %).
    measured = record([point("a", ln=0.31, le=0.40)], ze_ohm=0.8)
    assert _codes(measured) == [("zs_over_limit", "fault")]
    estimated = record([point("a", ln=0.26)], ze_ohm=0.8)
    assert _codes(estimated) == [("zs_over_limit", "warning")]
    assert _codes(record([point("a", ln=0.26, le=0.34)], ze_ohm=0.35)) == []


def test_over_limit_with_no_outlets_yet():
    assert _codes(record(ze_ohm=0.8)) == [("zs_over_limit", "warning")]


def test_over_limit_behind_fcu_uses_fuse_limit():
    # 0.6 + upper(1.3) = 0.6 + 1.33 = 1.93 Ω > 1.84 Ω (BS 1362 13 A, Table 41.2 × 80 %),
    # while a (0.6 + 0.36 = 0.96 Ω) is within the circuit's 1.10 Ω.
    test = record([point("a", le=0.34), point("f", "a", kind="fcu", fuse_a=13),
                   point("x", "f", le=1.3)], ze_ohm=0.6)
    findings = zs.zs_findings(test)
    assert [(f.code, f.outlets) for f in findings] == [("zs_over_limit", ("x",))]


@pytest.mark.parametrize(
    ("circuit", "expected"),
    [
        ({"ze_ohm": None}, [("ze_source", "warning")]),
        ({"ze_source": "declared"}, [("ze_source", "warning")]),
        ({"rcd": {"rated_ma": 30, "type": "A"}}, [("rcd", "info")]),
        ({}, []),
    ],
)
def test_ze_and_rcd_findings(circuit, expected):
    assert _codes(record([point("a", le=0.34)], **circuit)) == expected


def test_missing_ze_leaves_zs_unknown():
    p = _points(record([point("a", le=0.34)], ze_ohm=None))["a"]
    assert (p["r1r2_ohm"], p["zs_ohm"], p["ok"]) == (0.34, None, None)
    assert zs.point_values(record([point("a", le=0.34)], ze_ohm=None))[0]["zs_ok"] is None


def test_tt_with_rcd_uses_the_rcd_limit():
    # TT, 30 mA RCD: 50 V / 0.03 A = 1666.67 Ω (BS 7671:2018 411.5.3); Ze 40 Ω passes.
    test = record([point("a", le=0.34)], earthing="TT", ze_ohm=40, rcd={"rated_ma": 30})
    p = _points(test)["a"]
    assert (p["zs_max_ohm"], p["ok"]) == (1666.67, True)
    assert _codes(test) == [("rcd", "info")]


@pytest.mark.parametrize(
    ("ocpd", "field"),
    [
        ({"standard": "BS EN 60898", "curve": "B", "rating_a": 33}, r"circuit\.ocpd\.rating_a"),
        ({"standard": "BS EN 60898", "curve": "K", "rating_a": 32}, r"circuit\.ocpd\.curve"),
        ({"standard": "BS 88-6", "curve": None, "rating_a": 30}, r"circuit\.ocpd\.standard"),
    ],
)
def test_unknown_device_names_the_field(ocpd, field):
    with pytest.raises(ValueError, match=rf"^{field}:"):
        zs.point_values(record([point("a", le=0.34)], ocpd=ocpd))


def test_lower_bound_mirrors_the_upper_bound():
    assert zs.lower_bound_ohm(0.26) == pytest.approx((0.26 - 0.015) / 1.01)
    assert zs.lower_bound_ohm(0.0) == 0.0
    with pytest.raises(ValueError, match=r"^reading_ohm:"):
        zs.lower_bound_ohm(-0.1)


# ------------------------------------------------------------------ safe upper bound, checked
# against resistor networks solved outside the code (Laplacian pseudo-inverse).


def _network(lengths_m, spur_m, spur_at):
    """Step 2, step 3 and in-service R1+R2 (ohms) at each node of a ring of 2.5/1.5 mm² cable
    made of ``lengths_m`` segments, with one spur of ``spur_m`` metres from node ``spur_at``."""
    n = len(lengths_m)

    def conductor(name, per_m_ohm):
        run = [((name, i), (name, i + 1), lengths_m[i] * per_m_ohm) for i in range(n)]
        return run + [((name, spur_at), (name, "s"), spur_m * per_m_ohm)]

    line = conductor("L", LIVE_OHM_PER_M)
    configs = {
        # Step 2: L1–N2 and L2–N1 joined; step 3: L1–CPC2 and L2–CPC1 joined.
        "ln": (line + conductor("N", LIVE_OHM_PER_M), {("N", n): ("L", 0), ("N", 0): ("L", n)},
               "N"),
        "le": (line + conductor("E", CPC_OHM_PER_M), {("E", n): ("L", 0), ("E", 0): ("L", n)},
               "E"),
        # In service: both line ends on the device, both cpc ends on the earth bar, the loop
        # closed through the supply (Ze is added separately), so all four ends are one node.
        "service": (line + conductor("E", CPC_OHM_PER_M),
                    {("L", n): ("L", 0), ("E", 0): ("L", 0), ("E", n): ("L", 0)}, "E"),
    }
    out = {}
    for name, (edges, joins, other) in configs.items():
        net = [(joins.get(u, u), joins.get(v, v), r) for u, v, r in edges]
        out[name] = {k: resistance_between(net, joins.get(("L", k), ("L", k)),
                                           joins.get((other, k), (other, k)))
                     for k in [*range(1, n), "s"]}
    return out


def _reads_low(ohm):
    """The lowest display the meter model allows: gain −1 %, offset −0.01 Ω, 0.01 Ω steps."""
    return round(ohm * 0.99 - 0.01, 2)


@pytest.mark.parametrize("seed", range(4))
def test_r1r2_is_never_below_the_in_service_value(seed):
    rng = np.random.default_rng(seed)
    lengths = rng.uniform(2.0, 15.0, size=int(rng.integers(4, 9)))
    n, spur_at = len(lengths), int(rng.integers(1, len(lengths)))
    net = _network(lengths, float(rng.uniform(1.0, 10.0)), spur_at)
    total_m = float(lengths.sum())
    e2e = {"r1": _reads_low(total_m * LIVE_OHM_PER_M), "rn": _reads_low(total_m * LIVE_OHM_PER_M),
           "r2": _reads_low(total_m * CPC_OHM_PER_M)}
    ids = {k: f"p{k}" for k in range(1, n)} | {"s": "s"}
    for with_step_3 in (True, False):
        outlets = [point(oid, None if k != "s" else f"p{spur_at}",
                         ln=_reads_low(net["ln"][k]),
                         le=_reads_low(net["le"][k]) if with_step_3 else None)
                   for k, oid in ids.items()]
        points = _points(record(outlets, end_to_end=e2e))
        for k, oid in ids.items():
            # Rayleigh monotonicity: joining the four ends can only lower the resistance.
            assert net["le"][k] >= net["service"][k] - 1e-12
            assert points[oid]["r1r2_bound_ohm"] >= net["service"][k], (with_step_3, oid)
            assert points[oid]["r1r2_source"] == ("measured" if with_step_3 else "estimated")


def test_every_ohm_value_has_two_decimals():
    test = record([point("a", ln=0.263, le=0.347), point("s", "a", ln=0.41)], ze_ohm=0.337)
    summary, points = zs.point_values(test)
    values = [summary[k] for k in ("r1r2_ohm", "zs_ohm", "zs_max_ohm")]
    values += [p[k] for p in points for k in ("r1r2_ohm", "r1r2_bound_ohm", "zs_ohm",
                                              "zs_max_ohm")]
    assert all(v == round(v, 2) for v in values)
    assert upper_bound_ohm(0.347) == _points(test)["a"]["r1r2_bound_ohm"]
