"""JSON endpoints used by the page scripts (a reading in, instant feedback out)."""

from flask import Blueprint

bp = Blueprint("api", __name__, url_prefix="/api")

from fieldapp.api import offline, views  # noqa: E402, F401
