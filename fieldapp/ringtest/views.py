"""Routes of the guided test: safety checks -> step 1 -> step 2 -> step 3 -> results.

Every reading is one small form post (the page script sends the same thing to the JSON API);
both go through ``fieldapp.readings.save_reading``. Pages are built in ``pages``; outlets are
written through ``fieldapp.changes``.
"""

from __future__ import annotations

from typing import Any

from flask import abort, flash, redirect, render_template, request, url_for
from flask_login import login_required

from fieldapp import changes, readings
from fieldapp.auth.roles import TESTING_ROLES, can_test, role_required
from fieldapp.diary import circuit_diary
from fieldapp.extensions import db
from fieldapp.labels import outlet_name
from fieldapp.models import STEPS, Outlet, User, utcnow
from fieldapp.readings import anchor_for
from fieldapp.ringtest import bp
from fieldapp.ringtest.errors import outlet_error, spur_error
from fieldapp.ringtest.flashes import flash_saved
from fieldapp.ringtest.forms import ActionForm, OutletForm, ReadingForm, SafetyForm
from fieldapp.ringtest.pages import (
    get_circuit,
    get_outlet,
    render_results,
    render_step,
    step_url,
    stepper,
    writable,
)
from fieldapp.ringtest.text import READING_STEPS, STEP_INFO
from fieldapp.web import actor
from ringmath.messages import CAUTIONS


@bp.get("/<int:circuit_id>/test")
@login_required
def resume(circuit_id: int):
    """Back to where this circuit's test stopped."""
    circuit = get_circuit(circuit_id)
    step = circuit.current_step if circuit.current_step in STEPS else "safety"
    if step == "safety" and changes.safety_confirmed(circuit):
        step = "e2e"
    return redirect(step_url(circuit, step))


@bp.route("/<int:circuit_id>/test/safety", methods=["GET", "POST"])
@login_required
def safety(circuit_id: int):
    circuit = get_circuit(circuit_id)
    form = SafetyForm(data={"isolated": circuit.safety_isolated,
                            "locked_off": circuit.safety_locked_off,
                            "proved_dead": circuit.safety_proved_dead}
                      if request.method == "GET" else None)
    if request.method == "POST":
        if not can_test():
            abort(403)
        try:
            changes.check_editable(circuit.job)
        except changes.Refused as refused:
            flash(str(refused), "error")
            return redirect(step_url(circuit, "safety"))
        if form.validate_on_submit():
            if form.isolated.data and form.locked_off.data and form.proved_dead.data:
                who = actor()
                values: dict[str, Any] = {"safety_isolated": True, "safety_locked_off": True,
                                          "safety_proved_dead": True}
                if not changes.safety_confirmed(circuit):
                    values.update({"safety_confirmed_by_id": who.user_id,
                                   "safety_confirmed_at": utcnow()})
                if circuit.current_step == "safety":
                    values["current_step"] = "e2e"
                changes.update(circuit, values, who)
                db.session.commit()
                flash("Safety checks recorded. Step 1: end-to-end readings.", "ok")
                return redirect(step_url(circuit, "e2e"))
            form.submit.errors = ["Tick all three before any test: readings on a live or "
                                  "unproved circuit are dangerous and meaningless."]
    confirmed_by = (db.session.get(User, circuit.safety_confirmed_by_id)
                    if circuit.safety_confirmed_by_id else None)
    return render_template("ringtest/safety.html", circuit=circuit, job=circuit.job,
                           form=form, stepper=stepper(circuit, "safety"),
                           info=STEP_INFO["safety"], writable=writable(circuit),
                           confirmed=changes.safety_confirmed(circuit),
                           confirmed_by=confirmed_by), 422 if form.submit.errors else 200


@bp.get("/<int:circuit_id>/test/<step>")
@login_required
def step(circuit_id: int, step: str):
    if step not in READING_STEPS:
        abort(404)
    return render_step(get_circuit(circuit_id), step, at=request.args.get("at"))


@bp.post("/<int:circuit_id>/test/reading")
@role_required(*TESTING_ROLES)
def save_reading(circuit_id: int):
    circuit = get_circuit(circuit_id)
    form = ReadingForm()
    field = form.field.data or ""
    if field not in changes.READING_FIELDS or not form.validate_on_submit():
        if field in changes.READING_FIELDS and set(form.errors) == {"value"}:
            # too long to be a reading: the form with its message
            return render_step(circuit, readings.step_of(field), bad=form, status=422)
        abort(400)
    step = readings.step_of(field)
    outlet = (readings.find_outlet(circuit, form.outlet.data)
              if field in changes.OUTLET_READINGS else None)
    raw = form.raw_value()
    try:
        result = readings.save_reading(circuit, field, raw, actor(), outlet=outlet,
                                       client_id=form.client_id.data or None,
                                       keep=bool(form.keep.data))
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(step_url(circuit, "safety" if circuit.job.status in
                                 changes.EDITABLE_STATUSES else step))
    except readings.BadReading as bad:
        if bad.field == "outlet":
            abort(404)
        form.value.errors = [bad.message]
        return render_step(circuit, step, bad=form, slip=bad.slip, status=422)
    flash_saved(field, outlet, result, raw)
    following = readings.next_anchor(circuit, step)
    return redirect(step_url(circuit, step, following or "next"))


