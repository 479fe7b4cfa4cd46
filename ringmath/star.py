"""The fitting's ring readings in closed form, by reducing each conductor to a star.

Seen from its three terminals (end 1, end 2 and the point read), any network of resistors is
equivalent to a star: three arms ``p0`` (to end 1), ``p1`` (to end 2) and ``pt`` (to the point)
meeting at a centre (Kennelly's delta-star transformation, 1899; any circuit-theory text). The
board joins of each step then leave at most two paths between the two centres, so

* step 1 of one conductor (end 1 to end 2):      R = p0 + p1
* ``ln`` / ``le`` (L1 joined to N2, L2 to N1):   R = pt + qt + (p0 + q1) ∥ (p1 + q0)
* ``ln_wrong`` / ``le_wrong`` (L1–N1, L2–N2):    R = pt + qt + (p0 + q0) ∥ (p1 + q1)
* ``ln_half`` / ``le_half`` (L1–N2 only):         R = pt + qt + p0 + q1 (one path, in series)
* ``service`` (all four ends joined):            R = pt + qt + (p0 ∥ p1) + (q0 ∥ q1)

with p the line's arms, q the neutral's or cpc's, and x ∥ y = xy / (x + y). A healthy ring
(arms t·r and (1−t)·r, pt = 0) gives the familiar [r1·rn + t(1−t)(r1−rn)²] / (r1+rn).

Two families of ``network.Layout`` are reduced here, the two the fitting uses:

* a plain chain (no bridging cable), any marks split by a series element: the star of a chain
  is the resistance from end 1 to the point and from the point to end 2 (pt = 0); an open
  element makes an arm infinite (an OL reading where both paths are open);
* one bridging cable and no split marks: the cable and the ring between its ends form a loop;
  with the point outside it the loop is one resistor (the two in parallel), with the point on
  it the loop's triangle is turned into a star (delta-star), so the point's arm is
  (t−a)(b−t) / (b−a+f) in ring units.

The values equal ``network.step_resistance`` (nodal analysis) to about 1e-6 Ω (its ideal links
of ``SHORT_OHM`` and leakage of ``LEAK_S``); tests check the two against each other on random
networks of both families. Here each network costs a few array operations instead of a linear
solve.
"""

from __future__ import annotations

import numpy as np

from ringmath.network import CONDUCTOR_INDEX, STEP_CONDUCTORS, Layout, checked_inputs
from ringmath.nodal import OPEN_OHM, SHORT_OHM

#: The layouts the fitting uses: the point alone (a sound ring), the point and one series
#: element (a break or a joint), the point and a bridging cable between marks 1 and 2.
PLAIN = Layout(1, (False,))
SPLIT = Layout(2, (False, True))
BRIDGE = Layout(3, (False, False, False), extras=((1, 2),))


