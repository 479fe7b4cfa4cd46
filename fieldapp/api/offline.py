"""JSON endpoints for the actions a phone may take with no signal and send later, in order.

- ``POST /api/circuits/<id>/outlets``: a new outlet under a client id made on the phone; the
  same id posted again returns the same outlet (so its readings, queued behind it, find it);
- ``POST /api/circuits/<id>/outlets/<key>``: a new label;
- ``POST /api/circuits/<id>/step``: move on to a step (the furthest step reached is kept);
- ``GET /api/session``: who is signed in and a fresh CSRF token, so that the outbox sends a
  user's items only under that user's own session.

Same rules as the forms: roles, job status and safety checks (409 with the reason), writes
through fieldapp.changes (logged, old -> new). Errors: ``{"errors": {field: [message]}}``.
"""

from __future__ import annotations

from flask import jsonify, request, url_for
from flask_login import current_user
from flask_wtf.csrf import generate_csrf
from marshmallow import ValidationError

from fieldapp import changes
from fieldapp.api import bp
from fieldapp.api.offline_schemas import OutletEditIn, OutletIn, OutletOut, SessionOut, StepIn
from fieldapp.api.views import _circuit, _error, api_login
from fieldapp.auth.roles import TESTING_ROLES
from fieldapp.extensions import db
from fieldapp.models import STEPS, Circuit, Outlet
from fieldapp.ringtest.errors import outlet_error
from fieldapp.web import actor

#: ringmath's outlet paths -> the field of the request they concern
OUTLET_PATHS = {"outlet.fuse_a": "fuse_a", "outlet.kind": "kind", "outlet.label": "label",
                "outlet.spur_from": "spur_from_key", "outlet.spur_csa_mm2": "spur_csa_mm2",
                "outlet.spur_cpc_csa_mm2": "spur_cpc_csa_mm2"}


def _load(schema):
    """(data, None) or (None, error reply) for the request's JSON body."""
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        return None, _error(400, "_body", "Send a JSON object.")
    try:
        return schema.load(body), None
    except ValidationError as error:
        return None, (jsonify({"errors": error.messages}), 400)


def _circuit_and_body(circuit_id: int, schema):
    """(circuit, loaded body, None), or (None, None, the error reply) for an unknown circuit
    or a body the schema refuses: the opening every endpoint here shares."""
    circuit, missing = _circuit(circuit_id)
    if missing:
        return None, None, missing
    data, bad = _load(schema)
    if bad:
        return None, None, bad
    return circuit, data, None


def _ready(circuit: Circuit, *, readings: bool = True):
    try:
        if readings:
            changes.check_ready_for_readings(circuit)
        else:
            changes.check_editable(circuit.job)
    except changes.Refused as refused:
        return _error(409, "_state", str(refused))
    return None


def _outlet_problem(values: dict):
    """ringmath's own outlet rules (FCU fuse ratings, spur sizes): (field, message) or None,
    worded as the outlet form words them."""
    return outlet_error(values, OUTLET_PATHS)


def _outlet_reply(outlet: Outlet, client_id: str | None, created: bool) -> dict:
    return OutletOut().dump({"client_id": client_id, "key": outlet.key, "label": outlet.label,
                             "kind": outlet.kind, "spur_from_key": outlet.spur_from_key,
                             "created": created, "anchor": f"r-ln-{outlet.key}"})


@bp.post("/circuits/<int:circuit_id>/outlets")
@api_login(*TESTING_ROLES)
def post_outlet(circuit_id: int):
    circuit, data, error = _circuit_and_body(circuit_id, OutletIn())
    if error:
        return error
    earlier = changes.seen(data["client_id"])
    if earlier is not None:  # sent before (the reply was lost): the same outlet
        outlet = db.session.get(Outlet, earlier.entity_id) if earlier.entity == "outlet" else None
        if outlet is None or outlet.circuit_id != circuit.id:
            return _error(409, "client_id", "This id was already used for something else.")
        return jsonify(_outlet_reply(outlet, data["client_id"], False)), 200
    refused = _ready(circuit)
    if refused:
        return refused
    spur = data["spur_from_key"] or None
    values = {"label": data["label"].strip(), "kind": data["kind"], "spur_from_key": spur,
              "fuse_a": data["fuse_a"],
              "spur_csa_mm2": data["spur_csa_mm2"] if spur else None,
              "spur_cpc_csa_mm2": data["spur_cpc_csa_mm2"] if spur else None}
    if not values["label"]:
        return _error(400, "label", "Say where the outlet is.")
    problem = _outlet_problem(values)
    if problem:
        return _error(400, *problem)
    try:
        outlet = changes.add_outlet(circuit, values, actor(), client_id=data["client_id"])
    except ValueError as error:
        db.session.rollback()
        return _error(400, "spur_from_key", str(error).partition(": ")[2] or str(error))
    db.session.commit()
    return jsonify(_outlet_reply(outlet, data["client_id"], True)), 201


@bp.post("/circuits/<int:circuit_id>/outlets/<key>")
@api_login(*TESTING_ROLES)
def post_outlet_label(circuit_id: int, key: str):
    circuit, data, error = _circuit_and_body(circuit_id, OutletEditIn())
    if error:
        return error
    refused = _ready(circuit, readings=False)
    if refused:
        return refused
    outlet = next((o for o in changes.live_outlets(circuit) if o.key == key), None)
    if outlet is None:
        return _error(404, "outlet", f"Outlet {key} is no longer on this circuit.")
    label = data["label"].strip()
    if not label:
        return _error(400, "label", "Say where the outlet is.")
    changed = changes.edit_outlet(outlet, {"label": label}, actor())
    db.session.commit()
    return jsonify({**_outlet_reply(outlet, data["client_id"], False),
                    "changed": bool(changed)}), 200


@bp.post("/circuits/<int:circuit_id>/step")
@api_login(*TESTING_ROLES)
def post_step(circuit_id: int):
    circuit, data, error = _circuit_and_body(circuit_id, StepIn())
    if error:
        return error
    refused = _ready(circuit, readings=False)
    if refused:
        return refused
    moved = STEPS.index(data["step"]) > STEPS.index(circuit.current_step)
    if moved:
        changes.update(circuit, {"current_step": data["step"]}, actor())
        db.session.commit()
    url = (url_for("ringtest.results", circuit_id=circuit.id) if data["step"] == "results"
           else url_for("ringtest.step", circuit_id=circuit.id, step=data["step"]))
    return jsonify({"step": circuit.current_step, "moved": moved, "url": url}), 200


@bp.get("/session")
def get_session():
    signed_in = current_user.is_authenticated
    return jsonify(SessionOut().dump({
        "user_id": current_user.id if signed_in else None,
        "name": current_user.name if signed_in else None,
        "csrf_token": generate_csrf() if signed_in else None,
    }))

