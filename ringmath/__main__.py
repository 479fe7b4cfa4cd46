"""Command line: ``python -m ringmath diagnose FILE...``.

Prints one JSON object per input file, one per line, in input order, and exits 0 whether or
not faults are found. A file that cannot be read or parsed gives one line on stderr naming the
file and the field, and exit status 2 (the other files are still diagnosed). A job document
with several circuits gives one object with the worst verdict and a ``circuits`` list.
"""

from __future__ import annotations

import argparse
import json
import sys

from ringmath.diagnose import diagnose
from ringmath.record import parse_document

_RANK = {"satisfactory": 0, "incomplete": 1, "investigate": 2}


def diagnose_document(doc) -> dict:
    """The CLI's object for one document: the circuit's result, or for a job document with
    several circuits the worst verdict plus one result per circuit."""
    tests = parse_document(doc)
    results = [diagnose(t) for t in tests]
    if len(results) == 1 and "circuits" not in doc:
        return results[0]
    worst = max(results, key=lambda r: _RANK[r["verdict"]])
    return {"verdict": worst["verdict"], "summary": worst["summary"],
            "findings": [f | {"circuit": i} for i, r in enumerate(results)
                         for f in r["findings"]],
            "circuits": results, "cautions": worst["cautions"]}


def main(argv: list[str] | None = None) -> int:
    """Entry point; returns the exit status."""
    parser = argparse.ArgumentParser(prog="python -m ringmath",
                                     description="Ring final circuit continuity diagnosis.")
    sub = parser.add_subparsers(dest="command", required=True)
    d = sub.add_parser("diagnose", help="diagnose ringtest/1 JSON files")
    d.add_argument("files", nargs="+", help="record files ('-' for standard input)")
    args = parser.parse_args(argv)
    status = 0
    for name in args.files:
        try:
            if name == "-":
                doc = json.load(sys.stdin)
            else:
                with open(name, encoding="utf-8") as fh:
                    doc = json.load(fh)
            result = diagnose_document(doc)
        except OSError as exc:
            print(f"{name}: cannot read: {exc.strerror or exc}", file=sys.stderr)
            status = 2
            continue
        except json.JSONDecodeError as exc:
            print(f"{name}: not valid JSON (line {exc.lineno}, column {exc.colno}): {exc.msg}",
                  file=sys.stderr)
            status = 2
            continue
        except (ValueError, TypeError) as exc:
            print(f"{name}: {exc}", file=sys.stderr)
            status = 2
            continue
        print(json.dumps(result, separators=(",", ":"), allow_nan=False))
        sys.stdout.flush()
    return status


if __name__ == "__main__":
    sys.exit(main())
