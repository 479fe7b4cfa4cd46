"""JSON export and import of a job in the ``ringtest/1`` job document format."""

from flask import Blueprint

bp = Blueprint("transfer", __name__)

from fieldapp.transfer import views  # noqa: E402, F401
