"""Parameter search shared by the fits: local grid refinement and the spread of a position
parameter under its likelihood weights."""

from __future__ import annotations

import numpy as np


def refine(evaluate, theta: np.ndarray, ll: np.ndarray, steps: np.ndarray, lower, upper,
            rounds: int = 3, keep: int = 2) -> tuple[np.ndarray, np.ndarray]:
    """Local grid refinement: around the best ``keep`` rows, try +-step in each coordinate
    (``steps`` per coordinate; coordinates with a negative step are scaled by factors instead),
    halving the steps each round. Returns all evaluated rows and their logliks."""
    step = steps.astype(float).copy()
    for _ in range(rounds):
        best = theta[np.argsort(ll)[-keep:]]
        cand = []
        dims = best.shape[1]
        offsets = np.array(np.meshgrid(*[[-1, 0, 1]] * dims)).reshape(dims, -1).T
        for row in best:
            for off in offsets:
                new = row.copy()
                for d in range(dims):
                    if step[d] < 0:
                        new[d] = row[d] * np.exp(-step[d] * off[d])
                    else:
                        new[d] = row[d] + step[d] * off[d]
                cand.append(new)
        cand = np.clip(np.array(cand), lower, upper)
        cand = np.unique(np.round(cand, 6), axis=0)
        cand_ll = evaluate(cand)
        theta = np.concatenate([theta, cand])
        ll = np.concatenate([ll, cand_ll])
        step /= 2
    return theta, ll


def position_spread(theta_pos: np.ndarray, ll: np.ndarray) -> float:
    """Spread (ring fractions) of a position parameter under exp(ll) weights."""
    w = np.exp(ll - ll.max())
    w /= w.sum()
    mean = np.sum(w * theta_pos)
    return float(np.sqrt(np.sum(w * (theta_pos - mean) ** 2)))
