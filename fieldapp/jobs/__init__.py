"""Jobs and their circuits: list, create, edit, submit for review."""

from flask import Blueprint

bp = Blueprint("jobs", __name__, url_prefix="/jobs")

from fieldapp.jobs import views  # noqa: E402, F401
