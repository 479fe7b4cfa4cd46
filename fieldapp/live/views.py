"""The live tests page: measured Zs at the outlets the tester chooses, fault current,
insulation and RCD results, where readings were taken and re-measures at the terminals.

Every reading is one small form post (the page script sends the same to the JSON API);
writes go through fieldapp.live.service / fieldapp.changes; judgements come from
ringmath.diagnose via fieldapp.records.
"""

from __future__ import annotations

from flask import abort, flash, redirect, render_template, url_for
from flask_login import login_required

from fieldapp import changes, labels
from fieldapp.auth.roles import TESTING_ROLES, can_test, role_required
from fieldapp.extensions import db
from fieldapp.live import bp
from fieldapp.live import feedback as lf
from fieldapp.live.forms import LiveCircuitForm, TakenAtForm, schedule_data
from fieldapp.live.service import READING_NAMES, find_outlet, save_live_reading
from fieldapp.live.values import TAKEN_AT, TAKEN_AT_LABELS
from fieldapp.models import STEPS, Circuit
from fieldapp.readings import BadReading
from fieldapp.records import circuit_record, diagnose_circuit
from fieldapp.ringtest.answer import leading as leading_of
from fieldapp.ringtest.forms import ReadingForm
from fieldapp.web import actor, get_or_404

SHORT = {"safety": "Safety", "e2e": "Step 1", "ln": "Step 2", "le": "Step 3",
         "live": "Live", "results": "Results"}


def _stepper(circuit: Circuit) -> list[dict]:
    """The guided sequence with the live tests between step 3 and Results."""
    reached = STEPS.index(circuit.current_step) if circuit.current_step in STEPS else 0
    urls = {"safety": url_for("ringtest.safety", circuit_id=circuit.id),
            "live": url_for("live.page", circuit_id=circuit.id),
            "results": url_for("ringtest.results", circuit_id=circuit.id)}
    done_live = any(o.zs_measured is not None for o in changes.live_outlets(circuit))
    steps = []
    for step in STEPS[:-1] + ("live", "results"):
        done = done_live if step == "live" else (STEPS.index(step) < reached)
        steps.append({"short": SHORT[step], "here": step == "live", "done": done,
                      "url": urls.get(step) or url_for("ringtest.step", circuit_id=circuit.id,
                                                       step=step)})
    return steps


def anchor_for(field: str, key: str) -> str:
    return f"r-{field}-{key}"


def _writable(circuit: Circuit) -> bool:
    return can_test() and circuit.job.status in changes.EDITABLE_STATUSES


def _reading_form(field: str, key: str) -> ReadingForm:
    return ReadingForm(formdata=None, data={"field": field, "outlet": key})


def _cards(circuit: Circuit, diagnosis: dict | None, bad: ReadingForm | None) -> list[dict]:
    suggested = lf.suggestions(diagnosis)
    cards = []
    for outlet in changes.live_outlets(circuit):
        forms = {f: _reading_form(f, outlet.key) for f in changes.LIVE_OUTLET_READINGS}
        if bad is not None and bad.outlet.data == outlet.key and bad.field.data in forms:
            forms[bad.field.data] = bad
        hint = [labels.kind_label(outlet.kind)]
        if outlet.spur_from_key:
            hint.append(labels.fed_from(outlet.spur_from_key))
        cards.append({
            "outlet": outlet, "key": outlet.key,
            "title": labels.outlet_name(outlet.key, outlet.label, outlet.kind),
            "hint": ", ".join(hint), "suggested": suggested.get(outlet.key),
            "anchor": anchor_for("zs_measured", outlet.key),
            "feedback": lf.zs_feedback(diagnosis, outlet.key), "forms": forms,
            "front": {"ln": outlet.ln, "le": outlet.le},
            "taken_at": outlet.taken_at,
            "taken_form": TakenAtForm(formdata=None, data={"outlet": outlet.key,
                                                           "taken_at": outlet.taken_at or ""}),
        })
    order = list(suggested)
    return sorted(cards, key=lambda c: order.index(c["key"]) if c["key"] in order
                  else len(order))


def render_page(circuit: Circuit, *, bad: ReadingForm | None = None,
                circuit_form: LiveCircuitForm | None = None, status: int = 200):
    diagnosis, diagnosis_error = diagnose_circuit(circuit)
    if circuit_form is None:
        circuit_form = LiveCircuitForm(formdata=None, data=schedule_data(circuit))
    summary = lf.live_summary(circuit_record(circuit, with_job=False), diagnosis)
    return render_template(
        "live/step.html", circuit=circuit, job=circuit.job, stepper=_stepper(circuit),
        cards=_cards(circuit, diagnosis, bad), form=circuit_form, summary=summary,
        leading=leading_of(diagnosis), names=labels.outlet_names(diagnosis),
        diagnosis_error=diagnosis_error, writable=_writable(circuit),
        safe=changes.safety_confirmed(circuit), reading_names=READING_NAMES,
        taken_words=TAKEN_AT_LABELS, cautions=(diagnosis or {}).get("cautions") or labels.CAUTIONS,
        focus=bad and anchor_for(bad.field.data, bad.outlet.data or ""),
    ), status


