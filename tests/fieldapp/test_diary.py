"""The history reads like a diary: local time to the minute, names, values with their units,
no internal codes or browser strings, and when an offline reading was taken."""

from __future__ import annotations

import datetime as dt
import re
import uuid
from types import SimpleNamespace

import pytest
import sqlalchemy as sa

from fieldapp.diary import change_words, device_words, diary_rows, local

ANDROID = ("Mozilla/5.0 (Linux; Android 14; Pixel 8) AppleWebKit/537.36 (KHTML, like Gecko) "
           "Chrome/131.0.0.0 Mobile Safari/537.36")
IPHONE = ("Mozilla/5.0 (iPhone; CPU iPhone OS 17_5 like Mac OS X) AppleWebKit/605.1.15 "
          "(KHTML, like Gecko) Version/17.5 Mobile/15E148 Safari/604.1")


@pytest.mark.parametrize("utc,shown", [
    # UK civil time: GMT in winter, BST (UTC+1) from 01:00 UTC on the last Sunday of March to
    # 01:00 UTC on the last Sunday of October (Summer Time Act 1972 as amended; EU rule 2000/84)
    (dt.datetime(2026, 12, 2, 16, 52, 59), "2 Dec 2026 16:52"),
    (dt.datetime(2026, 7, 1, 12, 5, 30), "1 Jul 2026 13:05"),
    (dt.datetime(2026, 3, 29, 0, 59), "29 Mar 2026 00:59"),
    (dt.datetime(2026, 3, 29, 1, 0), "29 Mar 2026 02:00"),
    (dt.datetime(2026, 10, 25, 0, 59), "25 Oct 2026 01:59"),
    (dt.datetime(2026, 10, 25, 1, 0), "25 Oct 2026 01:00"),
])
def test_local_time_to_the_minute(utc, shown):
    assert local(utc) == shown
    assert local(utc.replace(tzinfo=dt.UTC)) == shown  # aware or naive UTC alike


@pytest.mark.parametrize("device,words", [
    (ANDROID, "Android phone"), (IPHONE, "iPhone"),
    ("Mozilla/5.0 (Windows NT 10.0; Win64; x64) AppleWebKit/537.36 Chrome/131 Safari/537.36",
     "Windows computer"),
    ("Mozilla/5.0 (X11; Linux x86_64) HeadlessChrome/131.0 Safari/537.36", "computer"),
    ("phone A", "phone A"), ("demo import", "demo import"), ("", ""), (None, ""),
])
def test_devices_in_words(device, words):
    assert device_words(device) == words


@pytest.mark.parametrize("field,old,new,expected", [
    ("le", "0.38", "0.4", ("0.38", "0.40", "Ω")),
    ("ln", None, "0.26", ("nothing", "0.26", "Ω")),
    ("ln", "0.26", "OL", ("0.26 Ω", "OL", "")),
    ("r1", "OL", "0.52", ("OL", "0.52", "Ω")),
    ("r2", "0.855", None, ("0.855 Ω", "nothing", "")),  # never rounded away
    ("ze_ohm", "0.35", "0.41", ("0.35", "0.41", "Ω")),
    ("ocpd_rating_a", "32.0", "20.0", ("32", "20", "A")),
    ("status", "in_progress", "submitted", ("in progress", "submitted", "")),
    ("safety_proved_dead", "false", "true", ("no", "yes", "")),
    ("current_step", "ln", "le", ("step 2", "step 3", "")),
    ("kind", "twin_socket", "fcu", ("twin socket", "FCU", "")),
    ("tester_id", None, "7", ("nothing", "Morwenna Tregear", "")),
])
def test_values_in_words(field, old, new, expected):
    assert change_words(field, old, new, {7: "Morwenna Tregear"}) == expected


