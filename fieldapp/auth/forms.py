"""Login form."""

from flask_wtf import FlaskForm
from wtforms import BooleanField, PasswordField, StringField, SubmitField
from wtforms.validators import DataRequired, EqualTo, Length


class LoginForm(FlaskForm):
    username = StringField("User name", validators=[DataRequired(), Length(max=64)],
                           render_kw={"autocomplete": "username", "autocapitalize": "none"})
    password = PasswordField("Password", validators=[DataRequired(), Length(max=200)],
                             render_kw={"autocomplete": "current-password"})
    remember = BooleanField("Keep me logged in on this device")
    submit = SubmitField("Log in")


#: Shortest password a person may choose (the generated ones are longer).
MIN_PASSWORD = 10


class PasswordForm(FlaskForm):
    current = PasswordField("Current password", validators=[DataRequired(), Length(max=200)],
                            render_kw={"autocomplete": "current-password"})
    new = PasswordField("New password", validators=[
        DataRequired(), Length(min=MIN_PASSWORD, max=200,
                               message=f"{MIN_PASSWORD} to 200 characters.")],
        render_kw={"autocomplete": "new-password"})
    again = PasswordField("New password again", validators=[
        DataRequired(), EqualTo("new", message="The two new passwords differ.")],
        render_kw={"autocomplete": "new-password"})
    submit = SubmitField("Change password")
