"""Download a job as its JSON document; import one (upload form or JSON endpoint)."""

from __future__ import annotations

import json

from flask import Response, flash, redirect, render_template, request, url_for
from flask_login import current_user, login_required

from fieldapp import safejson
from fieldapp.auth.roles import TESTING_ROLES, role_required
from fieldapp.extensions import db
from fieldapp.models import Job
from fieldapp.transfer import bp
from fieldapp.transfer.documents import (
    export_document,
    file_name,
    file_safety_claim,
    import_job,
    imported_note,
)
from fieldapp.transfer.forms import MAX_DOCUMENT_BYTES, ImportForm
from fieldapp.transfer.schemas import DocumentError, ImportErrorsSchema, ImportResultSchema
from fieldapp.web import actor, get_or_404


def _json(data, status: int = 200, **headers) -> Response:
    """JSON in the document's own key order (jsonify would sort the keys)."""
    body = json.dumps(data, indent=2, ensure_ascii=False) + "\n"
    return Response(body, status=status, mimetype="application/json", headers=headers)


@bp.get("/jobs/<int:job_id>/export.json")
@login_required
def export_job(job_id: int):
    """The job document; ``?download=1`` makes it a file download."""
    job = get_or_404(Job, job_id)
    headers = {}
    if request.args.get("download"):
        headers["Content-Disposition"] = f'attachment; filename="{file_name(job)}"'
    return _json(export_document(job), 200, **headers)


def parse_upload(raw: bytes):
    """The JSON value in an uploaded file; DocumentError when it is not JSON."""
    if len(raw) > MAX_DOCUMENT_BYTES:
        raise DocumentError([f"document: larger than {MAX_DOCUMENT_BYTES // 1000} kB"])
    try:
        return safejson.loads(raw.decode("utf-8-sig"))
    except UnicodeDecodeError:
        raise DocumentError(["document: not UTF-8 text"]) from None
    except json.JSONDecodeError as exc:
        raise DocumentError([f"document: not valid JSON ({exc.msg} at line {exc.lineno}, "
                             f"column {exc.colno})"]) from None
    except ValueError as exc:  # nested too deeply, NaN, an integer of thousands of digits
        text = str(exc)
        raise DocumentError([text if text.startswith("document: ") else
                             f"document: not valid JSON ({text.split(':')[0]})"]) from None


def _with_reference(doc, reference: str | None):
    """The document with its job reference replaced (to import a copy under a new name)."""
    reference = (reference or "").strip()
    if reference and isinstance(doc, dict) and isinstance(doc.get("job"), dict):
        doc = {**doc, "job": {**doc["job"], "reference": reference}}
    return doc


def _import(doc):
    job, notes = import_job(doc, actor(), current_user)
    db.session.commit()
    return job, notes


@bp.route("/jobs/import", methods=["GET", "POST"])
@role_required(*TESTING_ROLES)
def import_form():
    form = ImportForm()
    errors: list[str] = []
    if form.validate_on_submit():
        try:
            doc = _with_reference(parse_upload(form.document.data.read()), form.reference.data)
            job, notes = _import(doc)
        except DocumentError as refused:
            errors = refused.errors
        else:
            flash(f"Job {job.reference} imported: {len(job.circuits)} circuit(s).", "ok")
            for note in notes:
                flash(note, "info")
            return redirect(url_for("jobs.detail", job_id=job.id))
    status = 422 if errors else (400 if form.errors else 200)
    return render_template("transfer/import.html", form=form, errors=errors), status


@bp.post("/api/jobs/import")
@role_required(*TESTING_ROLES)
def import_api():
    """A job document as the JSON body: 201 with the new job, or 422 with every error."""
    try:
        doc = parse_upload(request.get_data())
        job, notes = _import(doc)
    except DocumentError as refused:
        return _json(ImportErrorsSchema().dump({"errors": refused.errors}), 422)
    url = url_for("jobs.detail", job_id=job.id)
    return _json(ImportResultSchema().dump(
        {"job_id": job.id, "reference": job.reference, "url": url, "notes": notes}), 201,
        Location=url)


@bp.app_template_global("imported_note")
def imported_note_global(circuit) -> str | None:
    """"imported from a file by X at T" for the circuit pages (None when typed in here)."""
    return imported_note(circuit)


@bp.app_template_global("file_claim")
def file_claim_global(circuit) -> dict | None:
    return file_safety_claim(circuit)
