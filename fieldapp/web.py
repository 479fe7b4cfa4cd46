"""Small helpers shared by the blueprints' views."""

from __future__ import annotations

import uuid

from flask import abort, request
from flask_login import current_user
from werkzeug.routing import IntegerConverter
from wtforms import SelectChoice

from fieldapp.changes import Actor
from fieldapp.extensions import db


def actor() -> Actor:
    """The logged-in user and the device label the page sent (else the user agent)."""
    device = (request.form.get("device") or request.headers.get("X-Device")
              or request.headers.get("User-Agent") or "")
    if request.is_json:
        body = request.get_json(silent=True)
        if isinstance(body, dict) and isinstance(body.get("device"), str) and body["device"]:
            device = body["device"]
    return Actor(current_user.id if current_user.is_authenticated else None, device[:200])


#: The largest id any database here can hold (a signed 64-bit integer).
MAX_ID = 2**63 - 1


class IdConverter(IntegerConverter):
    """``<int:...>`` in every route: digits that fit a database id, else 404 (a 5000-digit or
    2^63 id must not reach the database driver)."""

    def __init__(self, map, *args, **kwargs):
        kwargs.setdefault("max", MAX_ID)
        super().__init__(map, *args, **kwargs)

    def to_python(self, value: str):
        if len(value) > 19:
            from werkzeug.routing import ValidationError

            raise ValidationError()
        return super().to_python(value)


def valid_id(ident) -> int | None:
    """An id from a query string or a body as an int, or None when it cannot be one."""
    if isinstance(ident, bool):
        return None
    if isinstance(ident, str):
        ident = ident.strip()
        if not ident.isascii() or not ident.isdigit() or len(ident) > 19:
            return None
        ident = int(ident)
    if not isinstance(ident, int) or not 0 < ident <= MAX_ID:
        return None
    return ident


def get_or_404(model, ident):
    ident = valid_id(ident)
    obj = db.session.get(model, ident) if ident is not None else None
    if obj is None:
        abort(404)
    return obj


def options(pairs) -> list[SelectChoice]:
    """(value, label) pairs as WTForms select choices."""
    return [SelectChoice(value, label) for value, label in pairs]


def new_client_id() -> str:
    """A fresh idempotency key for one write from a page (forms put it in a hidden field)."""
    return str(uuid.uuid4())
