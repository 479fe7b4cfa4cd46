"""Measured (live) Zs: the limit, and the cross-check against Ze + R1+R2 on networks solved
outside the code (Laplacian pseudo-inverse), with a parallel earth path or a poor connection
simulated in the network so the measured value is computed, not assumed."""

from __future__ import annotations

import numpy as np
import pytest
from ring_records import point, record, resistance_between

from ringmath import live, zs
from ringmath.diagnose import diagnose

R_LIVE, R_CPC = 7.41e-3, 12.1e-3  # IEC 60228 Table 1, 2.5 and 1.5 mm², ohms per metre
SEGMENTS_M = [6.0, 9.0, 8.0, 12.0, 7.0, 10.0, 8.0, 10.0]  # a 70 m ring, 7 outlets
ZE_OHM = 0.35


def _points(test):
    return {p["id"]: p for p in zs.point_values(test)[1]}


def _codes(test):
    return [f.code for f in zs.zs_findings(test)]


def test_expected_range_worked_example():
    # Ze 0.35 Ω and R1+R2 0.34 Ω (predicted 0.69 Ω). True Ze from its loop reading:
    # (0.35 − 0.03)/1.03 .. (0.35 + 0.03)/0.97 = 0.3107 .. 0.3918 Ω; true R1+R2 from the
    # continuity reading: (0.34 − 0.015)/1.01 .. (0.34 + 0.015)/0.99 = 0.3218 .. 0.3586 Ω;
    # copper over ±20 K: ×(1 ∓ 0.0786). True loop 0.6072 .. 0.7786 Ω, shown by a loop tester
    # 0.6072 × 0.97 − 0.03 = 0.559 .. 0.7786 × 1.03 + 0.03 = 0.832 Ω -> [0.55, 0.84].
    assert live.expected_range_ohm(0.35, 0.34) == (0.55, 0.84)
    # invariant: the hand prediction always lies inside the range
    for ze, r in [(0.1, 0.05), (0.35, 0.34), (0.8, 1.2), (20.0, 0.5)]:
        low, high = live.expected_range_ohm(ze, r)
        assert low <= ze + r <= high


@pytest.mark.parametrize(("measured", "ok"), [(0.69, True), (1.10, True), (1.11, False),
                                              ("OL", False), (None, None)])
def test_measured_zs_against_the_limit(measured, ok):
    # 32 A type B: 1.10 Ω, 80 % of 1.37 Ω (BS 7671:2018 Table 41.3, Cmin × U0 / 5 In).
    test = record([point("a", ln=0.26, le=0.34, zs_measured=measured)])
    p = _points(test)["a"]
    assert p["zs_measured_ok"] is ok
    assert ("zs_measured_over_limit" in _codes(test)) == (ok is False)
    summary = zs.point_values(test)[0]
    assert summary["zs_ok"] is (False if ok is False else True)


def test_measured_zs_beyond_an_fcu_uses_the_fuse_limit():
    test = record([point("a", ln=0.26, le=0.34), point("f", "a", kind="fcu", fuse_a=13,
                                                       ln=0.27, le=0.36),
                   point("x", "f", ln=0.9, le=1.2, zs_measured=1.60)])
    x = _points(test)["x"]
    assert (x["zs_max_ohm"], x["zs_measured_ok"]) == (1.74, True)


# ------------------------------------------------------------------ simulated on a network


def _solve(k: int, *, spur_m: float = 0.0, parallel_ohm: float | None = None,
           contact_ohm: float = 0.0) -> dict:
    """Step 3 (dead, cross-connected) and the live loop at ring node k, or at the end of a
    ``spur_m`` metre 2.5/1.5 mm² spur from node k.

    Live: both line ends on the device with the source (node "B": Ze is added in series), both
    cpc ends on the earth bar / main earthing terminal ("M"); an earth fault at the point joins
    its line and cpc (through ``contact_ohm`` at a poor line connection); a parallel earth path
    of ``parallel_ohm`` joins the point's cpc to the main earthing terminal."""
    n = len(SEGMENTS_M)
    line = [(("L", i), ("L", i + 1), m * R_LIVE) for i, m in enumerate(SEGMENTS_M)]
    cpc = [(("E", i), ("E", i + 1), m * R_CPC) for i, m in enumerate(SEGMENTS_M)]
    at_l, at_e = ("L", k), ("E", k)
    if spur_m:
        line.append((("L", k), ("L", "s"), spur_m * R_LIVE))
        cpc.append((("E", k), ("E", "s"), spur_m * R_CPC))
        at_l, at_e = ("L", "s"), ("E", "s")
    dead_join = {("E", n): ("L", 0), ("E", 0): ("L", n)}
    dead = [(dead_join.get(u, u), dead_join.get(v, v), r) for u, v, r in line + cpc]
    le = resistance_between(dead, at_l, at_e)
    ring_le = resistance_between(dead, ("L", k), ("E", k))
    joined = {("L", 0): "B", ("L", n): "B", ("E", 0): "M", ("E", n): "M"}
    edges = [(joined.get(u, u), joined.get(v, v), r) for u, v, r in line + cpc]
    edges.append((at_l, "F", max(contact_ohm, 1e-9)))  # the fault: line to cpc
    edges.append(("F", at_e, 1e-9))
    if parallel_ohm is not None:
        edges.append((at_e, "M", parallel_ohm))
    return {"le": le, "ring_le": ring_le, "loop": resistance_between(edges, "B", "M")}


def _shown(true_ohm: float, gain: float, offset: float) -> float:
    return round(true_ohm * (1 + gain) + offset, 2)


