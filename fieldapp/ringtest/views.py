"""The guided ring test: safety checks -> step 1 -> step 2 -> step 3 -> results.

Every reading is one small form post (the page script sends the same thing to the JSON API).
Views parse and store through fieldapp.changes, build the record with fieldapp.records, and
hand ringmath.diagnose's plain values to the templates.
"""

from __future__ import annotations

from flask import abort, flash, redirect, render_template, request, url_for
from flask_login import login_required
from markupsafe import Markup
from sqlalchemy import select

from fieldapp import changes, drawings
from fieldapp.auth.roles import TESTING_ROLES, can_test, role_required
from fieldapp.extensions import db
from fieldapp.models import STEPS, Circuit, Outlet, User, utcnow
from fieldapp.records import diagnose_circuit
from fieldapp.ringtest import bp
from fieldapp.ringtest import feedback as fb
from fieldapp.ringtest.forms import (
    KIND_LABELS,
    ActionForm,
    OutletForm,
    ReadingForm,
    SafetyForm,
)
from fieldapp.web import actor, get_or_404
from ringmath import parse_reading
from ringmath.record import parse_outlet

READING_STEPS = ("e2e", "ln", "le")
STEP_INFO = {
    "safety": {"number": 0, "short": "Safety", "title": "Safe isolation"},
    "e2e": {
        "number": 1, "short": "Step 1", "title": "End-to-end readings",
        "join": "Nothing joined yet. At the board, take the two ends of the ring apart and "
                "measure each conductor from one end to the other.",
    },
    "ln": {
        "number": 2, "short": "Step 2", "title": "Line to neutral at every outlet",
        "join": "At the board, join L1 to N2 and L2 to N1 (line of one end to neutral of the "
                "other). Then at each outlet measure between line and neutral.",
    },
    "le": {
        "number": 3, "short": "Step 3", "title": "Line to CPC at every outlet",
        "join": "At the board, join L1 to CPC2 and L2 to CPC1 (line of one end to earth of "
                "the other). Then at each outlet measure between line and earth (CPC). "
                "Each reading is that outlet's R1+R2.",
    },
    "results": {"number": 4, "short": "Results", "title": "Results"},
}
E2E_READINGS = (
    ("r1", "r1 · line end to end", "Between the two line ends, L1 and L2."),
    ("rn", "rn · neutral end to end", "Between the two neutral ends, N1 and N2."),
    ("r2", "r2 · CPC end to end", "Between the two CPC (earth) ends, CPC1 and CPC2."),
)
READING_NAMES = {"r1": "r1", "rn": "rn", "r2": "r2", "ln": "L–N", "le": "L–CPC"}
FALLBACK_CAUTIONS = (
    "Test only a circuit that is safely isolated, locked off and proved dead.",
    "Testing is for a competent person; this app advises, it does not certify.",
    "BS 7671 and local codes prevail over anything shown here.",
    "Readings must be verified before the circuit is put into service.",
)


@bp.app_template_filter("ohm")
def ohm_filter(value, places: int = 2) -> str:
    return fb.ohm(value, places)


@bp.app_template_filter("named")
def named_filter(ids, names: dict | None) -> str:
    """Outlet ids as "a · Kitchen, c · Hall" (ids alone where the name is unknown)."""
    return ", ".join((names or {}).get(i, str(i)) for i in ids or ())


def _circuit(circuit_id: int) -> Circuit:
    return get_or_404(Circuit, circuit_id)


def _outlet(circuit: Circuit, key: str | None) -> Outlet:
    for outlet in changes.live_outlets(circuit):
        if outlet.key == key:
            return outlet
    abort(404)


def _step_url(circuit: Circuit, step: str, anchor: str | None = None) -> str:
    if step == "safety":
        return url_for("ringtest.safety", circuit_id=circuit.id)
    if step == "results":
        return url_for("ringtest.results", circuit_id=circuit.id)
    return url_for("ringtest.step", circuit_id=circuit.id, step=step,
                   _anchor=anchor) if anchor else url_for(
        "ringtest.step", circuit_id=circuit.id, step=step)


def _writable(circuit: Circuit) -> bool:
    return can_test() and circuit.job.status in changes.EDITABLE_STATUSES


def _stepper(circuit: Circuit, here: str) -> list[dict]:
    reached = STEPS.index(circuit.current_step) if circuit.current_step in STEPS else 0
    return [{"step": s, "short": STEP_INFO[s]["short"], "url": _step_url(circuit, s),
             "here": s == here, "done": i < reached} for i, s in enumerate(STEPS)]


def anchor_for(field: str, key: str | None) -> str:
    return f"r-{field}-{key}" if key else f"r-{field}"


