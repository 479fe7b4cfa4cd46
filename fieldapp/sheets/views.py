"""The job sheet as a PDF download."""

from __future__ import annotations

from flask import Response
from flask_login import login_required

from fieldapp.models import Job
from fieldapp.sheets import bp
from fieldapp.sheets.inputs import job_inputs
from fieldapp.sheets.pdf import sheet_pdf
from fieldapp.transfer.documents import file_name
from fieldapp.web import get_or_404


@bp.get("/jobs/<int:job_id>/sheet.pdf")
@login_required
def job_sheet(job_id: int):
    job = get_or_404(Job, job_id)
    pdf = sheet_pdf(**job_inputs(job))
    name = file_name(job, ".pdf")
    return Response(pdf, mimetype="application/pdf",
                    headers={"Content-Disposition": f'inline; filename="{name}"'})
