"""The calibration of stated confidence: monotone, a probability, capped in the result."""

from __future__ import annotations

import math

import numpy as np
import pytest

from ringmath.calibration import PLATT, calibrated
from ringmath.diagnose import CONFIDENCE_CAP, diagnose
from ringmath.findings import BASES
from ringmath.simulate import simulate
from ringmath.simulate_nuisance import Nuisance


@pytest.mark.parametrize("basis", BASES)
def test_each_map_is_monotone_and_keeps_probabilities(basis):
    p = np.linspace(0.0, 1.0, 201)
    q = np.array([calibrated(float(x), basis) for x in p])
    assert PLATT[basis][0] > 0  # a > 0: the order of confidences is kept
    assert np.all(np.diff(q) > 0)
    assert np.all((q > 0) & (q < 1))


@pytest.mark.parametrize("basis", BASES)
def test_worked_value_of_the_platt_map(basis):
    # Platt scaling (Platt 1999): sigmoid(a·logit(p) + b); at p = 0.5 the logit is 0
    a, b = PLATT[basis]
    assert calibrated(0.5, basis) == pytest.approx(1 / (1 + math.exp(-b)))
    assert calibrated(0.9, basis) == pytest.approx(1 / (1 + math.exp(-(a * math.log(9)) - b)))


@pytest.mark.parametrize("p", [-0.1, 1.5, math.nan])
def test_a_value_that_is_not_a_probability_is_refused(p):
    with pytest.raises(ValueError, match="p:"):
        calibrated(p, "ring")


@pytest.mark.parametrize("basis", ["", "wiring", None])
def test_an_unknown_basis_is_refused(basis):
    with pytest.raises(ValueError, match="basis:"):
        calibrated(0.5, basis)


def test_every_stated_confidence_names_its_basis():
    record, _ = simulate(np.random.default_rng([3, 11]), "unrecorded_spur",
                         nuisance=Nuisance(contact_sd_ohm=0.01))
    result = diagnose(record)
    stated = [f for f in result["findings"] if f["confidence"] is not None]
    assert stated
    assert all(f["basis"] in BASES for f in stated)
    assert all(h["basis"] in BASES for h in result["hypotheses"])


@pytest.mark.parametrize("seed", range(3))
def test_calibration_keeps_the_ranking_and_the_cap(seed):
    record, _ = simulate(np.random.default_rng([seed, 11]), "interconnection",
                         nuisance=Nuisance(contact_sd_ohm=0.02))
    raw, cal = diagnose(record, calibrate=False), diagnose(record)
    assert [h["code"] for h in raw["hypotheses"]] == [h["code"] for h in cal["hypotheses"]]
    assert all(0 <= h["confidence"] <= CONFIDENCE_CAP for h in cal["hypotheses"])
    for basis in BASES:  # one monotone map per basis: the order within a basis is kept
        stated = [h["confidence"] for h in cal["hypotheses"] if h["basis"] == basis]
        assert stated == sorted(stated, reverse=True)
