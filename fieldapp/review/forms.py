"""Forms of the review: the list filter, and the approve / return / reopen decisions."""

from __future__ import annotations

from flask_wtf import FlaskForm
from wtforms import SelectField, StringField, SubmitField, TextAreaField
from wtforms.validators import DataRequired, Length, Optional

from fieldapp.labels import JOB_STATUS_WORDS
from fieldapp.models import JOB_STATUSES
from fieldapp.web import options

#: The job statuses in words: the app's one set (fieldapp/labels.py).
STATUS_LABELS = JOB_STATUS_WORDS


class FilterForm(FlaskForm):
    """The job list's filter (a GET form: nothing changes, so no CSRF token)."""

    class Meta:
        csrf = False

    status = SelectField("Status", choices=options([("", "any status")] + [
        (s, STATUS_LABELS[s]) for s in JOB_STATUSES]), validators=[Optional()])
    q = StringField("Site or job reference", validators=[Optional(), Length(max=100)])
    submit = SubmitField("Show")


#: The reason typed to sign off a job that has problems (fieldapp/review/gate.py).
REASON_LENGTH = 2000
REASON_NEEDED = "Say why the job can go on with these problems."


class ApproveForm(FlaskForm):
    note = TextAreaField("Note for the job (optional)", validators=[Optional(), Length(max=2000)])
    reason = TextAreaField("Why approve it with these problems", validators=[
        Optional(), Length(max=REASON_LENGTH)])
    submit = SubmitField("Approve job")


class ReturnForm(FlaskForm):
    comment = TextAreaField(
        "What the tester must do", validators=[DataRequired("Say what needs doing."),
                                               Length(max=2000)])
    submit = SubmitField("Return to the tester")


class ReopenForm(FlaskForm):
    reason = TextAreaField(
        "Why the approved job is reopened", validators=[DataRequired("Give the reason."),
                                                        Length(max=2000)])
    submit = SubmitField("Reopen job")
