"""Login form."""

from flask_wtf import FlaskForm
from wtforms import BooleanField, PasswordField, StringField, SubmitField
from wtforms.validators import DataRequired, Length


class LoginForm(FlaskForm):
    username = StringField("User name", validators=[DataRequired(), Length(max=64)],
                           render_kw={"autocomplete": "username", "autocapitalize": "none"})
    password = PasswordField("Password", validators=[DataRequired(), Length(max=200)],
                             render_kw={"autocomplete": "current-password"})
    remember = BooleanField("Keep me logged in on this device")
    submit = SubmitField("Log in")
