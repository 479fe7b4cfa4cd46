"""The calibration of stated confidence: monotone, a probability, capped in the result."""

from __future__ import annotations

import math

import numpy as np
import pytest

from ringmath.calibration import PLATT_A, PLATT_B, calibrated
from ringmath.diagnose import CONFIDENCE_CAP, diagnose
from ringmath.simulate import simulate
from ringmath.simulate_nuisance import Nuisance


def test_the_map_is_monotone_and_keeps_probabilities():
    p = np.linspace(0.0, 1.0, 201)
    q = np.array([calibrated(float(x)) for x in p])
    assert PLATT_A > 0  # a > 0: the order of confidences is kept
    assert np.all(np.diff(q) > 0)
    assert np.all((q > 0) & (q < 1))


def test_worked_value_of_the_platt_map():
    # Platt scaling: sigmoid(a·logit(p) + b); at p = 0.5 the logit is 0, so sigmoid(b)
    assert calibrated(0.5) == pytest.approx(1 / (1 + math.exp(-PLATT_B)))
    assert calibrated(0.9) == pytest.approx(1 / (1 + math.exp(-(PLATT_A * math.log(9))
                                                              - PLATT_B)))


@pytest.mark.parametrize("p", [-0.1, 1.5, math.nan])
def test_a_value_that_is_not_a_probability_is_refused(p):
    with pytest.raises(ValueError, match="p:"):
        calibrated(p)


@pytest.mark.parametrize("seed", range(3))
def test_calibration_keeps_the_ranking_and_the_cap(seed):
    record, _ = simulate(np.random.default_rng([seed, 11]), "interconnection",
                         nuisance=Nuisance(contact_sd_ohm=0.02))
    raw, cal = diagnose(record, calibrate=False), diagnose(record)
    assert [h["code"] for h in raw["hypotheses"]] == [h["code"] for h in cal["hypotheses"]]
    stated = [h["confidence"] for h in cal["hypotheses"]]
    assert all(0 <= c <= CONFIDENCE_CAP for c in stated)
    assert stated == sorted(stated, reverse=True)
