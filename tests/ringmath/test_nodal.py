"""The nodal solver against closed forms, textbook results and networkx."""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest

from ringmath.nodal import Netlist, effective_resistance, effective_resistance_batch


def test_series_and_parallel():
    # Ohm's law: series resistors add, parallel conductances add (any circuits textbook).
    assert effective_resistance([(0, 1, 2.0), (1, 2, 3.0)], 3, 0, 2) == pytest.approx(5.0)
    assert effective_resistance([(0, 1, 2.0), (0, 1, 2.0)], 2, 0, 1) == pytest.approx(1.0)
    assert effective_resistance([(0, 1, 6.0), (0, 1, 3.0)], 2, 1, 0) == pytest.approx(2.0)


def _cube():
    corners = [(x, y, z) for x in (0, 1) for y in (0, 1) for z in (0, 1)]
    index = {c: i for i, c in enumerate(corners)}
    edges = []
    for c in corners:
        for axis in range(3):
            if c[axis] == 0:
                d = list(c)
                d[axis] = 1
                edges.append((index[c], index[tuple(d)], 1.0))
    return edges, index


@pytest.mark.parametrize(("far", "expected"), [
    # Cube of twelve 1 Ω resistors: body diagonal 5/6 Ω, face diagonal 3/4 Ω, edge 7/12 Ω.
    # Classic textbook exercise (e.g. van Steenwijk, Am. J. Phys. 66, 90 (1998); from memory).
    ((1, 1, 1), 5 / 6),
    ((1, 1, 0), 3 / 4),
    ((1, 0, 0), 7 / 12),
])
def test_cube_of_resistors(far, expected):
    edges, index = _cube()
    assert effective_resistance(edges, 8, index[(0, 0, 0)], index[far]) == pytest.approx(
        expected, rel=1e-7)  # the solver's 1e-9 S leakage sets the last digits


def test_balanced_wheatstone_bridge_carries_no_current():
    # A balanced Wheatstone bridge: the middle resistor changes nothing (circuits textbook).
    net = Netlist()
    net.add("a", "c", 1.0)
    net.add("a", "d", 2.0)
    net.add("c", "b", 1.0)
    net.add("d", "b", 2.0)
    without = net.resistance("a", "b")
    net.add("c", "d", 5.0)
    assert net.resistance("a", "b") == pytest.approx(without) == pytest.approx(4 / 3)


def test_disconnected_nodes_read_open():
    net = Netlist()
    net.add("a", "b", 1.0)
    net.add("c", "d", 1.0)
    net.add("b", "c", math.inf)
    assert math.isinf(net.resistance("a", "d"))
    assert net.resistance("a", "b") == pytest.approx(1.0)


@pytest.mark.parametrize("seed", range(6))
def test_random_networks_match_networkx(seed):
    # General-purpose reference: networkx.resistance_distance (Klein & Randić 1993).
    rng = np.random.default_rng(seed)
    n = int(rng.integers(5, 14))
    graph = nx.connected_watts_strogatz_graph(n, 4, 0.4, seed=seed)
    edges = []
    for u, v in graph.edges:
        r = float(rng.uniform(0.05, 3.0))
        graph[u][v]["ohm"] = r
        edges.append((u, v, r))
    a, b = (int(x) for x in rng.choice(n, 2, replace=False))
    ours = effective_resistance(edges, n, a, b)
    theirs = nx.resistance_distance(graph, a, b, weight="ohm", invert_weight=True)
    assert ours == pytest.approx(theirs, rel=1e-7)


def test_batch_matches_single_solves():
    rng = np.random.default_rng(7)
    u = np.array([0, 1, 2, 3, 0, 1])
    v = np.array([1, 2, 3, 0, 2, 3])
    g = rng.uniform(0.5, 5.0, (10, 6))
    got = effective_resistance_batch(4, u, v, g, np.zeros(10, int), np.full(10, 2))
    for row in range(10):
        edges = [(int(a), int(b), 1 / gg) for a, b, gg in zip(u, v, g[row], strict=True)]
        assert got[row] == pytest.approx(effective_resistance(edges, 4, 0, 2), rel=1e-9)


@pytest.mark.parametrize(("edges", "message"), [
    ([(0, 1, -1.0)], "edges"),
    ([(0, 1, float("nan"))], "edges"),
])
def test_bad_edges_fail_loudly(edges, message):
    with pytest.raises(ValueError, match=message):
        effective_resistance(edges, 2, 0, 1)


def test_unknown_node_names_the_node():
    net = Netlist()
    net.add("a", "b", 1.0)
    with pytest.raises(ValueError, match="'z'"):
        net.resistance("a", "z")
