"""Marshmallow schemas of the endpoints the offline outbox replays (outlets, step moves)."""

from __future__ import annotations

from marshmallow import EXCLUDE, Schema, fields, validate

from fieldapp.changes import CLIENT_ID_PATTERN
from ringmath.record import OUTLET_KINDS

CLIENT_ID = validate.Regexp(CLIENT_ID_PATTERN,
                            error="expected 8 to 64 letters, digits, '-' or '_'")


class OutletIn(Schema):
    """A new outlet, made on the phone (perhaps offline) under its own client id.

    The client id is the outlet's key on the phone until the server gives it a letter; the
    same id posted twice makes one outlet.
    """

    class Meta:
        unknown = EXCLUDE

    client_id = fields.String(required=True, validate=CLIENT_ID)
    label = fields.String(required=True, validate=validate.Length(min=1, max=120))
    kind = fields.String(load_default="twin_socket", validate=validate.OneOf(OUTLET_KINDS))
    spur_from_key = fields.String(load_default=None, allow_none=True,
                                  validate=validate.Length(max=16))
    fuse_a = fields.Float(load_default=None, allow_none=True)
    spur_csa_mm2 = fields.Float(load_default=None, allow_none=True)
    spur_cpc_csa_mm2 = fields.Float(load_default=None, allow_none=True)
    device = fields.String(load_default="", validate=validate.Length(max=200))


class OutletEditIn(Schema):
    """A new label for an outlet (the rest of its details change on the outlet's page)."""

    class Meta:
        unknown = EXCLUDE

    label = fields.String(required=True, validate=validate.Length(min=1, max=120))
    client_id = fields.String(load_default=None, allow_none=True, validate=CLIENT_ID)
    device = fields.String(load_default="", validate=validate.Length(max=200))


class StepIn(Schema):
    """Moving on to a step; the circuit remembers the furthest step reached."""

    class Meta:
        unknown = EXCLUDE

    step = fields.String(required=True, validate=validate.OneOf(("ln", "le", "results")))
    client_id = fields.String(load_default=None, allow_none=True, validate=CLIENT_ID)
    device = fields.String(load_default="", validate=validate.Length(max=200))


class OutletOut(Schema):
    client_id = fields.String()
    key = fields.String()
    label = fields.String()
    kind = fields.String()
    spur_from_key = fields.String(allow_none=True)
    created = fields.Boolean()
    anchor = fields.String()


class SessionOut(Schema):
    """Who the session belongs to (the outbox sends only its own user's items) and a token."""

    user_id = fields.Integer(allow_none=True)
    name = fields.String(allow_none=True)
    csrf_token = fields.String(allow_none=True)
