"""Saving a reading: the one write path the form view and the JSON API both call.

``save_reading`` checks that the circuit is ready (job editable, safe isolation confirmed),
refuses an empty value, asks about a slipped decimal point, parses and stores through
``fieldapp.changes.set_reading`` (idempotent on the client id, logged old -> new), moves the
circuit's resume point and commits. Callers turn the two errors into their own answer: a
``changes.Refused`` (state does not allow the write) and a ``BadReading`` (the value, with a
message meant for the person who typed it).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass
from decimal import Decimal

from fieldapp import changes
from fieldapp.extensions import db
from fieldapp.models import STEPS, Circuit, Outlet
from fieldapp.records import circuit_record
from ringmath import parse_reading, parse_record
from ringmath.checks import reading_checks

log = logging.getLogger(__name__)

EMPTY_MESSAGE = "Type the reading in ohms, or tap OL if the meter shows OL."


@dataclass(frozen=True)
class Slip:
    """A reading ten times or a tenth of what the others predict: the decimal point probably
    slipped. ``typed`` and ``suggested`` are the texts to offer ("3.9", "0.39")."""

    typed: str
    suggested: str
    expected_ohm: float

    @property
    def question(self) -> str:
        return f"Decimal point slipped? {self.suggested} / keep {self.typed}"


class BadReading(ValueError):
    """A reading not stored; ``message`` is for the form, ``field`` the input it concerns,
    ``kind`` ringmath's error kind ("format", "range", ...) or "empty" / "slip"."""

    def __init__(self, message: str, *, field: str = "value", kind: str = "format",
                 slip: Slip | None = None):
        super().__init__(message)
        self.message, self.field, self.kind, self.slip = message, field, kind, slip


def step_of(field: str) -> str:
    """The step page a reading belongs to: "e2e" for r1, rn, r2; else the field."""
    return "e2e" if field in changes.CIRCUIT_READINGS else field


def anchor_for(field: str, key: str | None) -> str:
    """The id of a reading's card on its step page ("r-ln-c", "r-r1")."""
    return f"r-{field}-{key}" if key else f"r-{field}"


def find_outlet(circuit: Circuit, key: str | None) -> Outlet | None:
    """A live outlet of the circuit by its key, or None."""
    return next((o for o in changes.live_outlets(circuit) if o.key == key), None)


def next_anchor(circuit: Circuit, step: str) -> str | None:
    """The card of the first reading still due on a step page, or None when all are in."""
    if step == "e2e":
        due = [f for f in changes.CIRCUIT_READINGS if getattr(circuit, f) is None]
        return anchor_for(due[0], None) if due else None
    due = [o.key for o in changes.live_outlets(circuit) if getattr(o, step) is None]
    return anchor_for(step, due[0]) if due else None


def note_progress(circuit: Circuit, step: str, who: changes.Actor) -> None:
    """A reading at a later step moves the resume point there (logged like any change)."""
    if STEPS.index(step) > STEPS.index(circuit.current_step):
        changes.update(circuit, {"current_step": step}, who)


def error_kind(error: ValueError) -> str:
    """ringmath's kind of a parse error ("format", "range", ...: ``RecordError.kind``)."""
    return str(getattr(error, "kind", None) or "format")


def reading_message(error: ValueError, raw=None) -> str:
    """A parse error in plain words for the person who typed the reading."""
    kind = error_kind(error)
    shown = f"“{str(raw).strip()}”" if raw not in (None, "") else "That"
    if kind == "range":
        number = _number(raw)
        if number is not None and number < 0:
            return "A resistance cannot be negative. Check the reading and the meter's leads."
        return (f"{shown} Ω is far above any ring reading. If the meter shows over-range, "
                "tap OL.")
    return (f"{shown} is not a number. Type the meter reading in ohms, e.g. 0.52, or tap OL "
            "if the meter shows OL.")


def _number(raw) -> float | None:
    try:
        return float(str(raw).strip().replace(",", "."))
    except (TypeError, ValueError):
        return None


def _shifted(value: float, places: int) -> str:
    """The value with its decimal point moved ``places`` to the left, as plain text."""
    text = format(Decimal(repr(round(value, 4))).scaleb(-places).normalize(), "f")
    return text


