"""Configuration, migrations (SQLite and PostgreSQL) and ``python -m fieldapp.manage setup``."""

from __future__ import annotations

import io
import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest
from alembic import command
from alembic.autogenerate import compare_metadata
from alembic.runtime.migration import MigrationContext
from sqlalchemy import create_engine, func, inspect, select
from werkzeug.security import check_password_hash

from fieldapp import changes, config, create_app, manage, migrations
from fieldapp.extensions import db
from fieldapp.models import ChangeLog, Circuit, Job, User

DEMO_DIR = Path(__file__).resolve().parents[2] / "demo_jobs"
#: Few pbkdf2 rounds: these tests check who gets which password, not the hash's strength.
FAST_HASH = "pbkdf2:sha256:1000"


# ------------------------------------------------------------------ configuration


@pytest.mark.parametrize("given, used", [
    ("", "sqlite:///{instance}/fieldapp.sqlite"),
    ("postgresql://u@db:5432/ring", "postgresql+psycopg://u@db:5432/ring"),
    ("postgres://u@db/ring", "postgresql+psycopg://u@db/ring"),
    ("postgresql+psycopg://u@db/ring", "postgresql+psycopg://u@db/ring"),
    ("sqlite:////var/lib/ring.sqlite", "sqlite:////var/lib/ring.sqlite"),
])
def test_database_url_from_the_environment(monkeypatch, tmp_path, given, used):
    monkeypatch.setenv("DATABASE_URL", given)
    assert config.database_url(str(tmp_path)) == used.format(instance=tmp_path)


def test_secret_key_is_generated_once_into_the_instance_folder(monkeypatch, tmp_path):
    monkeypatch.delenv("SECRET_KEY", raising=False)
    monkeypatch.delenv("DATABASE_URL", raising=False)
    first = create_app({"INSTANCE_PATH": str(tmp_path)}).config["SECRET_KEY"]
    again = create_app({"INSTANCE_PATH": str(tmp_path)}).config["SECRET_KEY"]
    assert first == again and len(first) == 64
    assert (tmp_path / "secret_key").stat().st_mode & 0o077 == 0  # readable by the owner only
    monkeypatch.setenv("SECRET_KEY", "from-the-environment")
    assert create_app({"INSTANCE_PATH": str(tmp_path)}).config["SECRET_KEY"] == \
        "from-the-environment"


def test_default_database_is_sqlite_in_the_instance_folder(monkeypatch, tmp_path):
    monkeypatch.delenv("DATABASE_URL", raising=False)
    app = create_app({"INSTANCE_PATH": str(tmp_path), "SECRET_KEY": "x"})
    assert app.config["SQLALCHEMY_DATABASE_URI"] == f"sqlite:///{tmp_path}/fieldapp.sqlite"
    assert app.config["WTF_CSRF_ENABLED"] is not False  # CSRF on unless a test turns it off


def test_optional_blueprints_are_registered_when_present(app):
    assert {"auth", "jobs", "ringtest", "api"} <= set(app.blueprints)
    for name in ("review", "sheets", "transfer"):
        present = (Path(__file__).resolve().parents[2] / "fieldapp" / name).is_dir()
        assert (name in app.blueprints) == present


# ------------------------------------------------------------------ migrations


def model_drift(connection) -> list:
    context = MigrationContext.configure(connection, opts={"compare_type": True})
    return compare_metadata(context, db.metadata)


def test_migrations_build_exactly_the_models_on_sqlite(tmp_path):
    engine = create_engine(f"sqlite:///{tmp_path / 'm.sqlite'}")
    assert migrations.current_revision(engine) is None
    migrations.upgrade(engine)
    assert migrations.current_revision(engine) == migrations.head_revision()
    with engine.connect() as connection:
        assert model_drift(connection) == []
    with engine.begin() as connection:
        command.downgrade(migrations.alembic_config(connection), "base")
    assert set(inspect(engine).get_table_names()) == {"alembic_version"}
    migrations.upgrade(engine)  # and back up again
    assert {"user", "job", "circuit", "outlet", "change_log"} <= set(
        inspect(engine).get_table_names())
    engine.dispose()


@pytest.mark.postgres
def test_migrations_and_a_reading_on_postgresql(pg_cluster, tmp_path):
    url = pg_cluster.new_database()
    assert url.startswith("postgresql")
    app = create_app({"TESTING": True, "SECRET_KEY": "x", "INSTANCE_PATH": str(tmp_path),
                      "SQLALCHEMY_DATABASE_URI": url})
    with app.app_context():
        try:
            migrations.upgrade(db.engine)
            with db.engine.connect() as connection:
                assert model_drift(connection) == []
            user = manage.create_user("pg", "Pat Gres", "tester", "pw", method="pbkdf2:sha256:1")
            who = changes.Actor(user.id, "pytest")
            job = changes.create(Job, {"reference": "PG-1", "site": "x"}, who)
            circuit = changes.create(Circuit, {"job_id": job.id, "way": "1", "ocpd_curve": "B"},
                                     who)
            changes.set_reading(circuit, "r1", "0,52", who, client_id="pg-reading-1")
            assert changes.set_reading(circuit, "r1", "0.7", who,
                                       client_id="pg-reading-1").duplicate
            db.session.commit()
            assert db.session.get(Circuit, circuit.id).r1 == "0.52"
            assert db.session.scalar(select(func.count(ChangeLog.id)).where(
                ChangeLog.client_id == "pg-reading-1")) == 1
        finally:
            db.session.remove()
            db.engine.dispose()


# ------------------------------------------------------------------ manage setup


