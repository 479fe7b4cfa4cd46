"""The structure of a job document in ``ringtest/1``: one marshmallow schema per block.

Structure, types and column lengths only; ranges, FCU fuse ratings and spur topology are
ringmath's (``fieldapp/transfer/checking.py`` runs both).
"""

from __future__ import annotations

from marshmallow import ValidationError, fields, validate, validates_schema

from fieldapp import limits
from fieldapp.choices import BREAKER_STANDARDS, CURVES, OCPD_STANDARDS, RATINGS_A, RCD_MA
from fieldapp.choices import RCD_TYPES as RCD_TYPE_CHOICES
from fieldapp.transfer.field_types import (
    Date,
    DateTime,
    Flag,
    IrReading,
    Number,
    Reading,
    StrictSchema,
    Text,
    _choice,
    _items,
    _nested_optional,
    _one_of_numbers,
    _optional,
    _sized,
)
from ringmath import record
from ringmath.record import CPC_KINDS, TAKEN_AT

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

