"""The printable job sheet (PDF)."""

from flask import Blueprint

bp = Blueprint("sheets", __name__)

from fieldapp.sheets import views  # noqa: E402, F401
