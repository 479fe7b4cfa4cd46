"""Small helpers shared by the blueprints' views."""

from __future__ import annotations

from flask import abort, request
from flask_login import current_user
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


def get_or_404(model, ident):
    obj = db.session.get(model, ident)
    if obj is None:
        abort(404)
    return obj


def options(pairs) -> list[SelectChoice]:
    """(value, label) pairs as WTForms select choices."""
    return [SelectChoice(value, label) for value, label in pairs]
