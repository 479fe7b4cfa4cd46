"""Alembic migrations, applied from code (``manage setup`` and the test fixtures).

``upgrade(engine)`` brings a database to the newest revision; it works on SQLite and PostgreSQL.
"""

from __future__ import annotations

from pathlib import Path

from alembic import command
from alembic.config import Config
from alembic.runtime.migration import MigrationContext
from alembic.script import ScriptDirectory

HERE = Path(__file__).resolve().parent


def alembic_config(connection=None) -> Config:
    """An alembic Config pointing at this folder, optionally bound to an open connection."""
    cfg = Config()
    cfg.set_main_option("script_location", str(HERE))
    cfg.attributes["connection"] = connection
    return cfg


def upgrade(engine, revision: str = "head") -> None:
    """Apply the migrations up to ``revision`` in one transaction."""
    with engine.begin() as connection:
        command.upgrade(alembic_config(connection), revision)


def current_revision(engine) -> str | None:
    """The revision the database is at (None for an empty database)."""
    with engine.connect() as connection:
        return MigrationContext.configure(connection).get_current_revision()


def head_revision() -> str:
    """The newest revision in this folder."""
    head = ScriptDirectory.from_config(alembic_config()).get_current_head()
    if head is None:
        raise RuntimeError("migrations: no revision found in the versions folder")
    return head
