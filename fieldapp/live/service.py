"""The writes of the live tests, shared by the page's form posts and the JSON API."""

from __future__ import annotations

from fieldapp import changes
from fieldapp.models import Circuit, Outlet

#: The reading names the user sees, per field.
READING_NAMES = {
    "zs_measured": "Measured Zs",
    "ln_terminals": "L–N re-measured at the terminals",
    "le_terminals": "L–CPC re-measured at the terminals",
}


def reading_message(field: str, error: ValueError) -> str:
    """ringmath's parse error in words that name the field (the record path dropped)."""
    text = str(error)
    detail = text.split(": ", 1)[1] if ": " in text else text
    name = READING_NAMES.get(field, field)
    if "below the lowest" in detail:
        return f"{name}: a resistance cannot be negative. Check the reading."
    if "above the highest" in detail:
        return (f"{name}: {detail} Ω. If the instrument shows over-range, tap OL.")
    return (f"{name}: {detail}. Type the reading in ohms, e.g. 0.66, or tap OL if the "
            "instrument shows OL.")


def find_outlet(circuit: Circuit, key: str | None) -> Outlet | None:
    return next((o for o in changes.live_outlets(circuit) if o.key == key), None)


def save_live_reading(circuit: Circuit, field: str, raw, actor: changes.Actor, *,
                      outlet: Outlet, client_id: str | None = None) -> changes.ReadingWrite:
    """Store one live reading through fieldapp.changes (logged, idempotent by client id).

    Refused when the job is locked or safe isolation was never confirmed for the dead tests;
    ValueError naming the field for a bad value (nothing written).
    """
    if field not in changes.LIVE_OUTLET_READINGS:
        raise ValueError(f"step: {field!r} is not one of "
                         f"{', '.join(changes.LIVE_OUTLET_READINGS)}")
    changes.check_ready_for_readings(circuit)
    return changes.set_reading(circuit, field, raw, actor, outlet=outlet, client_id=client_id)
