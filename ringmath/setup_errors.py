"""Errors of the test itself, fitted like faults and competing with them on the same score.

A reading is modelled as ``(1 + g) x true + d``: ``d`` an offset (leads not nulled, or
over-nulled when negative; a poor join at the board for one step) and ``g`` a gain between
step 1 and steps 2-3 (cable warmer on the later day, about +0.4 % per °C; a meter on another
range). The kinds, each with its prior (our working figures; most tests are set up right):

* ``leads``: the same offset d on every reading (leads not nulled, or nulled on a different
  lead set);
* ``offset_r`` / ``offset_ln`` / ``offset_le``: an offset on the readings of one step only
  (leads re-nulled between steps, a poor cross-connection join at the board);
* ``gain``: steps 2-3 read a few percent more or less than step 1 implies;
* ``scale``: steps 2-3 read a multiple of what step 1 implies (0.33x-3x): no wiring does
  this to every reading, so it means the instrument or the set-up, never a fault.

Worked fact (network solver, tests/ringmath/test_setup_errors.py): leads not nulled by d raise
every end-to-end reading by d, so (r1+rn)/4 rises by d/2, while each step 2 reading rises by
the full d: step 2 then reads d/2 above (r1+rn)/4 at every outlet of a sound ring.

``fit_setup`` searches the kinds under the sound-ring model (the one hypothesis a set-up error
competes with most), averages each kind's parameter over its uniform grid (the Occam factor)
and returns the best kind; the diagnosis then refits every hypothesis on the readings
corrected for it (``correct``) and lets both versions compete.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ringmath.likelihood import (
    Prepared,
    e2e_consistency,
    log_mean_exp,
    marginal_loglik,
    t_grid,
)
from ringmath.star import PLAIN, step_readings

#: Prior probability of each kind of set-up error (our working figures); the rest is "none".
SETUP_PRIORS = {"leads": 0.08, "offset_r": 0.02, "offset_ln": 0.025, "offset_le": 0.025,
                "gain": 0.04, "scale": 0.01}
P_NONE = 1.0 - sum(SETUP_PRIORS.values())
#: Offsets searched, ohms: over-nulled by 0.06 to 0.15 Ω not nulled (0 is "none").
OFFSET_GRID_OHM = np.array([d for d in np.round(np.arange(-0.06, 0.1501, 0.01), 3) if d != 0])
#: An offset up to this either way (ohms) leaves the readings usable (common practice judges
#: readings within 0.05 Ω); beyond it, re-take them.
OFFSET_TOLERATED_OHM = 0.05
#: Small gains between step 1 and steps 2-3 (warmer cable, meter gain), fractions.
GAIN_GRID = np.array([-0.06, -0.04, -0.02, 0.02, 0.04, 0.06, 0.08])
#: Gains searched beside every offset (steps 2-3 against step 1; 0-4 % warmer, fractions).
OFFSET_GAINS = (0.0, 0.02, 0.04)
#: Gross factors between step 1 and steps 2-3 that no wiring makes on every reading: 0.33x to
#: 3x, evenly in log steps of 1.5 % (fine enough that the nearest sits within a reading's
#: noise), leaving out 0.8x-1.25x (the gain's range and beyond what temperature can do).
_LOG_SCALE = np.arange(np.log(0.33), np.log(3.0) + 1e-9, 0.015)
SCALE_GRID = np.exp(_LOG_SCALE[np.abs(_LOG_SCALE) >= np.log(1.25)])
#: Positions on which the sound ring is evaluated for the search.
G_SETUP = 24


@dataclass(frozen=True)
class Setup:
    """One set-up error: kind (see module doc), offset_ohm d, gain g (steps 2-3 read
    (1 + g) x what step 1 implies). log_cost: log prior of the kind + the Occam factor of its
    parameter (<= 0). vs_none: its evidence under a sound ring minus "as read" (nats).
    p_beyond: posterior probability (over the kind's grid, with the scatter integrated and
    step 1's own scatter allowed for: ``likelihood.step1_shift_loglik``) that the offset is
    beyond OFFSET_TOLERATED_OHM either way: the readings then have to be re-taken. p_kind:
    this kind's share of the posterior of all set-up kinds (under a sound ring): what a finding
    naming the kind multiplies the probability of "some set-up error" by."""

    kind: str
    offset_ohm: float = 0.0
    gain: float = 0.0
    log_cost: float = 0.0
    vs_none: float = 0.0
    p_beyond: float = 0.0
    p_kind: float = 1.0

    def log_jacobian(self, n_step_readings: int) -> float:
        """log |d reading / d true| summed over the step 2-3 readings: a gain g stretches
        each by (1 + g), so a corrected reading's density is divided by it."""
        return -n_step_readings * float(np.log1p(self.gain))

    def offsets(self) -> tuple[float, float, float]:
        """Offsets in ohms on step 1, step 2 and step 3 readings."""
        d = self.offset_ohm
        return {"leads": (d, d, d), "offset_r": (d, 0.0, 0.0), "offset_ln": (0.0, d, 0.0),
                "offset_le": (0.0, 0.0, d)}.get(self.kind, (0.0, 0.0, 0.0))


def _variants(e2e: np.ndarray) -> list[tuple[str, float, float, float, float, float]]:
    """(kind, parameter, d_r, d_ln, d_le, gain) rows, "none" first."""
    rows = [("none", 0.0, 0.0, 0.0, 0.0, 0.0)]
    low = float(np.min(e2e))
    for d in OFFSET_GRID_OHM:
        # each offset is searched with the small gain a warmer cable on the later day adds
        # (OFFSET_GAINS, averaged over): else the warmth is read as part of the offset
        for g in OFFSET_GAINS:
            if low - d > 0.005:
                rows.append(("leads", d, d, d, d, g))
            rows.append(("offset_ln", d, 0.0, d, 0.0, g))
            rows.append(("offset_le", d, 0.0, 0.0, d, g))
        if low - d > 0.005:
            rows.append(("offset_r", d, d, 0.0, 0.0, 0.0))
    rows += [("gain", g, 0.0, 0.0, 0.0, g) for g in GAIN_GRID]
    rows += [("scale", f, 0.0, 0.0, 0.0, f - 1.0) for f in SCALE_GRID]
    return rows


def fit_setup(prep: Prepared, s_index: int = 1) -> Setup | None:
    """The most probable set-up error under a sound ring, or None when step 1 cannot be
    modelled (a reading missing, OL or not positive). The search runs at contact sd
    ``likelihood.CONTACT_SD_OHM[s_index]`` (the sound ring's own scatter estimate)."""
    e2e = prep.e2e_ohm
    if not np.all(np.isfinite(e2e)) or np.any(e2e <= 0):
        return None
    rows = _variants(e2e)
    d_r = np.array([r[2] for r in rows])
    rings_d = np.unique(d_r)
    t = t_grid(G_SETUP)
    marks = np.tile(t, len(rings_d))[:, None]
    rings = np.repeat(e2e[None, :] - rings_d[:, None], G_SETUP, axis=0)
    base_ln = step_readings(PLAIN, "ln", marks, rings).reshape(len(rings_d), G_SETUP)
    base_le = step_readings(PLAIN, "le", marks, rings).reshape(len(rings_d), G_SETUP)
    which = np.searchsorted(rings_d, d_r)
    gain = np.array([r[5] for r in rows])[:, None]
    pred_ln = (1 + gain) * base_ln[which] + np.array([r[3] for r in rows])[:, None]
    pred_le = (1 + gain) * base_le[which] + np.array([r[4] for r in rows])[:, None]
    cons_d = np.stack([e2e_consistency(e2e - d, prep) for d in rings_d], axis=1)  # (S, D)
    # searched at one contact sd (the ranking of the candidates is what matters here; the
    # diagnosis scores the chosen one with the sd integrated)
    ll = marginal_loglik(prep, pred_ln, pred_le, cons_d[:, which], s_index)
    kinds = np.array([r[0] for r in rows])
    none = float(ll[0]) + np.log(P_NONE)
    best: Setup | None = None
    evidences = []
    for kind, prior in SETUP_PRIORS.items():
        sel = np.flatnonzero(kinds == kind)
        if not sel.size:
            continue
        evidence = float(log_mean_exp(ll[sel])) + np.log(prior)
        evidences.append(evidence)
        top = int(sel[np.argmax(ll[sel])])
        cand = Setup(kind, float(rows[top][1]) if kind not in ("gain", "scale") else 0.0,
                     float(rows[top][5]), evidence - float(ll[top]), evidence - none)
        if best is None or cand.vs_none > best.vs_none:
            best, best_rows = cand, sel
    if best is None:
        return None
    ev = np.array(evidences)
    # share of the best kind: exp(its evidence) / sum over kinds (log-sum-exp for safety)
    share = np.exp(best.vs_none + none - ev.max()) / np.exp(ev - ev.max()).sum()
    beyond = 0.0
    if best.kind not in ("gain", "scale"):
        # how far the offset is: its rows again with the scatter integrated (the search's sd
        # is the sound ring's as read, which an offset left in the readings inflates) and
        # step 1's own scatter allowed for, at the kind's best gain (the warmth is not what is
        # asked here; a third of the work)
        best_rows = np.array([i for i in best_rows if rows[i][5] == best.gain])
        ll_k = marginal_loglik(prep, pred_ln[best_rows], pred_le[best_rows],
                               cons_d[:, which[best_rows]], step1=True)
        params = np.array([rows[i][1] for i in best_rows])
        w = np.exp(ll_k - ll_k.max())
        beyond = float(w[np.abs(params) > OFFSET_TOLERATED_OHM + 1e-9].sum() / w.sum())
    return replace(best, p_kind=float(min(share, 1.0)), p_beyond=beyond)


def correct(prep: Prepared, setup: Setup) -> Prepared:
    """``prep`` with every reading corrected for ``setup``: true = (reading - d) / (1 + g)
    (steps 2-3; step 1 less its offset). OL and readings not taken stay as they are."""
    d_r, d_ln, d_le = setup.offsets()
    k = 1.0 + setup.gain

    def fix(x: np.ndarray, d: float) -> np.ndarray:
        return np.where(np.isfinite(x), np.maximum((x - d) / k, 0.0), x)

    e2e = np.where(np.isfinite(prep.e2e_ohm), prep.e2e_ohm - d_r, prep.e2e_ohm)
    ratio_e = prep.ratio_e
    if prep.cpc_free and np.all(np.isfinite(e2e[[0, 2]])) and e2e[0] > 0:
        ratio_e = float(e2e[2] / e2e[0])
    return replace(prep, e2e_ohm=e2e, ln_ohm=fix(prep.ln_ohm, d_ln), le_ohm=fix(prep.le_ohm, d_le),
                   child_ln_ohm=fix(prep.child_ln_ohm, d_ln),
                   child_le_ohm=fix(prep.child_le_ohm, d_le), ratio_e=ratio_e)
