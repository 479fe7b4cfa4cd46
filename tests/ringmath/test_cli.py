"""python -m ringmath diagnose: one JSON line per file, clear one-line errors, exit codes."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from ringmath.__main__ import main

ROOT = Path(__file__).resolve().parents[2]
DEMOS = sorted((ROOT / "demo_jobs").glob("*.json"))

GOOD = {
    "circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.35, "cable_length_m": None},
    "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
    "outlets": [
        {"id": "a", "kind": "twin_socket", "spur_from": None, "ln": 0.26, "le": 0.34},
        {"id": "f", "kind": "fcu", "fuse_a": 13, "spur_from": None, "ln": 0.26, "le": 0.35},
        {"id": "g", "kind": "twin_socket", "spur_from": "f", "ln": 0.41, "le": 0.55},
    ],
}


def _write(tmp_path, name, doc):
    path = tmp_path / name
    path.write_text(doc if isinstance(doc, str) else json.dumps(doc), encoding="utf-8")
    return str(path)


def test_one_line_per_file_in_order(tmp_path, capsys):
    files = [_write(tmp_path, "one.json", GOOD), *map(str, DEMOS)]
    assert main(["diagnose", *files]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    assert len(lines) == len(files)
    results = [json.loads(line) for line in lines]
    assert all(r["verdict"] in ("satisfactory", "investigate", "incomplete") for r in results)
    first = results[0]
    assert {p["id"] for p in first["points"]} == {"a", "f", "g"}
    # the point beyond the FCU is judged against the BS 1362 13 A fuse: 1.74 Ω measured limit
    # (80 % of the checked 2.18 Ω, ringmath/data/zs_fuses.csv)
    g = next(p for p in first["points"] if p["id"] == "g")
    assert g["zs_max_ohm"] == pytest.approx(1.74)
    assert first["circuit"]["zs_max_ohm"] == pytest.approx(1.10)


def test_demo_jobs_give_their_faults(capsys):
    assert main(["diagnose", *map(str, DEMOS)]) == 0
    results = {Path(p).stem: json.loads(line) for p, line in
               zip(DEMOS, capsys.readouterr().out.strip().splitlines(), strict=True)}
    top = {name: next((f["code"] for f in r["findings"] if f["severity"] == "fault"), None)
           for name, r in results.items()}
    assert top["01-healthy-ring-with-spurs"] is None
    assert top["02-bridged-ring"] == "interconnection"
    assert top["03-open-cpc"] == "open_conductor"
    assert top["04-unrecorded-spur"] == "unrecorded_spur"
    assert top["05-fused-spurs"] is None


@pytest.mark.parametrize(("content", "expect"), [
    ("{not json", "not valid JSON"),
    (json.dumps({**GOOD, "end_to_end": {"r1": -1, "rn": 0.5, "r2": 0.8}}), "end_to_end.r1"),
    (json.dumps({**GOOD, "outlets": [{"id": "a", "kind": "lamp"}]}), "outlets[0].kind"),
    (json.dumps({"end_to_end": {}}), "circuit"),
    (json.dumps([1, 2]), "record"),
    (json.dumps({**GOOD, "circuit": {**GOOD["circuit"], "ocpd": {"standard": "BS 9999",
                                                                  "rating_a": 32}}}),
     "circuit.ocpd.standard"),
])
def test_bad_input_is_one_line_naming_file_and_field(tmp_path, capsys, content, expect):
    bad = _write(tmp_path, "bad.json", content)
    good = _write(tmp_path, "good.json", GOOD)
    assert main(["diagnose", bad, good]) == 2
    captured = capsys.readouterr()
    err = captured.err.strip().splitlines()
    assert len(err) == 1
    assert err[0].startswith(bad + ":") and expect in err[0]
    assert len(captured.out.strip().splitlines()) == 1  # the good file is still diagnosed


def _reading_literal(literal: str) -> str:
    doc = json.dumps({**GOOD, "outlets": [{"id": "a", "ln": "HERE"}]})
    return doc.replace('"HERE"', literal)


@pytest.mark.parametrize(("content", "expect"), [
    pytest.param("[" * 100_000 + "]" * 100_000, "record: nested more than", id="deep-arrays"),
    pytest.param('{"a":' * 100_000 + "1" + "}" * 100_000, "record: nested more than",
                 id="deep-objects"),
    pytest.param(_reading_literal("1" * 400), "outlets[0].ln: a number of 400 digits is too long",
                 id="400-digit-reading"),
    pytest.param(_reading_literal('"' + "1" * 400 + '"'), "outlets[0].ln: a number of 400",
                 id="400-digit-text-reading"),
    pytest.param(_reading_literal("1" * 5000), "outlets[0].ln: a number of 5000 digits",
                 id="5000-digit-integer"),
    pytest.param(json.dumps({**GOOD, "circuit": {**GOOD["circuit"], "ze_ohm": "ZE"}}).replace(
        '"ZE"', "9" * 5000), "circuit.ze_ohm: a number of 5000 digits", id="5000-digit-ze"),
    pytest.param(_reading_literal('"0_52"'), "outlets[0].ln", id="underscore-digits"),
    pytest.param(_reading_literal("NaN"), "outlets[0].ln", id="nan"),
])
def test_hostile_input_is_one_line_and_exit_2(tmp_path, capsys, content, expect):
    bad = _write(tmp_path, "bad.json", content)
    assert main(["diagnose", bad]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1
    assert err[0].startswith(f"{bad}: {expect}")


def test_not_utf8(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_bytes(b'{"circuit": "\xff"}')
    assert main(["diagnose", str(bad)]) == 2
    assert "not UTF-8" in capsys.readouterr().err


def test_missing_file(capsys):
    assert main(["diagnose", "/nonexistent/ring.json"]) == 2
    assert "cannot read" in capsys.readouterr().err


def test_job_document_with_two_circuits(tmp_path, capsys):
    doc = {"format": "ringtest/1", "job": {"reference": "T-1"},
           "circuits": [GOOD, {**GOOD, "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": "OL"}}]}
    assert main(["diagnose", _write(tmp_path, "job.json", doc)]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["verdict"] == "investigate"
    assert len(result["circuits"]) == 2


def test_module_entry_point_runs_without_traceback(tmp_path):
    bad = _write(tmp_path, "bad.json", json.dumps({**GOOD, "outlets": "x"}))
    deep = _write(tmp_path, "deep.json", "[" * 100_000 + "]" * 100_000)
    long = _write(tmp_path, "long.json", _reading_literal("1" * 400))
    huge = _write(tmp_path, "huge.json", _reading_literal("1" * 5000))
    proc = subprocess.run([sys.executable, "-m", "ringmath", "diagnose", bad, deep, long, huge],
                          capture_output=True, text=True, cwd=ROOT, timeout=60)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert [line.split(": ")[1] for line in lines] == ["outlets", "record", "outlets[0].ln",
                                                         "outlets[0].ln"]
