"""The supervisor's review: roles, decisions, the lock on approved jobs, the list and its flags."""

from __future__ import annotations

import json
import uuid
from pathlib import Path

import pytest
import sqlalchemy as sa

from fieldapp.review.flags import job_flags

ROOT = Path(__file__).resolve().parents[2]
TABLES = ("user", "job", "circuit", "outlet", "change_log")
HEALTHY = {"e2e": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
           "outlets": [{"label": "Kitchen", "ln": 0.26, "le": 0.34},
                       {"label": "Hall", "ln": 0.26, "le": 0.34}]}


def job_of(app, circuit_id: int) -> int:
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        return db.session.get(Circuit, circuit_id).job_id


def job_row(app, job_id: int) -> dict:
    from fieldapp.extensions import db
    from fieldapp.models import Job

    with app.app_context():
        job = db.session.get(Job, job_id)
        return {"status": job.status, "tester": job.tester.username if job.tester else None,
                "approved_by": job.approved_by.username if job.approved_by else None,
                "approved_at": job.approved_at, "reviewed_by": job.reviewed_by_id,
                "comment": job.review_comment}


def snapshot(app) -> tuple:
    """Row counts of every table and every job's document: any logged write changes it."""
    from fieldapp import records
    from fieldapp.extensions import db
    from fieldapp.models import Job

    with app.app_context():
        counts = {t: db.session.scalar(sa.text(f'SELECT count(*) FROM "{t}"')) for t in TABLES}
        docs = [(j.status, records.job_document(j))
                for j in db.session.scalars(sa.select(Job).order_by(Job.id))]
        return counts, json.dumps(docs, sort_keys=True, default=str)


@pytest.fixture
def submitted(app, make_circuit, tester):
    """A healthy two-outlet job, submitted by its tester: (job id, circuit id)."""
    cid = make_circuit(**HEALTHY)
    jid = job_of(app, cid)
    assert tester.post(f"/jobs/{jid}/submit").status_code == 302
    assert job_row(app, jid)["status"] == "submitted"
    return jid, cid


# ---------------------------------------------------------------- roles


@pytest.mark.parametrize("who", ["apprentice", "tester"])
@pytest.mark.parametrize("action,data", [("approve", {}), ("return", {"comment": "redo"}),
                                         ("reopen", {"reason": "redo"})])
def test_only_a_supervisor_decides(request, app, submitted, who, action, data):
    jid, _ = submitted
    client = request.getfixturevalue(who)
    before = snapshot(app)
    assert client.post(f"/review/jobs/{jid}/{action}", data=data).status_code == 403
    assert snapshot(app) == before


@pytest.mark.parametrize("who", ["apprentice", "tester"])
def test_review_pages_are_for_supervisors(request, submitted, who):
    jid, _ = submitted
    client = request.getfixturevalue(who)
    assert client.get("/review/").status_code == 403
    assert client.get(f"/review/jobs/{jid}").status_code == 403


def test_only_the_jobs_tester_submits_it(app, make_circuit, apprentice, tester):
    jid = job_of(app, make_circuit(**HEALTHY))  # tested by "test"
    before = snapshot(app)
    assert apprentice.post(f"/jobs/{jid}/submit").status_code == 403
    assert snapshot(app) == before
    assert tester.post(f"/jobs/{jid}/submit").status_code == 302
    assert job_row(app, jid)["status"] == "submitted"


def test_logged_out_is_sent_to_login(app, submitted):
    jid, _ = submitted
    response = app.test_client().post(f"/review/jobs/{jid}/approve")
    assert response.status_code == 302 and "/login" in response.location


# ---------------------------------------------------------------- decisions


def test_approval_records_who_and_when(app, submitted, supervisor):
    jid, _ = submitted
    response = supervisor.post(f"/review/jobs/{jid}/approve", data={"note": "Tidy work."})
    assert response.status_code == 302
    row = job_row(app, jid)
    assert row["status"] == "approved" and row["approved_by"] == "super"
    assert row["approved_at"] is not None and row["comment"] == "Tidy work."
    page = supervisor.get(f"/review/jobs/{jid}").get_data(as_text=True)
    assert "Approved by Hywel Test-Supervisor" in page and "read-only" in page


def test_returned_job_goes_back_to_its_tester(app, submitted, supervisor, tester):
    jid, cid = submitted
    response = supervisor.post(f"/review/jobs/{jid}/return",
                               data={"comment": "Step 3 at the hall socket looks high; retest."})
    assert response.status_code == 302
    row = job_row(app, jid)
    assert (row["status"], row["tester"]) == ("returned", "test")
    page = tester.get(f"/jobs/{jid}").get_data(as_text=True)
    assert "Step 3 at the hall socket looks high; retest." in page
    # the tester can correct a reading again and submit once more
    fixed = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "le", "outlet": "b", "value": 0.35, "client_id": uuid.uuid4().hex})
    assert fixed.status_code == 200, fixed.get_data(as_text=True)
    assert tester.post(f"/jobs/{jid}/submit").status_code == 302
    assert job_row(app, jid)["status"] == "submitted"


