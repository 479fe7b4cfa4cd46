"""The field app: a thin Flask layer over ringmath.

``create_app(config=None)`` builds the app; config comes from the environment (DATABASE_URL,
SECRET_KEY) and may be overridden by the ``config`` mapping (tests pass their own).
"""

from __future__ import annotations

import importlib
import os
from pathlib import Path

from flask import Flask, redirect, request, send_from_directory, url_for

from fieldapp import applog, background, compression, errors, labels, security
from fieldapp import config as app_config
from fieldapp.extensions import csrf, db, login_manager
from fieldapp.models import utcnow
from fieldapp.safejson import SafeJSONProvider
from fieldapp.web import IdConverter

ROOT = Path(__file__).resolve().parent.parent
#: Blueprints built in this package; optional ones are registered when their module exists.
BLUEPRINTS = ("fieldapp.auth", "fieldapp.jobs", "fieldapp.ringtest", "fieldapp.api",
              "fieldapp.review", "fieldapp.sheets", "fieldapp.transfer", "fieldapp.users",
              "fieldapp.live.views")


def create_app(config: dict | None = None) -> Flask:
    """The application factory."""
    overrides = dict(config or {})
    instance_path = (overrides.pop("INSTANCE_PATH", None)
                     or os.environ.get("FIELDAPP_INSTANCE_PATH") or str(ROOT / "instance"))
    app = Flask(
        __name__,
        instance_path=instance_path,
        template_folder=str(ROOT / "templates"),
        static_folder=str(ROOT / "static"),
        static_url_path="/static",
    )
    os.makedirs(app.instance_path, exist_ok=True)
    app.config.update(app_config.base_config(app.instance_path))
    app.config.update(overrides)
    if not app.config.get("SECRET_KEY"):
        app.config["SECRET_KEY"] = app_config.secret_key(app.instance_path)
    _harden(app)

    db.init_app(app)
    with app.app_context():
        security.tune_sqlite(db.engine)
    background.init_app(app)
    csrf.init_app(app)
    login_manager.init_app(app)
    login_manager.login_view = "auth.login"
    login_manager.login_message = "Please log in to continue."
    login_manager.login_message_category = "info"

    for name in BLUEPRINTS:
        app.register_blueprint(importlib.import_module(name).bp)
    _register_pages(app)
    _register_cache_policy(app)
    errors.register(app)
    return app


#: Pages and JSON carry job data: no browser cache, proxy or back/forward copy may keep them
#: (a shared phone must not hand one user's jobs to the next, and Back must ask again). The
#: service worker keeps its own per-user copies for offline use and clears them at logout.
NO_STORE = "no-store"
#: Static files: revalidated by ETag on every fetch outside the service worker, whose cache
#: (versioned in sw.js) is what makes warm loads free.
REVALIDATE = "no-cache"


def _register_cache_policy(app: Flask) -> None:
    compression.install(app)

    @app.after_request
    def cache_policy(response):
        if request.path.startswith("/static/") or request.path == "/sw.js":
            response.headers.setdefault("Cache-Control", REVALIDATE)
            if response.direct_passthrough and response.status_code == 200:
                # read the (small) file so it is compressed whole; the file is closed with
                # the response
                response.direct_passthrough = False
                response.make_sequence()
                response = compression.static_brotli(response)
        elif response.mimetype in ("text/html", "application/json"):
            response.headers["Cache-Control"] = NO_STORE
        return response


def _harden(app: Flask) -> None:
    """Logging, JSON limits, bounded ids in URLs, security headers (fieldapp/security.py)."""
    applog.setup(app.config.get("LOG_LEVEL", "INFO"))
    app.json = SafeJSONProvider(app)
    app.url_map.converters["int"] = IdConverter
    security.install(app)


def _register_pages(app: Flask) -> None:
    from fieldapp.auth.roles import can_test

    @app.get("/")
    def index():
        return redirect(url_for("jobs.index"))

    @app.get("/sw.js")
    def service_worker():
        response = send_from_directory(app.static_folder, "sw.js", max_age=0)
        response.headers["Service-Worker-Allowed"] = "/"
        response.headers["Cache-Control"] = "no-cache"
        return response

    @app.context_processor
    def page_globals():
        return {
            "can_test": can_test,
            # every page's footer: the core's own cautions (advice, not certification; safe
            # isolation), never a restatement
            "footer_cautions": (labels.CAUTIONS[1], labels.CAUTIONS[0]),
            # when the page was made (UTC, ISO 8601): an offline copy says "as of" this time
            "rendered_at": lambda: utcnow().replace(microsecond=0).isoformat() + "Z",
        }