@bp.post("/<int:circuit_id>/test/<step>/done")
@role_required(*TESTING_ROLES)
def advance(circuit_id: int, step: str):
    """Move on from a step; the circuit remembers the furthest step reached."""
    circuit = get_circuit(circuit_id)
    if step not in READING_STEPS or not ActionForm().validate_on_submit():
        abort(400 if step in READING_STEPS else 404)
    following = STEPS[STEPS.index(step) + 1]
    if writable(circuit) and STEPS.index(following) > STEPS.index(circuit.current_step):
        changes.update(circuit, {"current_step": following}, actor())
        db.session.commit()
    return redirect(step_url(circuit, following))


def _outlet_errors(form: OutletForm) -> bool:
    """Check the outlet with ringmath's own rules; the message goes on the field it names."""
    error = outlet_error(form.values())
    if error is None:
        return False
    name, message = error
    getattr(form, name).errors = [message]
    return True


def _outlet_step() -> str:
    """The outlet step (``ln`` or ``le``) named by ``?step=``; ``ln`` for anything else."""
    step = request.args.get("step")
    return step if step is not None and step in ("ln", "le") else "ln"


@bp.post("/<int:circuit_id>/outlets")
@role_required(*TESTING_ROLES)
def add_outlet(circuit_id: int):
    circuit = get_circuit(circuit_id)
    step = _outlet_step()
    try:
        changes.check_ready_for_readings(circuit)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(step_url(circuit, step))
    form = OutletForm()
    form.set_sources(changes.live_outlets(circuit))
    if not form.validate_on_submit() or _outlet_errors(form):
        return render_step(circuit, step, outlet_form=form, status=422)
    try:
        outlet = changes.add_outlet(circuit, form.values(), actor(),
                                    client_id=form.client_id.data or None)
    except ValueError as error:
        db.session.rollback()
        form.spur_from_key.errors = [spur_error(error)]
        return render_step(circuit, step, outlet_form=form, status=422)
    db.session.commit()
    flash(f"Added outlet {outlet_name(outlet.key, outlet.label)}.", "ok")
    # its reading field takes the focus; no URL fragment, which would take the focus away
    return redirect(url_for("ringtest.step", circuit_id=circuit.id, step=step,
                            at=anchor_for(step, outlet.key)))


@bp.route("/<int:circuit_id>/outlets/<key>/edit", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def edit_outlet(circuit_id: int, key: str):
    circuit = get_circuit(circuit_id)
    outlet = get_outlet(circuit, key)
    back = _outlet_step()
    try:
        changes.check_editable(circuit.job)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(step_url(circuit, back))
    form = OutletForm(data=_outlet_data(outlet) if request.method == "GET" else None)
    form.set_sources(changes.live_outlets(circuit), exclude=outlet.key)
    form.submit.label.text = "Save outlet"
    if form.validate_on_submit() and not _outlet_errors(form):
        try:
            changed = changes.edit_outlet(outlet, form.values(), actor())
        except ValueError as error:
            db.session.rollback()
            form.spur_from_key.errors = [spur_error(error)]
        else:
            db.session.commit()
            flash(f"Outlet {outlet.key} saved." if changed else "Nothing changed.", "ok")
            return redirect(step_url(circuit, back, anchor_for(back, outlet.key)))
    return render_template("ringtest/outlet_form.html", circuit=circuit, job=circuit.job,
                           outlet=outlet, form=form, delete_form=ActionForm(formdata=None),
                           back=back), 422 if form.errors else 200


def _outlet_data(outlet: Outlet) -> dict:
    def g(value):
        return "" if value is None else f"{value:g}"

    return {"label": outlet.label, "kind": outlet.kind, "spur_from_key": outlet.spur_from_key
            or "", "fuse_a": g(outlet.fuse_a), "spur_csa_mm2": g(outlet.spur_csa_mm2),
            "spur_cpc_csa_mm2": g(outlet.spur_cpc_csa_mm2)}


@bp.post("/<int:circuit_id>/outlets/<key>/delete")
@role_required(*TESTING_ROLES)
def delete_outlet(circuit_id: int, key: str):
    circuit = get_circuit(circuit_id)
    outlet = get_outlet(circuit, key)
    back = _outlet_step()
    if not ActionForm().validate_on_submit():
        abort(400)
    try:
        changes.check_editable(circuit.job)
        changes.delete_outlet(outlet, actor())
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(url_for("ringtest.edit_outlet", circuit_id=circuit.id, key=key,
                                step=back))
    db.session.commit()
    flash(f"Outlet {outlet_name(outlet.key, outlet.label)} removed from the test; "
          "its readings stay in the history.", "ok")
    return redirect(step_url(circuit, back))


@bp.get("/<int:circuit_id>/results")
@login_required
def results(circuit_id: int):
    return render_results(get_circuit(circuit_id))


@bp.get("/<int:circuit_id>/history")
@login_required
def history(circuit_id: int):
    circuit = get_circuit(circuit_id)
    return render_template("ringtest/history.html", circuit=circuit, job=circuit.job,
                           rows=_diary(circuit), cautions=CAUTIONS)


def _diary(circuit):
    """The circuit's history as a diary (review's words). Imported here, not at the top: the
    review package imports the sheets, which import the live blueprint, which imports this
    package's forms."""

    return circuit_diary(circuit)
