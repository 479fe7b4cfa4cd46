"""The supervisor's review: the team's jobs, one job's results, approve / return / reopen,
and the change history of any reading."""

from flask import Blueprint

bp = Blueprint("review", __name__, url_prefix="/review")

from fieldapp.review import views  # noqa: E402, F401
