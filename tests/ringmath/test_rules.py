"""Spur and FCU arrangement rules (BS 7671:2018 Appendix 15 / IET On-Site Guide, from memory):
each rule with a minimal record that breaks it and one that does not."""

import pytest
from ring_records import point, record

from ringmath.record import Circuit, Ocpd, Outlet, RingTest
from ringmath.rules import RULE_CODES, topology_findings


def _codes(outlets, **circuit):
    return [f.code for f in topology_findings(record(outlets, **circuit))]


def _fcu(oid, spur_from=None, fuse_a=13, **fields):
    return point(oid, spur_from, kind="fcu", fuse_a=fuse_a, **fields)


RING = [point("a"), point("b"), point("c")]


@pytest.mark.parametrize(
    ("outlets", "breaks"),
    [
        # One unfused spur per ring point (Appendix 15).
        (RING + [point("s", "a"), point("t", "a")], "spur_per_point"),
        (RING + [point("s", "a"), point("t", "b")], None),
        # A junction box on the ring is a ring point too.
        (RING + [point("j", kind="junction_box"), point("s", "j"), point("t", "j")],
         "spur_per_point"),
        # An FCU on the ring feeds a fused spur: several outlets are allowed beyond it.
        (RING + [_fcu("f"), point("s", "f"), point("t", "f")], None),
        # An unfused spur feeds one single or twin socket or one fixed item.
        (RING + [point("s", "a"), point("t", "s")], "spur_items"),
        (RING + [point("s", "a", kind="single_socket")], None),
        (RING + [point("s", "a"), _fcu("f", "s")], "spur_items"),
        # An FCU on an unfused spur counts as one item; beyond it is a fused spur.
        (RING + [_fcu("f", "a"), point("x", "f"), point("y", "x")], None),
        # No spur off an unfused spur: a branch at a junction box on the spur.
        (RING + [point("j", "a", kind="junction_box"), point("s", "j"), point("t", "j")],
         "spur_from_spur"),
        (RING + [point("j", "a", kind="junction_box"), point("s", "j")], None),
        # Unfused spur cable not smaller than the ring's.
        (RING + [point("s", "a", spur_csa_mm2=1.5)], "spur_csa"),
        (RING + [point("s", "a", spur_csa_mm2=2.5)], None),
        (RING + [point("s", "a", spur_csa_mm2=4)], None),
        # Beyond an FCU at least 1.5 mm² (On-Site Guide, from memory).
        (RING + [_fcu("f", "a"), point("x", "f", kind="fixed_equipment", spur_csa_mm2=1.0)],
         "spur_csa"),
        (RING + [_fcu("f", "a"), point("x", "f", kind="fixed_equipment", spur_csa_mm2=1.5)],
         None),
        # No more unfused spurs than sockets and fixed items on the ring itself.
        ([point("a"), point("b"), point("j", kind="junction_box"), point("s", "a"),
          point("t", "b"), point("u", "j")], "spur_count"),
        ([point("a"), point("b"), point("s", "a"), point("t", "b")], None),
        # A larger FCU fuse downstream of a smaller one protects nothing.
        (RING + [_fcu("f", "a", fuse_a=3), _fcu("g", "f", fuse_a=13)], "fcu_fuse"),
        (RING + [_fcu("f", "a", fuse_a=13), _fcu("g", "f", fuse_a=3)], None),
        # A spur leaves from a socket, junction box or FCU, not a fixed item (common practice).
        (RING + [point("x", kind="fixed_equipment"), _fcu("f", "x")], "spur_from_equipment"),
        (RING + [point("x", kind="fixed_equipment")], None),
    ],
)
def test_rule(outlets, breaks):
    assert _codes(outlets) == ([] if breaks is None else [breaks])


def test_fcu_fuse_above_circuit_rating():
    # A 13 A fuse behind a 10 A circuit device protects nothing the device does not.
    b10 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 10}
    assert _codes(RING + [_fcu("f", "a")], ocpd=b10) == ["fcu_fuse"]
    assert _codes(RING + [_fcu("f", "a", fuse_a=5)], ocpd=b10) == []


def test_findings_are_warnings_with_outlets_and_advice():
    outlets = RING + [point("s", "a", label="Hall"), point("t", "a"), point("u", "t")]
    findings = topology_findings(record(outlets))
    assert sorted(f.code for f in findings) == ["spur_items", "spur_per_point"]
    for f in findings:
        assert f.code in RULE_CODES and f.severity == "warning"
        assert f.message and f.next_check and "a" in f.outlets
    per_point = next(f for f in findings if f.code == "spur_per_point")
    assert per_point.outlets == ("a", "s", "t") and "Hall (s)" in per_point.message
    items = next(f for f in findings if f.code == "spur_items")
    assert items.outlets == ("a", "t", "u")


@pytest.mark.parametrize("fuse_a", [4, 0.5, 32, None])
def test_fuse_rating_not_bs_1362_is_refused(fuse_a):
    # BS 1362 ratings 1, 2, 3, 5, 7, 10, 13 A; records built in code skip the parser's check.
    test = RingTest(circuit=Circuit(ocpd=Ocpd("BS EN 60898", "B", 32)),
                    outlets=(Outlet("a"), Outlet("f", kind="fcu", fuse_a=fuse_a, spur_from="a")))
    with pytest.raises(ValueError, match=r"^outlets\[1\]\.fuse_a:"):
        topology_findings(test)
