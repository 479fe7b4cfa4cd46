"""Likelihood of the readings under a ring model, with the outlet positions integrated out.

The numeric view of a record (``Prepared``) and the pieces every hypothesis shares:

* a reading model: a displayed reading ``x`` given the model's value ``mu`` is normal with
  sigma = hypot(``meter.sigma_ohm(mu)``, s), mixed with a small outlier probability (a misread
  or a slipped probe) so one odd reading cannot drag a whole-ring hypothesis; an "OL" reading
  has probability ``P_OL_FALSE`` when the model predicts a finite value and the converse;
* the ring's own scatter s (probe contact, workmanship): not assumed but estimated from the
  ring's many readings, by averaging every hypothesis' likelihood over a small grid of contact
  sd ``CONTACT_SD_OHM`` with the prior ``CONTACT_PRIOR`` (a marginal likelihood: a fault has
  to beat "these readings are just noisier" on the same terms);
* positions: each ring outlet sits at an unknown fraction t of the ring with a uniform prior;
  its likelihood is averaged over a grid of t (a marginal likelihood), so positions never
  count as fitted parameters;
* recorded spurs: a spur outlet reads its ring point's value plus the spur cable, profiled
  (least squares, not negative) with the conductor ratio of the spur cable when unfused, or
  with free excesses beyond an FCU (whose fuse adds to the line only).
"""

from __future__ import annotations

import numpy as np

from ringmath import meter
from ringmath.prepared import (  # noqa: F401  (re-exported: the fits import them from here)
    CONTACT_FAULT_PRIOR,
    CPC_FREE_BELOW,
    Prepared,
    prepare,
)

#: Probability that an "OL" is shown where the circuit is continuous, and vice versa.
P_OL_FALSE = 1e-4
#: Weight of the outlier component and the range it spreads over (ohms): one reading in 200 a
#: misread or a slipped probe, spread over the first ohm (our working figures). Heavier than
#: before (2e-3 over 5 Ω, 12.5x less dense where it matters): with probe scatter of a heavy
#: tail, a single odd reading was taken for a joint at that outlet (bench/diagnosis.py seed
#: 2026, n 20: heavy-tailed contact false alarms 3.8 -> 2.5 %, site mix 7.5 -> 5.0 %, detection
#: unchanged; seed 11 the same or better in every condition tried).
P_OUTLIER = 5e-3
OUTLIER_RANGE_OHM = 1.0
LOG_OUTLIER = np.log(P_OUTLIER / OUTLIER_RANGE_OHM)
#: Grid of the ring's extra reading scatter (probe contact etc., ohms sd) and its prior. Our
#: working figures: a firm probe on clean terminals adds almost nothing, worn contacts and a
#: hurried plug-in lead 0.02-0.03 Ω (common practice), 0.045 Ω is a poor set-up.
CONTACT_SD_OHM = np.array([0.0, 0.012, 0.022, 0.032, 0.045])
CONTACT_PRIOR = np.array([0.40, 0.25, 0.18, 0.12, 0.05])
LOG_CONTACT_PRIOR = np.log(CONTACT_PRIOR)
#: Relative spread of r2/r1 about the tabulated ratio on a sound ring of one cable type
#: (copper and sizes alike in every core; our working figure; the ratio itself is the
#: conductor table's, 1.633 for 2.5/1.5 mm²).
CPC_RATIO_TOL = 0.025


def t_grid(n: int) -> np.ndarray:
    """n midpoints on (0, 1): the positions over which outlet likelihoods are averaged."""
    return (np.arange(n) + 0.5) / n



def _reading_var(mu_ohm: np.ndarray, extra_sd) -> np.ndarray:
    """sigma² of a reading: meter.sigma_ohm(mu)² + extra² (the meter formula written out for
    arrays of model values ``mu_ohm`` >= 0)."""
    return (meter.SIGMA_FLOOR_OHM**2 + (meter.SIGMA_RELATIVE * mu_ohm) ** 2
            + np.asarray(extra_sd, dtype=float) ** 2)


def _inlier_margin(res: np.ndarray, var: np.ndarray) -> np.ndarray:
    """log(inlier density) - log(outlier density) of a residual ``res`` with variance
    ``var``: > 0 where the reading model takes the reading as an ordinary one."""
    return (_LOG_INLIER - LOG_OUTLIER) - 0.5 * (res * res / var + np.log(var))


