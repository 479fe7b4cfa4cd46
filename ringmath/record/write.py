"""A parsed record back to its ``ringtest/1`` document (the inverse of ``parse_record``):
``parse_record(record_document(t)) == t`` for every RingTest the parser makes."""

from __future__ import annotations

from typing import Any

from ringmath.record.model import Circuit, Insulation, Outlet, Rcd, RingTest
from ringmath.record.values import format_ir, format_reading


def _rcd(rcd: Rcd | None) -> dict[str, Any] | None:
    if rcd is None:
        return None
    return {"rated_ma": rcd.rated_ma, "type": rcd.type, "trip_ms": rcd.trip_ms,
            "button_ok": rcd.button_ok}


def _insulation(ins: Insulation | None) -> dict[str, Any] | None:
    if ins is None:
        return None
    return {"test_v": ins.test_v, "ln_mohm": format_ir(ins.ln_mohm),
            "le_mohm": format_ir(ins.le_mohm), "ne_mohm": format_ir(ins.ne_mohm)}


def circuit_document(c: Circuit) -> dict[str, Any]:
    """The ``circuit`` block of a record."""
    return {
        "reference": c.reference, "description": c.description,
        "ocpd": {"standard": c.ocpd.standard, "curve": c.ocpd.curve,
                 "rating_a": c.ocpd.rating_a},
        "rcd": _rcd(c.rcd), "live_csa_mm2": c.live_csa_mm2, "cpc_csa_mm2": c.cpc_csa_mm2,
        "cpc_kind": c.cpc_kind, "parallel_paths": c.parallel_paths,
        "ze_ohm": c.ze_ohm, "ze_source": c.ze_source, "pfc_ka": c.pfc_ka,
        "earthing": c.earthing, "cable_length_m": c.cable_length_m,
        "insulation": _insulation(c.insulation),
    }


def outlet_document(o: Outlet) -> dict[str, Any]:
    """One outlet of a record."""
    return {
        "id": o.id, "label": o.label, "kind": o.kind, "spur_from": o.spur_from,
        "fuse_a": o.fuse_a, "spur_csa_mm2": o.spur_csa_mm2,
        "spur_cpc_csa_mm2": o.spur_cpc_csa_mm2,
        "ln": format_reading(o.ln_ohm), "le": format_reading(o.le_ohm),
        "taken_at": o.taken_at, "ln_terminals": format_reading(o.ln_terminals_ohm),
        "le_terminals": format_reading(o.le_terminals_ohm),
        "zs_measured": format_reading(o.zs_measured_ohm),
    }


def record_document(test: RingTest) -> dict[str, Any]:
    """The whole circuit record as a plain JSON-able dict."""
    e = test.end_to_end
    return {
        "format": "ringtest/1",
        "circuit": circuit_document(test.circuit),
        "end_to_end": {"r1": format_reading(e.r1_ohm), "rn": format_reading(e.rn_ohm),
                       "r2": format_reading(e.r2_ohm)},
        "outlets": [outlet_document(o) for o in test.outlets],
    }