def _par(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """x ∥ y in ohms, exact for an infinite arm (open: the other alone) and for two zeros."""
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = np.where(x > 0, 1.0 / x, np.inf) + np.where(y > 0, 1.0 / y, np.inf)
        return np.where(np.isinf(inv), 0.0, 1.0 / inv)


def _chain_arms(layout: Layout, pos: np.ndarray, r_ohm: np.ndarray,
                series_s: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Star arms (p0, p1, pt) in ohms of one conductor of a chain layout: (B,) each.

    r_ohm: (B,) the conductor's ring resistance; series_s: (B, n_marks) its series conductance
    at each mark (used at split marks only)."""
    batch, n_marks = pos.shape
    order = np.argsort(pos, axis=1)
    sorted_pos = np.take_along_axis(pos, order, axis=1)
    gaps = np.diff(np.concatenate([np.zeros((batch, 1)), sorted_pos, np.ones((batch, 1))],
                                  axis=1), axis=1)
    gap_ohm = np.maximum(gaps * r_ohm[:, None], SHORT_OHM)
    split = np.array(layout.split)
    with np.errstate(divide="ignore"):
        series_ohm = np.where(split[None, :], 1.0 / np.asarray(series_s, dtype=float), 0.0)
    series_sorted = np.take_along_axis(series_ohm, order, axis=1)
    # elements in ring order: gap 0, series at mark 0, gap 1, ..., series at last mark, gap M
    elements = np.empty((batch, 2 * n_marks + 1))
    elements[:, 0::2] = gap_ohm
    elements[:, 1::2] = series_sorted
    rank = np.argmax(order == layout.probe, axis=1)  # the point's place in ring order
    ahead = np.cumsum(elements, axis=1)  # ends on each element: from end 1, no subtraction
    behind = np.cumsum(elements[:, ::-1], axis=1)[:, ::-1]  # from each element to end 2
    rows = np.arange(batch)
    p0 = ahead[rows, 2 * rank]
    p1 = behind[rows, 2 * rank + 1]
    return p0, p1, np.zeros(batch)


def _bridge_arms(layout: Layout, pos: np.ndarray,
                 extra_fraction: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Star arms in ring units (multiply by a conductor's ring resistance) of a layout with one
    bridging cable of ``extra_fraction`` (B, 1) x the ring, no split marks."""
    i, j = layout.extras[0]
    t = pos[:, layout.probe]
    a = np.minimum(pos[:, i], pos[:, j])
    b = np.maximum(pos[:, i], pos[:, j])
    f = np.asarray(extra_fraction, dtype=float)[:, 0]
    loop = (b - a) * f / np.maximum(b - a + f, SHORT_OHM)  # the ring a..b with the cable
    before, after = t < a, t > b
    # point on the loop: its triangle (t-a, b-t, f) as a star (delta-star)
    total = np.maximum(b - a + f, SHORT_OHM)
    on_a = (t - a) * f / total
    on_t = (t - a) * (b - t) / total
    on_b = (b - t) * f / total
    p0 = np.where(before, t, np.where(after, a + loop + (t - b), a + on_a))
    p1 = np.where(before, (a - t) + loop + (1 - b), np.where(after, 1 - t, on_b + (1 - b)))
    pt = np.where(before | after, 0.0, on_t)
    return p0, p1, pt


def step_readings(layout: Layout, step: str, positions: np.ndarray, ring_ohm: np.ndarray,
                  series_s: np.ndarray | None = None,
                  extra_fraction: np.ndarray | None = None) -> np.ndarray:
    """Reading in ohms of ``step``: the arguments and result of ``network.step_resistance``
    (B networks sharing ``layout``), for a chain layout or one with a single bridging cable and
    no split marks. Raises ValueError naming the field for any other layout or a bad input."""
    pos, ring, series_s, extra_fraction = checked_inputs(layout, step, positions, ring_ohm,
                                                         series_s, extra_fraction)
    if len(layout.extras) > 1 or (layout.extras and any(layout.split)):
        raise ValueError("layout: the star reduction takes a chain, or one bridging cable "
                         "without split marks")
    arms = {}
    if layout.extras:
        unit = _bridge_arms(layout, pos, extra_fraction)
    for name in STEP_CONDUCTORS[step]:
        c = CONDUCTOR_INDEX[name]
        if layout.extras:
            arms[name] = tuple(x * ring[:, c] for x in unit)
        else:
            arms[name] = _chain_arms(layout, pos, ring[:, c], series_s[:, c, :])
    if step.startswith("e2e:"):
        p0, p1, _ = arms[step[4:]]
        r = p0 + p1
    else:
        other = "neutral" if step.startswith("ln") else "cpc"
        (p0, p1, pt), (q0, q1, qt) = arms["line"], arms[other]
        if step in ("ln", "le"):
            r = pt + qt + _par(p0 + q1, p1 + q0)
        elif step in ("ln_wrong", "le_wrong"):
            r = pt + qt + _par(p0 + q0, p1 + q1)
        elif step in ("ln_half", "le_half"):
            r = pt + qt + p0 + q1
        else:  # service
            r = pt + qt + _par(p0, p1) + _par(q0, q1)
    return np.where(r > OPEN_OHM, np.inf, r)