def test_rows_name_people_and_hide_the_table_links():
    row = SimpleNamespace
    rows = [row(field="job_id", old_value=None, new_value="3", at=dt.datetime(2026, 12, 2),
                user_id=7, device="", taken_at=None),
            row(field="le", old_value="0.38", new_value="0.4", at=dt.datetime(2026, 12, 2, 15),
                user_id=7, device=ANDROID, taken_at=dt.datetime(2026, 12, 2, 14, 32)),
            row(field="created", old_value=None, new_value="b", at=dt.datetime(2026, 12, 2),
                user_id=None, device="demo import", taken_at=None)]
    out = diary_rows(rows, {7: "Morwenna Tregear"}, lambda r: "DB1/4, outlet b · Hall")
    assert [r["field"] for r in out] == ["step 3 L–CPC", "created"]
    reading = out[0]
    assert (reading["old"], reading["new"], reading["unit"]) == ("0.38", "0.40", "Ω")
    assert (reading["who"], reading["device"]) == ("Morwenna Tregear", "Android phone")
    assert (reading["taken"], reading["when"]) == ("2 Dec 2026 14:32", "2 Dec 2026 15:00")
    assert (out[1]["old"], out[1]["new"], out[1]["who"]) == ("", "added", "the app")


def ids(app, circuit_id):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    with app.app_context():
        circuit = db.session.get(Circuit, circuit_id)
        return circuit.job_id, {o.key: o.id for o in circuit.outlets}


def test_an_offline_reading_shows_when_it_was_taken(app, make_circuit, tester, supervisor,
                                                    parse):
    from fieldapp import changes
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog, Circuit, Outlet, User

    cid = make_circuit(e2e={"r1": 0.52, "rn": 0.52, "r2": 0.85},
                       outlets=[{"label": "Hall", "ln": 0.26, "le": 0.38}])
    jid, outlets = ids(app, cid)
    with app.app_context():
        user = db.session.scalar(sa.select(User).where(User.username == "test"))
        circuit = db.session.get(Circuit, cid)
        outlet = db.session.get(Outlet, outlets["a"])
        who = changes.Actor(user.id, ANDROID)
        with pytest.raises(ValueError, match="taken_at"):
            changes.set_reading(circuit, "le", "0.39", who, outlet=outlet,
                                taken_at="yesterday")
        db.session.rollback()
        # queued at 14:32 UTC = 14:32 GMT in December, sent when the signal came back
        changes.set_reading(db.session.get(Circuit, cid), "le", "0.40", who,
                            outlet=db.session.get(Outlet, outlets["a"]),
                            client_id=uuid.uuid4().hex, taken_at="2026-12-02T14:32:10Z")
        db.session.commit()
        stored = db.session.scalars(sa.select(ChangeLog).where(
            ChangeLog.field == "le", ChangeLog.circuit_id == cid).order_by(ChangeLog.id)).all()
        assert [(r.old_value, r.new_value, r.taken_at) for r in stored] == [
            (None, "0.38", None), ("0.38", "0.4", dt.datetime(2026, 12, 2, 14, 32, 10))]
    for client, url in ((supervisor, f"/review/jobs/{jid}/history?outlet={outlets['a']}"
                                      "&field=le"),
                        (tester, f"/circuits/{cid}/history")):
        page = parse(client.get(url))
        newest = page.select_one("li.history-row")
        text = " ".join(newest.get_text(" ").split())
        assert "0.38 → 0.40 Ω" in text, text
        assert re.search(r"taken 2 Dec 2026 14:32 on the phone, arrived \d{1,2} \w{3} \d{4} "
                         r"\d\d:\d\d", text), text
        assert "Gethin Test-Tester" in text and "Android phone" in text
        whole = page.get_text(" ")
        assert "Mozilla" not in whole and "AppleWebKit" not in whole
        assert not re.search(r"\b(in_progress|safety_\w+|job_id|circuit_id|_ohm|_mm2)\b",
                             whole), whole


@pytest.mark.parametrize("field,old,new,expected", [
    ("zs_measured", None, "0.74", ("nothing", "0.74", "Ω")),
    ("le_terminals", "0.36", "0.33", ("0.36", "0.33", "Ω")),
    ("taken_at", None, "front", ("nothing", "the socket front (plug-in lead)", "")),
    ("ir_ln_mohm", None, ">999", ("nothing", "> 999 MΩ", "")),
    ("rcd_trip_ms", None, "24.0", ("nothing", "24", "ms")),
    ("cpc_kind", "cable_core", "armour", ("a core of the cable", "the cable armour", "")),
])
def test_the_live_test_values_in_words(field, old, new, expected):
    assert change_words(field, old, new, {}) == expected