def test_return_needs_a_comment(app, submitted, supervisor):
    jid, _ = submitted
    before = snapshot(app)
    response = supervisor.post(f"/review/jobs/{jid}/return", data={"comment": "  "})
    assert response.status_code == 400
    assert "Say what needs doing." in response.get_data(as_text=True)
    assert snapshot(app) == before


@pytest.mark.parametrize("action,data,status", [
    ("approve", {}, "in_progress"),
    ("return", {"comment": "x"}, "in_progress"),
    ("reopen", {"reason": "x"}, "submitted"),
    ("approve", {}, "approved"),
])
def test_decisions_only_from_the_right_status(app, make_circuit, supervisor, action, data,
                                              status):
    jid = job_of(app, make_circuit(status=status, **HEALTHY))
    before = snapshot(app)
    response = supervisor.post(f"/review/jobs/{jid}/{action}", data=data, follow_redirects=True)
    assert "nothing to" in response.get_data(as_text=True)
    assert snapshot(app) == before


def test_reopening_is_recorded_and_unlocks(app, submitted, supervisor, tester):
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog

    jid, cid = submitted
    supervisor.post(f"/review/jobs/{jid}/approve", data={})
    assert supervisor.post(f"/review/jobs/{jid}/reopen", data={"reason": ""}).status_code == 400
    assert job_row(app, jid)["status"] == "approved"
    assert supervisor.post(f"/review/jobs/{jid}/reopen",
                           data={"reason": "Client added a socket."}).status_code == 302
    row = job_row(app, jid)
    assert (row["status"], row["approved_by"], row["approved_at"]) == ("returned", None, None)
    assert row["comment"] == "Client added a socket."
    with app.app_context():
        log = [(r.field, r.old_value, r.new_value, r.user.username) for r in db.session.scalars(
            sa.select(ChangeLog).where(ChangeLog.entity == "job", ChangeLog.entity_id == jid,
                                       ChangeLog.field.in_(["status", "approved_by_id"]))
            .order_by(ChangeLog.id))]
    assert ("status", "approved", "returned", "super") in log
    assert any(f == "approved_by_id" and new is None and who == "super"
               for f, _, new, who in log)
    ok = tester.post(f"/api/circuits/{cid}/readings", json={
        "step": "ln", "outlet": "a", "value": 0.27, "client_id": uuid.uuid4().hex})
    assert ok.status_code == 200


# ---------------------------------------------------------------- the lock on every write path


def form_data(page: str, field: str) -> dict:
    """The fields of the page's form that has a field named ``field``, as a browser sends
    them (a fresh client id, so an idempotency key never hides a write)."""
    from bs4 import BeautifulSoup

    soup = BeautifulSoup(page, "html.parser")
    form = next(f for f in soup.find_all("form") if f.find(attrs={"name": field}))
    data = {}
    for el in form.find_all(["input", "select", "textarea"]):
        name = el.get("name")
        kind = el.get("type", "text")
        if not name or kind in ("submit", "button"):
            continue
        if el.name == "select":
            option = el.find("option", selected=True) or el.find("option")
            data[name] = option.get("value", option.text) if option else ""
        elif el.name == "textarea":
            data[name] = el.text
        elif kind == "checkbox":
            if el.has_attr("checked"):
                data[name] = el.get("value", "y")
        else:
            data[name] = el.get("value", "")
    if "client_id" in data:
        data["client_id"] = uuid.uuid4().hex
    return data


