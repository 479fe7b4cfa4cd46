"""Fit the monotone calibration of stated confidence (``ringmath.calibration``) on a seeded run.

Runs every condition of ``bench/diag_conditions.py`` (as ``bench/diagnosis.py`` does, same
streams per condition key) with a seed other than the one the benchmark reports (default 7;
the benchmark reports 2026), collects each case's leading claim (stated confidence, whether it
is true of the simulated test) with the calibration switched off, and fits Platt scaling
(Platt 1999, "Probabilistic outputs for support vector machines"): observed = sigmoid(a·logit(
stated) + b), by maximum likelihood (Newton's method on the logistic log-likelihood), one map
per basis of the leading claim (whole-ring fit, outlet, set-up). Prints the claims per bin
before and after and the fitted maps to copy into ringmath/calibration.py.

Run: ``.venv/bin/python bench/diag_calibrate.py [--seed 7] [--n 8] [--conditions ...]``.
"""

from __future__ import annotations

import argparse
import sys
import zlib
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from diag_conditions import BY_KEY, CONDITIONS  # noqa: E402
from diag_scoring import calibration  # noqa: E402
from diagnosis import run_condition  # noqa: E402

from ringmath.findings import BASES  # noqa: E402

#: A basis with fewer leading claims than this keeps the identity map (too few to fit).
MIN_CLAIMS = 40


def fit_platt(stated: np.ndarray, ok: np.ndarray, iters: int = 50) -> tuple[float, float]:
    """a, b maximising sum log P(ok | sigmoid(a·logit(stated) + b)) (Newton's method)."""
    x = np.log(stated / (1 - stated))
    w = np.array([1.0, 0.0])
    design = np.column_stack([x, np.ones_like(x)])
    for _ in range(iters):
        p = 1 / (1 + np.exp(-(design @ w)))
        grad = design.T @ (ok - p)
        hess = design.T @ (design * (p * (1 - p))[:, None]) + 1e-6 * np.eye(2)
        w = w + np.linalg.solve(hess, grad)
    return float(w[0]), float(w[1])


def table(claims: list[tuple[float, bool]]) -> None:
    rows, brier = calibration(claims)
    for lo, hi, cnt, mean, obs in rows:
        if cnt:
            print(f"  {int(100 * lo):3}-{min(int(100 * hi), 100):3} %  {cnt:5}"
                  f"  stated {100 * mean:5.1f} %  observed {100 * obs:5.1f} %")
    print(f"  Brier {brier:.3f} ({len(claims)} claims)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seed", type=int, default=7)
    parser.add_argument("--n", type=int, default=8)
    parser.add_argument("--conditions", default="")
    args = parser.parse_args()
    keys = [k for k in args.conditions.split(",") if k] or [c.key for c in CONDITIONS]
    claims: dict[str, list] = {basis: [] for basis in BASES}
    for key in keys:
        rng = np.random.default_rng([args.seed, zlib.crc32(key.encode())])
        rows = run_condition(BY_KEY[key], rng, args.n, 4 * args.n, calibrate=False)
        for r in rows:
            if r["claim"] and r["claim"][1] is not None:
                claims[r["claim_basis"]].append(r["claim"])
    print(f"seed {args.seed}, n {args.n}, conditions {','.join(keys)}")
    fitted = {}
    for basis, some in claims.items():
        if len(some) < MIN_CLAIMS:
            print(f"{basis}: {len(some)} claims, fewer than {MIN_CLAIMS}: keep the identity map")
            fitted[basis] = (1.0, 0.0)
            continue
        stated = np.clip(np.array([c for c, _ in some]), 1e-3, 1 - 1e-3)
        ok = np.array([float(o) for _, o in some])
        a, b = fit_platt(stated, ok)
        fitted[basis] = (a, b)
        print(f"{basis}: before (uncalibrated):")
        table(some)
        after = 1 / (1 + np.exp(-(a * np.log(stated / (1 - stated)) + b)))
        print(f"{basis}: after (fitted map, no cap):")
        table(list(zip(after.tolist(), [bool(o) for o in ok], strict=True)))
    print("PLATT = {" + ", ".join(f'"{k}": ({a:.3f}, {b:.3f})' for k, (a, b) in fitted.items())
          + "}")


if __name__ == "__main__":
    main()
