"""Fitting competing explanations of a ring's readings and ranking them.

Each hypothesis is a resistor network (``ringmath.network``) with a few parameters; the outlet
positions are unknown and integrated out (``ringmath.likelihood``). Parameters are found by a
grid search refined around the best cells. Hypotheses are ranked by the Bayesian information
criterion (Schwarz 1978): score = max log-likelihood - (k/2) ln(n) + ln(prior), with k the
number of fitted parameters and n the number of readings; the confidences are the normalised
exp(score) (an approximation of the posterior probabilities).

Because the two ends of a ring are interchangeable in every step, a hypothesis and its mirror
image (t -> 1 - t) explain the readings equally; fault positions are searched on one half.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ringmath.likelihood import (
    LOG_CONTACT_PRIOR,
    Prepared,
    e2e_consistency,
    log_mean_exp,
    marginal_loglik,
    outlet_loglik,
    per_scatter_loglik,
    reading_loglik,
    scatter_estimate,
    search_index,
    t_grid,
)
from ringmath.network import CONDUCTOR_INDEX, Layout
from ringmath.nodal import SHORT_OHM
from ringmath.search import position_spread as _position_sd
from ringmath.search import refine as _refine
from ringmath.star import BRIDGE, PLAIN, SPLIT, step_readings

G_FINE = 64
G_COARSE = 16
#: Positions for the bridge's first uniform grid (about 200 candidates), before refinement.
G_GRID = 14
#: Prior probabilities of each explanation (our working figures: most rings are sound).
PRIORS = {
    "healthy": 0.70,
    "interconnection": 0.05,
    "open_conductor": 0.03,
    "high_resistance_joint": 0.03,
    "wrong_cross_connection": 0.04,
    # one of a step's two cross-connections not made (a clip off, a join forgotten): a slip of
    # the test itself, about as common as crossing the ends (our working figure), per step
    "setup_cross_join_open": 0.02,
}
#: Whole-ring fits that are slips of the test itself on sound wiring, not wiring faults.
SETUP_FITS = frozenset({"setup_cross_join_open"})


def wiring_fault(code: str) -> bool:
    """A whole-ring fit's code names a fault of the wiring (not a sound ring, not a slip of
    the test on one)."""
    return code != "healthy" and code not in SETUP_FITS

#: Smallest series joint worth naming, ohms (smaller ones hide in cable tolerance).
JOINT_MIN_OHM = 0.03


@dataclass(frozen=True)
class Fit:
    """One fitted hypothesis.

    loglik: maximised log-likelihood (positions integrated). k: fitted parameters.
    theta: the parameters (positions as ring fractions, resistances in ohms).
    ring_ohm: cable resistances used (line, neutral, cpc). pred_ln/pred_le: (G_FINE,) model
    values at the best parameters. theta_sd: spread of the position parameters' profile
    (ring fractions), a measure of how well the readings locate the fault. contact_sd: the
    ring's extra reading scatter (ohms sd) these readings imply under this hypothesis
    (posterior mean over the grid). scatter_cons: (S,) step 1's term plus the log prior of
    each contact sd of the grid, for the outlet-level alternatives (which re-weigh the sd).
    """

    code: str
    conductor: str | None
    step: str | None
    loglik: float
    k: int
    theta: dict = field(default_factory=dict)
    ring_ohm: tuple[float, float, float] = (np.nan, np.nan, np.nan)
    pred_ln: np.ndarray | None = None
    pred_le: np.ndarray | None = None
    theta_sd: float | None = None
    log_occam: float = 0.0
    contact_sd: float = 0.0
    scatter_cons: np.ndarray | None = None

    def score(self, n_readings: int) -> float:
        """BIC-style score: loglik + log_occam - k/2 ln(n) + ln(prior). ``log_occam`` (<= 0)
        is the fault position integrated over a uniform prior instead of counted in k."""
        return (self.loglik + self.log_occam - 0.5 * self.k * np.log(max(n_readings, 2))
                + np.log(PRIORS[self.code]))


def _steps(layout: Layout, marks: np.ndarray, ring: np.ndarray, series=None, extra=None,
           ln_step: str = "ln", le_step: str = "le") -> tuple[np.ndarray, np.ndarray]:
    ln = step_readings(layout, ln_step, marks, ring, series, extra)
    le = step_readings(layout, le_step, marks, ring, series, extra)
    return ln, le


def _with_probe(theta_marks: np.ndarray, g: int) -> np.ndarray:
    """Rows (T*g, 1+m): each hypothesis' marks preceded by every grid position."""
    t = t_grid(g)
    n_theta = theta_marks.shape[0]
    probe = np.tile(t, n_theta)[:, None]
    return np.concatenate([probe, np.repeat(theta_marks, g, axis=0)], axis=1)


