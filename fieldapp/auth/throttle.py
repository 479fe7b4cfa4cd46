"""Limits on failed sign-in attempts, kept in the database so every app server sees them.

An account (the user name as typed, whether or not it exists, so the limit says nothing
about which names are real) is refused after ``ACCOUNT_FAILURES`` failures within
``WINDOW``; an address after ``ADDRESS_FAILURES``. While refused, even the right password is
not checked. A successful sign-in clears the account's count. Attempts older than a day are
deleted as new ones come in.

Flask-Limiter counts requests in memory, Redis or Memcached; none of its storages is the SQL
database every server here already shares, and it counts requests rather than failures of one
account, so these few queries are our own.
"""

from __future__ import annotations

import datetime as dt

from sqlalchemy import delete, func, select

from fieldapp.extensions import db
from fieldapp.models import LoginAttempt, utcnow

WINDOW = dt.timedelta(minutes=15)
ACCOUNT_FAILURES = 5
ADDRESS_FAILURES = 30
KEEP = dt.timedelta(days=1)
MESSAGE = ("Too many failed sign-in attempts. Wait 15 minutes and try again, or ask a "
           "supervisor to reset the password.")


def account_key(username: str) -> str:
    return (username or "").strip().lower()[:64]


def _failures_since(column, value: str, since: dt.datetime) -> int:
    last_ok = db.session.scalar(select(func.max(LoginAttempt.at)).where(
        column == value, LoginAttempt.succeeded.is_(True))) if column is LoginAttempt.username \
        else None
    start = max(since, last_ok) if last_ok else since
    return db.session.scalar(select(func.count(LoginAttempt.id)).where(
        column == value, LoginAttempt.succeeded.is_(False), LoginAttempt.at > start)) or 0


def blocked(username: str, address: str) -> bool:
    """True while this account or this address has too many recent failures."""
    since = utcnow() - WINDOW
    return (_failures_since(LoginAttempt.username, account_key(username), since)
            >= ACCOUNT_FAILURES
            or _failures_since(LoginAttempt.address, address[:64], since) >= ADDRESS_FAILURES)


def record(username: str, address: str, succeeded: bool) -> None:
    """Store one attempt (and forget those older than a day). Not committed."""
    now = utcnow()
    db.session.execute(delete(LoginAttempt).where(LoginAttempt.at < now - KEEP))
    db.session.add(LoginAttempt(at=now, username=account_key(username), address=address[:64],
                                succeeded=succeeded))
