"""Command line: ``python -m fieldapp.manage setup`` (and ``reset-password USER``).

setup: create or upgrade the database, create the demo users with random passwords (printed
once, never stored in clear), load demo_jobs/*.json into an empty database, print the logins.
FIELDAPP_DEMO_PASSWORD sets one known password for every demo user (tests and CI only); the
app setting PASSWORD_HASH_METHOD (werkzeug method string) lets tests hash quickly.
"""

from __future__ import annotations

import argparse
import json
import secrets
import sys
from pathlib import Path

from sqlalchemy import func, select
from werkzeug.security import generate_password_hash

from fieldapp import changes, create_app, migrations
from fieldapp.extensions import db
from fieldapp.importer import import_document
from fieldapp.models import ROLES, Job, User
from fieldapp.users import service as users_service

DEMO_DIR = Path(__file__).resolve().parent.parent / "demo_jobs"
#: Invented people, one per role.
DEMO_USERS = (
    ("apprentice", "Aled Penrose", "apprentice"),
    ("tester", "Morwenna Tregear", "tester"),
    ("supervisor", "Idris Calloway", "supervisor"),
)


def create_user(username: str, name: str, role: str, password: str,
                method: str | None = None) -> User:
    """A new user with a hashed password."""
    if role not in ROLES:
        raise ValueError(f"role: {role!r} is not one of {', '.join(ROLES)}")
    hashed = generate_password_hash(password, method) if method else generate_password_hash(
        password)
    return users_service.add_user(username, name, role, hashed, None)


def new_password() -> str:
    return secrets.token_urlsafe(9)


def seed_users(fixed_password: str | None = None,
               method: str | None = None) -> list[tuple[User, str]]:
    """The demo users, when there are no users yet; returns (user, password) pairs."""
    if db.session.scalar(select(func.count(User.id))):
        return []
    created = []
    for username, name, role in DEMO_USERS:
        password = fixed_password or new_password()
        created.append((create_user(username, name, role, password, method), password))
    return created


def load_demo_jobs(directory: Path = DEMO_DIR, out=sys.stdout) -> list[Job]:
    """Every demo_jobs/*.json into an empty database (none when jobs already exist)."""
    if db.session.scalar(select(func.count(Job.id))):
        return []
    tester = db.session.scalar(select(User).where(User.role == "tester"))
    actor = changes.Actor(tester.id if tester else None, "demo import")
    jobs = []
    for path in sorted(directory.glob("*.json")):
        try:
            with db.session.begin_nested():
                jobs.append(import_document(json.loads(path.read_text()), actor,
                                            tester_id=tester.id if tester else None))
        except ValueError as error:
            print(f"skipped {path.name}: {error}", file=out)
    return jobs


def setup(app=None, out=sys.stdout) -> None:
    app = app or create_app()
    with app.app_context():
        migrations.upgrade(db.engine)
        created = seed_users(app.config.get("DEMO_PASSWORD"),
                             app.config.get("PASSWORD_HASH_METHOD"))
        jobs = load_demo_jobs(out=out)
        db.session.commit()
        print(f"database ready at revision {migrations.current_revision(db.engine)}", file=out)
        if jobs:
            print(f"loaded {len(jobs)} demo job(s): "
                  + ", ".join(j.reference for j in jobs), file=out)
        if created:
            print("demo logins (passwords shown this once; write them down):", file=out)
            for user, password in created:
                print(f"  {user.role:<11} user {user.username:<11} password {password}",
                      file=out)
        else:
            print("logins:", file=out)
            for user in db.session.scalars(select(User).order_by(User.id)):
                print(f"  {user.role:<11} user {user.username}", file=out)
            print("  (forgotten? python -m fieldapp.manage reset-password USER)", file=out)


def reset_password(username: str, app=None, out=sys.stdout) -> int:
    app = app or create_app()
    with app.app_context():
        user = db.session.scalar(select(User).where(User.username == username))
        if user is None:
            print(f"no user {username!r}", file=sys.stderr)
            return 1
        password = new_password()
        method = app.config.get("PASSWORD_HASH_METHOD")
        users_service.set_password(user, generate_password_hash(password, method) if method
                                   else generate_password_hash(password), None,
                                   "password_reset")
        db.session.commit()
        print(f"new password for {username}: {password}", file=out)
        return 0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="python -m fieldapp.manage")
    sub = parser.add_subparsers(dest="command", required=True)
    sub.add_parser("setup", help="create/upgrade the database, demo users and demo jobs")
    reset = sub.add_parser("reset-password", help="give a user a new random password")
    reset.add_argument("username")
    args = parser.parse_args(argv)
    if args.command == "setup":
        setup()
        return 0
    return reset_password(args.username)


if __name__ == "__main__":
    raise SystemExit(main())
