"""Sessions end on the server: sign-out, a password change or reset and disabling a user kill
every copied cookie; remember tokens rotate and expire; failed sign-ins are limited in the
database; a supervisor manages accounts, every change recorded."""

from __future__ import annotations

import datetime as dt
import re

import pytest
import sqlalchemy as sa

from fieldapp.auth.sessions import REMEMBER_COOKIE, REMEMBER_DAYS


def _cookies(client) -> dict[str, str]:
    return {c.key: c.value for c in client._cookies.values()}


def _clone(app, cookies: dict[str, str]):
    """A second browser holding copies of the given cookies (a stolen session)."""
    other = app.test_client()
    for name, value in cookies.items():
        other.set_cookie(name, value)
    return other


def _log_in(client, username="test", password="correct-horse-7", remember=False):
    data = {"username": username, "password": password}
    if remember:
        data["remember"] = "y"
    return client.post("/login", data=data)


def _logged_in(client) -> bool:
    return client.get("/jobs/").status_code == 200


def test_sign_out_ends_every_copy_of_the_session_and_remember_cookie(app):
    client = app.test_client()
    assert _log_in(client, remember=True).status_code == 302
    stolen = _cookies(client)
    assert REMEMBER_COOKIE in stolen and "session" in stolen
    thief = _clone(app, stolen)
    remember_only = _clone(app, {REMEMBER_COOKIE: stolen[REMEMBER_COOKIE]})
    assert _logged_in(thief) and _logged_in(remember_only)
    client.post("/logout")
    for other in (thief, _clone(app, stolen), _clone(app, {REMEMBER_COOKIE:
                                                            stolen[REMEMBER_COOKIE]})):
        assert not _logged_in(other)


def test_remember_tokens_rotate_and_last_a_month(app):
    from fieldapp.extensions import db
    from fieldapp.models import RememberToken

    values = []
    for _ in range(2):
        client = app.test_client()
        response = _log_in(client, remember=True)
        header = [h for h in response.headers.getlist("Set-Cookie")
                  if h.startswith(REMEMBER_COOKIE)][0]
        assert "HttpOnly" in header and "SameSite=Lax" in header
        values.append(_cookies(client)[REMEMBER_COOKIE])
    assert values[0] != values[1]
    with app.app_context():
        tokens = list(db.session.scalars(sa.select(RememberToken)))
        assert len(tokens) == 2
        for token in tokens:
            assert token.secret_hash not in values[0] + values[1]  # only a digest is kept
            life = token.expires_at - token.created_at
            assert abs(life - dt.timedelta(days=REMEMBER_DAYS)) < dt.timedelta(seconds=5)
        tokens[0].expires_at = tokens[0].created_at  # expired
        db.session.commit()
    assert not _logged_in(_clone(app, {REMEMBER_COOKIE: values[0]}))
    assert _logged_in(_clone(app, {REMEMBER_COOKIE: values[1]}))
    forged = values[1].split(":")[0] + ":" + "x" * 43
    assert not _logged_in(_clone(app, {REMEMBER_COOKIE: forged}))


def test_changing_the_password_ends_other_sessions_and_keeps_this_one(app, parse):
    here, elsewhere = app.test_client(), app.test_client()
    _log_in(here)
    _log_in(elsewhere, remember=True)
    stolen = _cookies(elsewhere)
    wrong = here.post("/account/password", data={"current": "nope", "new": "a-new-pass-42",
                                                 "again": "a-new-pass-42"})
    assert wrong.status_code == 422
    assert "The current password is wrong." in parse(wrong).text
    short = here.post("/account/password", data={"current": "correct-horse-7", "new": "short",
                                                 "again": "short"})
    assert short.status_code == 422
    ok = here.post("/account/password", data={"current": "correct-horse-7",
                                              "new": "a-new-pass-42", "again": "a-new-pass-42"})
    assert ok.status_code == 302
    assert _logged_in(here)
    assert not _logged_in(elsewhere) and not _logged_in(_clone(app, stolen))
    assert _log_in(app.test_client(), password="correct-horse-7").status_code == 401
    assert _log_in(app.test_client(), password="a-new-pass-42").status_code == 302


@pytest.mark.parametrize("action", ["disable", "reset-password"])
def test_disabling_or_resetting_ends_the_users_sessions(app, supervisor, parse, action):
    from fieldapp.extensions import db
    from fieldapp.models import User, UserEvent

    victim = app.test_client()
    _log_in(victim, remember=True)
    stolen = _cookies(victim)
    with app.app_context():
        uid = db.session.scalar(sa.select(User.id).where(User.username == "test"))
    response = supervisor.post(f"/users/{uid}/{action}")
    assert not _logged_in(victim) and not _logged_in(_clone(app, stolen))
    with app.app_context():
        user = db.session.get(User, uid)
        events = [(e.action, e.actor and e.actor.username) for e in db.session.scalars(
            sa.select(UserEvent).where(UserEvent.user_id == uid))]
    if action == "disable":
        assert user.disabled_at is not None and ("disabled", "super") in events
        assert _log_in(app.test_client()).status_code == 401  # the right password, refused
        supervisor.post(f"/users/{uid}/enable")
        assert _log_in(app.test_client()).status_code == 302
    else:
        assert response.status_code == 200
        assert response.headers["Cache-Control"] == "no-store"
        password = parse(response).select_one("code.secret").text
        assert password and password not in user.password_hash
        assert ("password_reset", "super") in events
        assert _log_in(app.test_client(), password=password).status_code == 302
        assert _log_in(app.test_client()).status_code == 401


