"""Database tables. No business logic here: write through fieldapp.changes, compute in ringmath.

Readings (Circuit.r1/rn/r2, Outlet.ln/le) are stored as text exactly as the record format has
them: a number string such as "0.52", "OL", or NULL for a reading not taken yet.
"""

from __future__ import annotations

import datetime as dt
from typing import TYPE_CHECKING

from flask_login import UserMixin
from sqlalchemy import ForeignKey, Index, String, Text, UniqueConstraint, text
from sqlalchemy.orm import Mapped, mapped_column, relationship

from fieldapp.extensions import db

if TYPE_CHECKING:
    # db.Model is a variable to mypy (Flask-SQLAlchemy builds it at run time from Base).
    from fieldapp.extensions import Base as Model
else:
    Model = db.Model

ROLES = ("apprentice", "tester", "supervisor")
JOB_STATUSES = ("in_progress", "submitted", "returned", "approved")
#: The guided sequence of one circuit, in order.
STEPS = ("safety", "e2e", "ln", "le", "results")
ENTITIES = ("job", "circuit", "outlet")


def utcnow() -> dt.datetime:
    """Now in UTC without tzinfo (stored the same way on SQLite and PostgreSQL)."""
    return dt.datetime.now(dt.UTC).replace(tzinfo=None)


class User(UserMixin, Model):
    __tablename__ = "user"

    id: Mapped[int] = mapped_column(primary_key=True)
    username: Mapped[str] = mapped_column(String(64), unique=True)
    name: Mapped[str] = mapped_column(String(120))
    password_hash: Mapped[str] = mapped_column(String(256))
    role: Mapped[str] = mapped_column(String(16))
    #: Bumped by sign-out, a password change or reset and disabling: every session and
    #: remember token made under an older value stops working (checked on every request).
    session_version: Mapped[int] = mapped_column(default=0, server_default=text("0"))
    disabled_at: Mapped[dt.datetime | None]
    #: The tester an apprentice works under (may submit the apprentice's jobs).
    mentor_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))

    @property
    def is_active(self) -> bool:  # Flask-Login refuses inactive users
        return self.disabled_at is None

    def get_id(self) -> str:
        """The session's user id carries the session version: "7:3"."""
        return f"{self.id}:{self.session_version}"


class Job(Model):
    __tablename__ = "job"

    id: Mapped[int] = mapped_column(primary_key=True)
    reference: Mapped[str] = mapped_column(String(40), unique=True)
    site: Mapped[str] = mapped_column(String(200))
    client: Mapped[str] = mapped_column(String(200), default="")
    date: Mapped[dt.date | None]
    notes: Mapped[str] = mapped_column(Text, default="")
    created_by: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    tester_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    status: Mapped[str] = mapped_column(String(16), default="in_progress", index=True)
    submitted_at: Mapped[dt.datetime | None]
    reviewed_by_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    reviewed_at: Mapped[dt.datetime | None]
    review_comment: Mapped[str | None] = mapped_column(Text)
    approved_by_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    approved_at: Mapped[dt.datetime | None]
    #: The test instrument used, as the tester typed it.
    instrument_model: Mapped[str | None] = mapped_column(String(80))
    instrument_serial: Mapped[str | None] = mapped_column(String(60))
    #: Why the job was submitted / approved although it had problems (fieldapp/review/gate.py).
    submit_reason: Mapped[str | None] = mapped_column(Text)
    approve_reason: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    updated_at: Mapped[dt.datetime] = mapped_column(default=utcnow, onupdate=utcnow)

    creator: Mapped[User | None] = relationship(foreign_keys=[created_by])
    tester: Mapped[User | None] = relationship(foreign_keys=[tester_id])
    reviewed_by: Mapped[User | None] = relationship(foreign_keys=[reviewed_by_id])
    approved_by: Mapped[User | None] = relationship(foreign_keys=[approved_by_id])
    circuits: Mapped[list[Circuit]] = relationship(
        back_populates="job", order_by="Circuit.position")