def reading_loglik(x: np.ndarray, mu: np.ndarray, extra_sd=0.0) -> np.ndarray:
    """Log-likelihood of displayed readings ``x`` (ohms; nan = not taken -> 0; inf = OL)
    given model values ``mu`` (ohms; inf = open) and the ring's extra scatter ``extra_sd``
    (ohms sd, added in quadrature to the meter's ``meter.sigma_ohm``). Broadcasts.

    Computed on whole arrays (no masked copies): the Gaussian part is evaluated everywhere on
    safe stand-in values and only kept where reading and model are both finite. The mixture
    log(exp(g) + exp(c)) is written as c + max(g - c, 0) + log1p(exp(-|g - c|)), the same
    value as ``np.logaddexp`` for a constant c, and cheaper (the whole function 21-32 % faster).
    """
    x = np.asarray(x, dtype=float)
    mu = np.asarray(mu, dtype=float)
    x_fin, mu_fin = np.isfinite(x), np.isfinite(mu)
    all_fin = bool(x_fin.all()) and bool(mu_fin.all())
    xs = x if all_fin else np.where(x_fin, x, 0.0)
    ms = np.maximum(mu, 0.0) if all_fin else np.where(mu_fin, np.maximum(mu, 0.0), 0.0)
    above = _inlier_margin(xs - ms, _reading_var(ms, extra_sd))
    mixed = LOG_OUTLIER + np.maximum(above, 0.0) + np.log1p(np.exp(-np.abs(above)))
    if all_fin:
        return mixed
    fin = x_fin & mu_fin
    x_ol, mu_ol = np.isinf(x), np.isinf(mu)
    taken = ~np.isnan(x)
    ol = np.where(x_ol & mu_ol, np.log1p(-P_OL_FALSE), np.log(P_OL_FALSE))
    out = np.where(fin, mixed, np.where(taken & (x_ol | mu_ol), ol, 0.0))
    return out


_LOG_INLIER = float(np.log1p(-P_OUTLIER) - 0.5 * np.log(2 * np.pi))


def _profile_spur(d_ln: np.ndarray, d_le: np.ndarray, a_ln: float, a_le: float,
                  s_min: float = 0.0) -> np.ndarray:
    """Spur line resistance (ohms) that best explains excesses d_ln, d_le (ohms) when the spur
    adds ``a_ln*s`` to step 2 and ``a_le*s`` to step 3; weighted least squares, >= s_min."""
    w_ln = np.where(np.isfinite(d_ln), 1.0, 0.0)
    w_le = np.where(np.isfinite(d_le), 1.0, 0.0)
    dl = np.where(np.isfinite(d_ln), d_ln, 0.0)
    de = np.where(np.isfinite(d_le), d_le, 0.0)
    num = w_ln * a_ln * dl + w_le * a_le * de
    den = w_ln * a_ln**2 + w_le * a_le**2
    s = np.where(den > 0, num / np.where(den > 0, den, 1.0), s_min)
    return np.maximum(s, s_min)


def children_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray,
                    extra_sd=0.0) -> np.ndarray:
    """Log-likelihood of each recorded spur child's readings, (..., n_children, G), given its
    ring point's model values ``pred_ln``/``pred_le`` of shape (..., G) in ohms (a leading
    axis of ``extra_sd`` broadcasts in front)."""
    if not prep.child_ids:
        return np.zeros(pred_ln.shape[:-1] + (0, pred_ln.shape[-1]))
    ln = prep.child_ln_ohm[:, None]
    le = prep.child_le_ohm[:, None]
    p_ln = pred_ln[..., None, :]
    p_le = pred_le[..., None, :]
    d_ln = ln - p_ln
    d_le = le - p_le
    a_ln = (1.0 + prep.child_kn)[:, None]
    a_le = (1.0 + prep.child_ke)[:, None]
    s = _profile_spur(d_ln, d_le, a_ln, a_le)
    fused = prep.child_fused[:, None]
    mu_ln = np.where(fused, np.maximum(ln, p_ln), p_ln + a_ln * s)
    mu_le = np.where(fused, np.maximum(le, p_le), p_le + a_le * s)
    mu_ln = np.where(np.isfinite(ln), mu_ln, p_ln)
    mu_le = np.where(np.isfinite(le), mu_le, p_le)
    return reading_loglik(ln, mu_ln, extra_sd) + reading_loglik(le, mu_le, extra_sd)