def fit_healthy(prep: Prepared, wrong_step: str | None = None,
                half_step: str | None = None) -> Fit:
    """Sound ring (with the recorded spurs), a wrong cross-connection in one step, or one of a
    step's two cross-connections not made.

    wrong_step: None, "ln" (step 2 joined L1-N1, L2-N2) or "le" (step 3 joined L1-CPC1, L2-CPC2).
    half_step: None, "ln" (step 2 with only L1-N2 joined: each reading is the one path in
    series, t·r1 + (1-t)·rn, (r1 + rn)/2 everywhere when r1 = rn) or "le" (the same for step 3).
    """
    ring = prep.e2e_ohm.copy()
    marks = t_grid(G_FINE)[:, None]
    rings = np.tile(ring, (G_FINE, 1))

    def step(name: str) -> str:
        return f"{name}_half" if half_step == name else (
            f"{name}_wrong" if wrong_step == name else name)

    ln, le = _steps(PLAIN, marks, rings, ln_step=step("ln"), le_step=step("le"))
    cons = e2e_consistency(ring, prep)
    ll, sd = _final(prep, ln, le, cons)
    code = ("setup_cross_join_open" if half_step else
            "healthy" if wrong_step is None else "wrong_cross_connection")
    return Fit(code, None, half_step or wrong_step, ll, 0, {}, tuple(ring), ln, le,
               contact_sd=sd, scatter_cons=_scatter_cons(cons))


def _scatter_cons(cons) -> np.ndarray:
    return np.broadcast_to(np.asarray(cons, dtype=float), LOG_CONTACT_PRIOR.shape) + \
        LOG_CONTACT_PRIOR


def _final(prep: Prepared, ln: np.ndarray, le: np.ndarray, cons) -> tuple[float, float]:
    """Marginal log-likelihood of one hypothesis' (G,) predictions and its scatter estimate."""
    per_s = per_scatter_loglik(prep, ln[None], le[None], cons, step1=True)[:, 0]
    top = float(per_s.max())
    return top + float(np.log(np.sum(np.exp(per_s - top)))), scatter_estimate(per_s)


def _bridge_eval(prep: Prepared, theta: np.ndarray, g: int,
                 s_index: int | None = None) -> tuple[np.ndarray, ...]:
    """theta: (T, 3) rows of (a, b, fraction). Returns loglik (T,), ln, le (T, g), ring (T, 3);
    s_index: search at one contact sd (``marginal_loglik``)."""
    n = theta.shape[0]
    ends = np.concatenate([theta[:, :1], theta[:, :2]], axis=1)  # probe parked at a
    unit = step_readings(BRIDGE, "e2e:line", ends, np.ones((n, 3)),
                           extra_fraction=theta[:, 2:3])
    ring = prep.e2e_ohm[None, :] / unit[:, None]
    marks = _with_probe(theta[:, :2], g)
    rings = np.repeat(ring, g, axis=0)
    extra = np.repeat(theta[:, 2:3], g, axis=0)
    ln, le = _steps(BRIDGE, marks, rings, extra=extra)
    ln, le = ln.reshape(n, g), le.reshape(n, g)
    cons = e2e_consistency(prep.e2e_ohm, prep)
    return marginal_loglik(prep, ln, le, cons, s_index), ln, le, ring


def _bridge_grid() -> np.ndarray:
    pts = (np.arange(12) + 0.5) / 12
    rows = [(a, b, f) for a in pts for b in pts for f in (0.02, 0.06, 0.15, 0.4)
            if b - a > 0.1 and a + b <= 1.0 + 1e-9]
    return np.array(rows)


def _canonical_bridge(rows: np.ndarray) -> np.ndarray:
    """Bridge rows (a, b, fraction) kept to b > a (by at least 0.02) and a + b <= 1 (the half
    of the ring searched; the mirror image explains the readings equally)."""
    rows = rows.copy()
    rows[:, 1] = np.minimum(np.maximum(rows[:, 1], rows[:, 0] + 0.02), 1.0 - rows[:, 0])
    return rows


