"""The live fields through the JSON export and import: exact round trip, bad values refused
with their path and nothing written."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest
import sqlalchemy as sa

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"
TABLES = ("job", "circuit", "outlet", "change_log")


def counts(app) -> dict[str, int]:
    from fieldapp.extensions import db

    with app.app_context():
        return {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"')) for t in TABLES}


def live_document() -> dict:
    doc = json.loads(HANDMADE.read_text())
    doc["job"]["reference"] = "HM-LIVE-1"
    return doc


def test_the_live_fields_survive_export_import_export(make_app, login):
    first_app, second_app = make_app(), make_app()
    first, second = first_app.test_client(), second_app.test_client()
    login(first, "test")
    login(second, "test")
    doc = live_document()
    reply = first.post("/api/jobs/import", json=doc)
    assert reply.status_code == 201, reply.get_data(as_text=True)
    exported = first.get(f"/jobs/{reply.get_json()['job_id']}/export.json").get_json()
    circuit = exported["circuits"][0]["circuit"]
    assert circuit["insulation"] == {"test_v": 500.0, "ln_mohm": ">999", "le_mohm": 200.0,
                                     "ne_mohm": ">299"}
    assert circuit["rcd"]["trip_ms"] == 18.0 and circuit["rcd"]["button_ok"] is True
    assert (circuit["pfc_ka"], circuit["parallel_paths"]) == (1.6, True)
    assert exported["circuits"][1]["circuit"]["cpc_kind"] == "conduit"
    outlet = exported["circuits"][0]["outlets"][1]
    assert (outlet["zs_measured"], outlet["taken_at"], outlet["ln_terminals"],
            outlet["le_terminals"]) == (0.7, "front", 0.26, 0.33)
    again = second.post("/api/jobs/import", json=exported)
    assert again.status_code == 201, again.get_data(as_text=True)
    assert second.get(f"/jobs/{again.get_json()['job_id']}/export.json").get_json() == exported


def _edit(path: str, value):
    doc = live_document()
    target = doc
    keys = path.split(".")
    for key in keys[:-1]:
        target = target[int(key)] if isinstance(target, list) else target[key]
    target[keys[-1]] = value
    return doc


C0 = "circuits.0.circuit"
O1 = "circuits.0.outlets.1"
BAD = [
    (f"{C0}.cpc_kind", "copper", "circuits[0].circuit.cpc_kind:"),
    (f"{C0}.parallel_paths", "yes", "circuits[0].circuit.parallel_paths:"),
    (f"{C0}.pfc_ka", -1, "circuits[0].circuit.pfc_ka:"),
    (f"{C0}.insulation.test_v", 400, "circuits[0].circuit.insulation.test_v:"),
    (f"{C0}.insulation.ln_mohm", "lots", "circuits[0].circuit.insulation.ln_mohm:"),
    (f"{C0}.insulation.le_mohm", ">", "circuits[0].circuit.insulation.le_mohm:"),
    (f"{C0}.insulation.ne_mohm", ">" + "9" * 20, "circuits[0].circuit.insulation.ne_mohm:"),
    (f"{C0}.rcd.trip_ms", "quick", "circuits[0].circuit.rcd.trip_ms:"),
    (f"{C0}.rcd.trip_ms", 9000, "circuits[0].circuit.rcd.trip_ms:"),
    (f"{C0}.rcd.button_ok", "ok", "circuits[0].circuit.rcd.button_ok:"),
    (f"{O1}.zs_measured", -0.4, "circuits[0].outlets[1].zs_measured:"),
    (f"{O1}.zs_measured", "abc", "circuits[0].outlets[1].zs_measured:"),
    (f"{O1}.taken_at", "back", "circuits[0].outlets[1].taken_at:"),
    (f"{O1}.ln_terminals", 900, "circuits[0].outlets[1].ln_terminals:"),
    (f"{O1}.le_terminals", "x", "circuits[0].outlets[1].le_terminals:"),
]


@pytest.mark.parametrize(("path", "value", "expected"), BAD, ids=[f"{p}={v}" for p, v, _ in BAD])
def test_a_bad_live_value_in_a_file_is_refused_with_its_path(app, tester, path, value,
                                                             expected):
    before = counts(app)
    reply = tester.post("/api/jobs/import", json=_edit(path, value))
    assert reply.status_code == 422
    errors = reply.get_json()["errors"]
    assert any(e.startswith(expected) for e in errors), errors
    assert counts(app) == before


def test_the_schema_keeps_structure_ringmath_the_values():
    from fieldapp.transfer.schemas import document_errors

    doc = live_document()
    assert document_errors(doc) == []
    # the schema accepts any number; ringmath refuses a trip time it cannot believe
    slow = copy.deepcopy(doc)
    slow["circuits"][0]["circuit"]["rcd"]["trip_ms"] = 5000
    assert [e.split(":")[0] for e in document_errors(slow)] == [
        "circuits[0].circuit.rcd.trip_ms"]
