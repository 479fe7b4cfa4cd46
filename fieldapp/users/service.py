"""Account changes, each recorded as a UserEvent. Nothing here commits."""

from __future__ import annotations

import secrets

from sqlalchemy import select

from fieldapp.auth import sessions
from fieldapp.extensions import db
from fieldapp.models import ROLES, User, UserEvent, utcnow


def new_password() -> str:
    """A random password to hand over once (about 72 bits)."""
    return secrets.token_urlsafe(9)


def record(user: User, actor: User | None, action: str, detail: str = "") -> UserEvent:
    event = UserEvent(at=utcnow(), user_id=user.id, actor_id=actor.id if actor else None,
                      action=action, detail=detail)
    db.session.add(event)
    return event


def add_user(username: str, name: str, role: str, password_hash: str, actor: User | None,
             mentor_id: int | None = None) -> User:
    """A new account; ValueError naming the field for a taken name, bad role or mentor."""
    if role not in ROLES:
        raise ValueError(f"role: {role!r} is not one of {', '.join(ROLES)}")
    if db.session.scalar(select(User.id).where(User.username == username)) is not None:
        raise ValueError("username: this user name is taken")
    if mentor_id is not None:
        mentor = db.session.get(User, mentor_id)
        if role != "apprentice" or mentor is None or mentor.role != "tester":
            raise ValueError("mentor_id: only an apprentice works under a tester")
    user = User(username=username, name=name, role=role, password_hash=password_hash,
                mentor_id=mentor_id)
    db.session.add(user)
    db.session.flush()
    detail = f"role {role}" + (f", works under user {mentor_id}" if mentor_id else "")
    record(user, actor, "created", detail)
    return user


def set_password(user: User, password_hash: str, actor: User | None, action: str) -> None:
    """A new password; every session and remember token of the user ends."""
    user.password_hash = password_hash
    sessions.end_all_sessions(user)
    record(user, actor, action)


def disable(user: User, actor: User | None) -> None:
    if user.disabled_at is None:
        user.disabled_at = utcnow()
        sessions.end_all_sessions(user)
        record(user, actor, "disabled")


def enable(user: User, actor: User | None) -> None:
    if user.disabled_at is not None:
        user.disabled_at = None
        record(user, actor, "enabled")


def events(user: User) -> list[UserEvent]:
    return list(db.session.scalars(select(UserEvent).where(UserEvent.user_id == user.id)
                                   .order_by(UserEvent.id.desc())))
