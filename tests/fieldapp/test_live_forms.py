"""The schedule fields beside the ring test on the circuit form and the live tests page:
cpc kind, parallel paths, fault current, insulation resistance, RCD trip time and button.

Every bad value is refused with a message beside the field it concerns, and the stored row
does not change."""

from __future__ import annotations

import pytest
from sqlalchemy import select

from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit

FORM = {"board": "DB1", "way": "4", "description": "Ground floor sockets",
        "ocpd_standard": "BS EN 60898", "ocpd_curve": "B", "ocpd_rating_a": "32.0",
        "rcd_rated_ma": "30", "rcd_type": "A", "live_csa_mm2": "2.5", "cpc_csa_mm2": "1.5",
        "ze_ohm": "0.35", "ze_source": "measured", "earthing": "TN-C-S", "cable_length_m": "",
        "cpc_kind": "cable_core", "pfc_ka": "", "ir_test_v": "", "ir_ln_mohm": "",
        "ir_le_mohm": "", "ir_ne_mohm": "", "rcd_trip_ms": "", "rcd_button_ok": ""}
GOOD = {"cpc_kind": "conduit", "parallel_paths": "y", "pfc_ka": "1,6", "ir_test_v": "500",
        "ir_ln_mohm": "> 999", "ir_le_mohm": "200", "ir_ne_mohm": ">299",
        "rcd_trip_ms": "18.5", "rcd_button_ok": "yes"}
STORED = {"cpc_kind": "conduit", "parallel_paths": True, "pfc_ka": 1.6, "ir_test_v": 500.0,
          "ir_ln_mohm": ">999", "ir_le_mohm": "200.0", "ir_ne_mohm": ">299",
          "rcd_trip_ms": 18.5, "rcd_button_ok": True}
COLUMNS = tuple(STORED)


def stored(app, circuit_id: int) -> dict:
    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        return {name: getattr(circuit, name) for name in COLUMNS}


def error_beside(page, name: str) -> str:
    control = page.select_one(f'[name="{name}"]')
    assert control is not None, name
    box = control.find_parent(class_="field")
    return " ".join(e.get_text() for e in box.select(".error"))


def test_the_circuit_form_stores_every_schedule_field_and_logs_it(app, tester, make_circuit):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    response = tester.post(f"/jobs/circuits/{cid}/edit", data={**FORM, **GOOD})
    assert response.status_code == 302, response.get_data(as_text=True)[-1500:]
    assert stored(app, cid) == STORED
    with app.app_context():
        logged = {r.field: r.new_value for r in db.session.scalars(select(ChangeLog).where(
            ChangeLog.entity == "circuit", ChangeLog.entity_id == cid))}
    assert logged["ir_ln_mohm"] == ">999" and logged["rcd_button_ok"] == "true"


def test_the_circuit_form_shows_what_is_stored(app, tester, make_circuit, parse):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    tester.post(f"/jobs/circuits/{cid}/edit", data={**FORM, **GOOD})
    page = parse(tester.get(f"/jobs/circuits/{cid}/edit"))
    assert page.select_one('[name="ir_ln_mohm"]')["value"] == ">999"
    assert page.select_one('[name="pfc_ka"]')["value"] == "1.6"
    assert page.select_one('[name="ir_test_v"] option[selected]')["value"] == "500"
    assert page.select_one('[name="parallel_paths"]').has_attr("checked")


# (field, value, words the message beside that field must hold)
BAD = [
    ("cpc_kind", "copper pipe", "Not a valid choice"),
    ("pfc_ka", "lots", "not a number"),
    ("pfc_ka", "-2", "below"),
    ("pfc_ka", "0", "below"),
    ("pfc_ka", "250", "above"),
    ("ir_test_v", "400", "Not a valid choice"),
    ("ir_ln_mohm", "high", "not a number"),
    ("ir_le_mohm", ">", "needs the value"),
    ("ir_ne_mohm", "-5", "below"),
    ("ir_ln_mohm", "1e3", "not a number"),
    ("rcd_trip_ms", "fast", "not a number"),
    ("rcd_trip_ms", "5000", "above"),
    ("rcd_button_ok", "maybe", "Not a valid choice"),
]


@pytest.mark.parametrize(("name", "value", "words"), BAD)
def test_a_bad_value_on_the_circuit_form_names_its_field_and_writes_nothing(
        app, tester, make_circuit, parse, name, value, words):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    before = stored(app, cid)
    response = tester.post(f"/jobs/circuits/{cid}/edit", data={**FORM, **GOOD, name: value})
    assert response.status_code == 422
    assert words.lower() in error_beside(parse(response), name).lower()
    assert stored(app, cid) == before


LIVE_BAD = [row for row in BAD if row[0] not in ("cpc_kind",)]


@pytest.mark.parametrize(("name", "value", "words"), LIVE_BAD)
def test_a_bad_value_on_the_live_page_names_its_field_and_writes_nothing(
        app, tester, make_circuit, parse, name, value, words):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    live = {k: v for k, v in GOOD.items() if k not in ("cpc_kind", "parallel_paths")}
    before = stored(app, cid)
    response = tester.post(f"/circuits/{cid}/live/circuit", data={**live, name: value})
    assert response.status_code == 422
    assert words.lower() in error_beside(parse(response), name).lower()
    assert stored(app, cid) == before


def test_the_live_page_stores_fault_current_insulation_and_rcd(app, tester, make_circuit):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    live = {k: v for k, v in GOOD.items() if k not in ("cpc_kind", "parallel_paths")}
    response = tester.post(f"/circuits/{cid}/live/circuit", data=live)
    assert response.status_code == 302
    # the cpc kind and parallel paths belong to the circuit form and keep their defaults
    assert stored(app, cid) == {**STORED, "cpc_kind": "cable_core", "parallel_paths": False}


@pytest.mark.parametrize("name", ["rcd_trip_ms", "rcd_button_ok"])
def test_an_rcd_result_without_an_rcd_is_refused(app, tester, make_circuit, parse, name):
    cid = make_circuit()
    before = stored(app, cid)
    value = {"rcd_trip_ms": "20", "rcd_button_ok": "yes"}[name]
    response = tester.post(f"/circuits/{cid}/live/circuit", data={name: value})
    assert response.status_code == 422
    assert "No RCD is recorded" in error_beside(parse(response), name)
    assert stored(app, cid) == before
    form = {**FORM, "rcd_rated_ma": "", "rcd_type": "", name: value}
    response = tester.post(f"/jobs/circuits/{cid}/edit", data=form)
    assert response.status_code == 422
    assert "No RCD is recorded" in error_beside(parse(response), name)
    assert stored(app, cid) == before


def test_a_supervisor_cannot_post_live_results(app, supervisor, make_circuit):
    cid = make_circuit(rcd_rated_ma=30.0, rcd_type="A")
    before = stored(app, cid)
    assert supervisor.post(f"/circuits/{cid}/live/circuit",
                           data={"rcd_trip_ms": "20"}).status_code == 403
    assert stored(app, cid) == before