def _circuit(sol: dict, *, spur: bool = False, taken_at: str | None = None,
             g=(0.0, 0.0, 0.0, 0.0), e=(0.0, 0.0, 0.0, 0.0)):
    """The record a tester would make: Ze, step 3 at the point (and at its ring point for a
    spur), the live Zs; each shown by its instrument with gain g and offset e."""
    le_field = "le_terminals" if taken_at == "terminals" else "le"
    zs_measured = _shown(ZE_OHM + sol["loop"], g[0], e[0])
    le = _shown(sol["le"], g[1], e[1])
    outlets = [point("p", ln=0.2, zs_measured=None if spur else zs_measured, taken_at=taken_at,
                     **{le_field: _shown(sol["ring_le"], g[3], e[3]) if spur else le})]
    if spur:
        outlets.append(point("s", "p", ln=0.3, le=le, zs_measured=zs_measured))
    return record(outlets, ze_ohm=_shown(ZE_OHM, g[2], e[2]))


def _draws(rng):
    g = rng.uniform([-live.LOOP_GAIN, -0.01, -live.LOOP_GAIN, -0.01],
                    [live.LOOP_GAIN, 0.01, live.LOOP_GAIN, 0.01])
    e = rng.uniform([-live.LOOP_OFFSET_OHM, -0.01, -live.LOOP_OFFSET_OHM, -0.01],
                    [live.LOOP_OFFSET_OHM, 0.01, live.LOOP_OFFSET_OHM, 0.01])
    return g, e


@pytest.mark.parametrize(("k", "spur_m"), [(1, 0.0), (4, 0.0), (7, 0.0), (1, 20.0),
                                           (4, 15.0)])
def test_healthy_points_agree_within_the_instruments(k, spur_m):
    """No false alarm: instrument errors drawn within the stated tolerances never leave the
    expected range (seeded), beside the board or mid-ring, on the ring or on a spur."""
    rng = np.random.default_rng(k)
    sol = _solve(k, spur_m=spur_m)
    # physical invariant: in service (four ends joined) never reads above the dead step 3
    assert sol["loop"] <= sol["le"] + 1e-6
    where = "s" if spur_m else "p"
    for _ in range(30):
        g, e = _draws(rng)
        test = _circuit(sol, spur=bool(spur_m), g=g, e=e)
        assert _points(test)[where]["zs_cross_check"] == "agrees"
        assert not {"parallel_earth_path", "zs_measured_high"} & set(_codes(test))


def test_ring_points_near_the_board_read_well_below_their_step_3_without_any_fault():
    # both legs of the ring share the fault current: beside the board the live loop is about
    # Ze, far below Ze + the step 3 reading; the check must not call that a parallel path
    sol = _solve(1)
    assert sol["loop"] < 0.5 * sol["le"]
    p = _points(_circuit(sol))["p"]
    assert p["zs_measured_ohm"] < p["zs_ohm"] - 0.15
    assert p["zs_cross_check"] == "agrees"


def test_a_parallel_earth_path_on_a_spur_shows_as_measured_well_below():
    # a 20 m spur from beside the board to an outbuilding whose metalwork is bonded: 0.02 Ω
    # from the spur's cpc to the main earthing terminal
    sol = _solve(1, spur_m=20.0, parallel_ohm=0.02)
    healthy = _solve(1, spur_m=20.0)
    assert sol["le"] == pytest.approx(healthy["le"])   # the dead test does not see it
    assert sol["loop"] < healthy["loop"]
    test = _circuit(sol, spur=True)
    s = _points(test)["s"]
    assert s["zs_cross_check"] == "low"
    finding = next(f for f in zs.zs_findings(test) if f.code == "parallel_earth_path")
    assert finding.outlets == ("s",)
    assert "continuity figures still stand" in finding.message
    assert "cannot prove the cpc" in finding.message
    # the continuity judgement is unchanged: Zs from R1+R2 still judged on its own
    assert s["ok"] is True


def test_a_poor_connection_at_the_outlet_shows_as_measured_well_above():
    # step 3 taken at the terminals; the live test goes through a 0.3 Ω contact at the socket
    sol = _solve(4, contact_ohm=0.3)
    test = _circuit(sol, taken_at="terminals")
    assert _points(test)["p"]["zs_cross_check"] == "high"
    assert "zs_measured_high" in _codes(test)


def test_a_live_zs_below_ze_is_a_parallel_path_anywhere():
    p = _points(record([point("a", ln=0.26, le=0.34, zs_measured=0.20)]))["a"]
    assert p["zs_cross_check"] == "low"


def test_no_cross_check_on_an_estimate():
    # no step 3 yet: R1+R2 is only an upper bound, so a low live reading proves nothing
    test = record([point("a", ln=0.26, zs_measured=0.3)])
    p = _points(test)["a"]
    assert (p["r1r2_estimated"], p["zs_expected_range_ohm"], p["zs_cross_check"]) == (
        True, None, None)


def test_diagnose_carries_the_live_results():
    rec = {"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                       "ze_ohm": 0.35},
           "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
           "outlets": [{"id": "a", "ln": 0.26, "le": 0.34, "zs_measured": 0.20}]}
    result = diagnose(rec)
    p = result["points"][0]
    assert (p["zs_measured_ohm"], p["zs_measured_ok"], p["zs_cross_check"]) == (0.20, True, "low")
    assert "parallel_earth_path" in [f["code"] for f in result["findings"]]
    assert result["circuit"]["zs_ok"] is True
