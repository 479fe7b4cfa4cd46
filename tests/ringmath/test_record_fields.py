"""The record's live-test and insulation fields: bad input per field, and a round trip."""

from __future__ import annotations

import copy
import math

import pytest

from ringmath.record import (
    IrValue,
    RecordError,
    check_depth,
    loads,
    parse_record,
    record_document,
)

B32 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}
FULL = {
    "circuit": {
        "reference": "DB1/3", "description": "Sockets", "ocpd": B32,
        "rcd": {"rated_ma": 30, "type": "A", "trip_ms": 18.4, "button_ok": True},
        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "cpc_kind": "conduit", "parallel_paths": True,
        "ze_ohm": 0.35, "ze_source": "measured", "pfc_ka": 1.2, "earthing": "TN-C-S",
        "cable_length_m": 70.0,
        "insulation": {"test_v": 500, "ln_mohm": ">999", "le_mohm": 200.0, "ne_mohm": None},
    },
    "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
    "outlets": [
        {"id": "a", "label": "Hall", "kind": "twin_socket", "spur_from": None, "fuse_a": None,
         "spur_csa_mm2": None, "spur_cpc_csa_mm2": None, "ln": 0.26, "le": 0.39,
         "taken_at": "front", "ln_terminals": None, "le_terminals": 0.34, "zs_measured": 0.68},
        {"id": "b", "label": "", "kind": "fcu", "spur_from": None, "fuse_a": 13.0,
         "spur_csa_mm2": None, "spur_cpc_csa_mm2": None, "ln": 0.26, "le": 0.35,
         "taken_at": "terminals", "ln_terminals": 0.25, "le_terminals": None,
         "zs_measured": "OL"},
    ],
}


def _with(path: str, value):
    """FULL with one field set (``path`` like "circuit.rcd.trip_ms" or "outlets.0.taken_at")."""
    doc = copy.deepcopy(FULL)
    *head, last = path.split(".")
    node = doc
    for key in head:
        node = node[int(key)] if key.isdigit() else node[key]
    node[int(last) if last.isdigit() else last] = value
    return doc


def test_new_fields_parse():
    t = parse_record(FULL)
    c = t.circuit
    assert (c.cpc_kind, c.parallel_paths, c.pfc_ka) == ("conduit", True, 1.2)
    assert (c.rcd.trip_ms, c.rcd.button_ok) == (18.4, True)
    assert c.insulation.test_v == 500
    assert c.insulation.ln_mohm == IrValue(999.0, over=True)
    assert c.insulation.le_mohm == IrValue(200.0, over=False)
    assert c.insulation.ne_mohm is None
    a, b = t.outlets
    assert (a.taken_at, a.le_terminals_ohm, a.zs_measured_ohm) == ("front", 0.34, 0.68)
    assert math.isinf(b.zs_measured_ohm)
    # the terminal re-measure is the reading judged; without one, the reading as taken
    assert (a.le_used_ohm, a.ln_used_ohm) == (0.34, 0.26)
    assert (b.le_used_ohm, b.ln_used_ohm) == (0.35, 0.25)


def test_defaults_are_backward_compatible():
    c = parse_record({"circuit": {"ocpd": B32, "rcd": {"rated_ma": 30}}}).circuit
    assert (c.cpc_kind, c.parallel_paths, c.pfc_ka, c.insulation) == ("cable_core", False, None,
                                                                      None)
    assert (c.rcd.trip_ms, c.rcd.button_ok, c.rcd.type) == (None, None, None)


def test_round_trip_is_exact():
    t = parse_record(FULL)
    doc = record_document(t)
    assert parse_record(doc) == t
    assert doc["circuit"] == {**FULL["circuit"], "insulation": {
        "test_v": 500.0, "ln_mohm": ">999", "le_mohm": 200.0, "ne_mohm": None}}
    assert doc["outlets"] == FULL["outlets"]
    assert doc["end_to_end"] == FULL["end_to_end"]


@pytest.mark.parametrize(("path", "value", "kind"), [
    ("circuit.cpc_kind", "steel", "choice"),
    ("circuit.cpc_kind", 3.5, "type"),
    ("circuit.parallel_paths", "yes", "type"),
    ("circuit.parallel_paths", 1, "type"),
    ("circuit.pfc_ka", -1, "range"),
    ("circuit.pfc_ka", 0, "range"),
    ("circuit.pfc_ka", 1000, "range"),
    ("circuit.pfc_ka", "1_2", "format"),
    ("circuit.insulation", "200", "type"),
    ("circuit.insulation.test_v", 600, "choice"),
    ("circuit.insulation.test_v", "five hundred", "format"),
    ("circuit.insulation.ln_mohm", ">", "format"),
    ("circuit.insulation.ln_mohm", ">abc", "format"),
    ("circuit.insulation.le_mohm", -1, "range"),
    ("circuit.insulation.le_mohm", 1e9, "range"),
    ("circuit.insulation.ne_mohm", [200], "type"),
    ("circuit.insulation.ne_mohm", "<0.5", "format"),
    ("circuit.rcd.trip_ms", -1, "range"),
    ("circuit.rcd.trip_ms", 5000, "range"),
    ("circuit.rcd.trip_ms", "18_4", "format"),
    ("circuit.rcd.button_ok", "yes", "type"),
    ("circuit.rcd.rated_ma", 1e9, "range"),
    ("circuit.rcd.rated_ma", 25, "choice"),
    ("circuit.rcd.rated_ma", None, "missing"),
    ("circuit.rcd.type", "Z", "choice"),
    ("circuit.ocpd.curve", "Z", "choice"),
    ("circuit.ocpd.rating_a", 1e9, "range"),
    ("circuit.ocpd.rating_a", 33, "choice"),
    ("circuit.ocpd.standard", "BS 9999", "choice"),
    ("outlets.0.zs_measured", "x", "format"),
    ("outlets.0.zs_measured", -0.1, "range"),
    ("outlets.0.taken_at", "back", "choice"),
    ("outlets.0.ln_terminals", -1, "range"),
    ("outlets.0.le_terminals", "0_3", "format"),
    ("outlets.1.le_terminals", True, "type"),
])
def test_bad_new_fields_name_the_field(path, value, kind):
    with pytest.raises(RecordError) as caught:
        parse_record(_with(path, value))
    want = path.replace(".0.", "[0].").replace(".1.", "[1].")
    assert caught.value.path.startswith(want)
    assert caught.value.kind == kind
    assert str(caught.value).startswith(caught.value.path + ": ")


def test_loads_refuses_deep_nesting_before_parsing():
    with pytest.raises(RecordError) as caught:
        loads("[" * 100_000 + "]" * 100_000)
    assert (caught.value.path, caught.value.kind) == ("record", "size")
    assert "line 1, column 21" in str(caught.value)
    with pytest.raises(RecordError, match="nested more than"):
        loads('{"a":' * 50 + "1" + "}" * 50)
    # brackets inside strings do not count, and a real record is shallow
    check_depth('{"label": "' + "[" * 100 + '"}')
    assert loads('{"a": [[1]]}') == {"a": [[1]]}


@pytest.mark.parametrize("literal", ["1" * 400, "1" * 5000, "0." + "5" * 400, "1" * 17])
def test_loads_keeps_huge_numbers_for_the_field_to_refuse(literal):
    doc = loads('{"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", '
                '"rating_a": 32}}, "outlets": [{"id": "a", "ln": ' + literal + "}]}")
    with pytest.raises(RecordError) as caught:
        parse_record(doc)
    assert (caught.value.path, caught.value.kind) == ("outlets[0].ln", "size")