def check_slip(circuit: Circuit, field: str, value_ohm: float | None,
               outlet: Outlet | None) -> Slip | None:
    """A Slip when ``value_ohm`` is out of its band and the same digits with the decimal point
    one place left or right fall inside it (within 25 % of the expected value when no band is
    known). The band is ringmath's, from the other readings with this one in place."""
    if value_ohm is None or value_ohm <= 0 or math.isinf(value_ohm):
        return None
    entry = _expectation(circuit, field, value_ohm, outlet)
    if entry is None or not entry.get("expected_ohm"):
        return None
    expected = float(entry["expected_ohm"])
    low, high = entry.get("low_ohm"), entry.get("high_ohm")

    def fits(x: float) -> bool:
        if low is not None and high is not None:
            return low <= x <= high
        return abs(x / expected - 1) <= 0.25

    if fits(value_ohm):
        return None
    for places in (1, -1):
        candidate = _shifted(value_ohm, places)
        if fits(float(candidate)):
            return Slip(format(Decimal(repr(round(value_ohm, 4))).normalize(), "f"),
                        candidate, expected)
    return None


def _expectation(circuit: Circuit, field: str, value_ohm: float,
                 outlet: Outlet | None) -> dict | None:
    """ringmath's check of this reading with the new value in the record, or None."""
    record = circuit_record(circuit)
    key = outlet.key if outlet is not None else None
    if key is None:
        record.setdefault("end_to_end", {})[field] = value_ohm
    else:
        for o in record.get("outlets") or []:
            if o.get("id") == key:
                o[field] = value_ohm
    try:
        checks = reading_checks(parse_record(record))
    except ValueError:
        return None
    return next((c for c in checks if c.get("step") == field
                 and (c.get("outlet") or None) == key), None)


def save_reading(circuit: Circuit, field: str, raw, actor: changes.Actor,
                 outlet: Outlet | None = None, client_id: str | None = None,
                 keep: bool = False) -> changes.ReadingWrite:
    """Store one reading and commit. ``raw`` as typed ("0.52", "0,52", "OL", a number).

    Raises ``changes.Refused`` when the job is locked or safe isolation is not confirmed,
    ``BadReading`` for an empty, unreadable or out-of-range value, or for a likely slipped
    decimal point unless ``keep`` (the person confirmed the value as typed). A client id
    already stored is answered with the earlier write (``duplicate``), nothing applied.
    """
    try:
        changes.check_ready_for_readings(circuit)
    except changes.Refused as refused:
        log.info("reading refused on circuit %s (%s): %s", circuit.id, field, refused)
        raise
    if field not in changes.READING_FIELDS + changes.LIVE_OUTLET_READINGS:
        raise BadReading(f"Unknown reading {field!r}.", field="step", kind="choice")
    if field not in changes.CIRCUIT_READINGS and (outlet is None or outlet.circuit_id != circuit.id
                                             or outlet.deleted_at is not None):
        raise BadReading("No such outlet on this circuit.", field="outlet", kind="missing")
    if raw is None or (isinstance(raw, str) and not raw.strip()):
        raise BadReading(EMPTY_MESSAGE, kind="empty")
    path = field if outlet is None else f"{outlet.key}.{field}"
    try:
        value = parse_reading(raw, path)
    except ValueError as error:
        log.info("reading refused on circuit %s (%s): %s", circuit.id, path, error)
        raise BadReading(reading_message(error, raw), kind=error_kind(error)) from error
    if not keep and not changes.seen(client_id):
        slip = check_slip(circuit, field, value, outlet)
        if slip is not None:
            raise BadReading(slip.question, kind="slip", slip=slip)
    try:
        result = changes.set_reading(circuit, field, raw, actor, outlet=outlet,
                                     client_id=client_id)
    except ValueError as error:
        db.session.rollback()
        log.info("reading refused on circuit %s (%s): %s", circuit.id, path, error)
        field_name = "client_id" if str(error).startswith("client_id") else "value"
        raise BadReading(reading_message(error, raw) if field_name == "value" else str(error),
                         field=field_name, kind=error_kind(error)) from error
    if step_of(field) in STEPS:  # the live readings are not a step of the resume point
        note_progress(circuit, step_of(field), actor)
    db.session.commit()
    return result
