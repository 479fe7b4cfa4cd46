"""Command line: ``python -m ringmath diagnose FILE...``.

Prints one JSON object per input file, one per line, in input order, and exits 0 whether or
not faults are found. A file that cannot be read or parsed gives one line on stderr naming the
file and the field, and exit status 2 (the other files are still diagnosed); no input prints a
traceback (deep nesting, huge numbers and text that is not UTF-8 included: the JSON is read with
``ringmath.record.loads``). A job document with several circuits gives one object with the worst
verdict and a ``circuits`` list.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from ringmath.diagnose import diagnose
from ringmath.record import RecordError, loads, parse_document

_RANK = {"satisfactory": 0, "incomplete": 1, "retest": 2, "investigate": 3}


def diagnose_document(doc: object) -> dict[str, Any]:
    """The CLI's object for one document: the circuit's result, or for a job document with
    several circuits the worst verdict plus one result per circuit."""
    tests = parse_document(doc)
    results = [diagnose(t) for t in tests]
    if len(results) == 1 and not (isinstance(doc, dict) and "circuits" in doc):
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
        ok, line = _diagnose_file(name)
        if ok:
            print(line)
            sys.stdout.flush()
        else:
            print(line, file=sys.stderr)
            status = 2
    return status


def _diagnose_file(name: str) -> tuple[bool, str]:
    """(True, the JSON line) for one file, or (False, one line naming the file and field)."""
    try:
        if name == "-":
            raw = sys.stdin.buffer.read()
        else:
            with open(name, "rb") as fh:
                raw = fh.read()
        result = diagnose_document(loads(raw.decode("utf-8")))
    except OSError as exc:
        return False, f"{name}: cannot read: {exc.strerror or exc}"
    except UnicodeDecodeError as exc:
        return False, f"{name}: not UTF-8 text (byte {exc.start})"
    except json.JSONDecodeError as exc:
        return False, f"{name}: not valid JSON (line {exc.lineno}, column {exc.colno}): {exc.msg}"
    except RecordError as exc:
        return False, f"{name}: {exc}"
    except (ValueError, TypeError, RecursionError, OverflowError) as exc:
        # Not expected from a parsed record; still one line, never a traceback.
        return False, f"{name}: cannot diagnose: {type(exc).__name__}: {str(exc)[:200]}"
    return True, json.dumps(result, separators=(",", ":"), allow_nan=False)


if __name__ == "__main__":
    sys.exit(main())