class Circuit(Model):
    __tablename__ = "circuit"

    id: Mapped[int] = mapped_column(primary_key=True)
    job_id: Mapped[int] = mapped_column(ForeignKey("job.id"), index=True)
    position: Mapped[int] = mapped_column(default=0)
    board: Mapped[str] = mapped_column(String(40), default="DB1")
    way: Mapped[str] = mapped_column(String(20), default="")
    description: Mapped[str] = mapped_column(String(200), default="")
    ocpd_standard: Mapped[str] = mapped_column(String(20), default="BS EN 60898")
    ocpd_curve: Mapped[str | None] = mapped_column(String(1))
    ocpd_rating_a: Mapped[float] = mapped_column(default=32.0)
    rcd_rated_ma: Mapped[float | None]
    rcd_type: Mapped[str | None] = mapped_column(String(8))
    live_csa_mm2: Mapped[float] = mapped_column(default=2.5)
    cpc_csa_mm2: Mapped[float] = mapped_column(default=1.5)
    ze_ohm: Mapped[float | None]
    ze_source: Mapped[str] = mapped_column(String(10), default="measured")
    earthing: Mapped[str | None] = mapped_column(String(8))
    cable_length_m: Mapped[float | None]
    safety_isolated: Mapped[bool] = mapped_column(default=False)
    safety_locked_off: Mapped[bool] = mapped_column(default=False)
    safety_proved_dead: Mapped[bool] = mapped_column(default=False)
    safety_confirmed_by_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    safety_confirmed_at: Mapped[dt.datetime | None]
    r1: Mapped[str | None] = mapped_column(String(16))
    rn: Mapped[str | None] = mapped_column(String(16))
    r2: Mapped[str | None] = mapped_column(String(16))
    current_step: Mapped[str] = mapped_column(String(10), default="safety")
    # live tests and the rest of the schedule (migration 0005): readings stay text as recorded
    cpc_kind: Mapped[str] = mapped_column(String(12), default="cable_core")
    parallel_paths: Mapped[bool] = mapped_column(default=False)
    pfc_ka: Mapped[float | None]
    ir_test_v: Mapped[float | None]
    ir_ln_mohm: Mapped[str | None] = mapped_column(String(16))  # "200", ">999" or NULL
    ir_le_mohm: Mapped[str | None] = mapped_column(String(16))
    ir_ne_mohm: Mapped[str | None] = mapped_column(String(16))
    rcd_trip_ms: Mapped[float | None]
    rcd_button_ok: Mapped[bool | None]
    #: Set when the circuit came from a file: who imported it and when; its readings were
    #: not taken in this app. imported_safety: the file's safety block as JSON text (what
    #: the file claims, never a confirmation made here).
    imported_by_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    imported_at: Mapped[dt.datetime | None]
    imported_safety: Mapped[str | None] = mapped_column(Text)

    job: Mapped[Job] = relationship(back_populates="circuits")
    safety_confirmed_by: Mapped[User | None] = relationship(
        foreign_keys=[safety_confirmed_by_id])
    imported_by: Mapped[User | None] = relationship(foreign_keys=[imported_by_id])
    outlets: Mapped[list[Outlet]] = relationship(
        back_populates="circuit", order_by="Outlet.position")


