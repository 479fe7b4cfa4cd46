"""The field types of the job document schemas: text, true/false, numbers, readings, dates.

Each gives its error in the words the import page shows (``not a number``, ``expected true or
false``); ``StrictSchema`` refuses unknown keys. The schemas themselves are in
``fieldapp/transfer/record_schemas.py``.
"""

from __future__ import annotations

import math

from marshmallow import RAISE, Schema, fields, validate

from fieldapp import limits
from ringmath.record import OL_SPELLINGS

#: How the document and the database write an open / over-range reading (ringmath reads it
#: as infinity; every spelling in ``OL_SPELLINGS`` is stored as this).
OL = "OL"


class Text(fields.String):
    default_error_messages = {
        "required": "is required",
        "null": "may not be null",
        "invalid": "expected text",
    }


class Flag(fields.Boolean):
    """true or false, nothing else (a safety tick must be unambiguous)."""

    default_error_messages = {
        "required": "is required",
        "null": "may not be null",
        "invalid": "expected true or false",
    }

    def __init__(self, **kwargs):
        super().__init__(truthy={True}, falsy={False}, **kwargs)


def _number(value) -> float:
    """A JSON number, or text with a '.' or ',' decimal; ValueError for anything else."""
    if isinstance(value, bool):
        raise ValueError(value)
    if isinstance(value, str):
        if len(value) > limits.MAX_READING_CHARS:
            raise ValueError(value)
        value = value.strip().replace(",", ".")
    number = float(value)  # OverflowError for an integer beyond any float
    if not math.isfinite(number):
        raise ValueError(value)
    return number


class Number(fields.Field):
    """A finite number (``"0,52"`` reads as 0.52), dumped as a float."""

    default_error_messages = {
        "required": "is required",
        "null": "may not be null",
        "invalid": "not a number",
    }

    def _serialize(self, value, attr, obj, **kwargs):
        return None if value is None else float(value)

    def _deserialize(self, value, attr, data, **kwargs):
        try:
            return _number(value)
        except (TypeError, ValueError, OverflowError):
            raise self.make_error("invalid") from None


class Reading(fields.Field):
    """A reading exactly as recorded: a number of ohms, ``"OL"`` or ``null`` (not taken)."""

    default_error_messages = {
        "required": "is required",
        "invalid": "not a number",
    }

    def __init__(self, **kwargs):
        super().__init__(allow_none=True, load_default=None, **kwargs)

    def _serialize(self, value, attr, obj, **kwargs):
        if value is None or value == OL:
            return value
        return float(value)

    def _deserialize(self, value, attr, data, **kwargs):
        if isinstance(value, str) and value.strip().upper() in OL_SPELLINGS:
            return OL
        if isinstance(value, str) and value.strip() == "":
            return None
        try:
            return _number(value)
        except (TypeError, ValueError, OverflowError):
            raise self.make_error("invalid") from None


class _IsoText:
    """Dump ISO text as it is (the record builder gives dates as text), objects as ISO text."""

    def _serialize(self, value, attr, obj, **kwargs):
        if isinstance(value, str):
            return value
        return super()._serialize(value, attr, obj, **kwargs)


class Date(_IsoText, fields.Date):
    default_error_messages = {"invalid": "not a date (YYYY-MM-DD)"}


class DateTime(_IsoText, fields.NaiveDateTime):
    default_error_messages = {"invalid": "not a date and time (YYYY-MM-DDTHH:MM:SS)"}


def _items(nested, **kwargs) -> fields.List:
    return fields.List(fields.Nested(nested), error_messages={
        "invalid": "expected a list", "required": "is required", "null": "may not be null"},
        **kwargs)


def _optional(field_cls, **kwargs):
    return field_cls(load_default=None, allow_none=True, **kwargs)


def _sized(max_len: int, *, min_len: int = 0, **kwargs) -> Text:
    """Text no longer than its database column (PostgreSQL refuses longer, SQLite would not)."""
    if min_len:
        error = f"{min_len} to {max_len} characters"
    else:
        error = f"at most {max_len} characters"
    return Text(validate=validate.Length(min=min_len, max=max_len, error=error), **kwargs)


def _choice(choices, **kwargs) -> Text:
    return Text(validate=validate.OneOf(choices, error="must be one of: {choices}"), **kwargs)


class StrictSchema(Schema):
    """Unknown keys are errors: a typo must not drop a value silently."""

    error_messages = {"unknown": "unknown field", "type": "expected an object"}

    class Meta:
        unknown = RAISE


def _one_of_numbers(choices, unit: str) -> validate.OneOf:
    """A number that is one of the form's choices (1e9 A is no device we know)."""
    words = ", ".join(f"{c:g}" for c in choices)
    return validate.OneOf([float(c) for c in choices], error=f"must be one of: {words} {unit}")



class IrReading(fields.Field):
    """An insulation resistance as recorded: a number of MΩ, ``">999"`` (the instrument showed
    "> value") or ``null``. The text keeps its column's length; ringmath checks the value."""

    default_error_messages = {
        "invalid": "expected a number of MΩ or \">\" and a number, e.g. \">999\"",
        "too_long": "at most 16 characters",
    }

    def __init__(self, **kwargs):
        super().__init__(allow_none=True, load_default=None, **kwargs)

    def _serialize(self, value, attr, obj, **kwargs):
        if value is None or isinstance(value, str):
            return value
        return float(value)

    def _deserialize(self, value, attr, data, **kwargs):
        if isinstance(value, str) and value.strip().startswith(">"):
            text = ">" + value.strip()[1:].strip()
            if len(text) > 16:
                raise self.make_error("too_long")
            return text
        try:
            return _number(value)
        except (TypeError, ValueError):
            raise self.make_error("invalid") from None



def _nested_optional(schema) -> fields.Nested:
    return fields.Nested(schema, load_default=None, allow_none=True)

