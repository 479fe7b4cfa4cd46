"""Insulation resistance against BS 7671 Table 64 and the RCD trip time against BS EN 61008-1 /
61009-1, each table row against an independent statement of it."""

from __future__ import annotations

import pytest
from ring_records import point, record

from ringmath import insulation, rcd, zs
from ringmath.diagnose import diagnose
from ringmath.tables import INSULATION, RCD_TRIP

#: BS 7671:2018+A2:2022 Table 64 (Regulation 643.3.2), the same values as IEC 60364-6: SELV and
#: PELV 250 V d.c. 0.5 MΩ; up to and including 500 V 500 V d.c. 1.0 MΩ; above 500 V 1000 V
#: d.c. 1.0 MΩ.
TABLE_64 = [(50, 250, 0.5), (500, 500, 1.0), (1000, 1000, 1.0)]


def test_every_table_64_row():
    assert [(r.nominal_max_v, r.test_v, r.min_mohm) for r in INSULATION] == TABLE_64
    assert all(r.where_checked and "Table 64" in r.table for r in INSULATION)
    # a 230 V ring final circuit is tested at 500 V and needs 1.0 MΩ
    assert (insulation.band().test_v, insulation.band().min_mohm) == (500, 1.0)
    assert insulation.band(24).min_mohm == 0.5


def test_rcd_trip_row():
    # General (non-delay) RCDs to BS EN 61008-1 / 61009-1 trip within 300 ms at IΔn.
    (row,) = RCD_TRIP
    assert (row.max_trip_ms, row.test, set(row.types)) == (300, "1 × IΔn", {"AC", "A", "F", "B"})
    assert row.where_checked


def _ins(**values):
    return record([point("a", le=0.34)], insulation={"test_v": 500, **values})


@pytest.mark.parametrize(("values", "all_ok", "codes"), [
    ({"ln_mohm": ">999", "le_mohm": ">999", "ne_mohm": 200}, True, []),
    ({"ln_mohm": 1.0, "le_mohm": ">999", "ne_mohm": ">999"}, True, []),       # at the minimum
    ({"ln_mohm": 0.8, "le_mohm": ">999", "ne_mohm": ">999"}, False, ["insulation_low"]),
    ({"ln_mohm": ">999", "le_mohm": 0.05, "ne_mohm": None}, False, ["insulation_low"]),
    ({"ln_mohm": ">999", "le_mohm": None, "ne_mohm": ">999"}, None, []),
    ({"ln_mohm": ">0.5", "le_mohm": ">999", "ne_mohm": ">999"}, None, []),   # at least 0.5
])
def test_insulation_against_table_64(values, all_ok, codes):
    summary = zs.point_values(_ins(**values))[0]
    assert summary["insulation"]["all_ok"] is all_ok
    assert summary["insulation"]["min_mohm"] == 1.0
    found = [f.code for f in zs.zs_findings(_ins(**values)) if f.code.startswith("insulation")]
    assert found == codes


def test_insulation_test_voltage_below_the_band():
    test = record([point("a", le=0.34)],
                  insulation={"test_v": 250, "ln_mohm": 50, "le_mohm": 50, "ne_mohm": 50})
    assert zs.point_values(test)[0]["insulation"]["all_ok"] is None
    assert "insulation_test_voltage" in [f.code for f in zs.zs_findings(test)]


def test_insulation_readings_round_trip_in_the_result():
    result = zs.point_values(_ins(ln_mohm=">999", le_mohm=200, ne_mohm=None))[0]["insulation"]
    assert result["readings"] == {"ln": ">999", "le": 200.0, "ne": None}
    assert "Table 64" in result["source"]


def _rcd(**fields):
    return record([point("a", le=0.34)], rcd={"rated_ma": 30, "type": "A", **fields})


@pytest.mark.parametrize(("fields", "trip_ok", "codes"), [
    ({"trip_ms": 18.4, "button_ok": True}, True, []),
    ({"trip_ms": 300, "button_ok": True}, True, []),      # at the limit
    ({"trip_ms": 310, "button_ok": True}, False, [("rcd_slow", "fault")]),
    ({"trip_ms": 20, "button_ok": None}, True, [("rcd_button", "warning")]),
    ({"trip_ms": 20, "button_ok": False}, True, [("rcd_button", "fault")]),
    ({}, None, []),
])
def test_rcd_trip_time_and_button(fields, trip_ok, codes):
    test = _rcd(**fields)
    result = zs.point_values(test)[0]["rcd"]
    assert result["trip_ok"] is trip_ok and result["max_trip_ms"] == 300
    assert [(f.code, f.severity) for f in zs.zs_findings(test)
            if f.code.startswith("rcd_")] == codes


def test_no_rcd_no_result():
    assert zs.point_values(record([point("a", le=0.34)]))[0]["rcd"] is None
    assert rcd.rcd_findings(None) == [] and insulation.insulation_findings(None) == []


def test_diagnose_reports_insulation_and_rcd_on_the_circuit():
    doc = {"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                       "ze_ohm": 0.35, "rcd": {"rated_ma": 30, "type": "A", "trip_ms": 350,
                                               "button_ok": True},
                       "insulation": {"test_v": 500, "ln_mohm": 0.4, "le_mohm": ">999",
                                      "ne_mohm": ">999"}},
           "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
           "outlets": [{"id": "a", "ln": 0.26, "le": 0.34}]}
    result = diagnose(doc)
    assert result["circuit"]["insulation"]["all_ok"] is False
    assert result["circuit"]["rcd"]["trip_ok"] is False
    codes = {f["code"] for f in result["findings"]}
    assert {"insulation_low", "rcd_slow"} <= codes
    assert result["verdict"] != "satisfactory"
