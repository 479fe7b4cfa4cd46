"""Diagnoses computed once per distinct record and shared through the database.

A circuit's diagnosis depends only on its ``ringtest/1`` record and on the engine's code, so
it is stored under (sha256 of the record's canonical JSON, ENGINE_VERSION): every app worker
and every server behind a load balancer reads the same row, and the supervisor's list or the
job sheet never diagnoses a record that any of them has seen before. A changed reading is a
new record, hence a new row; a new engine (any change to ``ringmath``'s code or data) gets a
new version and recomputes. Rows are a cache: deleting them all loses nothing.

Storing uses its own short transaction on a separate connection, after the request's writes
have been committed (every view commits before it renders), so a failure to store (a busy
database) costs a recomputation later, never the request.
"""

from __future__ import annotations

import hashlib
import json
import logging
from pathlib import Path
from typing import cast

import sqlalchemy as sa
from sqlalchemy.exc import IntegrityError, OperationalError

import ringmath
from fieldapp.extensions import db
from fieldapp.models import StoredDiagnosis, utcnow
from ringmath import checks
from ringmath.diagnose import diagnose
from ringmath.record import parse_record

log = logging.getLogger(__name__)


def _engine_version() -> str:
    """A digest of every source and data file of the ringmath package (first 16 hex digits)."""
    root = Path(ringmath.__file__).resolve().parent
    digest = hashlib.sha256()
    for path in sorted(p for p in root.rglob("*") if p.suffix in (".py", ".csv", ".json")):
        digest.update(path.relative_to(root).as_posix().encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


#: Changes whenever ringmath's code or tables change, so stale results are never served.
ENGINE_VERSION = _engine_version()


def record_key(record: dict) -> tuple[str, str]:
    """(canonical JSON, sha256 hex) of a record: equal records give equal keys."""
    text = json.dumps(record, sort_keys=True, separators=(",", ":"))
    return text, hashlib.sha256(text.encode()).hexdigest()


def _load(record_hash: str) -> str | None:
    return db.session.execute(
        sa.select(StoredDiagnosis.result).where(StoredDiagnosis.record_hash == record_hash,
                                                StoredDiagnosis.engine == ENGINE_VERSION)
    ).scalar_one_or_none()


def _store(record_hash: str, result_text: str) -> None:
    # DeclarativeBase types __table__ as the wider FromClause; a mapped class's is a Table.
    table = cast(sa.Table, StoredDiagnosis.__table__)
    try:
        with db.engine.begin() as connection:
            connection.execute(table.insert().values(
                record_hash=record_hash, engine=ENGINE_VERSION, result=result_text,
                created_at=utcnow()))
    except IntegrityError:
        pass  # another worker stored the same record first: same result
    except OperationalError as error:  # busy database: it will be computed again later
        log.warning("diagnosis not stored (%s): %s", record_hash[:12], error)


def stored(record: dict) -> dict | None:
    """The stored diagnosis of ``record`` for this engine, or None (nothing is computed)."""
    text = _load(record_key(record)[1])
    return json.loads(text) if text is not None else None


def instant(record: dict) -> dict | None:
    """The instant checks alone (each reading's expected value, band and status, and the
    expected values): no fit, so it costs milliseconds. None for a record that cannot be read.
    """
    try:
        test = parse_record(record)
    except ValueError:
        return None
    return {"readings": checks.reading_checks(test), "expected": checks.expected(test)}


def diagnosis_for(record: dict) -> dict:
    """The diagnosis of ``record``: the stored one when there is one, else computed and stored.

    Raises ValueError (from ringmath) for a record that cannot be diagnosed. Callers get their
    own copy.
    """
    text, record_hash = record_key(record)
    stored = _load(record_hash)
    if stored is None:
        stored = json.dumps(diagnose(json.loads(text)), separators=(",", ":"))
        _store(record_hash, stored)
    return json.loads(stored)
