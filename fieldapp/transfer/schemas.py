"""Marshmallow schemas for a job document in the ``ringtest/1`` record format.

A job document is ``{"format": "ringtest/1", "job": {...}, "circuits": [record, ...]}`` where a
record is ``{"circuit": {...}, "end_to_end": {...}, "outlets": [...]}`` (ringmath/record.py).
Besides what ringmath reads, a circuit carries ``safety`` (the checks ticked before testing) so
that nothing the app stores about a circuit is lost in a round trip.

``JobDocumentSchema().load(doc)`` checks the structure and types and returns the same shape
with plain Python values (dates as ``datetime.date``); ``dump`` of that shape gives the JSON
document back, every key present (``null`` where empty), so export -> import -> export is
exact. Domain checks (ranges, FCU fuse ratings, spur topology) stay in ``ringmath``:
``document_errors`` runs both and reports every problem with its path in the document, e.g.
``circuits[0].outlets[3].ln: not a number``.
"""

from __future__ import annotations

import math
import re

from marshmallow import RAISE, Schema, ValidationError, fields, validate, validates_schema

from fieldapp import limits
from fieldapp.choices import BREAKER_STANDARDS, CURVES, OCPD_STANDARDS, RATINGS_A, RCD_MA
from fieldapp.choices import RCD_TYPES as RCD_TYPE_CHOICES
from ringmath import record
from ringmath.record import CPC_KINDS, TAKEN_AT

OL = "OL"
#: The readings of an outlet, each parsed by ringmath on its own.
OUTLET_READINGS = ("ln", "le", "zs_measured", "ln_terminals", "le_terminals")
#: Text a meter or a tester writes for an open circuit / over range; stored as "OL".
OL_SPELLINGS = ("OL", "O/L", "OPEN", "∞", "INF")


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


#: The devices the circuit form offers: an import refuses any other, naming the field.
STANDARDS = tuple(value for value, _ in OCPD_STANDARDS)
CURVE_LETTERS = tuple(value for value, _ in CURVES if value)
RCD_RATINGS_MA = tuple(float(value) for value, _ in RCD_MA if value)
RCD_TYPES = tuple(value for value, _ in RCD_TYPE_CHOICES if value)


class OcpdSchema(StrictSchema):
    standard = _choice(STANDARDS, required=True)
    curve = _optional(_choice, choices=CURVE_LETTERS)
    rating_a = Number(required=True, validate=_one_of_numbers(RATINGS_A, "A"))

    @validates_schema
    def _curve_fits_device(self, data, **_kwargs):
        """As the circuit form: a breaker has a curve, a fuse has none."""
        breaker = data.get("standard") in BREAKER_STANDARDS
        if breaker and not data.get("curve"):
            raise ValidationError("a circuit-breaker needs its curve (B, C or D)", "curve")
        if not breaker and data.get("curve"):
            raise ValidationError("a fuse has no curve", "curve")


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


class RcdSchema(StrictSchema):
    rated_ma = Number(required=True, validate=_one_of_numbers(RCD_RATINGS_MA, "mA"))
    type = _optional(_choice, choices=RCD_TYPES)
    trip_ms = _optional(Number)
    button_ok = _optional(Flag)


class InsulationSchema(StrictSchema):
    """Insulation resistance between the conductors, in MΩ, and the test voltage."""

    test_v = _optional(Number)
    ln_mohm = IrReading()
    le_mohm = IrReading()
    ne_mohm = IrReading()


class SafetySchema(StrictSchema):
    """The checks made before any reading: isolated, locked off, proved dead; who and when."""

    isolated = Flag(load_default=False)
    locked_off = Flag(load_default=False)
    proved_dead = Flag(load_default=False)
    confirmed_by = _optional(_sized, max_len=120)
    confirmed_at = _optional(DateTime)


def _nested_optional(schema) -> fields.Nested:
    return fields.Nested(schema, load_default=None, allow_none=True)


