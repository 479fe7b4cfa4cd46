"""The record format: readings, outlets and topology checks, each error naming its field."""

from __future__ import annotations

import math

import numpy as np
import pytest

from ringmath.record import RecordError, parse_document, parse_reading, parse_record
from ringmath.simulate import simulate

CIRCUIT = {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}}


@pytest.mark.parametrize(("raw", "value"), [
    (0.52, 0.52), ("0.52", 0.52), ("0,52", 0.52), (" 1,05 ", 1.05), (0, 0.0),
    ("OL", math.inf), ("ol", math.inf), (None, None), ("", None),
])
def test_readings_parse(raw, value):
    assert parse_reading(raw, "x") == value


@pytest.mark.parametrize(("raw", "kind"), [
    (-0.01, "range"), ("-0,5", "range"), (250, "range"), ("abc", "format"), ("0.5Ω", "format"),
    (True, "type"), ([0.5], "type"), ({"v": 1}, "type"), ("nan", "format"), ("-inf", "format"),
    (math.nan, "format"),
    # strict digits: only ASCII 0-9 with one "." or "," (the underscores Python's float()
    # accepts read "0_52" as 52 ohms)
    ("0_52", "format"), ("1_0", "format"), ("1e3", "format"), ("1.2.3", "format"),
    ("0,5,2", "format"), ("1 2", "format"), ("+0.5", "format"), ("0x10", "format"),
    (".", "format"), ("\u0660\u066b\u0665", "format"),  # Arabic-Indic ٠٫٥
    ("\uff10.\uff15", "format"),  # full-width ０.５
    ("\u0660.5", "format"),
    # too long to convert: refused before any conversion, never an OverflowError
    ("1" * 400, "size"), ("0." + "1" * 400, "size"),
    pytest.param(10 ** 400, "size", id="int-400-digits"),
    pytest.param(-(10 ** 5000), "size", id="int-5000-digits"),
])
def test_bad_readings_name_the_field(raw, kind):
    with pytest.raises(RecordError, match=r"^outlets\[2\]\.ln: ") as caught:
        parse_reading(raw, "outlets[2].ln")
    assert (caught.value.path, caught.value.kind) == ("outlets[2].ln", kind)
    assert isinstance(caught.value, ValueError)


@pytest.mark.parametrize(("raw", "value"), [(".5", 0.5), ("1.", 1.0), ("0,05", 0.05),
                                            (10 ** 2, 100.0), ("007", 7.0)])
def test_plain_ascii_numbers_still_read(raw, value):
    assert parse_reading(raw, "x") == value


@pytest.mark.parametrize(("outlets", "field"), [
    ([{"id": "a"}, {"id": "a"}], r"outlets\[1\]\.id"),
    ([{"id": "a", "spur_from": "b"}, {"id": "b", "spur_from": "a"}], "loop"),
    ([{"id": "a", "kind": "fcu"}], r"outlets\[0\]\.fuse_a"),
    ([{"id": "a", "kind": "fcu", "fuse_a": 4}], r"outlets\[0\]\.fuse_a"),
    ([{"id": "a", "fuse_a": 13}], r"outlets\[0\]\.fuse_a"),
    ([{"kind": "twin_socket"}], r"outlets\[0\]\.id"),
    ([{"id": "a", "spur_csa_mm2": 2.0}], r"outlets\[0\]\.spur_csa_mm2"),
    ([{"id": "x" * 41}], r"outlets\[0\]\.id"),
    ([{"id": "a", "label": "x" * 201}], r"outlets\[0\]\.label"),
    ([{"id": 10 ** 5000}], r"outlets\[0\]\.id"),
    ([{"id": "a"}, {"id": "b", "spur_from": "c"}], r"outlets\[1\]\.spur_from"),
])
def test_bad_outlets(outlets, field):
    with pytest.raises(RecordError, match=field):
        parse_record({"circuit": CIRCUIT, "outlets": outlets})


@pytest.mark.parametrize(("outlets", "kind"), [
    ([{"id": "a"}, {"id": "a"}], "topology"),
    ([{"id": "a", "spur_from": "b"}, {"id": "b", "spur_from": "a"}], "topology"),
    ([{"id": "a", "kind": "fcu"}], "missing"),
    ([{"id": "a", "kind": "fcu", "fuse_a": 4}], "choice"),
    ([{"id": "x" * 41}], "size"),
    ([{"id": f"o{i}"} for i in range(201)], "size"),
    ("x", "type"),
])
def test_outlet_errors_carry_their_kind(outlets, kind):
    with pytest.raises(RecordError) as caught:
        parse_record({"circuit": CIRCUIT, "outlets": outlets})
    assert caught.value.kind == kind
    assert str(caught.value).startswith(caught.value.path + ": ")


def test_deeply_nested_values_are_refused_by_type_not_recursion():
    deep: object = 0.5
    for _ in range(5000):
        deep = [deep]
    nested = {"id": "a", "ln": deep, "label": deep}
    with pytest.raises(RecordError, match=r"^outlets\[0\]\.ln: expected a number, got a list"):
        parse_record({"circuit": CIRCUIT, "outlets": [nested]})


def test_minimal_record_defaults_to_the_common_ring():
    test = parse_record({"circuit": CIRCUIT})
    assert (test.circuit.live_csa_mm2, test.circuit.cpc_csa_mm2) == (2.5, 1.5)
    assert not test.end_to_end.complete()
    assert test.outlets == ()


def test_job_document_lists_its_circuits():
    doc = {"job": {"reference": "X"}, "circuits": [{"circuit": CIRCUIT}, {"circuit": CIRCUIT}]}
    assert len(parse_document(doc)) == 2
    with pytest.raises(ValueError, match=r"circuits\[1\]\.circuit\.ocpd"):
        parse_document({"circuits": [{"circuit": CIRCUIT}, {"circuit": {}}]})


def test_simulator_is_deterministic_for_a_seed_and_makes_valid_records():
    a, ta = simulate(np.random.default_rng(5), "interconnection")
    b, tb = simulate(np.random.default_rng(5), "interconnection")
    assert a == b and ta == tb
    test = parse_record(a)
    assert len(test.outlets) == len(a["outlets"])
    with pytest.raises(ValueError, match="fault"):
        simulate(np.random.default_rng(1), "gremlins")
