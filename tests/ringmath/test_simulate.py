"""The simulator and its site errors, checked by the network model and closed forms.

Worked values come from the resistor network of the three-step test: every reading is an
effective resistance, so a constant in the probe loop adds itself, and scaling every wiring
resistance scales the reading (a resistor network's effective resistance is homogeneous of
degree one; common practice).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from ringmath.network import Layout, step_resistance
from ringmath.record import parse_record
from ringmath.simulate import FAULT_CODES, simulate
from ringmath.simulate_net import Conduit, Point, Wiring, mirrored, reading_ohm
from ringmath.simulate_nuisance import Nuisance

PLAIN = Layout(1, (False,))


def _sim(seed, fault=None, **kw):
    return simulate(np.random.default_rng(seed), fault, **kw)


def _ring_outlets(record):
    return [o for o in record["outlets"] if o["spur_from"] is None]


def _e2e(record):
    e = record["end_to_end"]
    return e["r1"], e["rn"], e["r2"]


def _network(step, t, r1, rn, r2):
    """The diagnosis' own network model (ringmath.network) of a sound ring at place t."""
    return float(step_resistance(PLAIN, step, np.array([[t]]), np.array([[r1, rn, r2]]))[0])


@pytest.mark.parametrize("fault", [None, *FAULT_CODES])
def test_a_seed_gives_the_same_test_and_truth(fault):
    nuisance = Nuisance(contact_sd_ohm=0.02, contact_tail="t3", lead_ohm=0.04, worn=2,
                        metallic_cpc="parallel")
    a, ta = _sim(8, fault, nuisance=nuisance)
    b, tb = _sim(8, fault, nuisance=nuisance)
    assert a == b and ta == tb
    assert _sim(9, fault, nuisance=nuisance)[0] != a
    assert len(parse_record(a).outlets) == len(a["outlets"])


def test_a_nuisance_leaves_the_ring_and_the_clean_draws_alone():
    clean, truth = _sim(3, "interconnection")
    same, t1 = _sim(3, "interconnection", nuisance=Nuisance())
    assert same == clean and replace(t1, nuisance=None) == truth
    noisy, t2 = _sim(3, "interconnection", nuisance=Nuisance(contact_sd_ohm=0.02))
    assert t2.positions == truth.positions and t2.faults == truth.faults
    assert [o["id"] for o in noisy["outlets"]] == [o["id"] for o in clean["outlets"]]
    assert noisy != clean


@pytest.mark.parametrize("delta", [-0.03, 0.02, 0.05, 0.10])
def test_a_lead_offset_on_every_reading_raises_step_two_by_half_of_it(delta):
    # Worked case: with δ on every reading, r1 and rn read δ high, so (r1+rn)/4 rises δ/2,
    # while each step 2 reading rises δ: it stands δ/2 above (r1+rn)/4 from the offset ends.
    clean, truth = _sim(4, None, ideal_meter=True)
    off, _ = _sim(4, None, ideal_meter=True, nuisance=Nuisance(lead_ohm=delta))
    r1, rn, r2 = _e2e(off)
    assert (r1, rn, r2) == pytest.approx(tuple(v + delta for v in _e2e(clean)), abs=1e-12)
    c1, cn, _c2 = _e2e(clean)
    for o_clean, o in zip(_ring_outlets(clean), _ring_outlets(off), strict=True):
        t = truth.positions[o["id"]]
        # the network model at the true place, from the true (unoffset) ends, plus δ
        assert o["ln"] == pytest.approx(_network("ln", t, r1 - delta, rn - delta, r2 - delta)
                                        + delta, abs=1e-6)
        shift = (o["ln"] - (r1 + rn) / 4) - (o_clean["ln"] - (c1 + cn) / 4)
        assert shift == pytest.approx(delta / 2, abs=1e-12)


@pytest.mark.parametrize(("step", "ln_shift", "le_shift"), [
    ("ln", 1.0, 0.0), ("le", 0.0, 1.0), ("e2e", -0.5, -0.5)])
def test_an_offset_on_one_step_only(step, ln_shift, le_shift):
    # δ on step 2 only: readings δ above (r1+rn)/4's change; on step 1 only: the ends read δ
    # high, (r1+rn)/4 rises δ/2 and every step 2/3 reading sits δ/2 below it.
    delta = 0.05
    clean, _ = _sim(5, None, ideal_meter=True)
    off, _ = _sim(5, None, ideal_meter=True, nuisance=Nuisance(lead_ohm=delta, lead_step=step))
    (c1, cn, c2), (r1, rn, r2) = _e2e(clean), _e2e(off)
    for a, b in zip(_ring_outlets(clean), _ring_outlets(off), strict=True):
        assert (b["ln"] - (r1 + rn) / 4) - (a["ln"] - (c1 + cn) / 4) == pytest.approx(
            ln_shift * delta, abs=1e-12)
        assert (b["le"] - (r1 + r2) / 4) - (a["le"] - (c1 + c2) / 4) == pytest.approx(
            le_shift * delta, abs=1e-12)


