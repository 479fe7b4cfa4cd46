"""The live tests after step 3: measured Zs at chosen outlets, fault current, insulation and
RCD results, where readings were taken and re-measures at the terminals.

Only the blueprint lives here, so that the circuit form and the transfer schemas can use
``fieldapp.live.forms`` / ``fieldapp.live.values`` without importing every page's views (an
import cycle through the ringtest, review, sheet and transfer blueprints). The app factory
registers ``fieldapp.live.views``, which adds the routes to this blueprint.
"""

from flask import Blueprint

bp = Blueprint("live", __name__, url_prefix="/circuits")
