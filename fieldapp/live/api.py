"""The JSON side of the live readings: ``POST /api/circuits/<id>/readings`` hands a
measured Zs or a terminal re-measure here (the offline queue replays the same body)."""

from __future__ import annotations

from flask import jsonify, render_template

from fieldapp import changes, labels
from fieldapp.api.schemas import ReadingOut
from fieldapp.extensions import db
from fieldapp.live import feedback as lf
from fieldapp.live.service import find_outlet, save_live_reading
from fieldapp.models import Circuit
from fieldapp.readings import BadReading
from fieldapp.records import diagnose_circuit
from fieldapp.ringtest.answer import leading as leading_of
from fieldapp.web import actor


def _error(status: int, field: str, message: str):
    return jsonify({"errors": {field: [message]}}), status


def post_live_reading(circuit: Circuit, data: dict):
    """Store one live reading from the loaded ``ReadingIn`` body; the reply has the
    reading endpoint's shape, with the live feedback rendered for the page."""
    field = data["step"]
    outlet = find_outlet(circuit, data["outlet"])
    if outlet is None:
        return _error(400, "outlet", "No such outlet on this circuit.")
    try:
        result = save_live_reading(circuit, field, data["value"], actor(), outlet=outlet,
                                   client_id=data["client_id"])
    except changes.Refused as refused:
        db.session.rollback()
        return _error(409, "_state", str(refused))
    except BadReading as bad:
        db.session.rollback()
        return jsonify({"errors": {bad.field: [bad.message]}, "kind": bad.kind}), 400
    diagnosis, _ = diagnose_circuit(circuit)
    zfb = lf.zs_feedback(diagnosis, outlet.key) if field == "zs_measured" else None
    leading = leading_of(diagnosis)
    if field == "zs_measured":
        html = render_template("live/_zs_feedback.html", zfb=zfb, value=result.new)
    else:
        html = ("<p class=\"status\">Kept beside the first reading; used for R1+R2.</p>"
                if result.new is not None else "")
    reply = {
        "stored": not result.duplicate, "duplicate": result.duplicate, "step": field,
        "outlet": outlet.key, "value": result.new, "previous": result.old,
        "feedback": {k: zfb[k] for k in ("status", "status_words", "text")} if zfb else None,
        "leading": leading, "next_anchor": None,
        "message": "Already saved." if result.duplicate else f"Saved {labels.ohm(result.new)}.",
        "html": {"feedback": html,
                 "leading": render_template("ringtest/_leading.html", leading=leading,
                                            names=labels.outlet_names(diagnosis))},
    }
    return jsonify(ReadingOut().dump(reply)), 200
