"""The guided ring test of one circuit: safety checks, three steps, results."""

from flask import Blueprint

bp = Blueprint("ringtest", __name__, url_prefix="/circuits")

from fieldapp.ringtest import filters, views  # noqa: E402, F401