class Outlet(Model):
    __tablename__ = "outlet"
    __table_args__ = (UniqueConstraint("circuit_id", "key"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    circuit_id: Mapped[int] = mapped_column(ForeignKey("circuit.id"), index=True)
    position: Mapped[int] = mapped_column(default=0)
    key: Mapped[str] = mapped_column(String(16))
    label: Mapped[str] = mapped_column(String(120), default="")
    kind: Mapped[str] = mapped_column(String(20), default="twin_socket")
    spur_from_key: Mapped[str | None] = mapped_column(String(16))
    fuse_a: Mapped[float | None]
    spur_csa_mm2: Mapped[float | None]
    spur_cpc_csa_mm2: Mapped[float | None]
    ln: Mapped[str | None] = mapped_column(String(16))
    le: Mapped[str | None] = mapped_column(String(16))
    # live tests (migration 0005): measured Zs and a re-measure at the terminals, as text
    zs_measured: Mapped[str | None] = mapped_column(String(16))
    taken_at: Mapped[str | None] = mapped_column(String(10))  # "front", "terminals" or NULL
    ln_terminals: Mapped[str | None] = mapped_column(String(16))
    le_terminals: Mapped[str | None] = mapped_column(String(16))
    deleted_at: Mapped[dt.datetime | None]

    circuit: Mapped[Circuit] = relationship(back_populates="outlets")


class ChangeLog(Model):
    """Append-only history of every write: who, from which device, old value -> new value."""

    __tablename__ = "change_log"
    __table_args__ = (Index("ix_change_log_entity_entity_id", "entity", "entity_id"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    user_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    device: Mapped[str] = mapped_column(String(200), default="")
    entity: Mapped[str] = mapped_column(String(10))
    entity_id: Mapped[int]
    circuit_id: Mapped[int | None] = mapped_column(ForeignKey("circuit.id"), index=True)
    field: Mapped[str] = mapped_column(String(40))
    old_value: Mapped[str | None] = mapped_column(Text)
    new_value: Mapped[str | None] = mapped_column(Text)
    #: The idempotency key a client sent with the write; unique where present.
    client_id: Mapped[str | None] = mapped_column(String(64), unique=True)
    #: When the reading was taken on the phone, when it was queued offline (UTC, naive).
    taken_at: Mapped[dt.datetime | None]

    user: Mapped[User | None] = relationship()


class StoredDiagnosis(Model):
    """A diagnosis computed once per distinct circuit record and engine, shared by every worker
    and server (a cache: a row can always be recomputed from the record)."""

    __tablename__ = "stored_diagnosis"
    __table_args__ = (UniqueConstraint("record_hash", "engine"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    #: sha256 of the record's canonical JSON (sorted keys, no job block).
    record_hash: Mapped[str] = mapped_column(String(64))
    #: fieldapp.diagnoses.ENGINE_VERSION at the time it was computed.
    engine: Mapped[str] = mapped_column(String(64))
    result: Mapped[str] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)


class RememberToken(Model):
    """A "keep me logged in" token: the cookie holds selector:secret, the table the secret's
    SHA-256. A new one on every login; revoked at sign-out and with the session version."""

    __tablename__ = "remember_token"

    id: Mapped[int] = mapped_column(primary_key=True)
    user_id: Mapped[int] = mapped_column(ForeignKey("user.id"), index=True)
    selector: Mapped[str] = mapped_column(String(32), unique=True)
    secret_hash: Mapped[str] = mapped_column(String(64))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    expires_at: Mapped[dt.datetime]
    revoked_at: Mapped[dt.datetime | None]


class LoginAttempt(Model):
    """One sign-in attempt, kept a day: the failure limits per account and per address."""

    __tablename__ = "login_attempt"
    __table_args__ = (Index("ix_login_attempt_username_at", "username", "at"),
                      Index("ix_login_attempt_address_at", "address", "at"))

    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(default=utcnow, index=True)
    username: Mapped[str] = mapped_column(String(64))
    address: Mapped[str] = mapped_column(String(64))
    succeeded: Mapped[bool] = mapped_column(default=False)


class UserEvent(Model):
    """What was done to an account and by whom: created, disabled, password reset, ..."""

    __tablename__ = "user_event"

    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    user_id: Mapped[int] = mapped_column(ForeignKey("user.id"), index=True)
    actor_id: Mapped[int | None] = mapped_column(ForeignKey("user.id"))
    action: Mapped[str] = mapped_column(String(32))
    detail: Mapped[str] = mapped_column(Text, default="")

    user: Mapped[User] = relationship(foreign_keys=[user_id])
    actor: Mapped[User | None] = relationship(foreign_keys=[actor_id])