class CircuitSchema(StrictSchema):
    reference = _sized(61, load_default="")  # board (40) "/" way (20)
    description = _sized(200, load_default="")
    ocpd = fields.Nested(OcpdSchema, required=True, error_messages={
        "required": "is required", "null": "may not be null"})
    rcd = _nested_optional(RcdSchema)
    live_csa_mm2 = Number(load_default=2.5)
    cpc_csa_mm2 = Number(load_default=1.5)
    ze_ohm = _optional(Number)
    ze_source = _choice(record.ZE_SOURCES, load_default="measured")
    earthing = _optional(_choice, choices=record.EARTHING_SYSTEMS)
    cable_length_m = _optional(Number)
    cpc_kind = _choice(CPC_KINDS, load_default="cable_core")
    parallel_paths = Flag(load_default=False)
    pfc_ka = _optional(Number)
    insulation = _nested_optional(InsulationSchema)
    safety = fields.Nested(SafetySchema, load_default=lambda: SafetySchema().load({}))


class EndToEndSchema(StrictSchema):
    r1 = Reading()
    rn = Reading()
    r2 = Reading()


class OutletSchema(StrictSchema):
    id = _sized(16, min_len=1, required=True)
    label = _sized(120, load_default="")
    kind = _choice(record.OUTLET_KINDS, load_default="twin_socket")
    spur_from = _optional(_sized, max_len=16)
    fuse_a = _optional(Number)
    spur_csa_mm2 = _optional(Number)
    spur_cpc_csa_mm2 = _optional(Number)
    ln = Reading()
    le = Reading()
    zs_measured = Reading()
    taken_at = _optional(_choice, choices=TAKEN_AT)
    ln_terminals = Reading()
    le_terminals = Reading()


class CircuitRecordSchema(StrictSchema):
    #: a single-circuit record may carry its own format tag; the job document carries it once
    format = Text(load_only=True, validate=validate.Equal(record.FORMAT, error="must be {other}"))
    circuit = fields.Nested(CircuitSchema, required=True, error_messages={
        "required": "is required", "null": "may not be null"})
    end_to_end = fields.Nested(EndToEndSchema, load_default=lambda: EndToEndSchema().load({}))
    outlets = _items(OutletSchema, load_default=list, validate=validate.Length(
        max=limits.MAX_OUTLETS_PER_CIRCUIT,
        error=f"at most {limits.MAX_OUTLETS_PER_CIRCUIT} outlets on one circuit"))


class JobSchema(StrictSchema):
    reference = _sized(40, min_len=1, required=True)
    site = _sized(200, min_len=1, required=True)
    client = _sized(200, load_default="")
    date = _optional(Date)
    tester = _optional(_sized, max_len=120)
    notes = _sized(limits.MAX_NOTES_CHARS, load_default="")


class JobDocumentSchema(StrictSchema):
    format = Text(load_default=record.FORMAT, validate=validate.Equal(
        record.FORMAT, error="must be {other}"))
    job = fields.Nested(JobSchema, required=True, error_messages={
        "required": "is required", "null": "may not be null"})
    circuits = _items(CircuitRecordSchema, required=True, validate=[
        validate.Length(min=1, error="needs at least one circuit"),
        validate.Length(max=limits.MAX_CIRCUITS_PER_JOB,
                        error=f"at most {limits.MAX_CIRCUITS_PER_JOB} circuits in one job")])

    @validates_schema
    def _outlets_in_job(self, data, **_kwargs):
        total = sum(len(rec.get("outlets") or ()) for rec in data.get("circuits") or ())
        if total > limits.MAX_OUTLETS_PER_JOB:
            raise ValidationError(f"at most {limits.MAX_OUTLETS_PER_JOB} outlets in one job, "
                                  f"this file has {total}", "circuits")


# ---------------------------------------------------------------- error reporting


def flatten_errors(messages, path: str = "") -> list[str]:
    """Marshmallow's nested error dict as ``"path: message"`` lines, in document order."""
    if isinstance(messages, str):
        return [f"{path or 'document'}: {messages}"]
    if isinstance(messages, list):
        lines = []
        for item in messages:
            lines.extend(flatten_errors(item, path))
        return lines
    lines = []
    for key, value in messages.items():
        if key == "_schema":
            child = path
        elif isinstance(key, int):
            child = f"{path}[{key}]"
        else:
            child = f"{path}.{key}" if path else str(key)
        lines.extend(flatten_errors(value, child))
    return lines


def _error_path(line: str) -> str:
    return line.split(": ", 1)[0]


