"""The record format: readings, outlets and topology checks, each error naming its field."""

from __future__ import annotations

import math

import numpy as np
import pytest

from ringmath.record import parse_document, parse_reading, parse_record
from ringmath.simulate import simulate

CIRCUIT = {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}}


@pytest.mark.parametrize(("raw", "value"), [
    (0.52, 0.52), ("0.52", 0.52), ("0,52", 0.52), (" 1,05 ", 1.05), (0, 0.0),
    ("OL", math.inf), ("ol", math.inf), (None, None), ("", None),
])
def test_readings_parse(raw, value):
    assert parse_reading(raw, "x") == value


@pytest.mark.parametrize("raw", [-0.01, "abc", "0.5Ω", 250, True, [0.5], "nan", "-inf"])
def test_bad_readings_name_the_field(raw):
    with pytest.raises(ValueError, match=r"^outlets\[2\]\.ln"):
        parse_reading(raw, "outlets[2].ln")


@pytest.mark.parametrize(("outlets", "field"), [
    ([{"id": "a"}, {"id": "a"}], r"outlets\[1\]\.id"),
    ([{"id": "a", "spur_from": "b"}, {"id": "b", "spur_from": "a"}], "loop"),
    ([{"id": "a", "kind": "fcu"}], r"outlets\[0\]\.fuse_a"),
    ([{"id": "a", "kind": "fcu", "fuse_a": 4}], r"outlets\[0\]\.fuse_a"),
    ([{"id": "a", "fuse_a": 13}], r"outlets\[0\]\.fuse_a"),
    ([{"kind": "twin_socket"}], r"outlets\[0\]\.id"),
    ([{"id": "a", "spur_csa_mm2": 2.0}], r"outlets\[0\]\.spur_csa_mm2"),
])
def test_bad_outlets(outlets, field):
    with pytest.raises(ValueError, match=field):
        parse_record({"circuit": CIRCUIT, "outlets": outlets})


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
