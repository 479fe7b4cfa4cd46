"""Sessions that a server can end: a per-user session version and revocable remember tokens.

The session cookie holds ``"<user id>:<session version>"`` (``User.get_id``); the loader runs
on every request and refuses a version that is not the user's current one, or a disabled
user. Sign-out, a password change or reset and disabling an account bump the version in the
database, so every copy of an older cookie stops working on every server at once.

"Keep me logged in" is our own cookie (``REMEMBER_COOKIE``), never Flask-Login's signed one:
``selector:secret``, a new pair at every login, the secret stored only as its SHA-256, valid
``REMEMBER_DAYS`` days, revoked at sign-out and whenever the session version moves.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import hmac
import secrets

from flask import current_app, request
from flask_login import login_user
from sqlalchemy import select, update

from fieldapp.extensions import db
from fieldapp.models import RememberToken, User, utcnow

REMEMBER_COOKIE = "fieldapp_remember"
#: A working month on site; after that the password is asked again.
REMEMBER_DAYS = 30


def load_user(user_id: str) -> User | None:
    """The user for a session id "id:version", or None (logged out) when stale or disabled."""
    ident, sep, version = str(user_id).partition(":")
    if not sep or not ident.isdigit() or not version.isdigit() or len(ident) > 18:
        return None  # an id without a version predates session versions: log in again
    user = db.session.get(User, int(ident))
    if user is None or user.disabled_at is not None or str(user.session_version) != version:
        return None
    return user


def _digest(secret: str) -> str:
    return hashlib.sha256(secret.encode()).hexdigest()


def issue_remember_token(user: User) -> tuple[str, dt.datetime]:
    """A fresh token for this login: (cookie value, expiry). Not committed."""
    selector, secret = secrets.token_urlsafe(12), secrets.token_urlsafe(32)
    expires = utcnow() + dt.timedelta(days=REMEMBER_DAYS)
    db.session.add(RememberToken(user_id=user.id, selector=selector,
                                 secret_hash=_digest(secret), expires_at=expires))
    return f"{selector}:{secret}", expires


def user_from_remember_cookie() -> User | None:
    """Flask-Login's request loader: the user a valid remember cookie names, logged in anew
    into this session (the token itself stays as it is until the next login)."""
    value = request.cookies.get(REMEMBER_COOKIE, "")
    selector, sep, secret = value.partition(":")
    if not sep or len(selector) > 32 or len(secret) > 64:
        return None
    token = db.session.scalar(select(RememberToken).where(RememberToken.selector == selector))
    if (token is None or token.revoked_at is not None or token.expires_at < utcnow()
            or not hmac.compare_digest(token.secret_hash, _digest(secret))):
        return None
    user = db.session.get(User, token.user_id)
    if user is None or user.disabled_at is not None:
        return None
    login_user(user, remember=False, fresh=False)
    return user


def revoke_remember_tokens(user: User, selector: str | None = None) -> None:
    """Revoke the user's live tokens (one, when ``selector`` is given). Not committed."""
    query = update(RememberToken).where(RememberToken.user_id == user.id,
                                        RememberToken.revoked_at.is_(None))
    if selector is not None:
        query = query.where(RememberToken.selector == selector)
    db.session.execute(query.values(revoked_at=utcnow()))


def end_all_sessions(user: User) -> None:
    """Every session and remember token of this user stops working. Not committed."""
    user.session_version = (user.session_version or 0) + 1
    revoke_remember_tokens(user)


def set_remember_cookie(response, value: str, expires: dt.datetime) -> None:
    response.set_cookie(REMEMBER_COOKIE, value, expires=expires.replace(tzinfo=dt.UTC),
                        httponly=True, samesite="Lax",
                        secure=bool(current_app.config.get("SESSION_COOKIE_SECURE")))


def clear_remember_cookie(response) -> None:
    response.delete_cookie(REMEMBER_COOKIE, httponly=True, samesite="Lax",
                           secure=bool(current_app.config.get("SESSION_COOKIE_SECURE")))
