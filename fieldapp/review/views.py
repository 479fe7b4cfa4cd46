"""The supervisor's job list, the review page, approve / return / reopen, and the history."""

from __future__ import annotations

from flask import flash, redirect, render_template, request, url_for
from flask_login import current_user, login_required
from sqlalchemy import case, or_, select

from fieldapp import changes
from fieldapp.auth.roles import REVIEW_ROLES, role_required
from fieldapp.diary import FIELD_WORDS, job_diary
from fieldapp.extensions import db
from fieldapp.labels import outlet_name
from fieldapp.models import Circuit, Job, Outlet, utcnow
from fieldapp.records import circuit_reference
from fieldapp.review import bp
from fieldapp.review.flags import job_flags
from fieldapp.review.forms import (
    REASON_NEEDED,
    STATUS_LABELS,
    ApproveForm,
    FilterForm,
    ReopenForm,
    ReturnForm,
)
from fieldapp.review.gate import document_problems, job_problems
from fieldapp.review.signoff import sign_off
from fieldapp.sheets.context import sheet_context
from fieldapp.sheets.inputs import job_inputs
from fieldapp.web import actor, get_or_404, valid_id
from ringmath.messages import CAUTIONS

#: Jobs waiting for a decision first, then those with the tester, then the finished ones.
LIST_ORDER = case({"submitted": 0, "returned": 1, "in_progress": 2, "approved": 3},
                  value=Job.status, else_=4)


def _like(text: str) -> str:
    """A LIKE pattern matching ``text`` anywhere, with its own % and _ taken literally."""
    escaped = text.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
    return f"%{escaped}%"


@bp.get("/")
@role_required(*REVIEW_ROLES)
def index():
    form = FilterForm(request.args)
    query = select(Job).order_by(LIST_ORDER, Job.date.desc().nulls_last(), Job.id.desc())
    if form.validate():
        if form.status.data:
            query = query.where(Job.status == form.status.data)
        text = (form.q.data or "").strip()
        if text:
            pattern = _like(text)
            query = query.where(or_(Job.site.ilike(pattern, escape="\\"),
                                    Job.reference.ilike(pattern, escape="\\")))
    rows = []
    for job in db.session.scalars(query):
        rows.append({"job": job, "flags": job_flags(job_problems(job), job.submit_reason,
                                                     job.approve_reason)})
    return render_template("review/index.html", form=form, rows=rows,
                           status_labels=STATUS_LABELS, cautions=CAUTIONS)


def _review_page(job: Job, status: int = 200, **forms):
    inputs = job_inputs(job)
    sheet = sheet_context(**inputs)
    problems = document_problems(inputs["document"], inputs["diagnoses"], inputs["problems"])
    forms = {"approve_form": ApproveForm(), "return_form": ReturnForm(),
             "reopen_form": ReopenForm(), **forms}
    outlet_ids = {(o.circuit_id, o.key): o.id for c in job.circuits for o in c.outlets}
    return render_template("review/job.html", job=job, sheet=sheet,
                           circuits=list(zip(job.circuits, sheet["circuits"], strict=True)),
                           outlet_ids=outlet_ids, status_labels=STATUS_LABELS,
                           problems=problems, **forms), status


@bp.get("/jobs/<int:job_id>")
@role_required(*REVIEW_ROLES)
def job(job_id: int):
    return _review_page(get_or_404(Job, job_id))


def _not_in(job: Job, allowed_from: str, action: str):
    """The redirect back to the job, with why, when it is not in ``allowed_from``; else None."""
    if job.status == allowed_from:
        return None
    flash(f"Job {job.reference} is {STATUS_LABELS[job.status]}: nothing to {action}.", "error")
    return redirect(url_for("review.job", job_id=job.id))


def _decide(job_id: int, form_cls, form_name: str, allowed_from: str, values, done: str):
    """One review decision: the form valid, the job in ``allowed_from``, the values logged."""
    job = get_or_404(Job, job_id)
    form = form_cls()
    refused = _not_in(job, allowed_from, form.submit.label.text.lower())
    if refused is not None:
        return refused
    if not form.validate_on_submit():
        return _review_page(job, 400, **{form_name: form})
    changes.update(job, values(form, utcnow()), actor())
    db.session.commit()
    flash(done.format(reference=job.reference), "ok")
    return redirect(url_for("review.job", job_id=job.id))


@bp.post("/jobs/<int:job_id>/approve")
@role_required(*REVIEW_ROLES)
def approve(job_id: int):
    """Approve a submitted job; one with problems (fieldapp/review/gate.py) only with a reason."""
    job = get_or_404(Job, job_id)
    form = ApproveForm()
    refused = _not_in(job, "submitted", "approve")
    if refused is not None:
        return refused
    if not form.validate_on_submit():
        return _review_page(job, 400, approve_form=form)
    now = utcnow()
    values = {"status": "approved", "reviewed_by_id": current_user.id, "reviewed_at": now,
              "approved_by_id": current_user.id, "approved_at": now,
              "review_comment": (form.note.data or "").strip() or None}
    problems, done = sign_off(job, "approve", values, form.reason.data, actor())
    if not done:
        form.reason.errors = [REASON_NEEDED]
        return _review_page(job, 422, approve_form=form)
    db.session.commit()
    flash(f"Job {job.reference} approved{' with the reason given' if problems else ''}: "
          "it is now read-only.", "ok")
    return redirect(url_for("review.job", job_id=job.id))


@bp.post("/jobs/<int:job_id>/return")
@role_required(*REVIEW_ROLES)
def return_job(job_id: int):
    def values(form, now):
        return {"status": "returned", "reviewed_by_id": current_user.id, "reviewed_at": now,
                "review_comment": form.comment.data.strip()}
    return _decide(job_id, ReturnForm, "return_form", "submitted", values,
                   "Job {reference} returned to its tester.")


@bp.post("/jobs/<int:job_id>/reopen")
@role_required(*REVIEW_ROLES)
def reopen(job_id: int):
    def values(form, now):
        return {"status": "returned", "reviewed_by_id": current_user.id, "reviewed_at": now,
                "approved_by_id": None, "approved_at": None, "approve_reason": None,
                "review_comment": form.reason.data.strip()}
    return _decide(job_id, ReopenForm, "reopen_form", "approved", values,
                   "Job {reference} reopened and returned to its tester.")


@bp.get("/jobs/<int:job_id>/history")
@login_required
def history(job_id: int):
    """The job's change log, newest first; ``circuit``, ``outlet`` (id) and ``field`` narrow
    it down to one reading."""
    job = get_or_404(Job, job_id)
    circuit_id = request.args.get("circuit", type=valid_id)
    outlet_id = request.args.get("outlet", type=valid_id)
    field = request.args.get("field") or None
    circuit = db.session.get(Circuit, circuit_id) if circuit_id else None
    outlet = db.session.get(Outlet, outlet_id) if outlet_id else None
    if (circuit is not None and circuit.job_id != job.id) or (
            outlet is not None and outlet.circuit.job_id != job.id):
        return render_template("error.html", title="Not in this job",
                               message="That circuit or outlet belongs to another job."), 404
    rows = job_diary(job, circuit_id, outlet_id, field)
    return render_template("review/history.html", job=job, rows=rows,
                           circuit_ref=circuit_reference(circuit) if circuit else None,
                           outlet=outlet, field=FIELD_WORDS.get(field, field),
                           outlet_title=outlet_name(outlet.key, outlet.label) if outlet else "",
                           cautions=CAUTIONS)