def test_a_supervisor_adds_a_user_and_sees_the_password_once(app, supervisor, parse):
    from fieldapp.extensions import db
    from fieldapp.models import User, UserEvent

    with app.app_context():
        mentor = db.session.scalar(sa.select(User.id).where(User.username == "test"))
    response = supervisor.post("/users/new", data={"username": "nia", "name": "Nia Newydd",
                                                   "role": "apprentice", "mentor_id": mentor})
    assert response.status_code == 200 and response.headers["Cache-Control"] == "no-store"
    password = parse(response).select_one("code.secret").text
    assert "nia" in parse(supervisor.get("/users/")).text
    assert password not in supervisor.get("/users/").get_data(as_text=True)
    with app.app_context():
        user = db.session.scalar(sa.select(User).where(User.username == "nia"))
        assert (user.role, user.mentor_id) == ("apprentice", mentor)
        event = db.session.scalar(sa.select(UserEvent).where(UserEvent.user_id == user.id))
        assert event.action == "created" and event.actor.username == "super"
    assert _log_in(app.test_client(), "nia", password).status_code == 302
    taken = supervisor.post("/users/new", data={"username": "nia", "name": "x",
                                                "role": "tester", "mentor_id": 0})
    assert taken.status_code == 422 and "taken" in parse(taken).text


@pytest.mark.parametrize("who", ["appr", "test"])
def test_only_a_supervisor_manages_users(app, logged_in, who):
    client = logged_in(who)
    assert client.get("/users/").status_code == 403
    assert client.post("/users/new", data={"username": "x1", "name": "x",
                                           "role": "supervisor"}).status_code == 403
    assert client.post("/users/1/reset-password").status_code == 403


# ------------------------------------------------------------------ sign-in limits


def test_failed_sign_ins_are_limited_per_account_without_saying_it_exists(app, parse):
    from fieldapp.auth import throttle

    for name in ("test", "nobody-here"):
        client = app.test_client()
        for _ in range(throttle.ACCOUNT_FAILURES):
            assert _log_in(client, name, "wrong").status_code == 401
        refused = _log_in(client, name, "correct-horse-7")
        assert refused.status_code == 429
        assert throttle.MESSAGE in parse(refused).text
        assert not _logged_in(client)
    # the same words and status for a real and an unknown account
    assert _log_in(app.test_client(), "TEST", "x").status_code == 429  # names are matched
    assert _log_in(app.test_client(), "super").status_code == 302  # others are untouched


def test_the_limit_is_in_the_database_so_every_server_sees_it(make_app):
    """Two app instances on one database file: failures on one lock the account on both."""
    from fieldapp.auth import throttle

    first = make_app()
    second = make_app(SQLALCHEMY_DATABASE_URI=first.config["SQLALCHEMY_DATABASE_URI"])
    assert first is not second
    for _ in range(throttle.ACCOUNT_FAILURES):
        _log_in(first.test_client(), "test", "wrong")
    assert _log_in(second.test_client()).status_code == 429


def test_the_window_passes_and_a_success_clears_the_count(app):
    from fieldapp.auth import throttle
    from fieldapp.extensions import db
    from fieldapp.models import LoginAttempt

    for _ in range(throttle.ACCOUNT_FAILURES - 1):
        _log_in(app.test_client(), "test", "wrong")
    assert _log_in(app.test_client()).status_code == 302  # success clears the count
    for _ in range(throttle.ACCOUNT_FAILURES - 1):
        _log_in(app.test_client(), "test", "wrong")
    assert _log_in(app.test_client()).status_code == 302
    for _ in range(throttle.ACCOUNT_FAILURES):
        _log_in(app.test_client(), "test", "wrong")
    assert _log_in(app.test_client()).status_code == 429
    with app.app_context():
        for attempt in db.session.scalars(sa.select(LoginAttempt)):
            attempt.at -= throttle.WINDOW + dt.timedelta(seconds=1)
        db.session.commit()
    assert _log_in(app.test_client()).status_code == 302


def test_failed_sign_ins_are_limited_per_address(app, monkeypatch):
    from fieldapp.auth import throttle

    monkeypatch.setattr(throttle, "ADDRESS_FAILURES", 6)
    for n in range(6):
        _log_in(app.test_client(), f"guess-{n}", "wrong")
    assert _log_in(app.test_client()).status_code == 429
    other = app.test_client()
    other.environ_base["REMOTE_ADDR"] = "10.0.0.9"
    assert _log_in(other).status_code == 302


def test_an_old_style_session_id_is_not_accepted(app):
    from fieldapp.auth.sessions import load_user

    with app.app_context():
        assert load_user("2") is None
        assert load_user("2:0") is not None
        assert load_user("2:1") is None
        assert load_user("9" * 40 + ":0") is None


def test_login_page_says_nothing_about_accounts(app):
    text = app.test_client().get("/login").get_data(as_text=True)
    assert not re.search(r"\b(appr|super)\b", text)
