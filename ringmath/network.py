"""The resistor-network model of a ring final circuit, evaluated in batches.

Each conductor (line, neutral, cpc) is a chain of cable from end 1 (position 0) to end 2
(position 1) at the board. *Marks* are places on the ring at fractional positions 0..1
(measured along the cable from end 1): the outlet being read, the two ends of a bridging
cable, a break or a joint. A *split* mark carries a series element in each conductor between
its left and right side: an ideal link for a healthy conductor, ``1/J`` siemens for a joint of
J ohms, 0 for a break. *Extra* edges join the left sides of two marks in every conductor
(a bridging cable), with a resistance given as a fraction of each conductor's ring resistance
(the same cable type throughout). The board joins of each test step are ideal links:

* ``e2e:line`` / ``e2e:neutral`` / ``e2e:cpc``: one conductor alone, read end 1 to end 2 (step 1).
* ``ln``: L1–N2 and L2–N1 joined, read L–N at the mark (step 2).
* ``ln_wrong``: L1–N1 and L2–N2 joined (a wrong cross-connection), read L–N.
* ``ln_half``: L1–N2 joined but L2–N1 not (one cross-connection not made), read L–N.
* ``le`` / ``le_wrong`` / ``le_half``: the same with the cpc in place of the neutral (step 3).
* ``service``: all four line and cpc ends joined at the board, read L–cpc: the in-service
  R1+R2 at the mark.

Every reading here is the effective resistance found by nodal analysis (``ringmath.nodal``):
the reference. The fitting evaluates its layouts by the closed-form star reduction of
``ringmath.star``, which the tests check against this solver on random networks.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ringmath.nodal import SHORT_OHM, effective_resistance_batch

CONDUCTOR_INDEX = {"line": 0, "neutral": 1, "cpc": 2}

#: step -> (conductors in the network, board joins as (cond, end, cond, end), probe spec)
_STEPS = {
    "e2e:line": (("line",), (), "ends"),
    "e2e:neutral": (("neutral",), (), "ends"),
    "e2e:cpc": (("cpc",), (), "ends"),
    "ln": (("line", "neutral"), ((0, 0, 1, 1), (0, 1, 1, 0)), "mark"),
    "ln_wrong": (("line", "neutral"), ((0, 0, 1, 0), (0, 1, 1, 1)), "mark"),
    "ln_half": (("line", "neutral"), ((0, 0, 1, 1),), "mark"),
    "le": (("line", "cpc"), ((0, 0, 1, 1), (0, 1, 1, 0)), "mark"),
    "le_wrong": (("line", "cpc"), ((0, 0, 1, 0), (0, 1, 1, 1)), "mark"),
    "le_half": (("line", "cpc"), ((0, 0, 1, 1),), "mark"),
    "service": (("line", "cpc"), ((0, 0, 0, 1), (0, 0, 1, 0), (0, 0, 1, 1)), "mark"),
}
STEPS = tuple(_STEPS)
#: step -> the conductors its network holds (line first)
STEP_CONDUCTORS = {step: spec[0] for step, spec in _STEPS.items()}


@dataclass(frozen=True)
class Layout:
    """The fixed structure of a family of ring networks.

    n_marks: number of marks on the ring. split: which marks carry a series element.
    extras: pairs of mark indices joined by a bridging cable. probe: the mark read in steps
    2 and 3 (must not be split).
    """

    n_marks: int
    split: tuple[bool, ...]
    extras: tuple[tuple[int, int], ...] = ()
    probe: int = 0

    def __post_init__(self):
        if len(self.split) != self.n_marks:
            raise ValueError("split: one flag per mark is required")
        if not 0 <= self.probe < self.n_marks or self.split[self.probe]:
            raise ValueError("probe: must be an unsplit mark")
        for i, j in self.extras:
            if not (0 <= i < self.n_marks and 0 <= j < self.n_marks) or i == j:
                raise ValueError("extras: must join two different marks")

    def nodes_per_conductor(self) -> int:
        """end 1, end 2, one node per mark and one more per split mark."""
        return 2 + self.n_marks + sum(self.split)


def _node_tables(layout: Layout) -> tuple[np.ndarray, np.ndarray]:
    """Local node index of the left and right side of each mark inside a conductor block."""
    left, right = [], []
    k = 2
    for m in range(layout.n_marks):
        left.append(k)
        right.append(k + 1 if layout.split[m] else k)
        k += 2 if layout.split[m] else 1
    return np.array(left), np.array(right)


def checked_inputs(layout: Layout, step: str, positions, ring_ohm, series_s=None,
                   extra_fraction=None) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The inputs of a step reading as arrays (positions (B, n_marks), ring_ohm (B, 3),
    series_s (B, 3, n_marks), extra_fraction (B, extras)), defaults filled in: ideal links,
    no bridging cable. Raises ValueError naming the field that is wrong."""
    if step not in _STEPS:
        raise ValueError(f"step: {step!r} is not one of {', '.join(STEPS)}")
    pos = np.asarray(positions, dtype=float)
    if pos.ndim != 2 or pos.shape[1] != layout.n_marks:
        raise ValueError("positions: expected shape (batch, n_marks)")
    if np.any(pos < 0) or np.any(pos > 1):
        raise ValueError("positions: fractions must lie between 0 and 1")
    batch = pos.shape[0]
    ring = np.asarray(ring_ohm, dtype=float).reshape(batch, 3)
    if np.any(ring <= 0):
        raise ValueError("ring_ohm: cable resistances must be positive")
    if series_s is None:
        series_s = np.full((batch, 3, layout.n_marks), 1.0 / SHORT_OHM)
    if extra_fraction is None:
        extra_fraction = np.zeros((batch, len(layout.extras)))
    return pos, ring, np.asarray(series_s, dtype=float), np.asarray(extra_fraction, dtype=float)