def _reading_items(circuit: Circuit, step: str, diagnosis: dict | None) -> list[dict]:
    if step == "e2e":
        rows = [(f, None, title, hint, getattr(circuit, f)) for f, title, hint in E2E_READINGS]
    else:
        rows = [(step, o, f"{o.key} · {o.label or KIND_LABELS.get(o.kind, o.kind)}",
                 _outlet_hint(o), getattr(o, step)) for o in changes.live_outlets(circuit)]
    items = []
    for field, outlet, title, hint, value in rows:
        key = outlet.key if outlet is not None else None
        items.append({
            "field": field, "key": key, "outlet": outlet, "title": title, "hint": hint,
            "value": value, "anchor": anchor_for(field, key),
            "feedback": fb.feedback(diagnosis, field, key),
            "form": ReadingForm(formdata=None, data={"field": field, "outlet": key or ""}),
        })
    return items


def _outlet_hint(outlet: Outlet) -> str:
    words = [KIND_LABELS.get(outlet.kind, outlet.kind)]
    if outlet.spur_from_key:
        words.append(f"spur from {outlet.spur_from_key}")
    if outlet.fuse_a:
        words.append(f"{outlet.fuse_a:g} A fuse")
    return ", ".join(words)


def _next_pending(items: list[dict]) -> dict | None:
    return next((i for i in items if i["value"] is None), None)


def render_step(circuit: Circuit, step: str, *, bad: ReadingForm | None = None,
                outlet_form: OutletForm | None = None, status: int = 200):
    """The page of one reading step; ``bad`` is a submitted reading form with its errors."""
    diagnosis, diagnosis_error = diagnose_circuit(circuit)
    items = _reading_items(circuit, step, diagnosis)
    if bad is not None:
        for item in items:
            if item["field"] == bad.field.data and (item["key"] or "") == (bad.outlet.data or ""):
                item["form"] = bad
    if outlet_form is None and step != "e2e":
        outlet_form = OutletForm(formdata=None)
    if outlet_form is not None:
        outlet_form.set_sources(changes.live_outlets(circuit))
    pending = _next_pending(items)
    following = STEPS[STEPS.index(step) + 1]
    return render_template(
        "ringtest/step.html", circuit=circuit, job=circuit.job, step=step,
        info=STEP_INFO[step], stepper=_stepper(circuit, step), items=items,
        focus=(bad and anchor_for(bad.field.data, bad.outlet.data or None))
        or (pending and pending["anchor"]),
        leading=fb.leading(diagnosis), diagnosis_error=diagnosis_error,
        expected=(diagnosis or {}).get("expected"),
        diagram=drawings.connection_diagram(step), outlet_form=outlet_form,
        next_form=ActionForm(formdata=None), next_step=following,
        next_info=STEP_INFO[following], writable=_writable(circuit),
        safe=changes.safety_confirmed(circuit), names=fb.outlet_names(diagnosis),
    ), status


@bp.get("/<int:circuit_id>/test")
@login_required
def resume(circuit_id: int):
    """Back to where this circuit's test stopped."""
    circuit = _circuit(circuit_id)
    step = circuit.current_step if circuit.current_step in STEPS else "safety"
    if step == "safety" and changes.safety_confirmed(circuit):
        step = "e2e"
    return redirect(_step_url(circuit, step))


@bp.route("/<int:circuit_id>/test/safety", methods=["GET", "POST"])
@login_required
def safety(circuit_id: int):
    circuit = _circuit(circuit_id)
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
            return redirect(_step_url(circuit, "safety"))
        if form.validate_on_submit():
            if form.isolated.data and form.locked_off.data and form.proved_dead.data:
                who = actor()
                values = {"safety_isolated": True, "safety_locked_off": True,
                          "safety_proved_dead": True}
                if not changes.safety_confirmed(circuit):
                    values.update({"safety_confirmed_by_id": who.user_id,
                                   "safety_confirmed_at": utcnow()})
                if circuit.current_step == "safety":
                    values["current_step"] = "e2e"
                changes.update(circuit, values, who)
                db.session.commit()
                flash("Safety checks recorded. Step 1: end-to-end readings.", "ok")
                return redirect(_step_url(circuit, "e2e"))
            form.submit.errors = ["Tick all three before any test: readings on a live or "
                                  "unproved circuit are dangerous and meaningless."]
    confirmed_by = (db.session.get(User, circuit.safety_confirmed_by_id)
                    if circuit.safety_confirmed_by_id else None)
    return render_template("ringtest/safety.html", circuit=circuit, job=circuit.job,
                           form=form, stepper=_stepper(circuit, "safety"),
                           info=STEP_INFO["safety"], writable=_writable(circuit),
                           confirmed=changes.safety_confirmed(circuit),
                           confirmed_by=confirmed_by), 422 if form.submit.errors else 200