#: Each write path: (form page on the job in progress and a field of its form, or None for a
#: request made by hand; the URL written to; the changes or the request body). Placeholders:
#: {job} / {circuit} of the job written to, {ctrl_job} / {ctrl_circuit} of the job in progress.
WRITE_PATHS = {
    "edit_job": (("/jobs/{ctrl_job}/edit", "site"), "/jobs/{job}/edit",
                 {"site": "99 Changed Street", "reference": "R-{job}"}),
    "edit_circuit": (("/jobs/circuits/{ctrl_circuit}/edit", "description"),
                     "/jobs/circuits/{circuit}/edit", {"description": "Changed description"}),
    "new_circuit": (("/jobs/{ctrl_job}/circuits/new", "way"), "/jobs/{job}/circuits/new",
                    {"way": "9"}),
    "add_outlet": (("/circuits/{ctrl_circuit}/test/ln", "label"),
                   "/circuits/{circuit}/outlets?step=ln", {"label": "New socket by the window"}),
    "edit_outlet": (("/circuits/{ctrl_circuit}/outlets/a/edit", "label"),
                    "/circuits/{circuit}/outlets/a/edit", {"label": "Kitchen, renamed"}),
    "reading_form": (None, "/circuits/{circuit}/test/reading",
                     {"field": "ln", "outlet": "a", "value": "0.29"}),
    "reading_api": (None, "/api/circuits/{circuit}/readings", {"step": "r1", "value": "0.55"}),
    "delete_outlet": (None, "/circuits/{circuit}/outlets/b/delete", {}),
    "advance": (None, "/circuits/{circuit}/test/ln/done", {}),
    "submit": (None, "/jobs/{job}/submit", {}),
}


def write(client, name: str, where: dict):
    """Make the write ``name`` against the job and circuit in ``where``."""
    form, url, changes = WRITE_PATHS[name]
    changes = {k: v.format(**where) for k, v in changes.items()}
    if form is not None:
        page = client.get(form[0].format(**where)).get_data(as_text=True)
        changes = {**form_data(page, form[1]), **changes}
    elif "value" in changes:
        changes["client_id"] = uuid.uuid4().hex
    send = {"json": changes} if url.startswith("/api/") else {"data": changes}
    return client.post(url.format(**where), **send)


@pytest.mark.parametrize("name", list(WRITE_PATHS))
def test_an_approved_job_refuses_every_write(app, make_circuit, tester, name):
    control = make_circuit(**HEALTHY)
    locked = make_circuit(status="approved", **HEALTHY)
    ids = {"ctrl_job": job_of(app, control), "ctrl_circuit": control}
    # the same request on the job in progress does change it: the payload itself is valid
    before = snapshot(app)
    write(tester, name, {**ids, "job": ids["ctrl_job"], "circuit": control})
    assert snapshot(app) != before
    before = snapshot(app)
    response = write(tester, name, {**ids, "job": job_of(app, locked), "circuit": locked})
    assert response.status_code in (302, 400, 403, 409, 422)
    assert snapshot(app) == before


def test_the_write_helpers_refuse_a_locked_job_themselves(app, make_circuit):
    """The one check in fieldapp.changes holds even for code that skips the views' checks."""
    from fieldapp import changes
    from fieldapp.extensions import db
    from fieldapp.models import Circuit, Job, Outlet

    cid = make_circuit(status="approved", **HEALTHY)
    who = changes.Actor(None, "pytest")
    with app.app_context():
        circuit = db.session.get(Circuit, cid)
        outlet = db.session.scalar(sa.select(Outlet).where(Outlet.circuit_id == cid))
        attempts = [
            lambda: changes.set_reading(circuit, "r1", "0.6", who),
            lambda: changes.set_reading(circuit, "ln", "0.3", who, outlet=outlet),
            lambda: changes.update(circuit, {"description": "x"}, who),
            lambda: changes.update(db.session.get(Job, circuit.job_id), {"site": "x"}, who),
            lambda: changes.add_outlet(circuit, {"label": "x"}, who),
            lambda: changes.delete_outlet(outlet, who),
        ]
        for attempt in attempts:
            with pytest.raises(changes.Refused):
                attempt()
            db.session.rollback()


def test_a_refused_write_inside_a_request_is_answered_and_rolled_back(app, make_circuit,
                                                                       login):
    """A view that forgot its own check still cannot change a locked job: 409, nothing kept."""
    from fieldapp import changes
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit(status="approved", **HEALTHY)

    @app.post("/test-only/rename/<int:circuit_id>")
    def careless_view(circuit_id):
        circuit = db.session.get(Circuit, circuit_id)
        circuit.way = "99"  # an unlogged change made before the logged one is refused
        changes.update(circuit, {"description": "renamed"}, changes.Actor(None, "pytest"))
        db.session.commit()
        return "changed"

    tester = app.test_client()
    login(tester, "test")
    before = snapshot(app)
    response = tester.post(f"/test-only/rename/{cid}")
    assert response.status_code == 409 and "can no longer be changed" in response.get_data(
        as_text=True)
    assert snapshot(app) == before
    with app.app_context():
        assert db.session.get(Circuit, cid).way == "4"


# ---------------------------------------------------------------- the review page and the list


