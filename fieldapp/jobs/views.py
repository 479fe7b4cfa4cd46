"""Job list, job page, job and circuit forms, submitting a job for review."""

from __future__ import annotations

import datetime as dt

from flask import abort, flash, redirect, render_template, request, url_for
from flask_login import current_user, login_required
from sqlalchemy import func, select

from fieldapp import changes, limits
from fieldapp.auth.roles import (
    REVIEW_ROLES,
    TESTING_ROLES,
    may_assign_tester,
    may_submit,
    role_required,
)
from fieldapp.extensions import db
from fieldapp.jobs import bp
from fieldapp.jobs.forms import CircuitForm, JobForm, SubmitJobForm, circuit_form_data
from fieldapp.models import Circuit, Job, User, utcnow
from fieldapp.web import actor, get_or_404, options
from ringmath.messages import CAUTIONS


def _tester_choices() -> list:
    users = db.session.scalars(
        select(User).where(User.role.in_(TESTING_ROLES)).order_by(User.name))
    return options([(0, "—")] + [(u.id, f"{u.name} ({u.role})") for u in users])


def _suggest_reference() -> str:
    stem = f"J-{dt.date.today():%y%m%d}"
    taken = set(db.session.scalars(select(Job.reference).where(Job.reference.like(f"{stem}-%"))))
    n = 1
    while f"{stem}-{n}" in taken:
        n += 1
    return f"{stem}-{n}"


def _job_values(form: JobForm) -> dict:
    return {
        "reference": form.reference.data.strip(), "site": form.site.data.strip(),
        "client": (form.client.data or "").strip(), "date": form.date.data,
        "tester_id": form.tester_id.data or None, "notes": (form.notes.data or "").strip(),
        "instrument_model": (form.instrument_model.data or "").strip() or None,
        "instrument_serial": (form.instrument_serial.data or "").strip() or None,
    }


def _reference_taken(form: JobForm, job: Job | None) -> bool:
    other = db.session.scalar(select(Job).where(Job.reference == form.reference.data.strip()))
    if other is not None and other is not job:
        form.reference.errors.append("Another job already has this reference.")
        return True
    return False


def _status() -> int:
    """422 for a form that came back with errors, 200 for a fresh one."""
    return 422 if request.method == "POST" else 200


def _refuse_locked(job: Job):
    """A redirect to the job page when the job can no longer change, else None."""
    try:
        changes.check_editable(job)
    except changes.Refused as refused:
        flash(str(refused), "error")
        return redirect(url_for("jobs.detail", job_id=job.id))
    return None


@bp.get("/")
@login_required
def index():
    status = request.args.get("status") or None
    query = select(Job).order_by(Job.date.desc().nulls_last(), Job.id.desc())
    if status:
        query = query.where(Job.status == status)
    jobs = list(db.session.scalars(query))
    counts = dict(db.session.execute(
        select(Circuit.job_id, func.count(Circuit.id)).group_by(Circuit.job_id)).all())
    return render_template("jobs/index.html", jobs=jobs, counts=counts, status=status)


