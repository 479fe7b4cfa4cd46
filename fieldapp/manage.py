"""Command line: ``python -m fieldapp.manage setup`` (and ``reset-password USER``).

setup: create or upgrade the database, create the demo users with random passwords (printed
once, never stored in clear), load demo_jobs/*.json into an empty database, print the logins.
FIELDAPP_DEMO_PASSWORD sets one known password for every demo user (tests and CI only); the
app setting PASSWORD_HASH_METHOD (werkzeug method string) lets tests hash quickly.
"""

from __future__ import annotations

import argparse
import io
import json
import secrets
import sys
from pathlib import Path

from sqlalchemy import func, select
from werkzeug.security import generate_password_hash

from fieldapp import backup, changes, create_app, migrations
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


def setup(app=None, out=sys.stdout, logins_out=None) -> None:
    """Migrate, seed the demo users and jobs, then print the logins (to ``logins_out`` when
    given, so a caller can print them after everything else)."""
    app = app or create_app()
    with app.app_context():
        migrations.upgrade(db.engine)
        created = seed_users(app.config.get("DEMO_PASSWORD"),
                             app.config.get("PASSWORD_HASH_METHOD"))
        jobs = load_demo_jobs(out=out)
        db.session.commit()
        print(f"database ready at revision {migrations.current_revision(db.engine)}", file=out)
        if app.config.get("DIAGNOSIS_MODE") == "queue":
            _queue_schema(app, out)
        if jobs:
            print(f"loaded {len(jobs)} demo job(s): "
                  + ", ".join(j.reference for j in jobs), file=out)
        print_logins(created, logins_out or out)


def _queue_schema(app, out) -> None:
    """The diagnosis queue's tables (procrastinate's own schema), created once."""
    import procrastinate

    from fieldapp import taskqueue

    papp = taskqueue.build(app, procrastinate.SyncPsycopgConnector(
        conninfo=taskqueue.conninfo(app.config["SQLALCHEMY_DATABASE_URI"]))).open()
    try:
        made = taskqueue.apply_schema(papp)
    finally:
        papp.close()
    print("diagnosis queue " + ("created" if made else "ready"), file=out)


def diagnosis_worker() -> int:
    """Work the shared diagnosis queue until stopped (FIELDAPP_DIAGNOSIS=queue)."""
    from fieldapp import taskqueue

    app = create_app()
    if app.config.get("DIAGNOSIS_MODE") != "queue":
        print("diagnosis-worker needs FIELDAPP_DIAGNOSIS=queue and a PostgreSQL DATABASE_URL",
              file=sys.stderr)
        return 2
    taskqueue.run_worker(app)
    return 0


def print_logins(created: list, out) -> None:
    """The demo logins with their passwords (just created), else the user names."""
    if created:
        print("demo logins (passwords shown this once; write them down):", file=out)
        for user, password in created:
            print(f"  {user.role:<11} user {user.username:<11} password {password}", file=out)
    else:
        print("logins:", file=out)
        for user in db.session.scalars(select(User).order_by(User.id)):
            print(f"  {user.role:<11} user {user.username}", file=out)
        print("  (forgotten? python -m fieldapp.manage reset-password USER)", file=out)


def serve(host: str, port: int, app=None, out=sys.stdout, make_server=None) -> None:
    """``make run``: set up, start the development server, and print the logins last, once
    the server is listening, so no other output buries them."""
    if make_server is None:
        from werkzeug.serving import make_server
    app = app or create_app()
    logins = io.StringIO()
    setup(app, out=out, logins_out=logins)
    server = make_server(host, port, app, threaded=True)
    print(f"serving on http://{host}:{port} (development server; Ctrl+C stops it)", file=out)
    print(logins.getvalue(), end="", file=out, flush=True)
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        pass
    finally:
        server.server_close()


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
    run = sub.add_parser("run", help="setup, then serve; the logins are printed last")
    run.add_argument("--host", default="127.0.0.1")
    run.add_argument("--port", type=int, default=5000)
    sub.add_parser("diagnosis-worker",
                   help="diagnose circuits from the shared queue (FIELDAPP_DIAGNOSIS=queue)")
    save = sub.add_parser("backup", help="write the whole database to FILE as JSON")
    save.add_argument("file")
    save.add_argument("--with-passwords", action="store_true",
                      help="include the password hashes (keep that file safe)")
    load = sub.add_parser("restore", help="load a backup FILE into an empty database")
    load.add_argument("file")
    args = parser.parse_args(argv)
    if args.command == "setup":
        setup()
        return 0
    if args.command == "run":
        serve(args.host, args.port)
        return 0
    if args.command == "diagnosis-worker":
        return diagnosis_worker()
    if args.command == "backup":
        return backup_command(args.file, args.with_passwords)
    if args.command == "restore":
        return restore_command(args.file)
    return reset_password(args.username)


def backup_command(path: str, with_passwords: bool = False, app=None, out=sys.stdout) -> int:
    app = app or create_app()
    with app.app_context():
        doc = backup.backup(with_passwords)
    Path(path).write_text(json.dumps(doc, indent=1, ensure_ascii=False) + "\n")
    rows = sum(len(rows) for rows in doc["tables"].values())
    print(f"backup of {rows} rows at revision {doc['revision']} written to {path}", file=out)
    return 0


def restore_command(path: str, app=None, out=sys.stdout) -> int:
    app = app or create_app()
    with app.app_context():
        try:
            restored = backup.restore(json.loads(Path(path).read_text()))
        except (backup.BackupError, ValueError) as error:
            print(f"restore refused: {error}", file=sys.stderr)
            return 2
    print("restored " + ", ".join(f"{n} {t}" for t, n in restored.items() if n), file=out)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
