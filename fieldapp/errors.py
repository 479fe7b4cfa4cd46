"""Error pages for the whole app: JSON for API callers, the error page for people.

- ``Refused`` (a write the job's state does not allow): 409, nothing kept.
- 500: the session is rolled back, the error logged with its traceback (Flask does that),
  the user shown a plain message, never a traceback.
- 404 / 403 / 413 / 429: the usual words.
"""

from __future__ import annotations

import logging

from flask import Flask, jsonify, render_template, request
from flask_wtf.csrf import CSRFError

from fieldapp.changes import Refused
from fieldapp.extensions import db

log = logging.getLogger(__name__)

MESSAGES = {
    400: ("Bad request", "The request could not be read. Go back, reload the page and try "
                         "again."),
    403: ("Not allowed", "Your role does not allow this. Ask a tester or supervisor."),
    404: ("Not found", "There is nothing at this address."),
    405: ("Not allowed here", "This address does not take that kind of request."),
    413: ("Too large", "That was more than the app accepts in one go (a job file is at most "
                       "1 MB)."),
    500: ("Something went wrong", "Nothing was saved from this request. Try again; if it "
                                  "happens again, tell your supervisor what you were doing."),
}


def wants_json() -> bool:
    """An API call or a script asking for JSON (not a page)."""
    if request.path.startswith("/api/") or request.is_json:
        return True
    best = request.accept_mimetypes.best_match(["text/html", "application/json"])
    return best == "application/json" and not request.accept_mimetypes["text/html"]


def reply(status: int, message: str | None = None, title: str | None = None,
          field: str = "_request"):
    default_title, default_message = MESSAGES.get(status, MESSAGES[400])
    if wants_json():
        return jsonify({"errors": {field: [message or default_message]}}), status
    return render_template("error.html", title=title or default_title,
                           message=message or default_message), status


def register(app: Flask) -> None:
    """Install the handlers on ``app``."""

    @app.errorhandler(Refused)
    def refused(error):
        db.session.rollback()
        return reply(409, str(error), "Not changed", field="_state")

    @app.errorhandler(CSRFError)
    def csrf_error(_error):
        return reply(400, "This form was open too long or came from another page. "
                          "Go back, reload the page and try again.", "Form expired",
                     field="_csrf")

    @app.errorhandler(500)
    def server_error(_error):
        try:
            db.session.rollback()
        except Exception:  # the database itself may be what failed
            log.exception("rollback after an error failed")
        return reply(500, field="_server")

    for code in (400, 403, 404, 405, 413):
        app.register_error_handler(code, lambda _e, c=code: reply(c))
    app.register_error_handler(429, lambda e: reply(429, getattr(e, "description", None),
                                                    "Too many attempts"))
