"""The job document schemas on their own: exact round trip and every error with its path."""

from __future__ import annotations

import copy
import datetime as dt
import json
from pathlib import Path

import pytest

from fieldapp.transfer.schemas import (
    DocumentError,
    document_errors,
    dump_document,
    flatten_errors,
    load_document,
)

HANDMADE = Path(__file__).parent / "data" / "transfer_handmade.json"


@pytest.fixture
def doc():
    return json.loads(HANDMADE.read_text())


def test_handmade_document_round_trips_exactly(doc):
    loaded = load_document(doc)
    assert loaded["job"]["date"] == dt.date(2026, 11, 27)
    assert loaded["circuits"][0]["circuit"]["safety"]["confirmed_at"] == dt.datetime(
        2026, 11, 27, 9, 14, 5)
    dumped = dump_document(loaded)
    assert dumped == doc
    # the JSON text too, not only Python equality (1 == 1.0 would hide an int/float change)
    assert json.dumps(dumped, sort_keys=True) == json.dumps(doc, sort_keys=True)


def test_readings_keep_ol_null_and_numbers(doc):
    loaded = load_document(doc)
    second = loaded["circuits"][1]
    assert second["end_to_end"] == {"r1": 0.61, "rn": 0.6, "r2": "OL"}
    assert [(o["ln"], o["le"]) for o in second["outlets"]] == [(0.3, None), (None, "OL")]


def test_sparse_record_gets_every_key_and_then_round_trips():
    sparse = {"job": {"reference": "HM-1", "site": "Unit 4, Tallow Yard"},
              "circuits": [{"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B",
                                                 "rating_a": 32}},
                            "end_to_end": {"r1": "0,52"},
                            "outlets": [{"id": "a", "ln": "ol"}]}]}
    full = dump_document(load_document(sparse))
    assert full["format"] == "ringtest/1"
    assert full["circuits"][0]["end_to_end"] == {"r1": 0.52, "rn": None, "r2": None}
    outlet = full["circuits"][0]["outlets"][0]
    assert outlet["ln"] == "OL" and outlet["le"] is None and outlet["kind"] == "twin_socket"
    assert full["circuits"][0]["circuit"]["safety"]["isolated"] is False
    assert dump_document(load_document(full)) == full


def _set(doc, path, value):
    """Set doc[path...] = value; value DELETE removes the key."""
    *parents, last = path
    target = doc
    for key in parents:
        target = target[key]
    if value is DELETE:
        del target[last]
    else:
        target[last] = value


DELETE = object()
OUT = ("circuits", 0, "outlets")

