"""The RCD test: trip time at IΔn against the product standard's limit, and the test button.

Limit (checked data, ``ringmath/data/rcd_trip_times.csv``): a general (non-delay) RCD to
BS EN 61008-1 / BS EN 61009-1 trips within 300 ms at its rated residual current IΔn; the same
time is used for types F and B (BS EN 62423, from memory). Time-delayed (type S) RCDs are not
modelled: their window is 130-500 ms at IΔn, so a recorded S type would need its own field.
BS 7671:2018+A2:2022 Regulation 643.8 also deems additional protection verified by a trip within
40 ms at 5 × IΔn; the record carries the IΔn test only.
"""

from __future__ import annotations

from typing import Any

from ringmath.findings import Finding
from ringmath.record import RingTest
from ringmath.tables import RCD_TRIP, RcdTripRow


def trip_limit(rcd_type: str | None) -> RcdTripRow:
    """The trip-time row for an RCD of ``rcd_type`` (AC, A, F, B; None: a general type)."""
    for row in RCD_TRIP:
        if rcd_type is None or rcd_type in row.types:
            return row
    raise ValueError(f"circuit.rcd.type: no trip-time limit for type {rcd_type!r}")


def rcd_result(test: RingTest) -> dict[str, Any] | None:
    """{"rated_ma", "type", "trip_ms", "max_trip_ms", "trip_ok", "button_ok", "source"} or None
    for a circuit without an RCD; trip_ok is None until a trip time is recorded."""
    rcd = test.circuit.rcd
    if rcd is None:
        return None
    row = trip_limit(rcd.type)
    return {"rated_ma": rcd.rated_ma, "type": rcd.type, "trip_ms": rcd.trip_ms,
            "max_trip_ms": row.max_trip_ms,
            "trip_ok": None if rcd.trip_ms is None else rcd.trip_ms <= row.max_trip_ms,
            "button_ok": rcd.button_ok,
            "source": f"{row.standard}: {row.max_trip_ms:g} ms at {row.test} ({row.edition})"}


def rcd_findings(result: dict[str, Any] | None) -> list[Finding]:
    """"rcd_slow" (fault) over the limit; "rcd_button" (fault when the button did not trip it,
    warning when not checked once the trip time is in)."""
    if result is None:
        return []
    out = []
    if result["trip_ok"] is False:
        out.append(Finding(
            code="rcd_slow", severity="fault",
            message=(f"The {result['rated_ma']:g} mA RCD tripped in {result['trip_ms']:g} ms at "
                     f"IΔn, over the {result['max_trip_ms']:g} ms limit for its type."),
            next_check=("Repeat the test on both half-cycles with all loads disconnected; an RCD "
                        "that is still slow must be replaced.")))
    if result["button_ok"] is False:
        out.append(Finding(
            code="rcd_button", severity="fault",
            message="The RCD did not trip when its test button was pressed.",
            next_check="Replace the RCD; re-test after replacement."))
    elif result["button_ok"] is None and result["trip_ms"] is not None:
        out.append(Finding(
            code="rcd_button", severity="warning",
            message="The RCD's test button has not been recorded as checked.",
            next_check="Press the test button and record that the RCD tripped."))
    return out