def outlet_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray,
                  extra_sd: float | None = 0.0) -> np.ndarray:
    """Per ring outlet and position, the log-likelihood of its readings and its spurs'.

    pred_ln, pred_le: (T, G) model values in ohms for T hypotheses on the t grid.
    extra_sd: the ring's extra scatter in ohms; None for every value of CONTACT_SD_OHM.
    Returns (T, n_ring, G), or (S, T, n_ring, G) for extra_sd None.
    """
    sd = CONTACT_SD_OHM[:, None, None, None] if extra_sd is None else extra_sd
    ll = (reading_loglik(prep.ln_ohm[None, :, None], pred_ln[:, None, :], sd)
          + reading_loglik(prep.le_ohm[None, :, None], pred_le[:, None, :], sd))
    if prep.child_ids:
        kids = children_loglik(prep, pred_ln, pred_le, sd)  # ([S,] T, m, G)
        ll = ll + np.zeros(kids.shape[:-3] + (1, 1, 1))
        np.add.at(ll, (Ellipsis, prep.child_parent, slice(None)), kids)
    return ll


def log_mean_exp(a: np.ndarray, axis: int = -1) -> np.ndarray:
    """log(mean(exp(a))) along ``axis``, computed stably."""
    top = np.max(a, axis=axis, keepdims=True)
    top = np.where(np.isfinite(top), top, 0.0)
    return np.squeeze(top, axis=axis) + np.log(np.mean(np.exp(a - top), axis=axis))


def per_scatter_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray,
                       cons: np.ndarray | float = 0.0, step1: bool = False) -> np.ndarray:
    """(S, T): for each contact sd of the grid, the sum over ring outlets of the
    position-averaged log-likelihood, plus ``cons`` (step 1's term, (S,) or (S, T)) and the
    log prior of that sd; with ``step1`` also ``step1_shift_loglik`` (from the same arrays)."""
    ll = outlet_loglik(prep, pred_ln, pred_le, None)
    per_s = log_mean_exp(ll, axis=-1).sum(axis=-1)
    if step1:
        per_s = per_s + step1_shift_loglik(prep, pred_ln, pred_le, ll)
    cons = np.asarray(cons, dtype=float)
    if cons.ndim == 1:
        cons = cons[:, None]
    return per_s + cons + LOG_CONTACT_PRIOR[:, None]


def _shift_terms(x: np.ndarray, mu: np.ndarray, sd: np.ndarray, w: np.ndarray):
    """Per contact sd and hypothesis, the first and second derivative of the outlets' summed
    log-likelihood with respect to one shift c of every prediction of a step (mu + c), at
    c = 0: sums over outlets of sum_t w (x - mu) r / var and sum_t w r / var, r the inlier
    responsibility, w the position posterior (the variance of the residual over t left out,
    which can only make the curvature smaller: the correction is on the modest side)."""
    x_fin, mu_fin = np.isfinite(x), np.isfinite(mu)
    xs = (x if x_fin.all() else np.where(x_fin, x, 0.0))[None, None, :, None]
    ms = (np.maximum(mu, 0.0) if mu_fin.all() else np.where(mu_fin, np.maximum(mu, 0.0), 0.0))
    var = _reading_var(ms[:, None, :], sd)  # (S, T, 1, G)
    res = xs - ms[:, None, :]  # (1, T, n, G)
    above = _inlier_margin(res, var)
    wr = w / (var * (1.0 + np.exp(-np.clip(above, -50.0, 50.0))))  # w x responsibility / var
    if not (x_fin.all() and mu_fin.all()):
        wr = wr * (x_fin[None, None, :, None] & mu_fin[:, None, :])
    return np.sum(wr * res, axis=(-1, -2)), np.sum(wr, axis=(-1, -2))


def step1_shift_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray,
                       ll: np.ndarray | None = None) -> np.ndarray:
    """(S, T): what step 1's own scatter adds to each hypothesis' log-likelihood.

    Every step 2 and 3 prediction is made from the recorded r1, rn and r2, whose own errors
    (meter and contact scatter, sd sigma_e each) move all of a step's predictions alike: by
    c_ln = (e1 + en)/4 and c_le = (e1 + e2)/4 near the middle of the ring, prior covariance
    sigma_e²/16 x [[2, 1], [1, 2]] (series-parallel reduction of the cross-connected ring,
    common practice). The readings' log-likelihood is integrated over (c_ln, c_le) in the
    Laplace approximation about c = 0 (Gaussian integral of a quadratic: 1/2 g'(H + V^-1)^-1 g
    - 1/2 log det(I + V H)), so a shared shift of all outlets' readings that step 1's scatter
    explains is not taken for structure. Ring outlets only (the spurs ride on them). ``ll``:
    ``outlet_loglik(..., None)`` of the same predictions when already computed."""
    sd = CONTACT_SD_OHM[:, None, None, None]
    if ll is None:
        ll = outlet_loglik(prep, pred_ln, pred_le, None)  # (S, T, n, G)
    top = np.max(ll, axis=-1, keepdims=True)
    w = np.exp(ll - top)
    w = w / np.sum(w, axis=-1, keepdims=True)
    g_ln, h_ln = _shift_terms(prep.ln_ohm, pred_ln, sd, w)
    g_le, h_le = _shift_terms(prep.le_ohm, pred_le, sd, w)
    r1 = float(prep.e2e_ohm[0]) if np.isfinite(prep.e2e_ohm[0]) else 0.0
    var_e = _reading_var(np.asarray(max(r1, 0.0)), CONTACT_SD_OHM)[:, None] / 16.0
    v11, v12 = 2.0 * var_e, var_e
    # M = I + V H with H = diag(h_ln, h_le); gain = 1/2 g' (H + V^-1)^-1 g - 1/2 log det M,
    # and (H + V^-1)^-1 = M^-1 V
    m11, m12 = 1.0 + v11 * h_ln, v12 * h_le
    m21, m22 = v12 * h_ln, 1.0 + v11 * h_le
    det = m11 * m22 - m12 * m21
    # A = M^-1 V (symmetric), from the 2x2 inverse
    a11 = (m22 * v11 - m12 * v12) / det
    a12 = (m22 * v12 - m12 * v11) / det
    a22 = (-m21 * v12 + m11 * v11) / det
    quad = a11 * g_ln**2 + 2 * a12 * g_ln * g_le + a22 * g_le**2
    return 0.5 * quad - 0.5 * np.log(det)


