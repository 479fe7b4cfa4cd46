"""Login, logout and the user loader."""

from flask import Blueprint

bp = Blueprint("auth", __name__, template_folder=None)

from fieldapp.auth import views  # noqa: E402, F401
