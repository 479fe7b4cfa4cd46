"""The benchmark's scoring: the finding-code convention, matching and the Brier score."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "bench"))

from diag_scoring import (  # noqa: E402
    calibration,
    claim_correct,
    hand_rule,
    must_report,
    score,
    setup_kind,
)

from ringmath.diagnose import diagnose  # noqa: E402
from ringmath.simulate import simulate  # noqa: E402
from ringmath.simulate_nuisance import Nuisance  # noqa: E402


@pytest.mark.parametrize(("code", "kind"), [
    ("setup_lead_offset", "lead"), ("setup_socket_contacts", "contacts"),
    ("setup_instrument", "instrument"), ("setup_gain", "gain"), ("setup_check", "any"),
    ("lead_offset", "lead"), ("socket_contact", "contacts"), ("step_gain", "gain"),
    ("readings_inconsistent", "any"), ("interconnection", None), ("cpc_ratio", None)])
def test_set_up_codes_and_their_kind(code, kind):
    assert setup_kind(code) == kind


def test_the_brier_score_and_the_bins():
    # Brier (1950): mean squared difference between stated probability and outcome.
    rows, brier = calibration([(0.9, True), (0.6, False), (0.97, True)])
    assert brier == pytest.approx((0.1**2 + 0.6**2 + 0.03**2) / 3)
    counts = {(lo, hi): n for lo, hi, n, _m, _o in rows}
    assert counts[(0.5, 0.7)] == 1 and counts[(0.9, 0.95)] == 1 and counts[(0.95, 1.0001)] == 1
    assert calibration([]) == (calibration([])[0], None)


def test_only_set_up_errors_beyond_the_site_tolerance_must_be_reported():
    rng = np.random.default_rng(1)
    assert must_report(simulate(rng, None, nuisance=Nuisance(lead_ohm=0.05))[1]) == set()
    assert must_report(simulate(rng, None, nuisance=Nuisance(lead_ohm=0.08))[1]) == {"lead"}
    assert must_report(simulate(rng, None, nuisance=Nuisance(worn=2))[1]) == {"contacts"}
    assert must_report(simulate(rng, None, nuisance=Nuisance(worn=2, remeasure=True))[1]) \
        == set()


def test_a_case_is_scored_against_its_truth():
    record, truth = simulate(np.random.default_rng(21), "interconnection", n_ring=10)
    result = diagnose(record)
    row = score(result, truth, record, hand_rule(record))
    assert row["faulty"] and row["flagged"] == (result["verdict"] != "satisfactory")
    named_bridge = {"code": "interconnection", "conductor": None, "step": None}
    assert claim_correct(named_bridge, truth) is True
    assert claim_correct({**named_bridge, "code": "unrecorded_spur"}, truth) is False
    assert claim_correct({**named_bridge, "code": "lead_offset"}, truth) is False
    assert claim_correct({**named_bridge, "code": "zs_over_limit"}, truth) is None


@pytest.mark.parametrize("conductor", ["line", "neutral", "cpc"])
def test_a_core_off_its_terminal_is_right_by_its_declared_tie_only(conductor):
    # One core off its terminal at an outlet reads OL there exactly as swapped terminals do
    # (the OL pattern of the two is the same by the network model); the tied partner names it.
    record, truth = simulate(np.random.default_rng(5), "open_conductor", at="terminal",
                             conductor=conductor)
    result = diagnose(record)
    codes = {f["code"] for f in result["findings"] if f["outlets"] == list(truth.outlets)}
    assert {"reversed_polarity", "open_conductor"} <= codes
    row = score(result, truth, record, hand_rule(record))
    assert row["right"]
    lead = next(f for f in result["findings"] if f["code"] in ("reversed_polarity",
                                                              "open_conductor"))
    assert row["tie_only"] == (lead["code"] != "open_conductor")


def test_a_tie_does_not_make_another_outlet_right():
    # The partner must be on the lead's own outlet: a reversed outlet elsewhere is no tie.
    record, truth = simulate(np.random.default_rng(5), "open_conductor", at="terminal",
                             conductor="cpc")
    result = diagnose(record)
    other = "zz"
    result["findings"] = [dict(f, outlets=[other]) if f["code"] == "open_conductor" else f
                          for f in result["findings"]]
    assert not score(result, truth, record, hand_rule(record))["right"]