@bp.route("/new", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def new():
    form = JobForm()
    form.tester_id.choices = _tester_choices()
    if request.method == "GET":
        form.reference.data = _suggest_reference()
        form.date.data = dt.date.today()
        form.tester_id.data = current_user.id
    if form.validate_on_submit() and not _reference_taken(form, None):
        who = actor()
        values = _job_values(form)
        values.update({"created_by": who.user_id, "status": "in_progress"})
        job = changes.create(Job, values, who)
        db.session.commit()
        flash(f"Job {job.reference} created. Add its first circuit.", "ok")
        return redirect(url_for("jobs.new_circuit", job_id=job.id))
    return render_template("jobs/job_form.html", form=form, job=None), _status()


@bp.get("/<int:job_id>")
@login_required
def detail(job_id: int):
    job = get_or_404(Job, job_id)
    return render_template("jobs/detail.html", job=job, submit_form=SubmitJobForm(),
                           editable=job.status in changes.EDITABLE_STATUSES,
                           live_outlets=changes.live_outlets)


@bp.route("/<int:job_id>/edit", methods=["GET", "POST"])
@role_required(*TESTING_ROLES, *REVIEW_ROLES)
def edit(job_id: int):
    job = get_or_404(Job, job_id)
    locked = _refuse_locked(job)
    if locked:
        return locked
    form = JobForm(obj=job)
    form.tester_id.choices = _tester_choices()
    if request.method == "GET":
        form.tester_id.data = job.tester_id or 0
    if form.validate_on_submit() and not _reference_taken(form, job) and not _tester_refused(
            form, job):
        changed = changes.update(job, _job_values(form), actor())
        db.session.commit()
        flash("Job saved." if changed else "Nothing changed.", "ok")
        return redirect(url_for("jobs.detail", job_id=job.id))
    return render_template("jobs/job_form.html", form=form, job=job), _status()


def _tester_refused(form: JobForm, job: Job) -> bool:
    """Only the job's tester or a supervisor changes who tested it (README, ownership)."""
    if (form.tester_id.data or None) != job.tester_id and not may_assign_tester(
            current_user, job):
        form.tester_id.errors.append("Only the job's tester or a supervisor can change this.")
        return True
    return False


@bp.post("/<int:job_id>/submit")
@role_required(*TESTING_ROLES)
def submit(job_id: int):
    job = get_or_404(Job, job_id)
    if not may_submit(current_user, job):
        abort(403)  # the job's tester (for an apprentice: also their tester)
    locked = _refuse_locked(job)
    if locked:
        return locked
    form = SubmitJobForm()
    if form.validate_on_submit():
        if not job.circuits:
            flash("Add and test at least one circuit before submitting.", "error")
            return redirect(url_for("jobs.detail", job_id=job.id))
        # a job with problems (fieldapp/review/gate.py) goes on only with a typed reason;
        # imported here: the review package imports the transfer one, which imports jobs
        from fieldapp.review.forms import REASON_NEEDED
        from fieldapp.review.signoff import sign_off

        problems, done = sign_off(job, "submit", {"status": "submitted",
                                                  "submitted_at": utcnow()},
                                  form.reason.data, actor())
        if not done:
            if request.form.get("reason") is not None:
                form.reason.errors = [REASON_NEEDED]
            return render_template("review/signoff.html", job=job, form=form,
                                   problems=problems, cautions=CAUTIONS), 422
        db.session.commit()
        flash(f"Job {job.reference} submitted for review"
              f"{' with the reason given' if problems else ''}.", "ok")
    return redirect(url_for("jobs.detail", job_id=job.id))


@bp.route("/<int:job_id>/circuits/new", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def new_circuit(job_id: int):
    job = get_or_404(Job, job_id)
    locked = _refuse_locked(job)
    if locked:
        return locked
    if len(job.circuits) >= limits.MAX_CIRCUITS_PER_JOB:
        flash(f"A job holds at most {limits.MAX_CIRCUITS_PER_JOB} circuits: start another "
              "job for the rest of the installation.", "error")
        return redirect(url_for("jobs.detail", job_id=job.id))
    form = CircuitForm()
    if request.method == "GET" and job.circuits:
        last = job.circuits[-1]  # the next circuit is usually on the same board
        form.board.data = last.board
    if form.validate_on_submit():
        values = form.values()
        values.update({"job_id": job.id, "position": len(job.circuits) + 1,
                       "current_step": "safety"})
        circuit = changes.create(Circuit, values, actor())
        db.session.commit()
        flash("Circuit saved. Start with the safety checks.", "ok")
        return redirect(url_for("ringtest.resume", circuit_id=circuit.id))
    return render_template("jobs/circuit_form.html", form=form, job=job,
                           circuit=None), _status()


@bp.route("/circuits/<int:circuit_id>/edit", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def edit_circuit(circuit_id: int):
    circuit = get_or_404(Circuit, circuit_id)
    locked = _refuse_locked(circuit.job)
    if locked:
        return locked
    form = CircuitForm(data=circuit_form_data(circuit) if request.method == "GET" else None)
    if form.validate_on_submit():
        changed = changes.update(circuit, form.values(), actor())
        db.session.commit()
        flash("Circuit saved." if changed else "Nothing changed.", "ok")
        return redirect(url_for("jobs.detail", job_id=circuit.job_id))
    return render_template("jobs/circuit_form.html", form=form, job=circuit.job,
                           circuit=circuit), _status()