def fit_bridge(prep: Prepared, s_index: int | None = None) -> Fit:
    """An interconnection: a cable joining ring positions a < b in all three conductors, of
    resistance ``fraction`` x the ring's resistance (same cable). 3 parameters. The search
    runs at contact sd ``s_index`` (None: integrated); the best fit is scored integrated."""
    grid = _bridge_grid()
    ll, *_ = _bridge_eval(prep, grid, G_GRID, s_index)

    def evaluate(rows):
        return _bridge_eval(prep, _canonical_bridge(rows), G_COARSE, s_index)[0]

    theta, lls = _refine(evaluate, grid, ll, np.array([1 / 24, 1 / 24, -0.5]),
                         [0.005, 0.02, 0.002], [0.49, 0.995, 3.0])
    best = _canonical_bridge(theta[int(np.argmax(lls))][None])[0]
    _, ln, le, ring = _bridge_eval(prep, best[None], G_FINE)
    cons = e2e_consistency(prep.e2e_ohm, prep)
    llb, contact = _final(prep, ln[0], le[0], cons)
    # spread over the uniform starting grid only (the refinement samples are not uniform)
    sd = max(_position_sd(grid[:, 0], ll), _position_sd(grid[:, 1], ll))
    return Fit("interconnection", None, None, llb, 3,
               {"a": float(best[0]), "b": float(best[1]), "fraction": float(best[2])},
               tuple(ring[0]), ln[0], le[0], sd, contact_sd=contact,
               scatter_cons=_scatter_cons(cons))