def marginal_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray,
                    cons: np.ndarray | float = 0.0, s_index: int | None = None,
                    step1: bool = False) -> np.ndarray:
    """(T,): the readings' log-likelihood with positions averaged and the ring's scatter
    integrated over its grid (``per_scatter_loglik``, log-sum-exp over the sd axis); with
    ``step1`` also step 1's own scatter (``step1_shift_loglik``).

    s_index: use only that contact sd of the grid (a parameter search, where only the ranking
    of the candidates matters; five times less work; not with ``step1``)."""
    if s_index is None:
        return _logsumexp0(per_scatter_loglik(prep, pred_ln, pred_le, cons, step1))
    if step1:
        raise ValueError("step1: only with the scatter integrated (s_index None)")
    sd = float(CONTACT_SD_OHM[s_index])
    per = log_mean_exp(outlet_loglik(prep, pred_ln, pred_le, sd), axis=-1).sum(axis=-1)
    c = np.asarray(cons, dtype=float)
    c = c[s_index] if c.ndim else c
    return per + c + LOG_CONTACT_PRIOR[s_index]


def search_index(contact_sd: float) -> int:
    """The grid index of the contact sd nearest ``contact_sd`` ohms."""
    return int(np.argmin(np.abs(CONTACT_SD_OHM - contact_sd)))


def _logsumexp0(a: np.ndarray) -> np.ndarray:
    top = np.max(a, axis=0)
    top = np.where(np.isfinite(top), top, 0.0)
    return top + np.log(np.sum(np.exp(a - top), axis=0))


def scatter_estimate(per_s: np.ndarray) -> float:
    """Posterior mean contact sd (ohms) from one column of ``per_scatter_loglik``."""
    w = np.exp(per_s - per_s.max())
    return float(np.sum(w * CONTACT_SD_OHM) / np.sum(w))


def e2e_consistency(r_ohm: np.ndarray, prep: Prepared) -> np.ndarray:
    """(S,): log-likelihood, for each contact sd of the grid, that ring cable resistances
    ``r_ohm`` (line, neutral, cpc; nan unknown) belong to one healthy cable: rn = r1 x ratio_n
    and r2 = r1 x ratio_e within cable tolerance (1 % live/neutral, CPC_RATIO_TOL for the cpc
    ratio; our own working figures), meter noise and the contact scatter of two readings.
    The cpc pair is left out when ``prep.cpc_free`` (r2 is then not the cable's)."""
    total = np.zeros(len(CONTACT_SD_OHM))
    r1, rn, r2 = (float(v) for v in r_ohm)
    pairs = [(r1, rn, prep.ratio_n, 0.01)]
    if not prep.cpc_free:
        pairs.append((r1, r2, prep.ratio_e, CPC_RATIO_TOL))
        if np.isfinite(rn) and np.isfinite(r2) and not np.isfinite(r1):
            pairs.append((rn, r2, prep.ratio_e / prep.ratio_n, CPC_RATIO_TOL))
    for a, b, ratio, tol in pairs:
        if np.isfinite(a) and np.isfinite(b):
            sig = np.sqrt(2 * meter.SIGMA_FLOOR_OHM**2 + (tol * b) ** 2
                          + 2 * CONTACT_SD_OHM**2)
            z = (b - a * ratio) / sig
            total += -0.5 * z * z - np.log(sig * np.sqrt(2 * np.pi))
    return total
