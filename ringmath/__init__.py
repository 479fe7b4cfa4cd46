"""ringmath: the computation core for the three-step ring final circuit continuity test.

Pure functions over frozen dataclasses: no Flask, no database, no I/O outside the CLI.
"""

from ringmath.record import (
    FORMAT,
    OL,
    Circuit,
    EndToEnd,
    Ocpd,
    Outlet,
    Rcd,
    RingTest,
    parse_document,
    parse_reading,
    parse_record,
)

__all__ = [
    "FORMAT",
    "OL",
    "Circuit",
    "EndToEnd",
    "Ocpd",
    "Outlet",
    "Rcd",
    "RingTest",
    "parse_document",
    "parse_reading",
    "parse_record",
]