@bp.get("/<int:circuit_id>/test/<step>")
@login_required
def step(circuit_id: int, step: str):
    if step not in READING_STEPS:
        abort(404)
    return render_step(_circuit(circuit_id), step)


def note_progress(circuit: Circuit, step: str, who: changes.Actor) -> None:
    """A reading at a later step moves the resume point there (logged like any change)."""
    if STEPS.index(step) > STEPS.index(circuit.current_step):
        changes.update(circuit, {"current_step": step}, who)


def reading_message(error: ValueError) -> str:
    """ringmath's parse error in plain words for the form (the field path dropped)."""
    text = str(error)
    detail = text.split(": ", 1)[1] if ": " in text else text
    if "not a number" in detail or "expected a number" in detail:
        return (f"{detail[0].upper()}{detail[1:]}. Type the meter reading in ohms, e.g. 0.52, "
                "or tap OL if the meter shows OL.")
    if "below the lowest" in detail:
        return "A resistance cannot be negative. Check the reading and the meter's leads."
    if "above the highest" in detail:
        return (f"{detail[0].upper()}{detail[1:]} Ω: far above any ring reading. "
                "If the meter shows over-range, tap OL.")
    return f"{detail[0].upper()}{detail[1:]}."


@bp.post("/<int:circuit_id>/test/reading")
@role_required(*TESTING_ROLES)
def save_reading(circuit_id: int):
    circuit = _circuit(circuit_id)
    form = ReadingForm()
    field = form.field.data or ""
    step = "e2e" if field in changes.CIRCUIT_READINGS else field
    if field not in changes.READING_FIELDS or not form.validate_on_submit():
        if field in changes.READING_FIELDS and set(form.errors) == {"value"}:
            return render_step(circuit, step, bad=form, status=422)  # too long to be a reading
        abort(400)
    try:
        changes.check_ready_for_readings(circuit)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(_step_url(circuit, "safety" if circuit.job.status in
                                  changes.EDITABLE_STATUSES else step))
    outlet = _outlet(circuit, form.outlet.data) if field in changes.OUTLET_READINGS else None
    raw = form.raw_value()
    if raw is None:
        form.value.errors = ["Type the reading in ohms, or tap OL if the meter shows OL."]
        return render_step(circuit, step, bad=form, status=422)
    who = actor()
    try:
        result = changes.set_reading(circuit, field, raw, who, outlet=outlet,
                                     client_id=form.client_id.data or None)
    except ValueError as error:
        db.session.rollback()
        form.value.errors = [reading_message(error)]
        return render_step(circuit, step, bad=form, status=422)
    note_progress(circuit, step, who)
    db.session.commit()
    _flash_saved(circuit, field, outlet, result, raw)
    items = _reading_items(circuit, step, None)
    pending = _next_pending(items)
    return redirect(_step_url(circuit, step, pending["anchor"] if pending else "next"))


def _flash_saved(circuit, field, outlet, result: changes.ReadingWrite, raw) -> None:
    where = f"{outlet.key} ({outlet.label})" if outlet is not None else "end to end"
    name = READING_NAMES[field]
    if result.duplicate:
        if changes.reading_text(_parsed(raw)) != result.new:
            flash(f"This form was already sent: {name} at {where} was kept at "
                  f"{fb.ohm(result.new)}. Enter the new value again to change it.", "warning")
        else:
            flash(f"Already saved: {name} at {where} = {fb.ohm(result.new)}.", "info")
        return
    if result.old is not None and result.old != result.new:
        flash(f"Corrected {name} at {where}: {fb.ohm(result.old)} → {fb.ohm(result.new)} "
              "(the old value stays in the history).", "ok")
    else:
        flash(f"Saved {name} at {where}: {fb.ohm(result.new)}.", "ok")


def _parsed(raw):
    return parse_reading(raw, "value")


@bp.post("/<int:circuit_id>/test/<step>/done")
@role_required(*TESTING_ROLES)
def advance(circuit_id: int, step: str):
    """Move on from a step; the circuit remembers the furthest step reached."""
    circuit = _circuit(circuit_id)
    if step not in READING_STEPS or not ActionForm().validate_on_submit():
        abort(400 if step in READING_STEPS else 404)
    following = STEPS[STEPS.index(step) + 1]
    if _writable(circuit) and STEPS.index(following) > STEPS.index(circuit.current_step):
        changes.update(circuit, {"current_step": following}, actor())
        db.session.commit()
    return redirect(_step_url(circuit, following))


