"""Stored text <-> record values for the live tests and the rest of the schedule.

No judgement here: ringmath parses every value (readings with ``parse_reading``, the circuit's
new fields with ``parse_circuit``) and these helpers only move the parsed value between the
record form (numbers, ``"OL"``, ``">999"``) and the text the columns keep.
"""

from __future__ import annotations

import math

from ringmath import parse_reading
from ringmath import record as rec

#: Where the cpc runs, as the record format names it, with the words the form shows.
CPC_KIND_LABELS = {
    "cable_core": "A core of the cable (twin and earth)",
    "conduit": "Metallic conduit",
    "trunking": "Metallic trunking",
    "armour": "Cable armour",
    "separate": "A separate cpc conductor",
}
CPC_KINDS = rec.CPC_KINDS
#: Where an outlet's readings were taken: at the socket front (plug-in lead) or the terminals.
TAKEN_AT = rec.TAKEN_AT
TAKEN_AT_LABELS = {"front": "at the front (plug-in lead)", "terminals": "at the terminals"}
#: Insulation readings of the record: record key -> circuit column.
IR_COLUMNS = {"ln_mohm": "ir_ln_mohm", "le_mohm": "ir_le_mohm", "ne_mohm": "ir_ne_mohm"}
#: A valid OCPD so that one circuit field can be put through ringmath's circuit parser alone.
_PROBE_OCPD = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}


def reading_text(raw, path: str) -> str | None:
    """A reading ("0.52", "0,52", "OL", a number, None) as stored; ValueError naming path."""
    value = parse_reading(raw, path)
    if value is None:
        return None
    return "OL" if math.isinf(value) else repr(round(float(value), 4))


def _ir_text(value) -> str | None:
    """ringmath's parsed insulation value (IrValue) as stored: "200" or ">999"."""
    shown = rec.format_ir(value)
    return shown if shown is None or isinstance(shown, str) else repr(float(shown))


def parse_circuit_fields(values: dict, path: str = "circuit") -> dict:
    """The new circuit fields of a record block, parsed by ringmath, as column values.

    ``values`` holds record keys (any subset of cpc_kind, parallel_paths, pfc_ka, insulation,
    rcd); ValueError whose message starts with the field's path, e.g.
    ``circuit.insulation.ln_mohm: ...``.
    """
    doc = {"ocpd": _PROBE_OCPD, **values}
    parsed = rec.parse_circuit(doc, path)
    insulation, rcd = parsed.insulation, parsed.rcd
    return {
        "cpc_kind": parsed.cpc_kind, "parallel_paths": parsed.parallel_paths,
        "pfc_ka": parsed.pfc_ka,
        "ir_test_v": insulation.test_v if insulation else None,
        **{column: _ir_text(getattr(insulation, key)) if insulation else None
           for key, column in IR_COLUMNS.items()},
        "rcd_trip_ms": rcd.trip_ms if rcd else None,
        "rcd_button_ok": rcd.button_ok if rcd else None,
    }


def live_circuit_fields(block: dict) -> dict:
    """The new circuit columns from a record's ``circuit`` block (already checked)."""
    keys = ("cpc_kind", "parallel_paths", "pfc_ka", "insulation", "rcd")
    return parse_circuit_fields({k: block[k] for k in keys if block.get(k) is not None})