def domain_errors(doc) -> list[str]:
    """What ringmath's parser refuses, one message per circuit part, each starting with its path.

    Every circuit block, end-to-end reading and outlet is parsed on its own so that one bad
    value does not hide the next; then each whole record (spur topology) and the whole
    document through ``ringmath.parse_document`` (only for a document with ``circuits``:
    without them ringmath would read it as a single record and blame its fields).
    """
    found: list[str] = []

    def attempt(fn, *args):
        try:
            fn(*args)
        except (ValueError, OverflowError) as exc:
            path = args[-1] if len(args) > 1 and isinstance(args[-1], str) else "document"
            text = str(exc)
            found.append(text if isinstance(exc, ValueError) else f"{path}: not a number")
            return False
        return True

    if _too_big(doc):  # the schema reports the size; ringmath need not walk it all
        return found

    circuits = doc.get("circuits") if isinstance(doc, dict) else None
    for i, rec in enumerate(circuits if isinstance(circuits, list) else []):
        if not isinstance(rec, dict):
            continue
        base = f"circuits[{i}]"
        ok = attempt(record.parse_circuit, rec.get("circuit"), f"{base}.circuit")
        e2e = rec.get("end_to_end")
        for name in ("r1", "rn", "r2"):
            if isinstance(e2e, dict):
                ok &= attempt(record.parse_reading, e2e.get(name), f"{base}.end_to_end.{name}")
        outlets = rec.get("outlets")
        for j, outlet in enumerate(outlets if isinstance(outlets, list) else []):
            where = f"{base}.outlets[{j}]"
            for name in OUTLET_READINGS if isinstance(outlet, dict) else ():
                ok &= attempt(record.parse_reading, outlet.get(name), f"{where}.{name}")
            ok &= attempt(record.parse_outlet, outlet, where)
        if ok:
            attempt(record.parse_record, rec, base)
    if isinstance(doc, dict) and "circuits" in doc:
        attempt(record.parse_document, doc)
    return found


def _too_big(doc) -> bool:
    circuits = doc.get("circuits") if isinstance(doc, dict) else None
    if not isinstance(circuits, list):
        return False
    if len(circuits) > limits.MAX_CIRCUITS_PER_JOB:
        return True
    lengths = [len(rec["outlets"]) for rec in circuits
               if isinstance(rec, dict) and isinstance(rec.get("outlets"), list)]
    if sum(lengths) > limits.MAX_OUTLETS_PER_JOB:
        return True
    return any(isinstance(rec, dict) and isinstance(rec.get("outlets"), list)
               and len(rec["outlets"]) > limits.MAX_OUTLETS_PER_CIRCUIT for rec in circuits)


def document_errors(doc) -> list[str]:
    """Every problem in a job document (schema and ringmath), each ``"path: message"``.

    Where both report the same path, the schema's message is kept; ringmath adds the paths the
    schema accepts but the domain does not (a negative reading, a 4 A fuse, a spur loop).
    """
    errors: list[str] = []
    try:
        JobDocumentSchema().load(doc)
    except ValidationError as exc:
        errors = flatten_errors(exc.messages)
    seen = {_error_path(line) for line in errors}
    for line in domain_errors(doc):
        if _error_path(line) not in seen:
            seen.add(_error_path(line))
            errors.append(line)
    return sorted(errors, key=_document_order)


def _document_order(line: str) -> list[int]:
    """Sort key: the list indices in the path (circuit, outlet); a stable sort keeps the rest."""
    return [int(n) for n in re.findall(r"\[(\d+)\]", _error_path(line))]


def load_document(doc) -> dict:
    """The validated job document as plain values; ``DocumentError`` listing every problem."""
    errors = document_errors(doc)
    if errors:
        raise DocumentError(errors)
    return JobDocumentSchema().load(doc)


def dump_document(data: dict) -> dict:
    """The JSON job document for plain values in the schema's shape (all keys present)."""
    return JobDocumentSchema().dump(data)


class DocumentError(ValueError):
    """A job document that cannot be imported; ``errors`` holds one ``"path: message"`` each."""

    def __init__(self, errors: list[str]):
        super().__init__("; ".join(errors))
        self.errors = list(errors)


# ---------------------------------------------------------------- JSON endpoint replies


class ImportResultSchema(Schema):
    """The reply to a successful import."""

    job_id = fields.Integer()
    reference = fields.String()
    url = fields.String()
    notes = fields.List(fields.String())


class ImportErrorsSchema(Schema):
    """The reply to a refused import: every problem, each ``"path: message"``."""

    errors = fields.List(fields.String())
