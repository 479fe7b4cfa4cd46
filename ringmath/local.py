"""Faults confined to one outlet, tested on top of a whole-ring explanation.

For each outlet the readings of the rest of the ring are kept and only that outlet's own
readings are re-explained: as an unrecorded spur (both readings raised in the spur cable's
ratio), a high-resistance joint at its terminals (line: both readings raised alike; neutral:
step 2 only; cpc: step 3 only), or a pattern of "OL" readings (swapped terminals or a
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

from ringmath.fitting import JOINT_MIN_OHM, Fit
from ringmath.likelihood import (
    P_OL_FALSE,
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
    "open_conductor": 0.01,
}
#: Prior range of an unrecorded spur's line resistance, ohms (about 2 m to 50 m of 2.5 mm²),
#: and of a joint's resistance; the evidence averages over a uniform grid of R_POINTS values
#: in the range, so a larger excess has to earn its place (the Occam factor).
SPUR_RANGE_OHM = (0.015, 0.4)
JOINT_RANGE_OHM = (JOINT_MIN_OHM, 1.0)
R_POINTS = 40

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
    """

    outlet: str
    code: str
    conductor: str | None
    gain: float
    r_ohm: float | None = None
    swap: str | None = None
    tie: tuple | None = None

    def confidence(self) -> float:
        """Probability that the outlet has this fault rather than being as recorded (a tie
        shares it)."""
        p = 1.0 / (1.0 + np.exp(-self.gain))
        return float(p / 2 if self.tie else p)


def _best_fit(x: float) -> float:
    """Highest log-likelihood a reading of ``x`` ohms can get from any model value."""
    if np.isnan(x) or np.isinf(x):
        return 0.0
    return float(reading_loglik(np.array(x), np.array(x))) + 0.05


def _ol_faults(outlet: str, ln: float, le: float) -> LocalFault | None:
    pattern = (bool(np.isinf(ln)), bool(np.isinf(le)))
    if pattern not in OL_PATTERNS:
        return None
    (code, conductor, swap), tie = OL_PATTERNS[pattern]
    ratio = np.log1p(-P_OL_FALSE) - np.log(P_OL_FALSE)
    gain = ratio * sum(pattern) + np.log(LOCAL_PRIORS[code])
    return LocalFault(outlet, code, conductor, float(gain), None, swap, tie)


def local_faults(prep: Prepared, fit: Fit) -> list[LocalFault]:
    """The outlets better explained by a local fault than as recorded under ``fit``; the best
    alternative per outlet, largest gain first."""
    p_ln, p_le = fit.pred_ln, fit.pred_le
    base = outlet_loglik(prep, p_ln[None], p_le[None])[0]  # (n_ring, G)
    asis = log_mean_exp(base, axis=-1)
    found: list[LocalFault] = []
    for i, oid in enumerate(prep.ring_ids):
        ln, le = prep.ln_ohm[i], prep.le_ohm[i]
        ol = _ol_faults(oid, ln, le)
        if ol is not None:
            if ol.gain > 0:
                found.append(ol)
            continue
        if np.isnan(ln) and np.isnan(le):
            continue
        own = reading_loglik(ln, p_ln) + reading_loglik(le, p_le)
        rest = (base[i] - own)[:, None]  # (G, 1)
        # No alternative can beat "as recorded" when the readings already sit on the model:
        # its evidence is at most max(rest) + the best possible fit of the two readings.
        ceiling = float(rest.max()) + _best_fit(ln) + _best_fit(le)
        if ceiling + np.log(max(LOCAL_PRIORS.values())) < float(asis[i]):
            continue
        best: LocalFault | None = None
        options = (
            ("unrecorded_spur", None, 2.0, 1.0 + prep.ratio_e, SPUR_RANGE_OHM),
            ("high_resistance_joint", "line", 1.0, 1.0, JOINT_RANGE_OHM),
            ("high_resistance_joint", "neutral", 1.0, 0.0, JOINT_RANGE_OHM),
            ("high_resistance_joint", "cpc", 0.0, 1.0, JOINT_RANGE_OHM),
        )
        for code, conductor, a_ln, a_le, (r_lo, r_hi) in options:
            if (a_ln == 0 and np.isnan(le)) or (a_le == 0 and np.isnan(ln)):
                continue
            r = np.linspace(r_lo, r_hi, R_POINTS)[None, :]  # uniform prior over (r_lo, r_hi)
            alt = (reading_loglik(ln, p_ln[:, None] + a_ln * r)
                   + reading_loglik(le, p_le[:, None] + a_le * r))  # (G, R)
            joint_ll = rest + alt
            evidence = float(log_mean_exp(joint_ll.ravel()))
            gain = evidence - float(asis[i]) + np.log(LOCAL_PRIORS[code])
            if gain > 0 and (best is None or gain > best.gain):
                w = np.exp(joint_ll - joint_ll.max())
                r_est = float(np.sum(w * r) / np.sum(w))
                best = LocalFault(oid, code, conductor, gain, r_est)
        if best is not None:
            found.append(best)
    for j, oid in enumerate(prep.child_ids):
        ol = _ol_faults(oid, prep.child_ln_ohm[j], prep.child_le_ohm[j])
        if ol is not None and ol.gain > 0:
            found.append(ol)
    return sorted(found, key=lambda f: f.gain, reverse=True)
