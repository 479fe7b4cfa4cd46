"""Nodal analysis: effective resistance between two nodes of a resistor network.

Method (standard nodal analysis, e.g. any circuit-theory text): build the weighted Laplacian
(admittance matrix) ``Y`` of the network, ground one node, inject 1 A at ``src`` and take it
out at ``dst``; solve ``Y v = i``; the effective resistance is ``R = v[src] - v[dst]`` (ohms).

Every node also gets a tiny leakage conductance ``LEAK_S`` to the reference so that a part of
the network cut off by an open conductor keeps the matrix solvable: a pair of nodes that are
not connected then shows a resistance of the order of 1 / LEAK_S, which is reported as
``math.inf`` (an "OL" reading).

The batched form solves many networks of the same size at once (numpy's stacked solve),
which is how the fitting evaluates thousands of hypotheses in a few milliseconds.
"""

from __future__ import annotations

import math

import numpy as np

#: Leakage conductance from every node to the reference, siemens.
LEAK_S = 1e-9
#: Effective resistances above this are reported as open circuit (math.inf), ohms.
OPEN_OHM = 1e6
#: Smallest resistance used for an ideal connection (a board link, a zero-length cable), ohms.
SHORT_OHM = 1e-6


def effective_resistance_batch(n_nodes: int, edge_u: np.ndarray, edge_v: np.ndarray,
                               conductance_s: np.ndarray, src: np.ndarray,
                               dst: np.ndarray) -> np.ndarray:
    """Effective resistance in ohms between ``src`` and ``dst`` for a batch of networks.

    n_nodes: nodes per network (indices 0..n_nodes-1; node 0 is the reference).
    edge_u, edge_v: int arrays (B, E) or (E,) of edge end nodes.
    conductance_s: float array (B, E) of edge conductances in siemens (0 = no edge).
    src, dst: int arrays (B,) or scalars, the two measured nodes.
    Returns a float array (B,) in ohms; ``inf`` where src and dst are not connected.
    """
    g = np.asarray(conductance_s, dtype=float)
    if g.ndim != 2:
        raise ValueError("conductance_s: expected a 2-D array (batch, edges)")
    if np.any(g < 0) or not np.all(np.isfinite(g)):
        raise ValueError("conductance_s: conductances must be finite and not negative")
    batch, n_edges = g.shape
    u = np.broadcast_to(np.asarray(edge_u, dtype=np.intp), (batch, n_edges))
    v = np.broadcast_to(np.asarray(edge_v, dtype=np.intp), (batch, n_edges))
    if n_edges and (u.max() >= n_nodes or v.max() >= n_nodes or u.min() < 0 or v.min() < 0):
        raise ValueError("edge_u/edge_v: node index out of range")
    s = np.broadcast_to(np.asarray(src, dtype=np.intp), (batch,))
    d = np.broadcast_to(np.asarray(dst, dtype=np.intp), (batch,))

    nn = n_nodes * n_nodes
    offset = (np.arange(batch) * nn)[:, None]
    index = np.concatenate([offset + u * n_nodes + u, offset + v * n_nodes + v,
                            offset + u * n_nodes + v, offset + v * n_nodes + u], axis=1)
    weight = np.concatenate([g, g, -g, -g], axis=1)
    y = np.bincount(index.ravel(), weights=weight.ravel(), minlength=batch * nn)
    y = y.reshape(batch, n_nodes, n_nodes)
    y[:, np.arange(n_nodes), np.arange(n_nodes)] += LEAK_S

    # Ground node 0: drop its row and column. Currents: +1 A into src, -1 A out of dst.
    yr = y[:, 1:, 1:]
    rhs = np.zeros((batch, n_nodes))
    bi = np.arange(batch)
    rhs[bi, s] += 1.0
    rhs[bi, d] -= 1.0
    rhs = rhs[:, 1:]
    volts = np.zeros((batch, n_nodes))
    volts[:, 1:] = np.linalg.solve(yr, rhs[..., None])[..., 0]
    r = volts[bi, s] - volts[bi, d]
    r = np.where(s == d, 0.0, r)
    return np.where(r > OPEN_OHM, np.inf, r)


def effective_resistance(edges: list[tuple[int, int, float]], n_nodes: int, src: int,
                         dst: int) -> float:
    """Effective resistance in ohms between nodes ``src`` and ``dst`` of one network.

    edges: (u, v, resistance_ohm) triples; a resistance of ``math.inf`` is an open link and
    0 is an ideal link (replaced by SHORT_OHM). Returns ``math.inf`` when not connected.
    """
    if n_nodes < 2:
        raise ValueError("n_nodes: a network needs at least two nodes")
    us, vs, gs = [], [], []
    for u, v, r in edges:
        if r < 0 or math.isnan(r):
            raise ValueError(f"edges: resistance {r} between {u} and {v} is not allowed")
        us.append(u)
        vs.append(v)
        gs.append(0.0 if math.isinf(r) else 1.0 / max(r, SHORT_OHM))
    result = effective_resistance_batch(
        n_nodes, np.array([us]), np.array([vs]), np.array([gs], dtype=float),
        np.array([src]), np.array([dst]))
    return float(result[0])


class Netlist:
    """A small named-node resistor network for building test and simulator circuits.

    ``add(a, b, r_ohm)`` joins named nodes; ``resistance(a, b)`` solves it by nodal analysis.
    """

    def __init__(self) -> None:
        self._index: dict[str, int] = {}
        self._edges: list[tuple[int, int, float]] = []

    def node(self, name: str) -> int:
        """Index of node ``name``, creating it on first use."""
        if name not in self._index:
            self._index[name] = len(self._index)
        return self._index[name]

    def add(self, a: str, b: str, r_ohm: float) -> None:
        """Join nodes a and b with ``r_ohm`` ohms (inf = open, 0 = ideal link)."""
        self._edges.append((self.node(a), self.node(b), r_ohm))

    def resistance(self, a: str, b: str) -> float:
        """Effective resistance in ohms between nodes a and b (inf when not connected)."""
        if a not in self._index or b not in self._index:
            missing = a if a not in self._index else b
            raise ValueError(f"node: {missing!r} is not in the network")
        return effective_resistance(self._edges, max(2, len(self._index)), self._index[a],
                                    self._index[b])
