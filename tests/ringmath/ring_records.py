"""Small record builders shared by the ringmath tests (not collected as tests)."""

from __future__ import annotations

import numpy as np

from ringmath.record import RingTest, parse_record

B32 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}
#: A healthy 2.5/1.5 mm² ring of about 70 m: the worked example used across the tests.
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}


def record(outlets=(), end_to_end=None, **circuit) -> RingTest:
    """A parsed record: 32 A type B, 2.5/1.5 mm², Ze 0.35 Ω measured, unless overridden."""
    base = {"ocpd": B32, "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.35,
            "ze_source": "measured", "earthing": "TN-C-S"}
    return parse_record({
        "circuit": {**base, **circuit},
        "end_to_end": E2E if end_to_end is None else end_to_end,
        "outlets": list(outlets),
    })


def point(oid: str, spur_from: str | None = None, **fields) -> dict:
    """One outlet document (twin socket unless ``kind`` is given)."""
    return {"id": oid, "spur_from": spur_from, **fields}


def resistance_between(edges, a, b) -> float:
    """Two-point resistance in ohms of a resistor network, from the Laplacian pseudo-inverse
    (Klein & Randić, "Resistance distance", J. Math. Chem. 12, 1993, Theorem A):
    R_ab = (e_a − e_b)ᵀ L⁺ (e_a − e_b). ``edges`` is [(node, node, ohms), ...]."""
    nodes = sorted({n for u, v, _ in edges for n in (u, v)}, key=str)
    index = {n: i for i, n in enumerate(nodes)}
    lap = np.zeros((len(nodes), len(nodes)))
    for u, v, ohm in edges:
        g = 1.0 / ohm
        i, j = index[u], index[v]
        lap[i, i] += g
        lap[j, j] += g
        lap[i, j] -= g
        lap[j, i] -= g
    d = np.zeros(len(nodes))
    d[index[a]], d[index[b]] = 1.0, -1.0
    return float(d @ np.linalg.pinv(lap) @ d)
