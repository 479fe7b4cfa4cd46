"""Diagnosis benchmark on seeded simulated rings: prints its figures, asserts nothing.

For every fault class (at least 30 cases each) and healthy rings (at least 90), simulated with
``ringmath.simulate`` (random ring length, outlet count and spacing, recorded spurs and fused
spurs, a meter model, shuffled visiting order), it reports:

* detection rate: a fault-severity finding of a fault code was raised;
* right-class rate: the true fault (and conductor or step where it has one) is among the top
  findings (an exact tie counts: the readings cannot tell those apart);
* located rate, where the readings allow it: the finding names the right outlets; and for
  every class how often a place is given at all ("placed") and how often a given place is
  right ("placed right"), so a confident wrong place cannot hide;
* false alarms: healthy rings not judged satisfactory;
* the same detection and false-alarm figures for the hand rule (every ring reading within
  0.05 Ω of (r1+rn)/4 or (r1+r2)/4, the ends within 0.05 Ω, no OL);
* optimistic R1+R2: points whose R1+R2 for Zs is below the true in-service value;
* median diagnosis time for rings of 10, 20 and 40 outlets.

Run: ``.venv/bin/python bench/diagnosis.py [--cases N] [--healthy N] [--seed S]``.
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from ringmath.diagnose import diagnose  # noqa: E402
from ringmath.simulate import FAULT_CODES, simulate  # noqa: E402

FAULTS = set(FAULT_CODES)


def hand_rule(record: dict) -> bool:
    """True when the common hand rule flags the ring (0.05 Ω tolerances, any OL)."""
    e = record["end_to_end"]
    vals = [e["r1"], e["rn"], e["r2"]]
    if any(v == "OL" for v in vals):
        return True
    r1, rn, r2 = vals
    if abs(r1 - rn) > 0.05:
        return True
    ln_exp, le_exp = (r1 + rn) / 4, (r1 + r2) / 4
    for o in record["outlets"]:
        if o["ln"] == "OL" or o["le"] == "OL":
            return True
        if o["spur_from"] is None and (abs(o["ln"] - ln_exp) > 0.05
                                       or abs(o["le"] - le_exp) > 0.05):
            return True
    return False


def _fault_findings(result: dict) -> list[dict]:
    return [f for f in result["findings"] if f["severity"] == "fault" and f["code"] in FAULTS]


def _matches(f: dict, truth) -> bool:
    if f["code"] != truth.code:
        return False
    if truth.code in ("open_conductor", "high_resistance_joint"):
        return f["conductor"] == truth.conductor
    if truth.code == "wrong_cross_connection":
        return f["step"] == truth.step
    return True


def _located(f: dict, truth) -> bool:
    got, want = set(f["outlets"]), set(truth.outlets)
    if not got:
        return False
    if truth.code == "interconnection":
        return len(got ^ want) <= 1
    if truth.code == "open_conductor":
        return bool(got & want) and len(got) <= 2
    if truth.code == "high_resistance_joint":
        return bool(got & want) and len(got) <= 2
    return got == want


def _optimistic(result: dict, truth) -> int:
    bad = 0
    for p in result["points"]:
        true = truth.service_r1r2_ohm.get(p["id"])
        if p["r1r2_ohm"] is not None and true is not None and math.isfinite(true):
            bad += p["r1r2_ohm"] < true - 1e-9
    return bad


def run(cases: int, healthy: int, seed: int, show: str | None = None) -> None:
    rng = np.random.default_rng(seed)
    rows = []
    optimistic = points = 0
    for code in [None] * healthy + [c for c in FAULT_CODES for _ in range(cases)]:
        record, truth = simulate(rng, code)
        result = diagnose(record)
        optimistic += _optimistic(result, truth)
        points += len(result["points"])
        faults = _fault_findings(result)
        top = [f for f in faults if f["confidence"] is not None
               and faults[0]["confidence"] - f["confidence"] < 0.05] or faults[:1]
        match = next((f for f in faults if _matches(f, truth)), None) if code else None
        if show and code == show and not any(_matches(f, truth) for f in top):
            e = record["end_to_end"]
            print(f"missed {code} {truth.conductor or truth.step or ''} at {truth.outlets}: "
                  f"r1 {e['r1']} rn {e['rn']} r2 {e['r2']} -> "
                  f"{[(f['code'], f['conductor'], f['confidence']) for f in faults[:3]]}")
        if show and code == show and match and truth.locatable and not _located(match, truth):
            print(f"misplaced {code}: true {sorted(truth.outlets)} given {sorted(match['outlets'])}"
                  f" section {match['section']} order {list(truth.ring_order)}")
        rows.append({
            "code": code, "detected": bool(faults), "flagged": result["verdict"] != "satisfactory",
            "right": bool(code) and any(_matches(f, truth) for f in top),
            "locatable": truth.locatable, "located": bool(match) and _located(match, truth),
            "placed": bool(match) and bool(match["outlets"]),
            "hand": hand_rule(record),
        })

    def pct(num, den):
        return f"{100 * num / den:5.1f} %" if den else "   n/a"

    print(f"seed {seed}: {healthy} healthy rings, {cases} per fault class\n")
    print(f"{'class':24} {'n':>4} {'detected':>9} {'right':>8} {'located':>9} {'hand rule':>10}"
          f" {'placed':>8} {'placed right':>13}")
    for code in FAULT_CODES:
        r = [x for x in rows if x["code"] == code]
        loc = [x for x in r if x["locatable"]]
        placed = [x for x in r if x["placed"]]
        print(f"{code:24} {len(r):4} {pct(sum(x['detected'] for x in r), len(r)):>9} "
              f"{pct(sum(x['right'] for x in r), len(r)):>8} "
              f"{pct(sum(x['located'] for x in loc), len(loc)):>9} "
              f"{pct(sum(x['hand'] for x in r), len(r)):>10} "
              f"{pct(sum(x['placed'] for x in r), len(r)):>8} "
              f"{pct(sum(x['located'] for x in placed), len(placed)):>13}")
    faulty = [x for x in rows if x["code"]]
    loc = [x for x in faulty if x["locatable"]]
    well = [x for x in rows if x["code"] is None]
    detected = pct(sum(x["detected"] for x in faulty), len(faulty))
    print(f"{'all faults':24} {len(faulty):4} {detected:>9} "
          f"{pct(sum(x['right'] for x in faulty), len(faulty)):>8} "
          f"{pct(sum(x['located'] for x in loc), len(loc)):>9} "
          f"{pct(sum(x['hand'] for x in faulty), len(faulty)):>10}")
    model_fa = pct(sum(x["flagged"] for x in well), len(well))
    hand_fa = pct(sum(x["hand"] for x in well), len(well))
    print(f"\nfalse alarms on healthy rings: model {model_fa}, hand rule {hand_fa}")
    print(f"points with an optimistic R1+R2: {optimistic} of {points}")

    print("\nmedian diagnosis time (healthy rings, 15 each):")
    for n in (10, 20, 40):
        times = []
        for _ in range(15):
            record, _truth = simulate(rng, None, n_ring=n)
            t0 = time.perf_counter()
            diagnose(record)
            times.append(time.perf_counter() - t0)
        print(f"  {n:2} ring outlets: {1000 * statistics.median(times):6.1f} ms")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=30)
    parser.add_argument("--healthy", type=int, default=90)
    parser.add_argument("--seed", type=int, default=2026)
    parser.add_argument("--show", metavar="CODE", help="print the cases of CODE not classed right")
    args = parser.parse_args()
    run(args.cases, args.healthy, args.seed, args.show)


if __name__ == "__main__":
    main()