@pytest.mark.parametrize(("warm", "scale"), [(0.02, 1.0), (0.04, 1.0), (0.0, 2.0)])
def test_a_warmer_cable_or_a_scale_error_scales_steps_two_and_three(warm, scale):
    clean, truth = _sim(6, "unrecorded_spur", ideal_meter=True)
    hot, _ = _sim(6, "unrecorded_spur", ideal_meter=True,
                  nuisance=Nuisance(warm=warm, meter_scale=scale))
    assert _e2e(hot) == _e2e(clean)  # step 1 is taken before the cable warms
    factor = (1 + warm) * scale
    for a, b in zip(clean["outlets"], hot["outlets"], strict=True):
        assert b["ln"] == pytest.approx(factor * a["ln"], abs=1e-6)
        assert b["le"] == pytest.approx(factor * a["le"], abs=1e-6)
    r1, rn, r2 = _e2e(clean)
    sound = next(o for o in _ring_outlets(hot) if o["id"] not in truth.outlets)
    assert sound["le"] == pytest.approx(
        factor * _network("le", truth.positions[sound["id"]], r1, rn, r2), abs=1e-6)


def test_worn_socket_contacts_add_to_those_outlets_only():
    clean, _ = _sim(7, None, ideal_meter=True)
    worn, truth = _sim(7, None, ideal_meter=True, nuisance=Nuisance(worn=3))
    assert _e2e(worn) == _e2e(clean)
    assert 1 <= len(truth.worn_ohm) <= 3
    for a, b in zip(clean["outlets"], worn["outlets"], strict=True):
        extra = truth.worn_ohm.get(b["id"], (0.0, 0.0))
        assert b["ln"] - a["ln"] == pytest.approx(extra[0], abs=1e-9)
        assert b["le"] - a["le"] == pytest.approx(extra[1], abs=1e-9)
        assert b["taken_at"] == ("front" if b["kind"].endswith("socket") else "terminals")
    for ln_extra, le_extra in truth.worn_ohm.values():
        assert 0.05 <= ln_extra <= 0.9 and 0.05 <= le_extra <= 0.9
    assert "taken_at" not in clean["outlets"][0]
    parsed = parse_record(worn)  # the record format carries where each reading was taken
    assert [o.taken_at for o in parsed.outlets] == [o["taken_at"] for o in worn["outlets"]]


def test_worn_contacts_on_a_warmer_day_add_only_their_own_ohms():
    warm, _ = _sim(7, None, ideal_meter=True, nuisance=Nuisance(warm=0.03))
    both, truth = _sim(7, None, ideal_meter=True, nuisance=Nuisance(warm=0.03, worn=2))
    for a, b in zip(warm["outlets"], both["outlets"], strict=True):
        extra = truth.worn_ohm.get(b["id"], (0.0, 0.0))
        assert (b["ln"] - a["ln"], b["le"] - a["le"]) == pytest.approx(extra, abs=1e-6)


def test_a_re_measure_at_the_terminals_reads_without_the_socket_contacts():
    clean, _ = _sim(7, None, ideal_meter=True, nuisance=Nuisance(lead_ohm=0.03))
    again, truth = _sim(7, None, ideal_meter=True,
                        nuisance=Nuisance(lead_ohm=0.03, worn=3, remeasure=True))
    by_id = {o["id"]: o for o in clean["outlets"]}
    for o in again["outlets"]:
        if o["id"] in truth.worn_ohm:
            # same leads, no socket contacts: the clean reading; the front one kept beside it
            assert o["ln_terminals"] == pytest.approx(by_id[o["id"]]["ln"], abs=1e-9)
            assert o["le_terminals"] == pytest.approx(by_id[o["id"]]["le"], abs=1e-9)
            assert o["ln"] > o["ln_terminals"] + 0.05
        else:
            assert "ln_terminals" not in o
    parsed = {o.id: o for o in parse_record(again).outlets}
    worn_id = next(iter(truth.worn_ohm))
    assert parsed[worn_id].ln_used_ohm == pytest.approx(by_id[worn_id]["ln"], abs=1e-9)


def test_a_contact_resistance_in_the_netlist_adds_in_series():
    w = _hand_ring()
    base = reading_ohm(w, "ln", "b")
    assert reading_ohm(w, "ln", "b", contact_ohm=(0.1, 0.25)) == pytest.approx(base + 0.35,
                                                                               abs=1e-6)


