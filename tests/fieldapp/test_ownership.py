"""Who may change who tested a job and who may submit it, per role (README: Ownership)."""

from __future__ import annotations

import pytest
import sqlalchemy as sa


@pytest.fixture
def people(app):
    """ids of the test users plus a second tester and an apprentice working under 'test'."""
    from fieldapp.extensions import db
    from fieldapp.manage import create_user
    from fieldapp.models import User

    with app.app_context():
        create_user("test2", "Iolo Other-Tester", "tester", "correct-horse-7",
                    method="pbkdf2:sha256:1000")
        db.session.commit()
        ids = dict(db.session.execute(sa.select(User.username, User.id)).all())
        db.session.get(User, ids["appr"]).mentor_id = ids["test"]
        db.session.commit()
    return ids


def _job(app, make_circuit, tester_id):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit()
    with app.app_context():
        circuit = db.session.get(Circuit, cid)
        circuit.job.tester_id = tester_id
        db.session.commit()
        return circuit.job_id


def _status(app, job_id):
    from fieldapp.extensions import db
    from fieldapp.models import Job

    with app.app_context():
        job = db.session.get(Job, job_id)
        return job.status, job.tester_id


# (job's tester, who acts, may submit)
SUBMIT = [
    ("test", "test", True), ("test", "test2", False), ("test", "appr", False),
    ("test", "super", False),  # a supervisor reviews; reassigns the tester, never submits
    ("appr", "appr", True), ("appr", "test", True),  # an apprentice's tester
    ("appr", "test2", False),
]


@pytest.mark.parametrize("owner, who, allowed", SUBMIT)
def test_who_may_submit(app, people, logged_in, make_circuit, owner, who, allowed):
    job_id = _job(app, make_circuit, people[owner])
    response = logged_in(who).post(f"/jobs/{job_id}/submit",
                                   data={"reason": "ownership check: readings to follow"})
    assert response.status_code == (302 if allowed else 403)
    assert _status(app, job_id)[0] == ("submitted" if allowed else "in_progress")


@pytest.mark.parametrize("owner, who, allowed", [
    ("test", "test", True), ("test", "test2", False), ("test", "appr", False),
    ("test", "super", True), ("appr", "appr", True), ("appr", "test", False)])
def test_who_may_change_who_tested(app, people, logged_in, make_circuit, parse, owner, who,
                                   allowed):
    job_id = _job(app, make_circuit, people[owner])
    client = logged_in(who)
    response = client.post(f"/jobs/{job_id}/edit", data={
        "reference": "T-1", "site": "1 Test Row", "client": "Test Client",
        "tester_id": people["test2"], "notes": ""})
    assert _status(app, job_id)[1] == (people["test2"] if allowed else people[owner])
    if not allowed:
        assert response.status_code == 422
        assert "Only the job's tester or a supervisor" in parse(response).text


def test_other_testers_may_still_edit_the_job_details(app, people, logged_in, make_circuit):
    from fieldapp.extensions import db
    from fieldapp.models import Job

    job_id = _job(app, make_circuit, people["test"])
    response = logged_in("test2").post(f"/jobs/{job_id}/edit", data={
        "reference": "T-1", "site": "2 Test Row", "client": "Test Client",
        "tester_id": people["test"], "notes": ""})
    assert response.status_code == 302
    with app.app_context():
        assert db.session.get(Job, job_id).site == "2 Test Row"
