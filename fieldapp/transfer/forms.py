"""The upload form for importing a job document."""

from __future__ import annotations

from flask_wtf import FlaskForm
from flask_wtf.file import FileField, FileRequired
from wtforms import StringField, SubmitField
from wtforms.validators import Length, Optional

from fieldapp import limits

#: Largest job document accepted, in bytes (fieldapp/limits.py says why).
MAX_DOCUMENT_BYTES = limits.MAX_DOCUMENT_BYTES


class ImportForm(FlaskForm):
    document = FileField("Job file (.json)", validators=[FileRequired("Choose a job file.")])
    reference = StringField(
        "New job reference (optional)", validators=[Optional(), Length(max=40)],
        description="Leave empty to keep the reference in the file; give one to import a copy "
                    "of a job that is already here.")
    submit = SubmitField("Import job")