def test_probe_contact_scatter_has_the_stated_spread():
    sd = 0.03
    diffs = []
    for seed in range(12):
        clean, _ = _sim(seed, None, ideal_meter=True, n_ring=15)
        noisy, _ = _sim(seed, None, ideal_meter=True, n_ring=15,
                        nuisance=Nuisance(contact_sd_ohm=sd))
        for a, b in zip(clean["outlets"], noisy["outlets"], strict=True):
            diffs += [b["ln"] - a["ln"], b["le"] - a["le"]]
    assert len(diffs) > 300
    assert np.std(diffs) == pytest.approx(sd, rel=0.15)
    assert abs(np.mean(diffs)) < 3 * sd / math.sqrt(len(diffs)) + 1e-3


@pytest.mark.parametrize("mode", ["parallel", "instead"])
def test_a_metallic_cpc_reads_far_below_the_cable_and_is_declared(mode):
    record, truth = _sim(2, None, nuisance=Nuisance(metallic_cpc=mode))
    r1, _rn, r2 = _e2e(record)
    # a 1.5 mm² core alone reads 12.10/7.41 = 1.63 times r1 (BS EN 60228 table, from memory)
    assert r2 < 0.5 * r1 < 0.5 * 1.63 * r1
    assert record["circuit"]["cpc_kind"] == "conduit"
    assert record["circuit"]["parallel_paths"] is (mode == "parallel")
    assert truth.conduit.replaces_cpc is (mode == "instead")
    circuit = parse_record(record).circuit
    assert (circuit.cpc_kind, circuit.parallel_paths) == ("conduit", mode == "parallel")
    hidden, _ = _sim(2, None, nuisance=Nuisance(metallic_cpc=mode, cpc_declared=False))
    assert "cpc_kind" not in hidden["circuit"]


@pytest.mark.parametrize("fault", [None, *FAULT_CODES])
def test_step_three_bounds_the_in_service_r1_r2(fault):
    # Rayleigh's monotonicity law: joining all four ends at the board (in service) can only
    # lower the resistance below the step 3 reading (L1–CPC2, L2–CPC1 joined).
    record, truth = _sim(12, fault, ideal_meter=True,
                         nuisance=Nuisance(metallic_cpc="parallel", worn=2, warm=0.01))
    for o in record["outlets"]:
        if o["le"] != "OL":
            assert truth.service_r1r2_ohm[o["id"]] <= o["le"] + 1e-9


def _hand_ring(**faults) -> Wiring:
    pts = tuple(Point(i, p) for i, p in zip("abcde", (0.12, 0.3, 0.45, 0.7, 0.9), strict=True))
    spur = (Point("s", parent="c", spur_m=4.0),)
    return Wiring(pts, spur, (0.0074, 0.0075, 0.0121), 60.0, **faults)


@pytest.mark.parametrize("faults", [
    {}, {"bridge": (0.2, 0.65, 0.1)}, {"open": ("E", 0.5)}, {"swap": ("d", "le")},
    {"wrong": "ln"}, {"conduit": Conduit(0.002)}])
def test_mirroring_the_ring_changes_no_reading(faults):
    # Symmetry (common practice): the cross-connected ring reads the same from either end.
    w = _hand_ring(**faults)
    m = mirrored(w)
    for step in ("e2e:L", "e2e:N", "e2e:E"):
        assert reading_ohm(m, step) == pytest.approx(reading_ohm(w, step), abs=1e-6)
    for oid in "abcdes":
        for step in ("ln", "le", "ln_wrong", "service"):
            a, b = reading_ohm(w, step, oid), reading_ohm(m, step, oid)
            assert a == b or a == pytest.approx(b, abs=1e-6)


def test_the_netlist_matches_the_closed_form_of_a_sound_ring():
    # Step 2 at place t: [r1·rn + t(1 − t)(r1 − rn)²]/(r1 + rn) (series-parallel reduction).
    w = _hand_ring()
    r1, rn, r2 = w.cable_ohm()
    for p in w.ring:
        t = p.pos
        assert reading_ohm(w, "ln", p.id) == pytest.approx(
            (r1 * rn + t * (1 - t) * (r1 - rn) ** 2) / (r1 + rn), abs=1e-6)
        assert reading_ohm(w, "le", p.id) == pytest.approx(_network("le", t, r1, rn, r2),
                                                           abs=1e-6)


