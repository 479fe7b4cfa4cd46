"""Fixtures shared by every test package: a migrated SQLite database and app factory.

The migrations run once per session into a template file; each test gets a copy, so a test
starts from the schema that ``manage setup`` builds, with three users, in a few milliseconds.
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

import pytest

# This folder is on sys.path (pytest's rootdir-based imports) and tests/fieldapp and
# tests/ringmath would shadow the real packages as namespace packages: the checkout wins.
ROOT = str(Path(__file__).resolve().parent.parent)
if sys.path[0] != ROOT:
    sys.path.insert(0, ROOT)

TEST_PASSWORD = "correct-horse-7"
#: One user per role; pbkdf2 with few rounds keeps logins fast (tests only).
TEST_USERS = (
    ("appr", "Ffion Test-Apprentice", "apprentice"),
    ("test", "Gethin Test-Tester", "tester"),
    ("super", "Hywel Test-Supervisor", "supervisor"),
)
FAST_HASH = "pbkdf2:sha256:1000"


@pytest.fixture(scope="session")
def template_db(tmp_path_factory):
    """A SQLite file at the newest migration with the test users in it."""
    from fieldapp import create_app, migrations
    from fieldapp.extensions import db
    from fieldapp.manage import create_user

    folder = tmp_path_factory.mktemp("template")
    path = folder / "template.sqlite"
    app = create_app({"TESTING": True, "SECRET_KEY": "template", "INSTANCE_PATH": str(folder),
                      "SQLALCHEMY_DATABASE_URI": f"sqlite:///{path}"})
    with app.app_context():
        migrations.upgrade(db.engine)
        for username, name, role in TEST_USERS:
            create_user(username, name, role, TEST_PASSWORD, method=FAST_HASH)
        db.session.commit()
        db.engine.dispose()
    return path


@pytest.fixture
def make_app(template_db, tmp_path, monkeypatch):
    """Build an app on a fresh copy of the template database; extra config as keywords."""
    from fieldapp import create_app
    from fieldapp.extensions import db

    monkeypatch.delenv("DATABASE_URL", raising=False)
    monkeypatch.delenv("SECRET_KEY", raising=False)
    apps = []

    def build(**config):
        path = tmp_path / f"app{len(apps)}.sqlite"
        shutil.copy(template_db, path)
        settings = {"TESTING": True, "SECRET_KEY": "test-secret", "WTF_CSRF_ENABLED": False,
                    "INSTANCE_PATH": str(tmp_path / "instance"), "DIAGNOSIS_MODE": "inline",
                    "SQLALCHEMY_DATABASE_URI": f"sqlite:///{path}"}
        settings.update(config)
        app = create_app(settings)
        apps.append(app)
        return app

    yield build
    for app in apps:
        with app.app_context():
            db.session.remove()
            db.engine.dispose()


@pytest.fixture
def app(make_app):
    """The app with CSRF off (the CSRF tests build their own with it on)."""
    return make_app()


@pytest.fixture
def test_password() -> str:
    return TEST_PASSWORD
