"""The test record (format ``ringtest/1``): frozen dataclasses for one ring final circuit and
its readings, and the one definition of the format.

The same JSON document is the app's import/export format and the demo job format.
A circuit record looks like::

    {
      "format": "ringtest/1",                      # optional on input
      "job": {"reference": "J-1001", "site": "...", "client": "...",
              "date": "2026-11-30", "tester": "...", "notes": ""},   # optional
      "circuit": {
        "reference": "DB1/3", "description": "Ground floor sockets",
        "ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
        "rcd": {"rated_ma": 30, "type": "A",         # or null for no RCD
                "trip_ms": 18.4, "button_ok": true},  # optional: trip time at IΔn, ms; button
        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5,
        "cpc_kind": "cable_core",                    # | conduit | trunking | armour | separate
        "parallel_paths": false,                     # parallel earth paths expected (bonding)
        "ze_ohm": 0.35, "ze_source": "measured",     # or "declared"
        "pfc_ka": 1.2,                               # prospective fault current, kA, or null
        "earthing": "TN-C-S", "cable_length_m": null,
        "insulation": {"test_v": 500,                # V d.c.: 250 | 500 | 1000, or null
                       "ln_mohm": ">999", "le_mohm": 200, "ne_mohm": null}   # or null
      },
      "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
      "outlets": [
        {"id": "a", "label": "Kitchen by door", "kind": "twin_socket",
         "spur_from": null, "fuse_a": null, "ln": 0.26, "le": 0.34,
         "taken_at": "front",                        # | "terminals" | null (not said)
         "ln_terminals": null, "le_terminals": null, # re-measured at the terminals
         "zs_measured": 0.68}                        # live Zs at the point, ohms
      ]
    }

Every field after ``ocpd`` is optional; the new ones default to the values shown as ``null``
(``cpc_kind`` "cable_core", ``parallel_paths`` false). A job with several circuits is
``{"format", "job", "circuits": [record, ...]}`` where each record has ``circuit``,
``end_to_end`` and ``outlets``.

Values:

- Readings (``r1``, ``rn``, ``r2``, ``ln``, ``le``, ``ln_terminals``, ``le_terminals``,
  ``zs_measured``) are in ohms: a number from 0 to 200, the string ``"OL"`` (open / over
  range, stored as ``math.inf``) or ``null`` (not taken yet, stored as ``None``).
- Numbers are JSON numbers or text of ASCII digits with one ``.`` or ``,`` as the decimal mark
  (``"0,52"`` is 0.52). ``"0_52"``, ``"1e3"``, other scripts' digits and text over 16
  characters are refused.
- Insulation readings are in MΩ: a number, or ``">999"`` when the instrument shows over range
  (``IrValue(999, over=True)``).
- ``ocpd`` must be a device the tables of ``ringmath.devices`` list (BS EN 60898, BS EN 61009,
  BS 3871 breakers; BS 88-2, BS 88-3, BS 3036, BS 1361, BS 1362 fuses, with their ratings); a
  listed device whose limit could not be checked is still a valid record (its Zs limit is then
  unknown). ``rcd.rated_ma`` one of 6, 10, 30, 100, 300, 500 mA; ``rcd.type`` AC, A, F or B.
- At most MAX_OUTLETS outlets per circuit and MAX_CIRCUITS circuits per job; ids at most 40
  characters, other text 200.

Every parse error is a ``RecordError`` (a ``ValueError``) with ``.path`` (``"outlets[3].ln"``),
``.kind`` (missing, type, range, choice, format, topology, size) and a message that starts
with the path. ``loads`` reads JSON text with the guards a file from outside needs;
``record_document`` writes a parsed record back (``parse_record(record_document(t)) == t``).
"""

from ringmath.record.jsontext import MAX_DEPTH, check_depth, loads
from ringmath.record.model import (
    CPC_KINDS,
    EARTHING_SYSTEMS,
    FCU_FUSE_RATINGS_A,
    FORMAT,
    INSULATION_TEST_V,
    MAX_CIRCUITS,
    MAX_INSULATION_MOHM,
    MAX_OUTLETS,
    MAX_PFC_KA,
    MAX_READING_OHM,
    MAX_TRIP_MS,
    OL,
    OUTLET_KINDS,
    RCD_RATINGS_MA,
    RCD_TYPES,
    SOCKET_KINDS,
    TAKEN_AT,
    ZE_SOURCES,
    Circuit,
    EndToEnd,
    Insulation,
    IrValue,
    Ocpd,
    Outlet,
    Rcd,
    RingTest,
)
from ringmath.record.parse import (
    csa,
    parse_circuit,
    parse_document,
    parse_insulation,
    parse_ocpd,
    parse_outlet,
    parse_rcd,
    parse_record,
)
from ringmath.record.topology import beyond_fcu, check_topology, ring_outlets, ring_root
from ringmath.record.values import (
    KINDS,
    MAX_NUMBER_CHARS,
    OL_SPELLINGS,
    RecordError,
    format_ir,
    format_reading,
    is_ol,
    parse_ir,
    parse_reading,
)
from ringmath.record.write import circuit_document, outlet_document, record_document

__all__ = [
    "CPC_KINDS", "EARTHING_SYSTEMS", "FCU_FUSE_RATINGS_A", "FORMAT", "INSULATION_TEST_V",
    "KINDS", "MAX_CIRCUITS", "MAX_DEPTH", "MAX_INSULATION_MOHM", "MAX_NUMBER_CHARS",
    "MAX_OUTLETS", "MAX_PFC_KA", "MAX_READING_OHM", "MAX_TRIP_MS", "OL", "OL_SPELLINGS",
    "OUTLET_KINDS", "RCD_RATINGS_MA", "RCD_TYPES", "SOCKET_KINDS", "TAKEN_AT", "ZE_SOURCES",
    "Circuit", "EndToEnd", "Insulation", "IrValue", "Ocpd", "Outlet", "Rcd", "RecordError",
    "RingTest", "beyond_fcu", "check_depth", "check_topology", "csa", "format_ir",
    "format_reading", "is_ol", "loads", "parse_circuit", "parse_document", "parse_insulation",
    "parse_ir", "parse_ocpd", "parse_outlet", "parse_rcd", "parse_reading", "parse_record",
    "ring_outlets", "ring_root", "circuit_document", "outlet_document", "record_document",
]