@pytest.mark.parametrize("step", ["ln", "le"])
def test_one_cross_connection_not_made_reads_the_one_path_in_series(step):
    # With only L1-N2 joined the probe sees one path round the ring: line from the outlet to
    # end 1, the join, neutral from end 2 back: t·r1 + (1 - t)·rn (resistors in series, Ohm's
    # law; rn -> r2 for step 3). With r1 = rn that is (r1 + rn)/2 at every outlet, twice the
    # (r1 + rn)/4 of a ring (common practice: "readings about double" means a join is off).
    w = _hand_ring()
    r1, rn, r2 = w.cable_ohm()
    other = rn if step == "ln" else r2
    for p in w.ring:
        t = p.pos
        assert reading_ohm(w, f"{step}_half", p.id) == pytest.approx(t * r1 + (1 - t) * other,
                                                                    abs=1e-6)
        # the diagnosis' own network model (ringmath.network, nodal analysis) agrees
        assert _network(f"{step}_half", t, r1, rn, r2) == pytest.approx(
            t * r1 + (1 - t) * other, abs=1e-5)
    # and the simulator puts it on that step only
    clean, _ = _sim(8, ideal_meter=True)
    slip, _ = _sim(8, ideal_meter=True, nuisance=Nuisance(join_open=step))
    assert _e2e(slip) == _e2e(clean)
    kept = "le" if step == "ln" else "ln"
    for a, b in zip(clean["outlets"], slip["outlets"], strict=True):
        assert b[kept] == pytest.approx(a[kept], abs=1e-9)
        assert b[step] >= a[step] - 1e-9  # one path never reads less than two in parallel


@pytest.mark.parametrize(("conductor", "ln_open", "le_open"), [
    ("line", True, True), ("neutral", True, False), ("cpc", False, True)])
def test_a_core_off_one_outlets_terminal_reads_open_there_only(conductor, ln_open, le_open):
    # The ring's cores still meet in the terminal, so the ring and every other outlet read as
    # sound; only that outlet's pin reaches nothing (common practice).
    record, truth = _sim(15, "open_conductor", conductor=conductor, at="terminal")
    (victim,) = truth.outlets
    assert "OL" not in _e2e(record)
    for o in record["outlets"]:
        mine = o["id"] == victim
        assert (o["ln"] == "OL") is (mine and ln_open)
        assert (o["le"] == "OL") is (mine and le_open)
    assert truth.locatable and math.isinf(truth.signal_ohm)
    if conductor == "cpc":  # no earth at that socket in service
        assert math.isinf(truth.service_r1r2_ohm[victim])


def test_a_swapped_line_and_neutral_reads_like_a_cpc_off_its_terminal():
    # Both leave step 2 normal and step 3 open at that outlet: the readings cannot tell them
    # apart (the benchmark builds both so a diagnosis that always picks one scores half).
    w = _hand_ring(swap=("c", "ln"))
    v = replace(w, swap=None, unwired=("c", "E"))
    assert reading_ohm(w, "ln", "c") == pytest.approx(reading_ohm(v, "ln", "c"), abs=1e-9)
    assert math.isinf(reading_ohm(w, "le", "c")) and math.isinf(reading_ohm(v, "le", "c"))


def test_two_faults_at_once_are_both_in_the_truth():
    record, truth = _sim(13, "interconnection", also="open_conductor")
    assert [f.code for f in truth.faults] == ["interconnection", "open_conductor"]
    assert truth.code == "interconnection" and math.isinf(truth.signal_ohm)
    assert "OL" in _e2e(record)


def test_the_signal_separates_sound_rings_from_faults():
    assert _sim(14, None)[1].signal_ohm < 0.02
    assert _sim(14, "unrecorded_spur")[1].signal_ohm > 0.05
    assert math.isinf(_sim(14, "reversed_polarity")[1].signal_ohm)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"fault": "gremlins"}, "fault"), ({"fault": None, "also": "open_conductor"}, "also"),
    ({"fault": "open_conductor", "also": "open_conductor"}, "also"),
    ({"fault": None, "n_ring": 1}, "n_ring")])
def test_bad_simulator_arguments_name_the_field(kwargs, field):
    with pytest.raises(ValueError, match=field):
        simulate(np.random.default_rng(1), **kwargs)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"contact_sd_ohm": -0.01}, "contact_sd_ohm"), ({"contact_tail": "cauchy"}, "contact_tail"),
    ({"lead_step": "r1"}, "lead_step"), ({"worn_ohm": (0.6, 0.1)}, "worn_ohm"),
    ({"metallic_cpc": "plastic"}, "metallic_cpc"), ({"meter_scale": 0.0}, "meter_scale"),
    ({"front_marks": "back"}, "front_marks"), ({"join_open": "r1"}, "join_open")])
def test_bad_nuisances_name_the_field(kwargs, field):
    with pytest.raises(ValueError, match=field):
        Nuisance(**kwargs)
