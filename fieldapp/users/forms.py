"""Forms for managing accounts."""

from __future__ import annotations

from flask_wtf import FlaskForm
from wtforms import SelectField, StringField, SubmitField
from wtforms.validators import DataRequired, Length, Regexp

from fieldapp.models import ROLES
from fieldapp.web import options


class UserForm(FlaskForm):
    username = StringField("User name", validators=[
        DataRequired(), Length(min=2, max=64),
        Regexp(r"^[a-z0-9][a-z0-9._-]*$",
               message="Small letters, digits, '.', '-' or '_', starting with a letter or digit.")],
        render_kw={"autocapitalize": "none", "autocomplete": "off"})
    name = StringField("Full name", validators=[DataRequired(), Length(max=120)])
    role = SelectField("Role", choices=options((r, r) for r in ROLES), default="apprentice")
    mentor_id = SelectField("Works under (for an apprentice)", coerce=int, default=0,
                            description="The tester who may submit this apprentice's jobs.")
    submit = SubmitField("Add user")


class ActionForm(FlaskForm):
    """A button that changes an account (CSRF token only)."""

    submit = SubmitField("Confirm")
