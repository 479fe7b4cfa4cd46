"""Log in and out. Passwords are checked against werkzeug hashes."""

from __future__ import annotations

from urllib.parse import urlsplit

from flask import flash, redirect, render_template, request, url_for
from flask_login import current_user, login_required, login_user, logout_user
from sqlalchemy import select
from werkzeug.security import check_password_hash, generate_password_hash

from fieldapp.auth import bp
from fieldapp.auth.forms import LoginForm
from fieldapp.extensions import db, login_manager
from fieldapp.models import User

#: Checked when the user name is unknown, so both failures take the same time.
_DUMMY_HASH = generate_password_hash("not a password")


@login_manager.user_loader
def load_user(user_id: str) -> User | None:
    try:
        return db.session.get(User, int(user_id))
    except ValueError:
        return None


def _safe_next(target: str | None) -> str | None:
    """Only same-site paths are followed after login."""
    if not target:
        return None
    parts = urlsplit(target)
    if parts.scheme or parts.netloc or not target.startswith("/") or target.startswith("//"):
        return None
    return target


@bp.route("/login", methods=["GET", "POST"])
def login():
    if current_user.is_authenticated:
        return redirect(url_for("jobs.index"))
    form = LoginForm()
    if form.validate_on_submit():
        user = db.session.scalar(select(User).where(User.username == form.username.data.strip()))
        hashed = user.password_hash if user else _DUMMY_HASH
        if check_password_hash(hashed, form.password.data) and user is not None:
            login_user(user, remember=form.remember.data)
            flash(f"Logged in as {user.name} ({user.role}).", "ok")
            return redirect(_safe_next(request.args.get("next")) or url_for("jobs.index"))
        form.password.errors.append("User name or password is wrong.")
    status = 401 if request.method == "POST" else 200
    return render_template("auth/login.html", form=form), status


@bp.post("/logout")
@login_required
def logout():
    logout_user()
    flash("Logged out.", "info")
    return redirect(url_for("auth.login"))