@bp.get("/<int:circuit_id>/live")
@login_required
def page(circuit_id: int):
    return render_page(get_or_404(Circuit, circuit_id))


def _refused(circuit: Circuit, refused: changes.Refused):
    flash(str(refused), "error")
    if circuit.job.status in changes.EDITABLE_STATUSES:
        return redirect(url_for("ringtest.safety", circuit_id=circuit.id))
    return redirect(url_for("live.page", circuit_id=circuit.id))


@bp.post("/<int:circuit_id>/live/reading")
@role_required(*TESTING_ROLES)
def save_reading(circuit_id: int):
    circuit = get_or_404(Circuit, circuit_id)
    form = ReadingForm()
    field = form.field.data or ""
    if field not in changes.LIVE_OUTLET_READINGS or not form.validate_on_submit():
        abort(400)
    outlet = find_outlet(circuit, form.outlet.data)
    if outlet is None:
        abort(404)
    try:
        result = save_live_reading(circuit, field, form.raw_value(), actor(), outlet=outlet,
                                   client_id=form.client_id.data or None)
    except changes.Refused as refused:
        db.session.rollback()
        return _refused(circuit, refused)
    except BadReading as bad:
        db.session.rollback()
        form.value.errors = [bad.message]
        return render_page(circuit, bad=form, status=422)
    where = labels.outlet_name(outlet.key, outlet.label, outlet.kind)
    name = labels.reading_name(field)
    if result.duplicate:
        flash(f"Already saved: {READING_NAMES[field]} at {where} = {labels.ohm(result.new)}.",
              "info")
    elif result.old is not None and result.old != result.new:
        flash(f"Corrected {name} at {where}: {labels.ohm(result.old)} → "
              f"{labels.ohm(result.new)} (the old value stays in the history).", "ok")
    else:
        flash(f"Saved {name} at {where}: {labels.ohm(result.new)}.", "ok")
    return redirect(url_for("live.page", circuit_id=circuit.id,
                            _anchor=anchor_for("zs_measured", outlet.key)))


@bp.post("/<int:circuit_id>/live/outlets/<key>/taken-at")
@role_required(*TESTING_ROLES)
def taken_at(circuit_id: int, key: str):
    circuit = get_or_404(Circuit, circuit_id)
    outlet = find_outlet(circuit, key)
    if outlet is None:
        abort(404)
    form = TakenAtForm()
    if not form.validate_on_submit() or (form.taken_at.data or None) not in (None, *TAKEN_AT):
        abort(400)
    try:
        changes.check_editable(circuit.job)
        changed = changes.edit_outlet(outlet, {"taken_at": form.taken_at.data or None},
                                      actor())
    except changes.Refused as refused:
        db.session.rollback()
        return _refused(circuit, refused)
    db.session.commit()
    words = TAKEN_AT_LABELS.get(outlet.taken_at, "not said")
    flash(f"Outlet {outlet.key}: readings taken {words}." if changed else "Nothing changed.",
          "ok")
    return redirect(url_for("live.page", circuit_id=circuit.id,
                            _anchor=anchor_for("zs_measured", outlet.key)))


@bp.post("/<int:circuit_id>/live/circuit")
@role_required(*TESTING_ROLES)
def save_circuit(circuit_id: int):
    circuit = get_or_404(Circuit, circuit_id)
    form = LiveCircuitForm()
    rcd = ({"rated_ma": circuit.rcd_rated_ma, "type": circuit.rcd_type}
           if circuit.rcd_rated_ma else None)
    values = form.schedule_values(rcd) if form.validate_on_submit() else None
    if values is None:
        return render_page(circuit, circuit_form=form, status=422)
    try:
        changes.check_editable(circuit.job)
        changed = changes.update(circuit, values, actor())
    except changes.Refused as refused:
        db.session.rollback()
        return _refused(circuit, refused)
    db.session.commit()
    flash("Circuit results saved." if changed else "Nothing changed.", "ok")
    return redirect(url_for("live.page", circuit_id=circuit.id, _anchor="circuit-results"))


@bp.app_template_global("live_for")
def live_for(circuit: Circuit, diagnosis: dict | None) -> dict:
    """The live tests' summary for a page that shows a circuit's results (Results)."""
    return lf.live_summary(circuit_record(circuit, with_job=False), diagnosis)
