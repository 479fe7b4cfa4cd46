"""Building the guided test's pages: step links, the reading cards, a step page, results.

Plain values for the templates from the database rows and ``ringmath.diagnose`` output.
"""

from __future__ import annotations

from typing import Any

from flask import abort, render_template, url_for
from markupsafe import Markup

from fieldapp import changes, drawings, labels
from fieldapp.auth.roles import can_test
from fieldapp.models import STEPS, Circuit, Outlet
from fieldapp.readings import Slip, anchor_for, find_outlet
from fieldapp.records import diagnose_circuit
from fieldapp.ringtest import answer
from fieldapp.ringtest import feedback as fb
from fieldapp.ringtest.forms import ActionForm, OutletForm, ReadingForm
from fieldapp.ringtest.text import E2E_READINGS, STEP_INFO, STEP_TERMS
from fieldapp.web import get_or_404


def get_circuit(circuit_id: int) -> Circuit:
    return get_or_404(Circuit, circuit_id)


def get_outlet(circuit: Circuit, key: str | None) -> Outlet:
    outlet = find_outlet(circuit, key)
    if outlet is None:
        abort(404)
    return outlet


def step_url(circuit: Circuit, step: str, anchor: str | None = None) -> str:
    if step == "safety":
        return url_for("ringtest.safety", circuit_id=circuit.id)
    if step == "results":
        return url_for("ringtest.results", circuit_id=circuit.id)
    if anchor:
        return url_for("ringtest.step", circuit_id=circuit.id, step=step, _anchor=anchor)
    return url_for("ringtest.step", circuit_id=circuit.id, step=step)


def writable(circuit: Circuit) -> bool:
    return can_test() and circuit.job.status in changes.EDITABLE_STATUSES


def stepper(circuit: Circuit, here: str) -> list[dict]:
    reached = STEPS.index(circuit.current_step) if circuit.current_step in STEPS else 0
    return [{"step": s, "short": STEP_INFO[s]["short"], "url": step_url(circuit, s),
             "here": s == here, "done": i < reached} for i, s in enumerate(STEPS)]


def outlet_hint(outlet: Outlet) -> str:
    words = [labels.kind_label(outlet.kind)]
    if outlet.spur_from_key:
        words.append(labels.fed_from(outlet.spur_from_key))
    if outlet.fuse_a:
        words.append(f"{outlet.fuse_a:g} A fuse")
    return ", ".join(words)


def reading_items(circuit: Circuit, step: str, diagnosis: dict | None) -> list[dict]:
    """One card per reading of the step: title, hint, stored value, feedback, its form."""
    rows: list[tuple[str, Outlet | None, str, str, Any]]
    if step == "e2e":
        rows = [(f, None, title, hint, getattr(circuit, f)) for f, title, hint in E2E_READINGS]
    else:
        rows = [(step, o, labels.outlet_name(o.key, o.label, o.kind), outlet_hint(o),
                 getattr(o, step)) for o in changes.live_outlets(circuit)]
    items = []
    for field, outlet, title, hint, value in rows:
        key = outlet.key if outlet is not None else None
        items.append({
            "field": field, "key": key, "outlet": outlet, "title": title, "hint": hint,
            "value": value, "anchor": anchor_for(field, key), "slip": None,
            "feedback": fb.feedback(diagnosis, field, key),
            "form": ReadingForm(formdata=None, data={"field": field, "outlet": key or ""}),
        })
    return items


def render_step(circuit: Circuit, step: str, *, bad: ReadingForm | None = None,
                slip: Slip | None = None, outlet_form: OutletForm | None = None,
                at: str | None = None, status: int = 200):
    """The page of one reading step; ``bad`` is a submitted reading form with its errors and
    ``slip`` the decimal-point question about it; ``at`` the card whose field takes the focus
    (a new outlet's), else the first reading still due."""
    diagnosis, diagnosis_error = diagnose_circuit(circuit)
    items = reading_items(circuit, step, diagnosis)
    if bad is not None:
        for item in items:
            if item["field"] == bad.field.data and (item["key"] or "") == (bad.outlet.data or ""):
                item["form"] = bad
                item["slip"] = slip
    if outlet_form is None and step != "e2e":
        outlet_form = OutletForm(formdata=None)
    if outlet_form is not None:
        outlet_form.set_sources(changes.live_outlets(circuit))
    pending = next((i for i in items if i["value"] is None), None)
    if at is not None:
        pending = next((i for i in items if i["anchor"] == at), pending)
    following = STEPS[STEPS.index(step) + 1]
    return render_template(
        "ringtest/step.html", circuit=circuit, job=circuit.job, step=step,
        info=STEP_INFO[step], stepper=stepper(circuit, step), items=items,
        step_terms=STEP_TERMS[step],
        focus=(bad and anchor_for(bad.field.data, bad.outlet.data or None))
        or (pending and pending["anchor"]),
        leading=answer.leading(diagnosis), diagnosis_error=diagnosis_error,
        expected=(diagnosis or {}).get("expected"),
        diagram=drawings.connection_diagram(step), outlet_form=outlet_form,
        next_form=ActionForm(formdata=None), next_step=following,
        next_info=STEP_INFO[following], writable=writable(circuit),
        safe=changes.safety_confirmed(circuit), names=labels.outlet_names(diagnosis),
    ), status


def render_results(circuit: Circuit):
    diagnosis, diagnosis_error = diagnose_circuit(circuit)
    state = answer.zs_state(diagnosis) if diagnosis else None
    shown = answer.as_shown(diagnosis) if diagnosis else None
    return render_template(
        "ringtest/results.html", circuit=circuit, job=circuit.job, diagnosis=diagnosis,
        diagnosis_error=diagnosis_error, leading=answer.leading(diagnosis),
        names=labels.outlet_names(diagnosis), stepper=stepper(circuit, "results"),
        info=STEP_INFO["results"], cautions=labels.CAUTIONS,
        findings=answer.order_findings((diagnosis or {}).get("findings") or []),
        zs=state, tiles=answer.tiles(diagnosis, state) if diagnosis and state is not None else [],
        ring_svg=drawings.ring_picture(shown) if shown else Markup(""),
        plot_svg=drawings.readings_plot(shown) if shown else Markup(""),
        safe=changes.safety_confirmed(circuit), severity_words=labels.SEVERITY_WORDS,
    )