BAD = [
    # (change, expected "path: message" fragment)
    ((*OUT, 1, "ln"), "abc", "circuits[0].outlets[1].ln: not a number"),
    ((*OUT, 1, "ln"), -0.2, "circuits[0].outlets[1].ln: -0.2 is below the lowest allowed value 0"),
    ((*OUT, 1, "le"), 500, "circuits[0].outlets[1].le: 500 is above the highest allowed value"),
    ((*OUT, 1, "le"), True, "circuits[0].outlets[1].le: not a number"),
    (("circuits", 0, "end_to_end", "r2"), [0.85], "circuits[0].end_to_end.r2: not a number"),
    (("job", "site"), DELETE, "job.site: is required"),
    (("job", "date"), "27/11/2026", "job.date: not a date"),
    (("job", "site"), "x" * 201, "job.site: 1 to 200 characters"),
    ((*OUT, 0, "label"), "y" * 121, "circuits[0].outlets[0].label: at most 120 characters"),
    (("circuits", 0, "circuit", "colour"), "grey", "circuits[0].circuit.colour: unknown field"),
    ((*OUT, 0, "kind"), "socket", "circuits[0].outlets[0].kind: must be one of: twin_socket"),
    ((*OUT, 2, "fuse_a"), 4, "circuits[0].outlets[2].fuse_a: 4 A is not a BS 1362 rating"),
    ((*OUT, 0, "fuse_a"), 13, "circuits[0].outlets[0].fuse_a: only an FCU carries a fuse rating"),
    ((*OUT, 2, "spur_from"), "zz", "circuits[0].outlets[2].spur_from: no outlet with id 'zz'"),
    ((*OUT, 3, "id"), "a", "circuits[0].outlets[3].id: duplicate id 'a'"),
    ((*OUT, 3, "id"), DELETE, "circuits[0].outlets[3].id: is required"),
    (("circuits", 0, "circuit", "ocpd"), None, "circuits[0].circuit.ocpd: may not be null"),
    (("circuits", 0, "circuit", "ocpd", "rating_a"), 0,
     "circuits[0].circuit.ocpd.rating_a: must be one of: 3, 5, 6"),
    # devices the circuit form does not offer are refused the same way on import
    (("circuits", 0, "circuit", "ocpd", "rating_a"), 1e9,
     "circuits[0].circuit.ocpd.rating_a: must be one of"),
    (("circuits", 0, "circuit", "ocpd", "standard"), "BS 9999",
     "circuits[0].circuit.ocpd.standard: must be one of"),
    (("circuits", 0, "circuit", "ocpd", "curve"), "Z",
     "circuits[0].circuit.ocpd.curve: must be one of"),
    (("circuits", 0, "circuit", "ocpd", "curve"), None,
     "circuits[0].circuit.ocpd.curve: a circuit-breaker needs its curve"),
    (("circuits", 0, "circuit", "rcd"), {"rated_ma": 1e9, "type": "A"},
     "circuits[0].circuit.rcd.rated_ma: must be one of: 10, 30, 100, 300 mA"),
    (("circuits", 0, "circuit", "rcd"), {"rated_ma": 30, "type": "Q"},
     "circuits[0].circuit.rcd.type: must be one of"),
    # numbers beyond any float and text too long to be a reading
    (("circuits", 0, "circuit", "ze_ohm"), 10**400, "circuits[0].circuit.ze_ohm: not a number"),
    ((*OUT, 1, "le"), 10**400, "circuits[0].outlets[1].le: not a number"),
    ((*OUT, 1, "ln"), "1" * 400, "circuits[0].outlets[1].ln: not a number"),
    # the form's field lengths and the board's sizes
    (("job", "notes"), "n" * 4001, "job.notes: at most 4000 characters"),
    (("circuits", 0, "outlets"), [{"id": f"o{i}"} for i in range(61)],
     "circuits[0].outlets: at most 60 outlets on one circuit"),
    (("circuits", 0, "circuit", "earthing"), "TN", "circuits[0].circuit.earthing: must be one of"),
    (("circuits", 1, "circuit", "safety", "isolated"), "yes",
     "circuits[1].circuit.safety.isolated: expected true or false"),
    (("circuits", 1, "outlets"), {"id": "a"}, "circuits[1].outlets: expected a list"),
    (("circuits",), [], "circuits: needs at least one circuit"),
    (("format",), "ringtest/9", "format: must be ringtest/1"),
]


@pytest.mark.parametrize(("path", "value", "expected"), BAD,
                         ids=[e for _, _, e in BAD])
def test_bad_value_reported_with_its_path(doc, path, value, expected):
    _set(doc, path, value)
    with pytest.raises(DocumentError) as info:
        load_document(doc)
    assert any(line.startswith(expected) for line in info.value.errors), info.value.errors


@pytest.mark.parametrize("not_a_document", [[], "ringtest/1", 42, None])
def test_not_an_object(not_a_document):
    assert document_errors(not_a_document) == ["document: expected an object"]


def test_every_error_is_reported_once_in_document_order(doc):
    bad = copy.deepcopy(doc)
    _set(bad, (*OUT, 3, "ln"), "x")
    _set(bad, (*OUT, 0, "le"), -1)
    _set(bad, ("circuits", 1, "end_to_end", "r1"), "open-ish")
    _set(bad, ("job", "reference"), DELETE)
    errors = document_errors(bad)
    assert errors == [
        "job.reference: is required",
        "circuits[0].outlets[0].le: -1 is below the lowest allowed value 0",
        "circuits[0].outlets[3].ln: not a number",
        "circuits[1].end_to_end.r1: not a number",
    ]


def test_flatten_errors_names_list_items_and_schema_errors():
    messages = {"circuits": {0: {"outlets": {3: {"ln": ["not a number"]}}}},
                "job": {"_schema": ["expected an object"]}}
    assert flatten_errors(messages) == ["circuits[0].outlets[3].ln: not a number",
                                        "job: expected an object"]
