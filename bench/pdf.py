"""How long the job sheet PDF takes: a two-circuit job and four circuits of 20 outlets.

    .venv/bin/python bench/pdf.py [--repeat N] [--budget SECONDS] [--out DIR]

Bounded: each job is printed at most ``--repeat`` times and never again once ``--budget``
seconds have gone. The diagnoses are made once beforehand (the app keeps them per record), so
the figures are the sheet's own cost: the HTML, the layout and write_pdf. Wall-clock timings
swing with the machine's load, so the load average is printed beside every figure, with the
process's own CPU time (steadier on a busy machine). ``--cold`` adds the first sheet in a fresh
process (imports and fonts included). Targets: two circuits
within 1.5 s, four circuits of 20 outlets within 3 s.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fieldapp.sheets.pdf import sheet_html  # noqa: E402
from fieldapp.transfer.schemas import dump_document, load_document  # noqa: E402
from ringmath.diagnose import diagnose  # noqa: E402
from ringmath.simulate import simulate  # noqa: E402

HANDMADE = ROOT / "tests" / "fieldapp" / "data" / "transfer_handmade.json"
PEOPLE = {"status": "approved", "tester": "Morwenna Tregear",
          "submitted_at": "2026-11-27T16:02:00", "reviewed_by": "Idris Calloway",
          "reviewed_at": "2026-11-28T08:30:00", "approved_by": "Idris Calloway",
          "approved_at": "2026-11-28T08:30:00", "instrument_model": "Bench meter 1",
          "instrument_serial": "SN-000123"}
TARGETS_S = {"two circuits": 1.5, "four circuits x 20": 3.0}


def two_circuits() -> dict:
    return dump_document(load_document(json.loads(HANDMADE.read_text())))


def four_circuits(outlets: int = 20, seed: int = 20261202) -> dict:
    rng = np.random.default_rng(seed)
    circuits = []
    for n, fault in enumerate((None, "interconnection", None, "open_conductor"), start=1):
        record, _ = simulate(rng, fault, n_ring=outlets)
        record = json.loads(json.dumps(record, default=str))
        record["circuit"]["reference"] = f"DB2/{n}"
        circuits.append({k: record[k] for k in ("circuit", "end_to_end", "outlets")})
    doc = {"format": "ringtest/1", "circuits": circuits,
           "job": {"reference": "BENCH-4", "site": "Seeded simulated rings",
                   "date": "2026-12-02"}}
    return dump_document(load_document(doc))


def load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load {one:.2f} {five:.2f} {fifteen:.2f}"


def time_once(doc: dict, diagnoses: list) -> dict:
    from weasyprint import HTML

    from fieldapp.sheets.pdf import TEMPLATES

    c0 = time.process_time()
    t0 = time.perf_counter()
    html = sheet_html(doc, diagnoses, PEOPLE)
    t1 = time.perf_counter()
    laid_out = HTML(string=html, base_url=str(TEMPLATES)).render()
    t2 = time.perf_counter()
    pdf = laid_out.write_pdf()
    t3 = time.perf_counter()
    return {"html": t1 - t0, "layout": t2 - t1, "write": t3 - t2, "total": t3 - t0,
            "cpu": time.process_time() - c0,
            "pages": len(laid_out.pages), "bytes": len(pdf), "pdf": pdf}


COLD = """
import sys, time
t0 = time.perf_counter()
sys.path.insert(0, {bench!r})
import pdf as bench
t1 = time.perf_counter()
doc = bench.two_circuits()
from ringmath.diagnose import diagnose
diagnoses = [diagnose(rec) for rec in doc["circuits"]]
t2 = time.perf_counter()
bench.time_once(doc, diagnoses)
t3 = time.perf_counter()
print(f"{{t1 - t0:.2f}} {{t2 - t1:.2f}} {{t3 - t2:.2f}}")
"""


def cold(timeout_s: float) -> str:
    """The first two-circuit sheet in a fresh process: imports, diagnoses, first print."""
    code = COLD.format(bench=str(Path(__file__).resolve().parent))
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=timeout_s, check=True)
    imports, diagnosis, first = done.stdout.split()
    return (f"fresh process, two circuits: imports {imports} s, diagnoses {diagnosis} s, "
            f"first sheet {first} s  {load()}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="prints per job (at most)")
    parser.add_argument("--budget", type=float, default=60.0, help="seconds for the whole run")
    parser.add_argument("--out", type=Path, help="write the last PDF of each job here")
    parser.add_argument("--cold", action="store_true",
                        help="also time the first sheet in a fresh process")
    args = parser.parse_args(argv)
    start = time.perf_counter()
    jobs = {"two circuits": two_circuits(), "four circuits x 20": four_circuits()}
    print(f"{'job':<20} {'run':>3} {'html':>6} {'layout':>7} {'write':>6} {'total':>6} "
          f"{'cpu':>5} {'pages':>5}  machine   (seconds; cpu: this process's own time)")
    for name, doc in jobs.items():
        diagnoses = [diagnose(rec) for rec in doc["circuits"]]
        time_once(doc, diagnoses)  # warm: templates, fonts
        totals = []
        for run in range(1, args.repeat + 1):
            if time.perf_counter() - start > args.budget:
                print(f"{name}: budget of {args.budget:.0f} s used up")
                break
            t = time_once(doc, diagnoses)
            totals.append(t["total"])
            print(f"{name:<20} {run:>3} {t['html']:6.2f} {t['layout']:7.2f} {t['write']:6.2f} "
                  f"{t['total']:6.2f} {t['cpu']:5.2f} {t['pages']:>5}  {load()}")
            if args.out:
                args.out.mkdir(parents=True, exist_ok=True)
                (args.out / f"{name.replace(' ', '-')}.pdf").write_bytes(t["pdf"])
        if totals:
            best = min(totals)
            verdict = "within" if best <= TARGETS_S[name] else "OVER"
            print(f"{name}: best {best:.2f} s, median {sorted(totals)[len(totals) // 2]:.2f} s "
                  f"({verdict} the {TARGETS_S[name]:.1f} s target)  {load()}")
    if args.cold:
        print(cold(max(10.0, args.budget)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
