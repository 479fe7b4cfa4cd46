"""Marshmallow schemas of the reading endpoint (JSON in and out)."""

from __future__ import annotations

from marshmallow import EXCLUDE, Schema, fields, validate

from fieldapp.changes import CLIENT_ID_PATTERN, READING_FIELDS


class ReadingIn(Schema):
    """One reading sent by the page script or replayed from the device's offline queue.

    value: a number, text as typed ("0,52"), "OL", or null to clear; ringmath checks it.
    client_id: the idempotency key made on the device; the same id is applied once.
    """

    class Meta:
        unknown = EXCLUDE  # a newer client may send more; what we know is checked strictly

    step = fields.String(required=True, validate=validate.OneOf(READING_FIELDS))
    outlet = fields.String(load_default=None, allow_none=True, validate=validate.Length(max=16))
    value = fields.Raw(required=True, allow_none=True)
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


class CircuitOut(Schema):
    """A circuit's record and the current feedback for every reading."""

    circuit_id = fields.Integer()
    record = fields.Dict()
    leading = fields.Nested(Leading, allow_none=True)
    readings = fields.List(fields.Dict())
    expected = fields.Dict(allow_none=True)