def test_review_page_shows_readings_findings_picture_zs_and_cautions(submitted, supervisor,
                                                                      parse):
    from ringmath.messages import CAUTIONS

    jid, cid = submitted
    response = supervisor.get(f"/review/jobs/{jid}")
    soup = parse(response)
    text = " ".join(soup.get_text(" ").split())
    assert response.status_code == 200
    assert "DB1/4" in text and "0.52" in text and "0.26" in text and "0.34" in text
    assert soup.select("table.zs-table tbody tr") and "Max Zs" in text
    # 32 A type B: 1.10 Ω for a measured value (BS 7671:2018 Table 41.3 1.37 Ω, 80 % rule)
    assert "1.10" in text
    assert soup.select_one(f"#circuit-{cid} figure.ring-picture svg") is not None
    assert "Findings" in text
    for caution in CAUTIONS:
        assert " ".join(caution.split()) in text
    actions = {f.get("action") for f in soup.find_all("form")}
    assert f"/review/jobs/{jid}/approve" in actions and f"/review/jobs/{jid}/return" in actions
    history_links = [a["href"] for a in soup.find_all("a") if a.text.strip() == "history"]
    assert f"/review/jobs/{jid}/history?circuit={cid}&field=r1" in history_links
    assert len(history_links) == 3 + 2 * 2  # r1, rn, r2 and ln, le at two outlets


def test_list_filters_search_and_flags(app, make_circuit, supervisor, parse):
    make_circuit(status="submitted", **HEALTHY)                        # T-1: clear
    make_circuit(status="submitted", ze_ohm=0.95, **HEALTHY)          # T-2: Zs over 1.10 Ω
    make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},            # T-3: readings due
                 outlets=[{"label": "Landing"}])
    rows = {li.find("strong").text: " ".join(li.get_text(" ").split())
            for li in parse(supervisor.get("/review/")).select("li.job-row")}
    assert set(rows) == {"T-1", "T-2", "T-3"}
    assert "no problems" in rows["T-1"]
    # Ze 0.95 + R1+R2 about 0.35 > 1.10 Ω, the measured-value limit for 32 A type B
    # (BS 7671:2018 Table 41.3, 80 % rule of thumb)
    assert "Zs fails at 2 outlets" in rows["T-2"] and "no problems" not in rows["T-2"]
    assert "2 readings still due" in rows["T-3"]
    order = [li.find("strong").text for li in parse(supervisor.get("/review/")).select(
        "li.job-row")]
    assert order.index("T-3") > max(order.index("T-1"), order.index("T-2"))  # waiting first
    only = parse(supervisor.get("/review/?status=in_progress")).select("li.job-row strong")
    assert [s.text for s in only] == ["T-3"]
    found = parse(supervisor.get("/review/?q=t-2")).select("li.job-row strong")
    assert [s.text for s in found] == ["T-2"]
    assert not parse(supervisor.get("/review/?q=Nowhere+Lane")).select("li.job-row")
    assert supervisor.get("/review/?status=bogus").status_code == 200


def test_list_flags_a_fault_from_a_demo_job(app, tester, supervisor, parse):
    doc = json.loads((ROOT / "demo_jobs" / "02-bridged-ring.json").read_text())
    assert tester.post("/api/jobs/import", json=doc).status_code == 201
    row = parse(supervisor.get("/review/")).select_one("li.job-row")
    text = " ".join(row.get_text().split())
    assert "not satisfactory DB2/2: Assessment: Investigate" in text, text
    assert "bridged" in text and "safe isolation not confirmed" in text
    assert "findings" in text and "no problems" not in text


def test_flags_count_the_sign_off_problems_by_kind():
    from fieldapp.review.gate import CircuitProblems, Problem

    assert job_flags([]) == {"faults": [], "findings": 0, "zs_fail": 0, "zs_unproved": 0,
                             "missing": 0, "safety": 0, "despite": [], "problems": 0,
                             "all_clear": True}
    groups = [CircuitProblems("DB1/1", (
        Problem("verdict", "Assessment: Investigate, not Satisfactory."),
        Problem("finding", "Fault: a bridge"), Problem("finding", "Check: Ze declared"),
        Problem("zs_fail", "Zs fails at b · Hall"), Problem("zs_unproved", "x", count=3))),
        CircuitProblems("DB1/2", (Problem("steps_missing", "Step 2", count=4),
                                  Problem("steps_missing", "Step 1", count=1),
                                  Problem("safety", "not ticked")))]
    flags = job_flags(groups, "site visit booked", None)
    assert flags["faults"] == ["DB1/1: Assessment: Investigate, not Satisfactory."]
    assert (flags["findings"], flags["zs_fail"], flags["zs_unproved"], flags["missing"],
            flags["safety"], flags["problems"]) == (2, 1, 3, 5, 1, 8)
    assert flags["despite"] == ["submitted"] and flags["all_clear"] is False
