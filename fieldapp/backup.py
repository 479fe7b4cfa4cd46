"""The whole database as one JSON document, and back into an empty database.

``backup(out, with_passwords=False)`` writes ``{"format": "fieldapp-backup/1", "revision",
"made_at", "tables": {name: [row, ...]}}`` with every table the models define (users, jobs,
circuits, outlets, the change log, review decisions, account events, ...), rows in id order,
dates and times as ISO text. Password hashes are left out unless asked for (a restored user
without one must be given a password: ``manage reset-password``); remember tokens and sign-in
attempts are never written (they belong to one running system), nor stored diagnoses
(recomputed from the readings when needed).

``restore(doc)`` migrates an empty database to the backup's revision, refuses one that holds
any row, inserts every table in dependency order (a column that refers to its own table is
filled in a second pass) and moves PostgreSQL's id sequences past the restored ids. Everything
happens in one transaction: a restore that fails leaves the database empty.
"""

from __future__ import annotations

import datetime as dt

import sqlalchemy as sa

from fieldapp import migrations
from fieldapp.extensions import db
from fieldapp.models import utcnow

FORMAT = "fieldapp-backup/1"
#: Tables that describe one running system or hold derived data (stored diagnoses are
#: recomputed on demand), not the records: never backed up.
SKIPPED = ("remember_token", "login_attempt", "stored_diagnosis")
#: A password hash that matches no password (werkzeug never produces it).
NO_PASSWORD = "!restored-without-password"


class BackupError(ValueError):
    """A backup that cannot be restored here; the message says why."""


def _tables() -> list[sa.Table]:
    return [t for t in db.metadata.sorted_tables if t.name not in SKIPPED]


def _plain(value):
    if isinstance(value, dt.datetime | dt.date):
        return value.isoformat()
    return value


def backup(with_passwords: bool = False) -> dict:
    """Every table as JSON-able rows (see the module docstring)."""
    tables = {}
    for table in _tables():
        order = [c for c in table.primary_key.columns] or list(table.columns)
        rows = db.session.execute(sa.select(table).order_by(*order)).mappings()
        out = []
        for row in rows:
            item = {name: _plain(value) for name, value in row.items()}
            if table.name == "user" and not with_passwords:
                item.pop("password_hash", None)
            out.append(item)
        tables[table.name] = out
    return {"format": FORMAT, "revision": migrations.current_revision(db.engine),
            "made_at": utcnow().isoformat(), "with_passwords": with_passwords,
            "tables": tables}


def _value(column: sa.Column, value):
    if value is None:
        return None
    try:
        kind = column.type.python_type
    except NotImplementedError:
        return value
    if kind is dt.datetime and isinstance(value, str):
        return dt.datetime.fromisoformat(value)
    if kind is dt.date and isinstance(value, str):
        return dt.date.fromisoformat(value)
    return value


def row_count() -> int:
    """Rows in all backed-up tables (0: an empty database)."""
    return sum(db.session.scalar(sa.select(sa.func.count()).select_from(t)) or 0
               for t in _tables())


def restore(doc: dict) -> dict[str, int]:
    """Load a backup into an empty database; rows restored per table. Commits."""
    if not isinstance(doc, dict) or doc.get("format") != FORMAT:
        raise BackupError(f"not a {FORMAT} document")
    head = migrations.head_revision()
    if doc.get("revision") != head:
        raise BackupError(f"the backup is at revision {doc.get('revision')}, this app at "
                          f"{head}: restore it with the matching version, then upgrade")
    migrations.upgrade(db.engine)
    if row_count():
        raise BackupError("the database is not empty: restore only into an empty database")
    data = doc.get("tables") or {}
    unknown = set(data) - {t.name for t in _tables()}
    if unknown:
        raise BackupError(f"tables this app does not have: {', '.join(sorted(unknown))}")
    restored = {}
    try:
        for table in _tables():
            rows = data.get(table.name) or []
            restored[table.name] = _insert(table, rows)
        _move_sequences()
        db.session.commit()
    except Exception:
        db.session.rollback()
        raise
    return restored


def _insert(table: sa.Table, rows: list[dict]) -> int:
    if not rows:
        return 0
    own = [fk.parent.name for fk in table.foreign_keys if fk.column.table is table]
    columns = {c.name: c for c in table.columns}
    prepared = []
    for row in rows:
        values = {name: _value(columns[name], value) for name, value in row.items()
                  if name in columns}
        if table.name == "user":
            values.setdefault("password_hash", NO_PASSWORD)
        prepared.append(values)
    first = [{**v, **{name: None for name in own}} for v in prepared]
    db.session.execute(table.insert(), first)
    for values in prepared:  # references within the table, now that every row exists
        late = {name: values.get(name) for name in own if values.get(name) is not None}
        if late:
            key = table.c.id == values["id"]
            db.session.execute(table.update().where(key).values(**late))
    return len(prepared)


def _move_sequences() -> None:
    if db.engine.dialect.name != "postgresql":
        return
    for table in db.metadata.sorted_tables:
        if "id" in table.c:
            db.session.execute(sa.text(
                f"SELECT setval(pg_get_serial_sequence('\"{table.name}\"', 'id'), "
                f"GREATEST((SELECT COALESCE(MAX(id), 0) FROM \"{table.name}\"), 1), "
                f"(SELECT COUNT(*) > 0 FROM \"{table.name}\"))"))
