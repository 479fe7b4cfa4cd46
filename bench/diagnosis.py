"""Diagnosis benchmark on seeded simulated rings under site conditions: prints, asserts nothing.

For each condition (``bench/diag_conditions.py``: clean meter, probe contact scatter, leads not
nulled on every reading or on one step, a warmer cable for steps 2–3, worn socket contacts read
from the front, a metallic cpc, an unsuitable meter, two faults at once, the typical site and
a random site mix) it simulates healthy rings and rings with each fault class
(``ringmath.simulate``: exact nodal analysis of a named-node netlist, random ring length,
outlet count and spacing, spurs and fused spurs, shuffled visiting order; a third of the open
conductors are one outlet's core off its terminal, which reads like swapped terminals) and
prints:

* healthy rings: false alarms (verdict not "satisfactory"); "wiring" = a wiring fault
  (fault severity) named at all, and at >= 80 % confidence; how many were called "retest";
* set-up errors that must be corrected (leads beyond ±0.05 Ω, worn sockets, an unsuitable
  meter; ``diag_scoring.must_report``): "named" = verdict "retest" or the leading finding is a
  set-up finding (code convention in ``bench/diag_scoring.py``);
* faults: detected (verdict not "satisfactory"), right class (the true fault, with its
  conductor or step, among the top wiring findings; where a set-up error is present too,
  naming the set-up error also counts), located (the finding names the right outlets, where
  the readings can place it at all), and the same for faults above the stated limit
  (``diag_scoring.VISIBLE_OHM``: noise-free readings at least 0.05 Ω and the least departure
  the result says a fault must cause, from the scatter it estimated, from any sound ring) and,
  for comparison, above the fixed limit (0.05 Ω and 3 simulated contact sd);
* the 0.05 Ω hand rule beside them (flags on healthy rings, detection on faulty ones);
* calibration: the leading finding's stated confidence in bins vs how often it is true, and
  the Brier score; a second table adds "no wiring fault" claims of satisfactory results;
* median diagnosis time for 10, 20 and 40 ring outlets (typical-site rings), each with
  ``os.getloadavg()`` beside it.

Run: ``.venv/bin/python bench/diagnosis.py [--quick] [--n N] [--healthy N] [--seed S]
[--conditions clean,typical,...] [--show CODE|healthy|setup] [--json FILE] [--list]``.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import statistics
import sys
import time
import zlib
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from diag_conditions import BY_KEY, CONDITIONS, Condition  # noqa: E402
from diag_scoring import calibration, hand_rule, score  # noqa: E402

from ringmath.diagnose import diagnose  # noqa: E402
from ringmath.simulate import FAULT_CODES, simulate  # noqa: E402


def load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load {one:.2f} {five:.2f} {fifteen:.2f}"


def pct(rows: list[dict], key: str) -> str:
    return f"{100 * sum(r[key] for r in rows) / len(rows):5.1f} %" if rows else "   n/a "


def _judged_wrong(row: dict, show: str) -> bool:
    if show == "healthy":
        return not row["faulty"] and not row["setup"] and row["flagged"]
    if show == "setup":
        return row["setup"] and not (row["named"] if not row["faulty"] else row["right"])
    return row["code"] == show and not row["right"]


def _show(cond: Condition, truth, result: dict) -> None:
    faults = [f"{f.code}{'/' + (f.conductor or f.step) if f.conductor or f.step else ''}"
              f" {list(f.outlets)}" for f in truth.faults] or ["sound"]
    said = [(f["code"], f["severity"], f["confidence"], f["outlets"])
            for f in result["findings"][:3]]
    labels = truth.nuisance.labels() if truth.nuisance else ()
    print(f"    [{cond.key}] truth {'; '.join(faults)} (signal {truth.signal_ohm:.3f} Ω;"
          f" {', '.join(labels) or 'clean'}) -> {result['verdict']}: {said}")


def run_condition(cond: Condition, rng: np.random.Generator, n: int, healthy: int,
                  show: str | None = None, calibrate: bool = True) -> list[dict]:
    rows = []
    for code in [None] * healthy + [c for c in FAULT_CODES for _ in range(n)]:
        also = None
        if cond.pairs and code is not None:
            others = [c for c in FAULT_CODES if c != code]
            also = others[int(rng.integers(0, len(others)))]
        picks = {}
        if code == "open_conductor" and rng.random() < 1 / 3:
            picks["at"] = "terminal"  # one outlet's core off its terminal: reads like a swap
        record, truth = simulate(rng, code, also=also, nuisance=cond.draw(rng), **picks)
        t0 = time.perf_counter()
        result = diagnose(record, calibrate=calibrate)
        row = score(result, truth, record, hand_rule(record))
        row["ms"] = 1000 * (time.perf_counter() - t0)
        rows.append(row)
        if show and _judged_wrong(row, show):
            _show(cond, truth, result)
    return rows


def print_condition(cond: Condition, rows: list[dict], seconds: float) -> dict:
    sound = [r for r in rows if not r["faulty"] and not r["setup"]]
    setup = [r for r in rows if not r["faulty"] and r["setup"]]
    faulty = [r for r in rows if r["faulty"]]
    visible = [r for r in faulty if r["visible"]]
    print(f"\n== {cond.key}: {cond.title}   ({len(rows)} cases, {seconds:.0f} s, {load()})")
    if sound:
        print(f"  healthy rings ({len(sound)}): false alarms {pct(sound, 'flagged')}"
              f" (hand rule {pct(sound, 'hand')}); wiring fault named {pct(sound, 'wiring_call')}"
              f", at >= 80 % {pct(sound, 'wiring_call_80')}; retest"
              f" {100 * sum(r['verdict'] == 'retest' for r in sound) / len(sound):5.1f} %")
    if setup:
        print(f"  healthy rings with a set-up error ({len(setup)}): named {pct(setup, 'named')};"
              f" wiring fault named {pct(setup, 'wiring_call')}, at >= 80 %"
              f" {pct(setup, 'wiring_call_80')} (hand rule flags {pct(setup, 'hand')})")
    worn = [r for r in rows if r["worn"]]
    if worn:
        print(f"  worn sockets named at the right outlets {pct(worn, 'worn_placed')}")
    metal = [r for r in rows if r["metallic"]]
    if metal:
        print(f"  metallic cpc named (parallel path / metallic code)"
              f" {pct(metal, 'metallic_named')}")
    print(f"  {'class':24} {'n':>4} {'detected':>9} {'right':>8} {'all right':>9} {'located':>9}"
          f" {'hand rule':>9} | {'above limit':>11} {'detected':>9} {'right':>8}")
    for code in (*FAULT_CODES, None):
        r = [x for x in faulty if code is None or x["code"] == code]
        v = [x for x in r if x["visible"]]
        loc = [x for x in r if x["locatable"]]
        print(f"  {code or 'all faults':24} {len(r):4} {pct(r, 'flagged'):>9} {pct(r, 'right'):>8}"
              f" {pct(r, 'right_all'):>9} {pct(loc, 'located'):>9} {pct(r, 'hand'):>9} |"
              f" {len(v):11} {pct(v, 'flagged'):>9} {pct(v, 'right'):>8}")
    fixed = [x for x in faulty if x["visible_fixed"]]
    print(f"  above the fixed limit (0.05 Ω and 3 contact sd): {len(fixed)} of {len(faulty)},"
          f" detected {pct(fixed, 'flagged')}, right {pct(fixed, 'right')}")
    ties = sum(x["tie_only"] for x in faulty)
    if ties:
        print(f"  right only by a declared exact tie (OL at one outlet: swapped terminals or a"
              f" core not connected): {ties} of {len(faulty)}")
    claims = [r["claim"] for r in rows if r["claim"] and r["claim"][1] is not None]
    table, brier = calibration(claims)
    cells = "  ".join(f"{int(100 * lo)}-{min(int(100 * hi), 100)}: {obs * 100:3.0f}%/{cnt}"
                      for lo, hi, cnt, _m, obs in table if cnt)
    print(f"  calibration (bin: observed/count) {cells or 'no claims'};"
          f" Brier {'n/a' if brier is None else f'{brier:.3f}'};"
          f" median {statistics.median(r['ms'] for r in rows):.0f} ms per diagnosis")

    def frac(rs, key):
        return sum(x[key] for x in rs) / len(rs) if rs else math.nan

    return {"key": cond.key, "fa": frac(sound, "flagged"), "w80": frac(sound + setup,
            "wiring_call_80"), "det": frac(faulty, "flagged"), "right": frac(faulty, "right"),
            "vdet": frac(visible, "flagged"), "vright": frac(visible, "right"),
            "fdet": frac(fixed, "flagged"), "fright": frac(fixed, "right"),
            "named": frac(setup, "named"), "brier": brier, "hand_fa": frac(sound, "hand"),
            "hand_det": frac(faulty, "hand")}


def print_summary(summary: list[dict], rows: list[dict]) -> None:
    print(f"\n== summary ({load()})")
    heads = ("condition", "false al.", "wiring>=80", "detected", "right", "det>lim",
             "right>lim", "det>fix", "right>fix", "setup named", "Brier", "hand FA",
             "hand det")
    print(f"  {heads[0]:20}" + "".join(f"{h:>12}" for h in heads[1:]))
    for s in summary:
        vals = [s[k] for k in ("fa", "w80", "det", "right", "vdet", "vright", "fdet", "fright",
                               "named")]
        cells = "".join("         n/a" if math.isnan(v) else f"{100 * v:10.1f} %" for v in vals)
        brier = "         n/a" if s["brier"] is None else f"{s['brier']:12.3f}"
        hands = "".join("         n/a" if math.isnan(v) else f"{100 * v:10.1f} %"
                        for v in (s["hand_fa"], s["hand_det"]))
        print(f"  {s['key']:20}{cells}{brier}{hands}")
    for title, claims in (
            ("leading finding", [r["claim"] for r in rows if r["claim"] and r["claim"][1]
                                 is not None]),
            ("leading finding or 'no wiring fault'",
             [r["claim"] for r in rows if r["claim"] and r["claim"][1] is not None]
             + [(r["sound"], not r["faulty"]) for r in rows if r["sound"] is not None])):
        table, brier = calibration(claims)
        unscored = sum(1 for r in rows if r["claim"] and r["claim"][1] is None)
        certain = sum(1 for c, _ok in claims if c >= 0.995)
        print(f"\n  calibration, all conditions, {title} ({len(claims)} claims,"
              f" {unscored} unscored codes, {certain} stated at 100 %);"
              f" Brier {'n/a' if brier is None else f'{brier:.3f}'}")
        print(f"  {'stated':>10} {'count':>7} {'mean stated':>12} {'observed':>9}")
        for lo, hi, cnt, mean, obs in table:
            label = f"{int(100 * lo)}-{min(int(100 * hi), 100)} %"
            print(f"  {label:>10} {cnt:7}" + ("" if not cnt else
                                              f" {100 * mean:10.1f} % {100 * obs:7.1f} %"))


def print_targets(summary: list[dict], rows: list[dict], ms: dict[int, float]) -> None:
    """The targets of the diagnosis work, each with this run's figure and met / not met."""
    by = {s["key"]: s for s in summary}
    checks = []
    if "typical" in by:
        t = by["typical"]
        checks += [("typical site: false alarms <= 2 %", t["fa"], t["fa"] <= 0.02),
                   ("typical site: healthy called a wiring fault at >= 80 %: none", t["w80"],
                    t["w80"] == 0),
                   ("typical site: detected >= 97 % above the stated limit", t["vdet"],
                    t["vdet"] >= 0.97),
                   ("typical site: right class >= 90 % above the stated limit", t["vright"],
                    t["vright"] >= 0.90),
                   ("(for comparison) typical site: detected >= 97 % above the fixed limit",
                    t["fdet"], t["fdet"] >= 0.97),
                   ("(for comparison) typical site: right class >= 90 % above the fixed limit",
                    t["fright"], t["fright"] >= 0.90)]
    if "clean" in by:
        c = by["clean"]
        checks += [("clean meter: detected >= 99 %", c["det"], c["det"] >= 0.99),
                   ("clean meter: right class >= 98 %", c["right"], c["right"] >= 0.98),
                   ("clean meter: no false alarm", c["fa"], c["fa"] == 0)]
    setup = [r for r in rows if r["setup"] and not r["faulty"]]
    if setup:
        named = sum(r["named"] for r in setup) / len(setup)
        checks.append((f"set-up errors named as such >= 90 % ({len(setup)} healthy rings)",
                       named, named >= 0.90))
    claims = [r["claim"] for r in rows if r["claim"] and r["claim"][1] is not None]
    table, _ = calibration(claims)
    full = [(mean, obs) for _lo, _hi, cnt, mean, obs in table if cnt >= 20]
    worst = max((abs(m - o) for m, o in full), default=0.0)
    checks.append(("calibration: every bin of >= 20 within 10 points (worst gap)", worst,
                   worst <= 0.10))
    print(f"\n== targets ({load()})")
    for text, value, ok in checks:
        shown = "n/a" if value is None or math.isnan(value) else f"{100 * value:.1f} %"
        print(f"  {'met    ' if ok else 'NOT MET'} {text}: {shown}")
    ms20, ms40 = ms.get(20, math.nan), ms.get(40, math.nan)
    for limit, n, value in ((150, 20, ms20), (50, 20, ms20), (100, 40, ms40)):
        print(f"  {'met    ' if value <= limit else 'NOT MET'} {n}-outlet diagnosis <= {limit} ms"
              f" median: {value:.0f} ms ({load()}; under load this overstates the time)")


