"""A supervisor manages the team's accounts: add with a role, disable, reset a password."""

from flask import Blueprint

bp = Blueprint("users", __name__, url_prefix="/users")

from fieldapp.users import views  # noqa: E402, F401
