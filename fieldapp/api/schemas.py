"""Marshmallow schemas of the reading endpoint (JSON in and out)."""

from __future__ import annotations

from marshmallow import EXCLUDE, Schema, ValidationError, fields, validate

from fieldapp.changes import CLIENT_ID_PATTERN, LIVE_OUTLET_READINGS, READING_FIELDS
from fieldapp.limits import MAX_READING_CHARS


def _reading_shape(value) -> None:
    """Text or a number a float can hold (ringmath judges the value itself)."""
    if value is None:
        return
    if isinstance(value, str):
        if len(value) > MAX_READING_CHARS:
            raise ValidationError(f"at most {MAX_READING_CHARS} characters")
        return
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise ValidationError("expected a number of ohms or OL")
    try:
        float(value)
    except OverflowError:
        raise ValidationError("not a number a meter shows") from None


class ReadingIn(Schema):
    """One reading sent by the page script or replayed from the device's offline queue.

    value: a number, text as typed ("0,52"), "OL", or null to clear; ringmath checks it.
    client_id: the idempotency key made on the device; the same id is applied once.
    """

    class Meta:
        unknown = EXCLUDE  # a newer client may send more; what we know is checked strictly

    step = fields.String(required=True,
                         validate=validate.OneOf(READING_FIELDS + LIVE_OUTLET_READINGS))
    outlet = fields.String(load_default=None, allow_none=True, validate=validate.Length(max=16))
    value = fields.Raw(required=True, allow_none=True, validate=_reading_shape)
    client_id = fields.String(required=True, validate=validate.Regexp(
        CLIENT_ID_PATTERN, error="expected 8 to 64 letters, digits, '-' or '_'"))
    device = fields.String(load_default="", validate=validate.Length(max=200))
    #: true: keep the value as typed although it looks like a slipped decimal point
    keep = fields.Boolean(load_default=False)


class Feedback(Schema):
    status = fields.String()
    status_words = fields.String()
    expected_ohm = fields.Float(allow_none=True)
    low_ohm = fields.Float(allow_none=True)
    high_ohm = fields.Float(allow_none=True)
    deviation_ohm = fields.Float(allow_none=True)
    text = fields.String()


class Leading(Schema):
    verdict = fields.String()
    verdict_words = fields.String()
    summary = fields.String()
    finding = fields.Dict(allow_none=True)


class ReadingOut(Schema):
    """What the page needs to update in place after a reading."""

    stored = fields.Boolean()
    duplicate = fields.Boolean()
    step = fields.String()
    outlet = fields.String(allow_none=True)
    value = fields.Raw(allow_none=True)
    previous = fields.Raw(allow_none=True)
    feedback = fields.Nested(Feedback, allow_none=True)
    leading = fields.Nested(Leading, allow_none=True)
    next_anchor = fields.String(allow_none=True)
    message = fields.String()
    html = fields.Dict(keys=fields.String(), values=fields.String())
    #: True when the full diagnosis of the new record is still being computed: poll the URL
    diagnosis_pending = fields.Boolean()
    diagnosis_url = fields.String(allow_none=True)


class DiagnosisOut(Schema):
    """The leading diagnosis once it is ready (202 with ``pending`` while it is not)."""

    pending = fields.Boolean()
    leading = fields.Nested(Leading, allow_none=True)
    html = fields.Dict(keys=fields.String(), values=fields.String())


class CircuitOut(Schema):
    """A circuit's record and the current feedback for every reading."""

    circuit_id = fields.Integer()
    record = fields.Dict()
    leading = fields.Nested(Leading, allow_none=True)
    readings = fields.List(fields.Dict())
    expected = fields.Dict(allow_none=True)
