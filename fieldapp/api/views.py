"""JSON endpoints: store one reading, get a circuit's record and feedback.

Same rules as the forms (fieldapp.changes does the writing): roles, job status, safety checks,
ringmath's reading parser, and the client id as idempotency key. Errors are JSON with the
field they concern: ``{"errors": {"value": ["..."]}}``.
"""

from __future__ import annotations

from functools import wraps

from flask import jsonify, render_template, request, url_for
from flask_login import current_user
from marshmallow import ValidationError

from fieldapp import changes, labels, readings, records
from fieldapp.api import bp
from fieldapp.api.schemas import CircuitOut, DiagnosisOut, ReadingIn, ReadingOut
from fieldapp.auth.roles import TESTING_ROLES
from fieldapp.extensions import db
from fieldapp.live.api import post_live_reading
from fieldapp.models import Circuit
from fieldapp.records import circuit_record, diagnose_circuit
from fieldapp.ringtest import answer
from fieldapp.ringtest import feedback as fb
from fieldapp.web import actor


def _error(status: int, field: str, message: str):
    return jsonify({"errors": {field: [message]}}), status


def api_login(*roles: str):
    """401 / 403 as JSON instead of the login page redirect."""

    def decorate(view):
        @wraps(view)
        def wrapped(*args, **kwargs):
            if not current_user.is_authenticated:
                return _error(401, "_auth", "Log in again: the session has ended.")
            if roles and current_user.role not in roles:
                return _error(403, "_auth", "Your role cannot enter readings.")
            return view(*args, **kwargs)

        return wrapped

    return decorate


def _circuit(circuit_id: int):
    circuit = db.session.get(Circuit, circuit_id)
    if circuit is None:
        return None, _error(404, "circuit", "No such circuit.")
    return circuit, None


@bp.post("/circuits/<int:circuit_id>/readings")
@api_login(*TESTING_ROLES)
def post_reading(circuit_id: int):
    circuit, missing = _circuit(circuit_id)
    if missing:
        return missing
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        return _error(400, "_body", "Send a JSON object.")
    try:
        data = ReadingIn().load(body)
    except ValidationError as error:
        return jsonify({"errors": error.messages}), 400
    if data["step"] in changes.LIVE_OUTLET_READINGS:
        return post_live_reading(circuit, data)
    outlet = (readings.find_outlet(circuit, data["outlet"])
              if data["step"] in changes.OUTLET_READINGS else None)
    try:
        result = readings.save_reading(circuit, data["step"], data["value"], actor(),
                                       outlet=outlet, client_id=data["client_id"],
                                       keep=data["keep"])
    except changes.Refused as refused:
        return _error(409, "_state", str(refused))
    except readings.BadReading as bad:
        body = {"errors": {bad.field: [bad.message]}, "kind": bad.kind}
        if bad.slip is not None:
            body["slip"] = {"typed": bad.slip.typed, "suggested": bad.slip.suggested,
                            "expected_ohm": bad.slip.expected_ohm,
                            "question": bad.slip.question}
            body["html"] = {"slip": render_template(
                "ringtest/_slip.html", slip=bad.slip, circuit_id=circuit.id,
                field=data["step"], key=data["outlet"] if outlet is not None else None,
                client_id=data["client_id"])}
        return jsonify(body), 422 if bad.slip is not None else 400
    return jsonify(ReadingOut().dump(_reading_reply(circuit, data, result))), 200


def _leading_html(circuit: Circuit, diagnosis: dict | None, pending: bool) -> str:
    if pending:
        return render_template("ringtest/_updating.html",
                               poll=url_for("api.circuit_diagnosis", circuit_id=circuit.id))
    return render_template("ringtest/_leading.html", leading=answer.leading(diagnosis),
                           names=labels.outlet_names(diagnosis))


def _reading_reply(circuit: Circuit, data: dict, result: changes.ReadingWrite) -> dict:
    # the reading's own check now; the full diagnosis follows (fieldapp/background.py)
    diagnosis, pending = records.diagnosis_or_instant(circuit)
    key = data["outlet"] if data["step"] in changes.OUTLET_READINGS else None
    feedback = fb.feedback(diagnosis, data["step"], key)
    leading = None if pending else answer.leading(diagnosis)
    next_anchor = readings.next_anchor(circuit, readings.step_of(data["step"]))
    return {
        "stored": not result.duplicate,
        "duplicate": result.duplicate,
        "step": data["step"],
        "outlet": key,
        "value": result.new,
        "previous": result.old,
        "feedback": feedback,
        "leading": leading,
        "next_anchor": next_anchor,
        "message": ("Already saved." if result.duplicate else
                    f"Saved {labels.ohm(result.new)}."),
        "html": {
            "feedback": render_template("ringtest/_feedback.html", fbk=feedback,
                                        value=result.new),
            "leading": _leading_html(circuit, diagnosis, pending),
        },
        "diagnosis_pending": pending,
        "diagnosis_url": (url_for("api.circuit_diagnosis", circuit_id=circuit.id)
                          if pending else None),
    }


@bp.get("/circuits/<int:circuit_id>/diagnosis")
@api_login()
def circuit_diagnosis(circuit_id: int):
    """The circuit's leading diagnosis for its current readings: 200 when it is ready, 202
    while the background thread is still computing it (poll again)."""
    circuit, missing = _circuit(circuit_id)
    if missing:
        return missing
    diagnosis, pending = records.diagnosis_or_instant(circuit, saved=False)
    if pending:
        return jsonify(DiagnosisOut().dump({"pending": True, "leading": None, "html": {}})), 202
    return jsonify(DiagnosisOut().dump({
        "pending": False, "leading": answer.leading(diagnosis),
        "html": {"leading": _leading_html(circuit, diagnosis, False)}}))


@bp.get("/circuits/<int:circuit_id>")
@api_login()
def get_circuit(circuit_id: int):
    circuit, missing = _circuit(circuit_id)
    if missing:
        return missing
    diagnosis, _ = diagnose_circuit(circuit)
    return jsonify(CircuitOut().dump({
        "circuit_id": circuit.id,
        "record": circuit_record(circuit),
        "leading": answer.leading(diagnosis),
        "readings": (diagnosis or {}).get("readings") or [],
        "expected": (diagnosis or {}).get("expected"),
    }))
