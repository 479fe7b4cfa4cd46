"""Log in and out, change one's own password. Passwords are checked against werkzeug hashes.

Sessions end on the server (fieldapp.auth.sessions); failed attempts are limited per account
and per address (fieldapp.auth.throttle).
"""

from __future__ import annotations

import logging
from urllib.parse import urlsplit

from flask import current_app, flash, redirect, render_template, request, url_for
from flask_login import current_user, login_required, login_user, logout_user
from sqlalchemy import select
from werkzeug.security import check_password_hash, generate_password_hash

from fieldapp.auth import bp, sessions, throttle
from fieldapp.auth.forms import LoginForm, PasswordForm
from fieldapp.extensions import db, login_manager
from fieldapp.models import User, UserEvent

log = logging.getLogger(__name__)
#: Checked when the user name is unknown, so both failures take the same time.
_DUMMY_HASH = generate_password_hash("not a password")

login_manager.user_loader(sessions.load_user)
login_manager.request_loader(lambda _request: sessions.user_from_remember_cookie())


def hash_password(password: str) -> str:
    method = current_app.config.get("PASSWORD_HASH_METHOD")
    return generate_password_hash(password, method) if method else generate_password_hash(
        password)


def _safe_next(target: str | None) -> str | None:
    """Only same-site paths are followed after login."""
    if not target:
        return None
    parts = urlsplit(target)
    if parts.scheme or parts.netloc or not target.startswith("/") or target.startswith("//"):
        return None
    return target


def _address() -> str:
    return request.remote_addr or "unknown"


@bp.route("/login", methods=["GET", "POST"])
def login():
    if current_user.is_authenticated:
        return redirect(url_for("jobs.index"))
    form = LoginForm()
    status = 200
    if form.validate_on_submit():
        typed = form.username.data.strip()
        if throttle.blocked(typed, _address()):
            log.warning("sign-in refused (too many failures) for %r from %s", typed, _address())
            form.password.errors.append(throttle.MESSAGE)
            return render_template("auth/login.html", form=form), 429
        user = db.session.scalar(select(User).where(User.username == typed))
        hashed = user.password_hash if user else _DUMMY_HASH
        good = check_password_hash(hashed, form.password.data)
        if good and user is not None and user.disabled_at is None:
            throttle.record(typed, _address(), True)
            login_user(user, remember=False)
            response = redirect(_safe_next(request.args.get("next")) or url_for("jobs.index"))
            if form.remember.data:
                sessions.set_remember_cookie(response, *sessions.issue_remember_token(user))
            db.session.commit()
            flash(f"Logged in as {user.name} ({user.role}).", "ok")
            return response
        throttle.record(typed, _address(), False)
        db.session.commit()
        log.info("sign-in failed for %r from %s", typed, _address())
        form.password.errors.append("User name or password is wrong.")
        status = 401
    elif request.method == "POST":
        status = 401
    return render_template("auth/login.html", form=form), status


@bp.post("/logout")
@login_required
def logout():
    """Signs this user out everywhere: every session and remember token of theirs ends."""
    sessions.end_all_sessions(current_user)
    db.session.commit()
    logout_user()
    flash("Logged out on every device.", "info")
    response = redirect(url_for("auth.login"))
    sessions.clear_remember_cookie(response)
    return response


@bp.route("/account/password", methods=["GET", "POST"])
@login_required
def change_password():
    form = PasswordForm()
    status = 200
    if form.validate_on_submit():
        if check_password_hash(current_user.password_hash, form.current.data):
            user = current_user._get_current_object()
            user.password_hash = hash_password(form.new.data)
            sessions.end_all_sessions(user)
            db.session.add(UserEvent(user_id=user.id, actor_id=user.id,
                                     action="password_changed", detail=""))
            db.session.commit()
            login_user(user, remember=False)  # this session goes on under the new version
            flash("Password changed. Every other device has been logged out.", "ok")
            response = redirect(url_for("jobs.index"))
            sessions.clear_remember_cookie(response)
            return response
        form.current.errors.append("The current password is wrong.")
    if request.method == "POST":
        status = 422
    return render_template("auth/password.html", form=form), status
