"""Faults confined to one outlet, tested on top of a whole-ring explanation.

For each outlet the readings of the rest of the ring are kept and only that outlet's own
readings are re-explained: as an unrecorded spur (both readings raised in the spur cable's
ratio), a high-resistance joint at its terminals (line: both readings raised alike; neutral:
step 2 only; cpc: step 3 only), a high contact resistance in the socket itself (the same
three patterns, through the plug-in lead's pins: likely when read from the front, nearly
impossible at the terminals), or a pattern of "OL" readings (swapped terminals or a
conductor not connected at the outlet). Each alternative's gain is a log-likelihood ratio
the excess resistance integrated over a uniform prior range (Bayesian evidence, so no extra
penalty is needed) and the outlet's prior probability of that fault.

Two alternatives that predict the same readings tie exactly and are both reported, with the
measurement that tells them apart:

* step 3 OL only: line and neutral swapped at the outlet, or its cpc not connected;
* step 2 OL only: line and cpc swapped, or its neutral not connected;
* both OL: its line not connected, or neutral and cpc swapped.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ringmath import meter
from ringmath.fitting import JOINT_MIN_OHM, Fit
from ringmath.likelihood import (
    CONTACT_SD_OHM,
    LOG_CONTACT_PRIOR,
    LOG_OUTLIER,
    P_OL_FALSE,
    P_OUTLIER,
    Prepared,
    log_mean_exp,
    outlet_loglik,
    reading_loglik,
)

#: Prior probability per outlet of each local fault (our working figures).
LOCAL_PRIORS = {
    "unrecorded_spur": 0.02,
    "high_resistance_joint": 0.01,
    "reversed_polarity": 0.01,
    # a conductor not connected at a ring outlet while its end-to-end reading stays continuous
    # needs the ring's two cores joined elsewhere in the box (a connector): rarer than a swap
    "open_conductor": 0.004,
}
#: Prior range of an unrecorded spur's line resistance, ohms (about 2 m to 50 m of 2.5 mm²),
#: and of a joint's resistance; the evidence averages over a uniform grid of R_POINTS values
#: in the range, so a larger excess has to earn its place (the Occam factor).
SPUR_RANGE_OHM = (0.015, 0.4)
JOINT_RANGE_OHM = (JOINT_MIN_OHM, 1.0)
#: A worn or dirty socket contact read through a plug-in lead: a few hundredths to about an
#: ohm (our working figure). Its prior per outlet is likelihood.CONTACT_FAULT_PRIOR, by where
#: the reading was taken (far more likely from the front than at the terminals).
CONTACT_RANGE_OHM = (JOINT_MIN_OHM, 1.0)
CONTACT_DEFAULT_PRIOR = 0.015
R_POINTS = 16
#: Every LOCAL_THIN-th point of the fit's position grid is used for the outlet alternatives.
LOCAL_THIN = 2

#: OL pattern (ln is OL, le is OL) -> the tied explanations as (code, conductor, swap)
OL_PATTERNS = {
    (False, True): (("reversed_polarity", None, "line-neutral"), ("open_conductor", "cpc", None)),
    (True, False): (("reversed_polarity", None, "line-cpc"), ("open_conductor", "neutral", None)),
    (True, True): (("open_conductor", "line", None), ("reversed_polarity", None, "neutral-cpc")),
}


@dataclass(frozen=True)
class LocalFault:
    """A fault at one outlet: gain is the score gain in nats over the outlet as recorded.

    r_ohm: the spur's line resistance or the joint's resistance, ohms (None for OL patterns).
    tie: the other explanation that fits exactly as well, as (code, conductor, swap), or None.
    share: its probability among every alternative at the outlet and "as recorded" (None:
    against "as recorded" only, from the gain).
    """

    outlet: str
    code: str
    conductor: str | None
    gain: float
    r_ohm: float | None = None
    swap: str | None = None
    tie: tuple | None = None
    share: float | None = None
    tie_share: float = 0.5

    def confidence(self, of_tie: bool = False) -> float:
        """Probability that the outlet has this fault (or, ``of_tie``, the tied one) rather
        than being as recorded or having another of the alternatives (``share``); tied
        explanations split it by their priors (``tie_share`` is the leading one's part)."""
        p = self.share if self.share is not None else 1.0 / (1.0 + np.exp(-self.gain))
        if not self.tie:
            return float(p)
        return float(p * ((1.0 - self.tie_share) if of_tie else self.tie_share))


def _best_fit(x: np.ndarray, sd: float) -> np.ndarray:
    """Highest log-likelihood readings of ``x`` ohms can get from any model value (0 for a
    reading not taken or OL)."""
    x = np.asarray(x, dtype=float)
    clean = np.where(np.isfinite(x), x, 0.0)
    best = reading_loglik(clean, clean, sd) + 0.05
    return np.where(np.isfinite(x), best, 0.0)


def _ol_faults(outlet: str, ln: float, le: float) -> LocalFault | None:
    pattern = (bool(np.isinf(ln)), bool(np.isinf(le)))
    if pattern not in OL_PATTERNS:
        return None
    first, second = OL_PATTERNS[pattern]
    # the two explanations predict the same readings: the likelier by its prior leads, and
    # each takes its prior's share of the probability
    if LOCAL_PRIORS[second[0]] > LOCAL_PRIORS[first[0]]:
        first, second = second, first
    code, conductor, swap = first
    prior = LOCAL_PRIORS[code] + LOCAL_PRIORS[second[0]]
    ratio = np.log1p(-P_OL_FALSE) - np.log(P_OL_FALSE)
    gain = ratio * sum(pattern) + np.log(prior)
    return LocalFault(outlet, code, conductor, float(gain), None, swap, second,
                      tie_share=LOCAL_PRIORS[code] / prior)


def _options(prep: Prepared) -> list[tuple]:
    """(code, conductor, step 2 factor, step 3 factor, range, log prior per ring outlet).

    A factor of None is a free excess on that step: the socket's line pin adds to both steps,
    its neutral pin to step 2 only and its earth pin to step 3 only, so a worn socket raises
    the two readings by two unrelated amounts (a two-dimensional excess, 40 % of the contact
    prior), or alike (the line pin, 30 %), or one step only (15 % each)."""
    n = len(prep.ring_ids)
    contact = (prep.contact_prior if prep.contact_prior is not None
               else np.full(n, CONTACT_DEFAULT_PRIOR))
    opts = [("unrecorded_spur", None, 2.0, 1.0 + prep.ratio_e, SPUR_RANGE_OHM,
             np.full(n, np.log(LOCAL_PRIORS["unrecorded_spur"])))]
    for conductor, a_ln, a_le in (("line", 1.0, 1.0), ("neutral", 1.0, 0.0), ("cpc", 0.0, 1.0)):
        opts.append(("high_resistance_joint", conductor, a_ln, a_le, JOINT_RANGE_OHM,
                     np.full(n, np.log(LOCAL_PRIORS["high_resistance_joint"]))))
    for conductor, a_ln, a_le, share in ((None, None, None, 0.4), ("line", 1.0, 1.0, 0.3),
                                         ("neutral", 1.0, 0.0, 0.15), ("cpc", 0.0, 1.0, 0.15)):
        opts.append(("setup_socket_contacts", conductor, a_ln, a_le, CONTACT_RANGE_OHM,
                     np.log(contact * share)))
    return opts


def _norm_cdf(z: np.ndarray) -> np.ndarray:
    """Standard normal CDF via erf, Abramowitz & Stegun (1964) formula 7.1.26 (|error| of erf
    below 1.5e-7)."""
    x = np.abs(z) / np.sqrt(2.0)
    t = 1.0 / (1.0 + 0.3275911 * x)
    poly = t * (0.254829592 + t * (-0.284496736 + t * (1.421413741 + t * (-1.453152027
                                                                          + t * 1.061405429))))
    erf = 1.0 - poly * np.exp(-x * x)
    return 0.5 * (1.0 + np.sign(z) * erf)


def free_excess_loglik(x: np.ndarray, mu: np.ndarray, extra_sd, r_lo: float,
                       r_hi: float) -> np.ndarray:
    """Log-likelihood of reading ``x`` (ohms) when it is the model value ``mu`` plus an
    unknown excess uniform on (r_lo, r_hi) ohms, the excess integrated exactly:
    [Φ((x − mu − r_lo)/σ) − Φ((x − mu − r_hi)/σ)] / (r_hi − r_lo), σ the reading's sd at x,
    mixed with the outlier part as ``reading_loglik`` is. A reading not taken gives 0."""
    taken = np.isfinite(x)
    xs = np.where(taken, x, 0.0)
    sig = np.sqrt(meter.SIGMA_FLOOR_OHM**2 + (meter.SIGMA_RELATIVE * np.abs(xs)) ** 2
                  + np.asarray(extra_sd, dtype=float) ** 2)
    d = xs - mu
    p = (_norm_cdf((d - r_lo) / sig) - _norm_cdf((d - r_hi) / sig)) / (r_hi - r_lo)
    mixed = np.log((1 - P_OUTLIER) * np.maximum(p, 1e-300) + np.exp(LOG_OUTLIER))
    return np.where(taken, mixed, 0.0)


def _choose(prep: Prepared, idx: np.ndarray, opts: list[tuple], gains: np.ndarray,
            r_ests: np.ndarray) -> list[LocalFault]:
    """Per outlet, the most probable family of alternatives (a socket contact in any of its
    patterns counts as one family, its evidence summed), kept when it beats "as recorded";
    its share is its probability against every alternative and "as recorded"."""
    family = [o[0] if o[0] == "setup_socket_contacts" else (o[0], o[1]) for o in opts]
    keys = list(dict.fromkeys(family))
    out = []
    for j in range(idx.size):
        g = gains[:, j]
        fam = np.array([np.logaddexp.reduce(g[[f == k for f in family]]) for k in keys])
        if not np.any(np.isfinite(fam)) or fam.max() <= 0:
            continue
        top = int(np.argmax(fam))
        members = [i for i, f in enumerate(family) if f == keys[top]]
        m = members[int(np.argmax(g[members]))]
        share = float(np.exp(fam[top] - np.logaddexp.reduce(np.append(fam, 0.0))))
        out.append(LocalFault(prep.ring_ids[idx[j]], opts[m][0], opts[m][1], float(fam[top]),
                              float(r_ests[m, j]), share=share))
    return out


def local_faults(prep: Prepared, fit: Fit) -> list[LocalFault]:
    """The outlets better explained by a local fault than as recorded under ``fit``; the best
    alternative per outlet, largest gain first.

    Vectorised over outlets: for every candidate outlet and alternative, the excess is averaged
    over its uniform prior grid and the outlet's position over the t grid, the rest of its
    likelihood (its spurs) kept as it is, and the ring's scatter re-weighed over its grid (an
    outlet explained by a fault no longer makes the whole ring look noisy).
    """
    p_ln, p_le = fit.pred_ln[::LOCAL_THIN], fit.pred_le[::LOCAL_THIN]
    sd = CONTACT_SD_OHM[:, None, None]
    base = outlet_loglik(prep, p_ln[None], p_le[None], None)[:, 0]  # (S, n_ring, G)
    asis = log_mean_exp(base, axis=-1)  # (S, n_ring)
    cons = fit.scatter_cons if fit.scatter_cons is not None else LOG_CONTACT_PRIOR
    total = asis.sum(axis=1) + cons  # (S,)
    total_all = float(log_mean_exp(total) + np.log(total.size))
    ln, le = prep.ln_ohm, prep.le_ohm
    found: list[LocalFault] = []
    for i, oid in enumerate(prep.ring_ids):
        ol = _ol_faults(oid, ln[i], le[i])
        if ol is not None and ol.gain > 0:
            found.append(ol)
    own = (reading_loglik(ln[None, :, None], p_ln[None, None, :], sd)
           + reading_loglik(le[None, :, None], p_le[None, None, :], sd))
    rest = base - own  # (S, n_ring, G): the outlet's spurs
    # No alternative can beat "as recorded" when the readings already sit on the model:
    # its evidence is at most max(rest) + the best possible fit of the two readings.
    sd2 = CONTACT_SD_OHM[:, None]
    ceiling = rest.max(axis=-1) + _best_fit(ln[None, :], sd2) + _best_fit(le[None, :], sd2)
    opts = _options(prep)
    top_prior = np.max([o[5] for o in opts], axis=0)
    finite_pair = ~np.isinf(ln) & ~np.isinf(le) & ~(np.isnan(ln) & np.isnan(le))
    hopeful = np.any(ceiling + top_prior[None, :] >= asis, axis=0)
    idx = np.flatnonzero(finite_pair & hopeful)
    if idx.size:
        gains, r_ests = [], []
        x_ln, x_le = ln[idx][None, :, None, None], le[idx][None, :, None, None]
        sd4 = CONTACT_SD_OHM[:, None, None, None]
        for _code, _conductor, a_ln, a_le, (r_lo, r_hi), log_prior in opts:
            if a_ln is None:  # two free excesses, each integrated exactly
                alt = (free_excess_loglik(x_ln, p_ln[None, None, :, None], sd4, r_lo, r_hi)
                       + free_excess_loglik(x_le, p_le[None, None, :, None], sd4, r_lo, r_hi))
                e_ln = e_le = np.zeros(1)
            else:  # one excess on a uniform grid over the range
                r = np.linspace(r_lo, r_hi, R_POINTS)
                e_ln, e_le = a_ln * r, a_le * r
                alt = (reading_loglik(x_ln, p_ln[None, None, :, None] + e_ln, sd4)
                       + reading_loglik(x_le, p_le[None, None, :, None] + e_le, sd4))
            joint_ll = rest[:, idx][..., None] + alt  # (S, k, G, R)
            evidence = log_mean_exp(joint_ll.reshape(*joint_ll.shape[:2], -1), axis=-1)
            new_total = total[:, None] - asis[:, idx] + evidence  # (S, k)
            gain = (log_mean_exp(new_total, axis=0) + np.log(total.size) - total_all
                    + log_prior[idx])
            # an alternative that only moves a reading not taken explains nothing
            useless = (np.isnan(ln[idx]) if a_le == 0 else False) | (
                np.isnan(le[idx]) if a_ln == 0 else False)
            if a_ln is None:  # a free excess on both steps needs both readings
                useless = np.isnan(ln[idx]) | np.isnan(le[idx])
            gain = np.where(useless, -np.inf, gain)
            w = np.exp(joint_ll - joint_ll.max(axis=(0, 2, 3), keepdims=True)).sum(axis=(0, 2))
            if a_ln is None:  # the larger excess, read against the ring's median prediction
                r_est = np.fmax(ln[idx] - np.median(p_ln), le[idx] - np.median(p_le))
            else:
                r_est = (w * r).sum(axis=-1) / w.sum(axis=-1)
            gains.append(gain)
            r_ests.append(r_est)
        found.extend(_choose(prep, idx, opts, np.array(gains), np.array(r_ests)))
    for j, oid in enumerate(prep.child_ids):
        ol = _ol_faults(oid, prep.child_ln_ohm[j], prep.child_le_ohm[j])
        if ol is not None and ol.gain > 0:
            found.append(ol)
    return sorted(found, key=lambda f: f.gain, reverse=True)