@pytest.fixture
def fresh_app(monkeypatch, tmp_path):
    monkeypatch.delenv("FIELDAPP_DEMO_PASSWORD", raising=False)
    monkeypatch.delenv("DATABASE_URL", raising=False)
    app = create_app({"INSTANCE_PATH": str(tmp_path), "SECRET_KEY": "x",
                      "PASSWORD_HASH_METHOD": FAST_HASH})
    yield app
    with app.app_context():
        db.session.remove()
        db.engine.dispose()


def run_setup(app) -> str:
    out = io.StringIO()
    manage.setup(app, out=out)
    return out.getvalue()


def test_setup_creates_users_with_random_passwords_printed_once(fresh_app, tmp_path):
    first = run_setup(fresh_app)
    assert (tmp_path / "fieldapp.sqlite").exists()
    printed = dict(re.findall(r"user (\w+)\s+password (\S+)", first))
    assert set(printed) == {u for u, _, _ in manage.DEMO_USERS}
    assert len(set(printed.values())) == 3 and all(len(p) >= 12 for p in printed.values())
    with fresh_app.app_context():
        for user in db.session.scalars(select(User)):
            assert printed[user.username] not in user.password_hash
            assert check_password_hash(user.password_hash, printed[user.username])
            assert user.password_hash.startswith("pbkdf2:sha256:1000$")
        assert {u.role for u in db.session.scalars(select(User))} == {
            "apprentice", "tester", "supervisor"}
    again = run_setup(fresh_app)
    assert "password" not in again.replace("reset-password", "")
    for username in printed:
        assert f"user {username}" in again
    for password in printed.values():
        assert password not in again


def test_each_setup_makes_new_passwords(monkeypatch, tmp_path):
    passwords = []
    for n in range(2):
        monkeypatch.delenv("FIELDAPP_DEMO_PASSWORD", raising=False)
        app = create_app({"INSTANCE_PATH": str(tmp_path / str(n)), "SECRET_KEY": "x",
                          "PASSWORD_HASH_METHOD": FAST_HASH})
        passwords.append(re.findall(r"password (\S+)", run_setup(app)))
        with app.app_context():
            db.engine.dispose()
    assert not set(passwords[0]) & set(passwords[1])


def test_demo_password_from_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv("FIELDAPP_DEMO_PASSWORD", "ci-only-password")
    app = create_app({"INSTANCE_PATH": str(tmp_path), "SECRET_KEY": "x",
                      "PASSWORD_HASH_METHOD": FAST_HASH})
    run_setup(app)
    with app.app_context():
        user = db.session.scalar(select(User).where(User.username == "tester"))
        assert check_password_hash(user.password_hash, "ci-only-password")
        db.engine.dispose()


def test_setup_loads_the_demo_jobs_on_first_start_only(fresh_app):
    files = sorted(DEMO_DIR.glob("*.json"))
    assert len(files) >= 4, "demo_jobs/ should hold the invented demo jobs"
    output = run_setup(fresh_app)
    references = [json.loads(f.read_text())["job"]["reference"] for f in files]
    assert "skipped" not in output
    with fresh_app.app_context():
        assert sorted(db.session.scalars(select(Job.reference))) == sorted(references)
        circuits = db.session.scalar(select(func.count(Circuit.id)))
        assert circuits >= len(files)
        # imported readings have a history like typed ones; safety is never assumed
        assert db.session.scalar(select(func.count(ChangeLog.id)).where(
            ChangeLog.field == "r1")) == circuits
        assert not any(db.session.scalars(select(Circuit.safety_proved_dead)))
    run_setup(fresh_app)
    with fresh_app.app_context():
        assert db.session.scalar(select(func.count(Job.id))) == len(files)


def test_a_bad_demo_file_is_skipped_with_its_reason(fresh_app, tmp_path):
    folder = tmp_path / "demo"
    folder.mkdir()
    (folder / "bad.json").write_text(json.dumps({
        "job": {"reference": "BAD-1", "site": "x"},
        "circuits": [{"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B",
                                           "rating_a": 32}},
                      "end_to_end": {"r1": -1}}]}))
    out = io.StringIO()
    with fresh_app.app_context():
        migrations.upgrade(db.engine)
        manage.seed_users("pw-for-this-test")
        assert manage.load_demo_jobs(folder, out=out) == []
        db.session.commit()
        assert db.session.scalar(select(func.count(Job.id))) == 0
    assert "skipped bad.json: circuits[0].end_to_end.r1" in out.getvalue()


def test_reset_password(fresh_app):
    run_setup(fresh_app)
    out = io.StringIO()
    assert manage.reset_password("tester", fresh_app, out=out) == 0
    password = out.getvalue().split(": ")[1].strip()
    with fresh_app.app_context():
        user = db.session.scalar(select(User).where(User.username == "tester"))
        assert check_password_hash(user.password_hash, password)
    assert manage.reset_password("nobody", fresh_app, out=out) == 1


def test_the_setup_command_as_make_run_calls_it(tmp_path):
    env = {k: v for k, v in os.environ.items() if k not in ("DATABASE_URL", "SECRET_KEY")}
    env.update({"FIELDAPP_INSTANCE_PATH": str(tmp_path), "FIELDAPP_DEMO_PASSWORD": "cli-test-9"})
    result = subprocess.run([sys.executable, "-m", "fieldapp.manage", "setup"], env=env,
                            capture_output=True, text=True, timeout=120, check=False)
    assert result.returncode == 0, result.stderr
    assert f"database ready at revision {migrations.head_revision()}" in result.stdout
    assert "user tester      password cli-test-9" in result.stdout
    assert (tmp_path / "fieldapp.sqlite").exists() and (tmp_path / "secret_key").exists()