def timing(rng: np.random.Generator, reps: int) -> dict[int, float]:
    """Print the median times; return them in ms by number of ring outlets."""
    print("\n== median diagnosis time (typical-site healthy rings)")
    out: dict[int, float] = {}
    for n in (10, 20, 40):
        times = []
        for _ in range(reps):
            record, _truth = simulate(rng, None, n_ring=n, nuisance=BY_KEY["typical"].draw(rng))
            t0 = time.perf_counter()
            diagnose(record)
            times.append(time.perf_counter() - t0)
        print(f"  {n:2} ring outlets: {1000 * statistics.median(times):7.1f} ms"
              f" (of {reps}; {load()})")
        out[n] = 1000 * statistics.median(times)
    return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seed", type=int, default=2026)
    parser.add_argument("--n", type=int, default=None, help="cases per fault class (30)")
    parser.add_argument("--healthy", type=int, default=None, help="healthy rings (4 x n)")
    parser.add_argument("--conditions", default="", help="comma-separated condition keys")
    parser.add_argument("--quick", action="store_true", help="a few minutes on two cores")
    parser.add_argument("--list", action="store_true", help="list the conditions and stop")
    parser.add_argument("--json", metavar="FILE", help="also write the summary figures as JSON")
    parser.add_argument("--show", metavar="WHAT", help="print the cases judged wrong: a fault"
                        " code, 'healthy' (false alarms) or 'setup' (set-up errors not named)")
    args = parser.parse_args()
    if args.list:
        for c in CONDITIONS:
            print(f"{c.key:20} {c.title}")
        return
    n = args.n or (4 if args.quick else 30)
    healthy = args.healthy if args.healthy is not None else 4 * n
    keys = [k.strip() for k in args.conditions.split(",") if k.strip()] or [
        c.key for c in CONDITIONS]
    unknown = [k for k in keys if k not in BY_KEY]
    if unknown:
        parser.error(f"--conditions: unknown {', '.join(unknown)} (see --list)")
    print(f"seed {args.seed}: {healthy} healthy rings and {n} per fault class per condition;"
          f" {os.cpu_count()} cores, {load()}")
    summary, every = [], []
    for key in keys:
        # each condition its own stream, fixed by its key: adding a condition moves no other
        rng = np.random.default_rng([args.seed, zlib.crc32(key.encode())])
        t0 = time.perf_counter()
        rows = run_condition(BY_KEY[key], rng, n, healthy, args.show)
        summary.append(print_condition(BY_KEY[key], rows, time.perf_counter() - t0))
        every.extend(rows)
    print_summary(summary, every)
    ms = timing(np.random.default_rng([args.seed, 999]), 5 if args.quick else 15)
    print_targets(summary, every, ms)
    if args.json:
        claims = [r["claim"] for r in every if r["claim"] and r["claim"][1] is not None]
        table, brier = calibration(claims)
        doc = {"seed": args.seed, "n": n, "healthy": healthy, "load": os.getloadavg(),
               "conditions": summary, "ms_20_outlets": ms.get(20), "ms_40_outlets": ms.get(40),
               "brier": brier,
               "calibration": [dict(zip(("lo", "hi", "count", "stated", "observed"), row,
                                        strict=True)) for row in table]}
        text = json.dumps(doc, indent=1, default=float).replace("NaN", "null")
        Path(args.json).write_text(text + "\n", encoding="utf-8")


if __name__ == "__main__":
    main()
