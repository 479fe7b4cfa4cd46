"""The writes of the live tests, shared by the page's form posts and the JSON API: through
the app's one save path (fieldapp.readings.save_reading), with messages naming the field."""

from __future__ import annotations

from fieldapp import changes, labels, readings
from fieldapp.models import Circuit, Outlet

#: The reading names the user sees, per field, as a sentence starts (fieldapp/labels.py).
READING_NAMES = {field: labels.reading_name(field)[:1].upper() + labels.reading_name(field)[1:]
                 for field in changes.LIVE_OUTLET_READINGS}


def message(field: str, kind: str, raw) -> str:
    """Words for a refused live reading, naming the field (by ringmath's error kind)."""
    name = READING_NAMES.get(field, field)
    shown = f"“{str(raw).strip()}”" if raw not in (None, "") else ""
    if kind == "empty":
        return f"{name}: type the reading in ohms, or tap OL if the instrument shows OL."
    if kind == "range":
        if str(raw).strip().startswith("-"):
            return f"{name}: a resistance cannot be negative. Check the reading."
        return f"{name}: {shown} Ω is above any reading here. If the instrument shows " \
               "over-range, tap OL."
    return (f"{name}: {shown or 'that'} is not a number. Type the reading in ohms, e.g. 0.66, "
            "or tap OL if the instrument shows OL.")


def find_outlet(circuit: Circuit, key: str | None) -> Outlet | None:
    return readings.find_outlet(circuit, key)


def save_live_reading(circuit: Circuit, field: str, raw, actor: changes.Actor, *,
                      outlet: Outlet, client_id: str | None = None) -> changes.ReadingWrite:
    """Store one live reading and commit (logged, idempotent by client id).

    ``changes.Refused`` when the job is locked or safe isolation was never confirmed for the
    dead tests; ``readings.BadReading`` with a message naming the field for a bad value
    (nothing written).
    """
    if field not in changes.LIVE_OUTLET_READINGS:
        raise readings.BadReading(f"Unknown live reading {field!r}.", field="step",
                                  kind="choice")
    try:
        return readings.save_reading(circuit, field, raw, actor, outlet=outlet,
                                     client_id=client_id, keep=True)
    except readings.BadReading as bad:
        if bad.field != "value":
            raise
        raise readings.BadReading(message(field, bad.kind, raw), kind=bad.kind) from bad