def _series_eval(prep: Prepared, conductor: str, ring: np.ndarray, x: np.ndarray,
                 series_value_s: float, g: int, cons,
                 s_index: int | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A series element of ``series_value_s`` siemens in one conductor at each position x;
    ``cons`` is step 1's term per contact sd."""
    n = x.shape[0]
    marks = _with_probe(x[:, None], g)
    series = np.full((n * g, 3, 2), 1.0 / SHORT_OHM)
    series[:, CONDUCTOR_INDEX[conductor], 1] = series_value_s
    rings = np.tile(ring, (n * g, 1))
    ln, le = _steps(SPLIT, marks, rings, series=series)
    ln, le = ln.reshape(n, g), le.reshape(n, g)
    return marginal_loglik(prep, ln, le, cons, s_index), ln, le


def _fit_series(prep: Prepared, code: str, conductor: str, ring: np.ndarray,
                series_s: float, cons, k: int, extra: dict, s_index: int | None) -> Fit:
    xs = (np.arange(24) + 0.5) / 48  # one half of the ring
    ll, _, _ = _series_eval(prep, conductor, ring, xs, series_s, G_COARSE, cons, s_index)

    def evaluate(rows):
        return _series_eval(prep, conductor, ring, rows[:, 0], series_s, G_COARSE, cons,
                            s_index)[0]

    theta, lls = _refine(evaluate, xs[:, None], ll, np.array([1 / 96]), [0.002], [0.5],
                         rounds=2)
    best = float(theta[int(np.argmax(lls)), 0])
    _, ln, le = _series_eval(prep, conductor, ring, np.array([best]), series_s, G_FINE, cons)
    llb, contact = _final(prep, ln[0], le[0], cons)
    sd = _position_sd(xs, ll)
    # the break or joint position is a nuisance: average it over its uniform grid (Occam)
    occam = min(float(log_mean_exp(ll) - np.max(lls)), 0.0)
    return Fit(code, conductor, None, llb, k, {"x": best, **extra},
               tuple(ring), ln[0], le[0], sd, occam, contact, _scatter_cons(cons))


def fit_open(prep: Prepared, conductor: str, s_index: int | None = None) -> Fit | None:
    """A break in one ring conductor at an unknown position x (its end-to-end reading is OL).

    The broken conductor's cable resistance is taken from the others by the conductor table
    (line = neutral; cpc = line x ratio). The position is integrated, not counted. None when not
    applicable.
    """
    c = CONDUCTOR_INDEX[conductor]
    e2e = prep.e2e_ohm
    if not np.isinf(e2e[c]) or np.count_nonzero(np.isinf(e2e)) != 1:
        return None
    ring = e2e.copy()
    ratio = np.array([1.0, prep.ratio_n, prep.ratio_e])
    others = [i for i in range(3) if i != c and np.isfinite(e2e[i])]
    if not others:
        return None
    ring[c] = float(np.mean([e2e[i] / ratio[i] for i in others])) * ratio[c]
    cons = e2e_consistency(np.where(np.isinf(e2e), np.nan, e2e), prep)
    cons += float(reading_loglik(np.array(np.inf), np.array(np.inf)))
    return _fit_series(prep, "open_conductor", conductor, ring, 0.0, cons, 0, {}, s_index)


def fit_joint(prep: Prepared, conductor: str, s_index: int | None = None) -> Fit | None:
    """A high-resistance joint J ohms in series in one ring conductor at position x.

    J is the conductor's end-to-end excess over what the other two conductors imply (line and
    neutral only when the cpc is not the cable's, ``prep.cpc_free``): one fitted parameter; the
    position is integrated. None when the excess is below JOINT_MIN_OHM.
    """
    c = CONDUCTOR_INDEX[conductor]
    e2e = prep.e2e_ohm
    if not np.all(np.isfinite(e2e)) or (prep.cpc_free and conductor == "cpc"):
        return None
    ratio = np.array([1.0, prep.ratio_n, prep.ratio_e])
    # a metallic or parallel cpc says nothing about the cable: line and neutral judge each other
    others = [i for i in range(3) if i != c and not (prep.cpc_free and i == 2)]
    expected = float(np.mean([e2e[i] / ratio[i] for i in others])) * ratio[c]
    joint = float(e2e[c] - expected)
    if joint < JOINT_MIN_OHM:
        return None
    ring = e2e.copy()
    ring[c] = expected
    cons = e2e_consistency(ring, prep)
    return _fit_series(prep, "high_resistance_joint", conductor, ring, 1.0 / joint, cons, 1,
                       {"r_ohm": joint}, s_index)


#: With one cross-connection not made every reading of the step is at least min(a, b), 1.5 to
#: 2 times the most a ring point reads, (a + b)/4 (a, b the step's two conductors end to end;
#: 1.52 for 2.5/1.5 mm² in step 3). Below this multiple of (a + b)/4 for the step's median
#: reading the hypothesis would need most readings to be misreads: it is not fitted.
HALF_STEP_MEDIAN = 1.2


def _reads_above_a_ring(prep: Prepared, step: str) -> bool:
    """The step's median reading reaches HALF_STEP_MEDIAN x (a + b)/4 (ohms)."""
    median = prep.step_median_ohm(step)
    return median is not None and median >= HALF_STEP_MEDIAN * prep.ring_top_ohm(step)


def fit_all(prep: Prepared) -> list[Fit]:
    """Every applicable hypothesis, best score first (none when step 1 cannot be modelled:
    a reading missing or 0.00 Ω, or more than one conductor open)."""
    if np.any(np.isnan(prep.e2e_ohm)) or np.any(prep.e2e_ohm <= 0):
        return []
    fits: list[Fit | None] = []
    # parameter searches run at the contact sd the sound ring implies (every candidate then
    # shares it); each best fit is then scored with the sd integrated
    s_index = None
    if np.all(np.isfinite(prep.e2e_ohm)):
        healthy = fit_healthy(prep)
        s_index = search_index(healthy.contact_sd)
        fits += [healthy, fit_healthy(prep, "ln"), fit_healthy(prep, "le"),
                 fit_bridge(prep, s_index)]
        fits += [fit_healthy(prep, half_step=step) for step in ("ln", "le")
                 if _reads_above_a_ring(prep, step)]
    for conductor in CONDUCTOR_INDEX:
        fits.append(fit_open(prep, conductor, s_index))
        fits.append(fit_joint(prep, conductor, s_index))
    n = prep.n_readings()
    found = [f for f in fits if f is not None]
    return sorted(found, key=lambda f: f.score(n), reverse=True)


def confidences(fits: list[Fit], n_readings: int) -> np.ndarray:
    """Normalised exp(score) of each fit (sums to 1)."""
    s = np.array([f.score(n_readings) for f in fits])
    w = np.exp(s - s.max())
    return w / w.sum()


def position_posterior(prep: Prepared, fit: Fit) -> np.ndarray:
    """(n_ring, G_FINE) posterior over the t grid of each ring outlet under ``fit``."""
    ll = outlet_loglik(prep, fit.pred_ln[None], fit.pred_le[None], fit.contact_sd)[0]
    lme = log_mean_exp(ll, axis=-1)
    return np.exp(ll - lme[:, None]) / ll.shape[-1]
