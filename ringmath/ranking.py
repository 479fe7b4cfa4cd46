"""Ranking whole explanations: a ring hypothesis, the outlet faults on top of it, and the test's
own set-up error, all on one score.

A combination's score is the whole-ring fit's score (``Fit.score``) plus the gains of its
outlet-level faults (``local``), plus the log prior of its set-up: "as read" (``P_NONE``) or
the best set-up error (``setup_errors.fit_setup``), whose version of every hypothesis is fitted
on the corrected readings, with the set-up's log prior, the Occam factor of its parameter and
the Jacobian of the correction added. The normalised exp(score) over all combinations is the
posterior used for every confidence: a finding's confidence adds the weight of every
combination that contains it, so a set-up error that explains the readings nearly as well
takes its share.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ringmath.fitting import Fit, fit_all, wiring_fault
from ringmath.likelihood import Prepared, search_index
from ringmath.local import LocalFault, local_faults
from ringmath.setup_errors import P_NONE, Setup, correct, fit_setup

#: Whole-ring fits carried into the combinations, per set-up version.
TOP_FITS = 3
#: A set-up error is refitted with every hypothesis (a second full fit) only when, under a sound
#: ring, it is at least this far ahead (nats) of the readings as read; behind that, a fault
#: with it has rarely beaten the fault without it on the benchmark, and the refit is skipped.
SETUP_TRY_NATS = 0.0


@dataclass(frozen=True)
class Combo:
    """One combined explanation: score (log posterior up to a constant), the whole-ring fit,
    its outlet faults, the set-up error (None = as read) and the readings it was fitted on."""

    score: float
    fit: Fit
    local: tuple[LocalFault, ...]
    setup: Setup | None
    prep: Prepared


def _combos(prep: Prepared, fits: list[Fit], n: int, offset: float,
            setup: Setup | None) -> list[Combo]:
    out = []
    for fit in fits[:TOP_FITS]:
        extra = tuple(local_faults(prep, fit))
        out.append(Combo(fit.score(n) + offset + sum(lf.gain for lf in extra), fit, extra,
                         setup, prep))
    return out


def rank(prep: Prepared) -> tuple[list[Combo], np.ndarray]:
    """Every combination, best first, and their normalised weights (sum 1). Empty when no
    hypothesis applies (step 1 cannot be modelled)."""
    n = prep.n_readings()
    fits = fit_all(prep)
    if not fits:
        return [], np.zeros(0)
    combos = _combos(prep, fits, n, np.log(P_NONE), None)
    healthy = next((f for f in fits if f.code == "healthy"), None)
    setup = None if healthy is None else fit_setup(prep, search_index(healthy.contact_sd))
    if healthy is not None and setup is not None and setup.vs_none > SETUP_TRY_NATS:
        fixed = correct(prep, setup)
        fits2 = fit_all(fixed)
        steps = int(sum(np.count_nonzero(np.isfinite(a)) for a in (
            fixed.ln_ohm, fixed.le_ohm, fixed.child_ln_ohm, fixed.child_le_ohm)))
        combos += _combos(fixed, fits2, n, setup.log_cost + setup.log_jacobian(steps), setup)
    combos.sort(key=lambda c: c.score, reverse=True)
    scores = np.array([c.score for c in combos])
    weights = np.exp(scores - scores.max())
    return combos, weights / weights.sum()


def fit_weight(combos: list[Combo], weights: np.ndarray, fit: Fit) -> float:
    """Posterior weight of the whole-ring explanation of ``fit`` (same code, conductor and
    step), over every set-up version and outlet combination."""
    key = (fit.code, fit.conductor, fit.step)
    return float(sum(w for c, w in zip(combos, weights, strict=True)
                     if (c.fit.code, c.fit.conductor, c.fit.step) == key))


def local_weight(combos: list[Combo], weights: np.ndarray, lf: LocalFault) -> float:
    """Posterior probability of outlet fault ``lf``: over the combinations, the weight of each
    times the outlet's own probability of that fault in it (0 where it is not in it)."""
    total = 0.0
    for c, w in zip(combos, weights, strict=True):
        same = next((x for x in c.local if x.outlet == lf.outlet and x.code == lf.code), None)
        if same is not None:
            total += w * same.confidence()
    return total


def sound_weight(combos: list[Combo], weights: np.ndarray) -> float:
    """Posterior probability that the wiring is sound: over the combinations whose whole-ring
    fit is a sound ring (or a slip of the test on one: ``fitting.wiring_fault``), the weight of each
    times the probability that none of its outlet faults is there (worn socket contacts and
    set-up errors are not wiring faults)."""
    total = 0.0
    for c, w in zip(combos, weights, strict=True):
        if wiring_fault(c.fit.code):
            continue
        p = float(w)
        for lf in c.local:
            if lf.code != "setup_socket_contacts":
                p *= 1.0 - lf.confidence() - (lf.confidence(of_tie=True) if lf.tie else 0.0)
        total += p
    return total


def setup_weight(combos: list[Combo], weights: np.ndarray) -> float:
    """Posterior probability that the readings carry a set-up error."""
    return float(sum(w for c, w in zip(combos, weights, strict=True) if c.setup is not None))
