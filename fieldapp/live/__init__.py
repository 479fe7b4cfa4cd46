"""The live tests after step 3: measured Zs at chosen outlets, fault current, insulation and
RCD results, where readings were taken and re-measures at the terminals."""

from flask import Blueprint

bp = Blueprint("live", __name__, url_prefix="/circuits")

from fieldapp.live import views  # noqa: E402, F401
