"""Likelihood of the readings under a ring model, with the outlet positions integrated out.

The numeric view of a record (``Prepared``) and the pieces every hypothesis shares:

* a reading model: a displayed reading ``x`` given the model's value ``mu`` is normal with
  sigma = ``meter.sigma_ohm(mu)``, mixed with a small outlier probability (a misread or a poor
  probe contact) so one odd reading cannot drag a whole-ring hypothesis; an "OL" reading has
  probability ``P_OL_FALSE`` when the model predicts a finite value and the converse;
* positions: each ring outlet sits at an unknown fraction t of the ring with a uniform prior;
  its likelihood is averaged over a grid of t (a marginal likelihood), so positions never
  count as fitted parameters;
* recorded spurs: a spur outlet reads its ring point's value plus the spur cable, profiled
  (least squares, not negative) with the conductor ratio of the spur cable when unfused, or
  with free excesses beyond an FCU (whose fuse adds to the line only).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ringmath import meter
from ringmath.conductors import resistance_mohm_per_m
from ringmath.record import RingTest

#: Probability that an "OL" is shown where the circuit is continuous, and vice versa.
P_OL_FALSE = 1e-4
#: Weight of the outlier component and the range it spreads over (ohms).
P_OUTLIER = 2e-3
OUTLIER_RANGE_OHM = 5.0
LOG_OUTLIER = np.log(P_OUTLIER / OUTLIER_RANGE_OHM)
#: Relative spread of r2/r1 about the tabulated ratio on a sound ring of one cable type
#: (copper and sizes alike in every core; our working figure, common practice expects
#: r2 ≈ 1.67 x r1 for 2.5/1.5 closely).
CPC_RATIO_TOL = 0.025
#: The cpc that usually comes with a flat twin-and-earth cable of a given live csa, mm²
#: (common practice: 1.0/1.0, 1.5/1.0, 2.5/1.5, 4/1.5, 6/2.5, 10/4).
TWIN_AND_EARTH_CPC_MM2 = {1.0: 1.0, 1.5: 1.0, 2.5: 1.5, 4.0: 1.5, 6.0: 2.5, 10.0: 4.0}


def t_grid(n: int) -> np.ndarray:
    """n midpoints on (0, 1): the positions over which outlet likelihoods are averaged."""
    return (np.arange(n) + 0.5) / n


@dataclass(frozen=True)
class Prepared:
    """Numeric view of a RingTest. Readings in ohms: nan = not taken, inf = OL.

    e2e_ohm: (3,) r1, rn, r2. ring_ids / ln_ohm / le_ohm: ring outlets in visiting order.
    child_*: outlets spurred directly from a ring outlet (child_parent indexes ring_ids);
    child_kn / child_ke: the spur cable's neutral/line and cpc/line resistance ratios;
    child_fused: fed through an FCU (free excesses). ratio_n / ratio_e: the ring's expected
    rn/r1 and r2/r1 from the conductor table.
    """

    e2e_ohm: np.ndarray
    ring_ids: tuple[str, ...]
    ln_ohm: np.ndarray
    le_ohm: np.ndarray
    child_ids: tuple[str, ...]
    child_parent: np.ndarray
    child_ln_ohm: np.ndarray
    child_le_ohm: np.ndarray
    child_kn: np.ndarray
    child_ke: np.ndarray
    child_fused: np.ndarray
    ratio_n: float
    ratio_e: float

    def n_readings(self) -> int:
        """Readings that carry information (taken, finite or OL)."""
        arrays = (self.e2e_ohm, self.ln_ohm, self.le_ohm, self.child_ln_ohm, self.child_le_ohm)
        return int(sum(np.count_nonzero(~np.isnan(a)) for a in arrays))


def _val(x: float | None) -> float:
    return np.nan if x is None else float(x)


def prepare(test: RingTest) -> Prepared:
    """The numeric view of ``test`` used by the fits."""
    c = test.circuit
    rho_l = resistance_mohm_per_m(c.live_csa_mm2)
    rho_e = resistance_mohm_per_m(c.cpc_csa_mm2)
    ring = [o for o in test.outlets if o.on_ring]
    index = {o.id: i for i, o in enumerate(ring)}
    by_id = {o.id: o for o in test.outlets}
    kids = [o for o in test.outlets if o.spur_from in index]
    kn, ke, fused = [], [], []
    for o in kids:
        live = o.spur_csa_mm2 or c.live_csa_mm2
        if o.spur_cpc_csa_mm2 is not None:
            cpc = o.spur_cpc_csa_mm2
        elif o.spur_csa_mm2 is None:
            cpc = c.cpc_csa_mm2
        else:
            cpc = TWIN_AND_EARTH_CPC_MM2.get(live, live)
        kn.append(1.0)
        ke.append(resistance_mohm_per_m(cpc) / resistance_mohm_per_m(live))
        fused.append(by_id[o.spur_from].kind == "fcu")
    e = test.end_to_end
    return Prepared(
        e2e_ohm=np.array([_val(e.r1_ohm), _val(e.rn_ohm), _val(e.r2_ohm)]),
        ring_ids=tuple(o.id for o in ring),
        ln_ohm=np.array([_val(o.ln_ohm) for o in ring]),
        le_ohm=np.array([_val(o.le_ohm) for o in ring]),
        child_ids=tuple(o.id for o in kids),
        child_parent=np.array([index[o.spur_from] for o in kids], dtype=np.intp),
        child_ln_ohm=np.array([_val(o.ln_ohm) for o in kids]),
        child_le_ohm=np.array([_val(o.le_ohm) for o in kids]),
        child_kn=np.array(kn),
        child_ke=np.array(ke),
        child_fused=np.array(fused, dtype=bool),
        ratio_n=1.0,
        ratio_e=rho_e / rho_l,
    )


def reading_loglik(x: np.ndarray, mu: np.ndarray) -> np.ndarray:
    """Log-likelihood of displayed readings ``x`` (ohms; nan = not taken -> 0; inf = OL)
    given model values ``mu`` (ohms; inf = open). Broadcasts."""
    x, mu = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(mu, dtype=float))
    out = np.zeros(x.shape)
    x_ol, mu_ol = np.isinf(x), np.isinf(mu)
    taken = ~np.isnan(x)
    both = taken & x_ol & mu_ol
    out[both] = np.log1p(-P_OL_FALSE)
    out[taken & (x_ol != mu_ol)] = np.log(P_OL_FALSE)
    fin = taken & ~x_ol & ~mu_ol
    if np.any(fin):
        m = mu[fin]
        sig = meter.sigma_ohm(m)
        z = (x[fin] - m) / sig
        gauss = np.log1p(-P_OUTLIER) - 0.5 * z * z - np.log(sig * np.sqrt(2 * np.pi))
        out[fin] = np.logaddexp(gauss, LOG_OUTLIER)
    return out


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


def children_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray) -> np.ndarray:
    """Log-likelihood of each recorded spur child's readings, (..., n_children, G), given its
    ring point's model values ``pred_ln``/``pred_le`` of shape (..., G) in ohms."""
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
    return reading_loglik(ln, mu_ln) + reading_loglik(le, mu_le)


