"""Parts of the records that the browser tests seed (plain data, no fixtures)."""

from __future__ import annotations


def ring_circuit(reference: str, description: str) -> dict:
    """The ``circuit`` part of a seeded record: a 32 A type B ring in 2.5/1.5 mm² with a 30 mA
    RCD on TN-C-S, Ze 0.35 Ω measured (the app's defaults; a typical supply, common practice)."""
    return {"reference": reference, "description": description,
            "ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
            "rcd": {"rated_ma": 30, "type": "A"}, "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5,
            "ze_ohm": 0.35, "ze_source": "measured", "earthing": "TN-C-S"}

