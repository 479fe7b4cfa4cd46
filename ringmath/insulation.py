"""Insulation resistance of the circuit against BS 7671 Table 64 (checked data,
``ringmath/data/insulation_min.csv``).

A ring final circuit on a 230 V supply is in the "up to and including 500 V" band: tested at
500 V d.c., satisfactory at 1.0 MΩ or more between live conductors and between live conductors
and the protective conductor (BS 7671:2018+A2:2022 Table 64, Regulation 643.3.2). A reading the
instrument showed as "> N" is at least N MΩ: it passes when N reaches the minimum and is unknown
otherwise. A test voltage below the band's is a warning: the reading does not prove the
insulation at the stress the table asks for.
"""

from __future__ import annotations

from typing import Any

from ringmath.findings import Finding
from ringmath.record import Insulation, IrValue, RingTest, format_ir
from ringmath.tables import INSULATION, InsulationRow

#: Nominal voltage of the circuits this tool checks, V a.c. (U0 of a UK supply).
NOMINAL_V = 230.0
PAIRS = {"ln": "line–neutral", "le": "line–earth", "ne": "neutral–earth"}


def band(nominal_v: float = NOMINAL_V) -> InsulationRow:
    """The Table 64 row for a circuit of ``nominal_v`` volts."""
    for row in INSULATION:
        if nominal_v <= row.nominal_max_v:
            return row
    return INSULATION[-1]


def _judge(value: IrValue | None, min_mohm: float) -> bool | None:
    if value is None:
        return None
    if value.value_mohm >= min_mohm:
        return True
    return None if value.over else False


def insulation_result(test: RingTest) -> dict[str, Any] | None:
    """{"test_v", "required_test_v", "min_mohm", "readings": {"ln"|"le"|"ne": value},
    "ok": {"ln"|"le"|"ne": True | False | None}, "all_ok": True | False | None, "source"}, or
    None when no insulation test is recorded. all_ok is False when any reading is low, None when
    any is missing or the test voltage is below the band's."""
    ins: Insulation | None = test.circuit.insulation
    if ins is None:
        return None
    row = band()
    values = {"ln": ins.ln_mohm, "le": ins.le_mohm, "ne": ins.ne_mohm}
    ok = {k: _judge(v, row.min_mohm) for k, v in values.items()}
    low_voltage = ins.test_v is not None and ins.test_v < row.test_v
    judged = list(ok.values())
    if False in judged:
        all_ok: bool | None = False
    elif None in judged or ins.test_v is None or low_voltage:
        all_ok = None
    else:
        all_ok = True
    return {"test_v": ins.test_v, "required_test_v": row.test_v, "min_mohm": row.min_mohm,
            "readings": {k: format_ir(v) for k, v in values.items()}, "ok": ok,
            "all_ok": all_ok,
            "source": f"{row.edition} {row.table}, {row.band}: {row.min_mohm:g} MΩ at "
                      f"{row.test_v:g} V d.c."}


def insulation_findings(result: dict[str, Any] | None) -> list[Finding]:
    """"insulation_low" (fault) per low pair; "insulation_test_voltage" (warning) when tested
    below the band's voltage."""
    if result is None:
        return []
    out = []
    low = [k for k, v in result["ok"].items() if v is False]
    if low:
        words = ", ".join(f"{PAIRS[k]} {result['readings'][k]} MΩ" for k in low)
        out.append(Finding(
            code="insulation_low", severity="fault",
            message=(f"Insulation resistance below the {result['min_mohm']:g} MΩ minimum of "
                     f"BS 7671 Table 64: {words}. The insulation may be damaged, damp or a "
                     "connected load or accessory is still in circuit."),
            next_check=("Check that all loads, lamps and electronic accessories are disconnected, "
                        "then split the circuit and re-test each part to find the low one.")))
    if result["test_v"] is not None and result["test_v"] < result["required_test_v"]:
        out.append(Finding(
            code="insulation_test_voltage", severity="warning",
            message=(f"Insulation tested at {result['test_v']:g} V; BS 7671 Table 64 asks for "
                     f"{result['required_test_v']:g} V d.c. for this circuit."),
            next_check=("Re-test at the table's voltage once sensitive equipment is "
                        "disconnected.")))
    return out