def outlet_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray) -> np.ndarray:
    """Per ring outlet and position, the log-likelihood of its readings and its spurs'.

    pred_ln, pred_le: (T, G) model values in ohms for T hypotheses on the t grid.
    Returns (T, n_ring, G).
    """
    ll = (reading_loglik(prep.ln_ohm[None, :, None], pred_ln[:, None, :])
          + reading_loglik(prep.le_ohm[None, :, None], pred_le[:, None, :]))
    if prep.child_ids:
        kids = children_loglik(prep, pred_ln, pred_le)  # (T, m, G)
        np.add.at(ll, (slice(None), prep.child_parent), kids)
    return ll


def log_mean_exp(a: np.ndarray, axis: int = -1) -> np.ndarray:
    """log(mean(exp(a))) along ``axis``, computed stably."""
    top = np.max(a, axis=axis, keepdims=True)
    top = np.where(np.isfinite(top), top, 0.0)
    return np.squeeze(top, axis=axis) + np.log(np.mean(np.exp(a - top), axis=axis))


def marginal_loglik(prep: Prepared, pred_ln: np.ndarray, pred_le: np.ndarray) -> np.ndarray:
    """Sum over ring outlets of the position-averaged log-likelihood, (T,)."""
    return log_mean_exp(outlet_loglik(prep, pred_ln, pred_le), axis=-1).sum(axis=-1)


def e2e_consistency(r_ohm: np.ndarray, prep: Prepared) -> float:
    """Log-likelihood that ring cable resistances ``r_ohm`` (line, neutral, cpc; nan unknown)
    belong to one healthy cable: rn = r1 x ratio_n and r2 = r1 x ratio_e within cable tolerance
    (1 % live/neutral, CPC_RATIO_TOL for the cpc ratio; our own working figures) and meter
    noise."""
    total = 0.0
    r1, rn, r2 = (float(v) for v in r_ohm)
    pairs = ((r1, rn, prep.ratio_n, 0.01), (r1, r2, prep.ratio_e, CPC_RATIO_TOL))
    for a, b, ratio, tol in pairs:
        if np.isfinite(a) and np.isfinite(b):
            sig = np.hypot(meter.SIGMA_FLOOR_OHM * np.sqrt(2), tol * b)
            z = (b - a * ratio) / sig
            total += -0.5 * z * z - np.log(sig * np.sqrt(2 * np.pi))
    if np.isfinite(rn) and np.isfinite(r2) and not np.isfinite(r1):
        sig = np.hypot(meter.SIGMA_FLOOR_OHM * np.sqrt(2), CPC_RATIO_TOL * r2)
        z = (r2 - rn * prep.ratio_e / prep.ratio_n) / sig
        total += -0.5 * z * z - np.log(sig * np.sqrt(2 * np.pi))
    return total