def step_resistance(layout: Layout, step: str, positions: np.ndarray, ring_ohm: np.ndarray,
                    series_s: np.ndarray | None = None,
                    extra_fraction: np.ndarray | None = None) -> np.ndarray:
    """Reading in ohms of ``step`` for a batch of B ring networks sharing ``layout``.

    positions: (B, n_marks) fractions 0..1 along the ring from end 1.
    ring_ohm: (B, 3) end-to-end cable resistance of line, neutral, cpc in ohms (without joints
    or bridges).
    series_s: (B, 3, n_marks) series conductance in siemens at split marks per conductor
    (ignored for unsplit marks; default: ideal links everywhere).
    extra_fraction: (B, len(extras)) resistance of each bridging cable as a fraction of the
    ring's resistance, the same fraction in every conductor.
    Returns (B,) ohms; inf where the measured nodes are not connected.
    """
    pos, ring, series_s, extra_fraction = checked_inputs(layout, step, positions, ring_ohm,
                                                         series_s, extra_fraction)
    conductors, joins, probe_kind = _STEPS[step]
    batch = pos.shape[0]
    left, right = _node_tables(layout)
    block = layout.nodes_per_conductor()
    order = np.argsort(pos, axis=1)
    sorted_pos = np.take_along_axis(pos, order, axis=1)
    gaps = np.diff(np.concatenate([np.zeros((batch, 1)), sorted_pos, np.ones((batch, 1))],
                                  axis=1), axis=1)  # (B, n_marks + 1)
    # chain nodes in ring order: end1=0, then marks (left side in, right side out), end2=1
    chain_in = np.concatenate([left[order], np.ones((batch, 1), dtype=np.intp)], axis=1)
    chain_out = np.concatenate([np.zeros((batch, 1), dtype=np.intp), right[order]], axis=1)

    us, vs, gs = [], [], []
    for b_index, name in enumerate(conductors):
        c = CONDUCTOR_INDEX[name]
        base = b_index * block
        r_c = ring[:, c][:, None]
        us.append(base + chain_out)
        vs.append(base + chain_in)
        gs.append(1.0 / np.maximum(gaps * r_c, SHORT_OHM))
        split_marks = [m for m in range(layout.n_marks) if layout.split[m]]
        if split_marks:
            us.append(np.broadcast_to(base + left[split_marks], (batch, len(split_marks))))
            vs.append(np.broadcast_to(base + right[split_marks], (batch, len(split_marks))))
            gs.append(np.asarray(series_s)[:, c, split_marks])
        if layout.extras:
            ei = np.array([e[0] for e in layout.extras])
            ej = np.array([e[1] for e in layout.extras])
            us.append(np.broadcast_to(base + left[ei], (batch, len(ei))))
            vs.append(np.broadcast_to(base + left[ej], (batch, len(ej))))
            gs.append(1.0 / np.maximum(np.asarray(extra_fraction) * r_c, SHORT_OHM))
    for ca, ea, cb, eb in joins:
        us.append(np.full((batch, 1), ca * block + ea))
        vs.append(np.full((batch, 1), cb * block + eb))
        gs.append(np.full((batch, 1), 1.0 / SHORT_OHM))

    u = np.concatenate(us, axis=1)
    v = np.concatenate(vs, axis=1)
    g = np.concatenate(gs, axis=1)
    if probe_kind == "ends":
        src, dst = np.zeros(batch, dtype=np.intp), np.ones(batch, dtype=np.intp)
    else:
        src = np.full(batch, left[layout.probe])
        dst = np.full(batch, block + left[layout.probe])
    return effective_resistance_batch(block * len(conductors), u, v, g, src, dst)