def _outlet_errors(form: OutletForm) -> bool:
    """Check the outlet with ringmath's own rules (FCU fuse ratings and so on)."""
    values = form.values()
    doc = {"id": "new", "kind": values["kind"], "fuse_a": values["fuse_a"],
           "spur_from": values["spur_from_key"], "spur_csa_mm2": values["spur_csa_mm2"],
           "spur_cpc_csa_mm2": values["spur_cpc_csa_mm2"], "label": values["label"]}
    try:
        parse_outlet(doc, "outlet")
    except ValueError as error:
        path, _, message = str(error).partition(": ")
        name = {"outlet.fuse_a": "fuse_a", "outlet.kind": "kind"}.get(path, "label")
        getattr(form, name).errors = [f"{message[0].upper()}{message[1:]}."]
        return True
    return False


@bp.post("/<int:circuit_id>/outlets")
@role_required(*TESTING_ROLES)
def add_outlet(circuit_id: int):
    circuit = _circuit(circuit_id)
    step = request.args.get("step") if request.args.get("step") in ("ln", "le") else "ln"
    try:
        changes.check_ready_for_readings(circuit)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(_step_url(circuit, step))
    form = OutletForm()
    form.set_sources(changes.live_outlets(circuit))
    if not form.validate_on_submit() or _outlet_errors(form):
        return render_step(circuit, step, outlet_form=form, status=422)
    try:
        outlet = changes.add_outlet(circuit, form.values(), actor(),
                                    client_id=form.client_id.data or None)
    except ValueError as error:
        db.session.rollback()
        form.spur_from_key.errors = [str(error).partition(": ")[2] or str(error)]
        return render_step(circuit, step, outlet_form=form, status=422)
    db.session.commit()
    flash(f"Added outlet {outlet.key}: {outlet.label}.", "ok")
    return redirect(_step_url(circuit, step, anchor_for(step, outlet.key)))


@bp.route("/<int:circuit_id>/outlets/<key>/edit", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def edit_outlet(circuit_id: int, key: str):
    circuit = _circuit(circuit_id)
    outlet = _outlet(circuit, key)
    back = request.args.get("step") if request.args.get("step") in ("ln", "le") else "ln"
    try:
        changes.check_editable(circuit.job)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(_step_url(circuit, back))
    form = OutletForm(data=_outlet_data(outlet) if request.method == "GET" else None)
    form.set_sources(changes.live_outlets(circuit), exclude=outlet.key)
    form.submit.label.text = "Save outlet"
    if form.validate_on_submit() and not _outlet_errors(form):
        try:
            changed = changes.edit_outlet(outlet, form.values(), actor())
        except ValueError as error:
            db.session.rollback()
            form.spur_from_key.errors = [str(error).partition(": ")[2] or str(error)]
        else:
            db.session.commit()
            flash(f"Outlet {outlet.key} saved." if changed else "Nothing changed.", "ok")
            return redirect(_step_url(circuit, back, anchor_for(back, outlet.key)))
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
    circuit = _circuit(circuit_id)
    outlet = _outlet(circuit, key)
    back = request.args.get("step") if request.args.get("step") in ("ln", "le") else "ln"
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
    flash(f"Outlet {outlet.key} ({outlet.label}) removed from the test; "
          "its readings stay in the history.", "ok")
    return redirect(_step_url(circuit, back))


@bp.get("/<int:circuit_id>/results")
@login_required
def results(circuit_id: int):
    circuit = _circuit(circuit_id)
    diagnosis, diagnosis_error = diagnose_circuit(circuit)
    names = fb.outlet_names(diagnosis)
    return render_template(
        "ringtest/results.html", circuit=circuit, job=circuit.job, diagnosis=diagnosis,
        diagnosis_error=diagnosis_error, leading=fb.leading(diagnosis), names=names,
        stepper=_stepper(circuit, "results"), info=STEP_INFO["results"],
        cautions=(diagnosis or {}).get("cautions") or FALLBACK_CAUTIONS,
        ring_svg=drawings.ring_picture(diagnosis) if diagnosis else Markup(""),
        plot_svg=drawings.readings_plot(diagnosis) if diagnosis else Markup(""),
        kind_labels=KIND_LABELS, safe=changes.safety_confirmed(circuit),
    )


@bp.get("/<int:circuit_id>/history")
@login_required
def history(circuit_id: int):
    circuit = _circuit(circuit_id)
    keys = dict(db.session.execute(
        select(Outlet.id, Outlet.key).where(Outlet.circuit_id == circuit.id)).all())
    users = {u.id: u.name for u in db.session.scalars(select(User))}
    rows = [{"row": r, "what": ("circuit" if r.entity == "circuit" else
                                f"outlet {keys.get(r.entity_id, r.entity_id)}"),
             "who": users.get(r.user_id, "—")} for r in changes.history(circuit)]
    return render_template("ringtest/history.html", circuit=circuit, job=circuit.job,
                           rows=rows)
