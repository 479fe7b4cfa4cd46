"""What the pages say: a failing outlet leads the results, one name per outlet, the
diagnosis in view on step pages, each circuit's verdict on the job page, terms explained on
tap, and no inline script or style (a strict content security policy must hold)."""

from __future__ import annotations

import re

import pytest

# Healthy 2.5/1.5 mm² ring: step 2 about 0.26 Ω, step 3 about 0.34 Ω everywhere
# ((r1 + rn) / 4 and (r1 + r2) / 4, the three-step ring test, common practice).
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}
SOUND = [{"label": "Kitchen", "ln": 0.26, "le": 0.34}, {"label": "Hall", "ln": 0.26, "le": 0.35},
         {"label": "Lounge", "ln": 0.27, "le": 0.34}]


def with_ol():
    outlets = [dict(o) for o in SOUND]
    outlets[1]["le"] = "OL"
    return outlets


def test_an_outlet_with_no_earth_path_leads_the_results(tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=with_ol())
    page = parse(tester.get(f"/circuits/{cid}/results"))
    answer = page.select_one(".answer")
    first = answer.find(True)  # the first element in the answer box
    assert "zs-fail" in first.get("class", [])
    assert "no earth path proved at b · Hall" in first.text
    tiles = [(d.dt.text, d.dd.text) for d in answer.select(".key-figures > div")]
    assert tiles[0] == ("Zs result", "✗ fails at 1 outlet")
    assert dict(tiles)["Highest Zs"] == "not proved"
    row = next(tr for tr in page.select("table.outlet-table tbody tr")
               if tr.th.text.startswith("b · "))
    assert "fail" in row["class"]
    assert row.select_one("td.result").text.strip() == "✗ fail: no earth path proved"


def test_a_sound_ring_says_within_limit(tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=SOUND)
    page = parse(tester.get(f"/circuits/{cid}/results"))
    assert page.select(".answer .zs-fail") == []
    assert page.select_one(".key-figures dd").text == "✓ within limit"


def test_one_name_per_outlet_on_steps_results_and_drawing(tester, make_circuit, parse):
    outlets = [*SOUND, {"label": "Garden", "spur_from_key": "b", "ln": 0.30, "le": 0.40}]
    cid = make_circuit(e2e=E2E, outlets=outlets)
    step = parse(tester.get(f"/circuits/{cid}/test/ln"))
    titles = [h.text.strip() for h in step.select("article.reading h3")]
    assert titles == ["a · Kitchen", "b · Hall", "c · Lounge", "d · Garden"]
    assert "spur from b" in step.select_one("#r-ln-d .hint").text
    results = parse(tester.get(f"/circuits/{cid}/results"))
    rows = [tr.th.text for tr in results.select("table.outlet-table tbody tr")]
    assert [r.split("spur")[0].strip() for r in rows] == titles
    assert "spur from b" in rows[3]
    svg = str(results.select_one(".drawing svg"))
    for key in "abcd":
        assert f">{key}</text>" in svg  # the same short name inside each symbol
    assert "spur from b" in svg and "spur off" not in svg


def test_step_pages_keep_the_diagnosis_in_one_sticky_line(tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=with_ol())
    page = parse(tester.get(f"/circuits/{cid}/test/le"))
    line = page.select_one("#leading.sticky-line")
    assert line is not None
    summary = line.select_one("details.leading-more > summary")
    assert summary.text.strip().startswith("✗ Zs fails · Investigate:")
    # it comes before the readings, so it is in view from the top of the page
    assert str(page).index('id="leading"') < str(page).index('class="readings"')


def test_the_job_page_shows_each_circuits_verdict(tester, make_circuit, parse, app):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit(e2e=E2E, outlets=SOUND)
    with app.app_context():
        job_id = db.session.get(Circuit, cid).job_id
    page = parse(tester.get(f"/jobs/{job_id}"))
    badge = page.select_one(".card .verdict-badge")
    assert badge is not None and badge.text.strip() == "✓ Satisfactory"


def test_a_circuit_that_cannot_be_diagnosed_does_not_break_the_job_page(
        tester, make_circuit, parse, app, monkeypatch):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit
    from fieldapp.ringtest import filters

    cid = make_circuit(e2e=E2E, outlets=SOUND)
    with app.app_context():
        job_id = db.session.get(Circuit, cid).job_id

    def broken(circuit):
        raise RuntimeError("unexpected")

    monkeypatch.setattr(filters, "diagnose_circuit", broken)
    response = tester.get(f"/jobs/{job_id}")
    assert response.status_code == 200
    assert parse(response).select_one(".verdict-badge").text.strip() == "Not assessed"


@pytest.mark.parametrize("url, words", [
    ("/circuits/{cid}/test/e2e", {"nulled", "OL"}),
    ("/circuits/{cid}/test/le", {"R1+R2", "OL", "in band"}),
    ("/circuits/{cid}/results", {"R1+R2", "OL"}),
    ("/jobs/{job}", {"OCPD", "csa"}),
])
def test_terms_open_a_one_line_explanation_on_tap(tester, make_circuit, parse, app, url,
                                                  words):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit(e2e=E2E, outlets=SOUND)
    with app.app_context():
        job = db.session.get(Circuit, cid).job_id
    page = parse(tester.get(url.format(cid=cid, job=job)))
    found = {d.summary.text.strip(): d.select_one(".term-says").text
             for d in page.select("details.term")}
    assert words <= set(found)
    assert all(text.strip() for text in found.values())


@pytest.mark.parametrize("url", ["/circuits/{cid}/test/e2e", "/circuits/{cid}/test/ln",
                                 "/circuits/{cid}/results", "/jobs/{job}"])
def test_no_inline_script_or_style(tester, make_circuit, app, url):
    from fieldapp.extensions import db
    from fieldapp.models import Circuit

    cid = make_circuit(e2e=E2E, outlets=with_ol())
    with app.app_context():
        job = db.session.get(Circuit, cid).job_id
    html = tester.get(url.format(cid=cid, job=job)).get_data(as_text=True)
    assert not re.search(r"<script(?![^>]*\bsrc=)", html)
    assert " style=" not in html and "<style" not in html
    assert not re.search(r"\son[a-z]+=", html)  # no inline event handlers


def test_a_new_outlet_takes_the_focus_without_the_page_script(tester, make_circuit, parse):
    cid = make_circuit(e2e=E2E, outlets=[{"label": "Kitchen"}])  # a has no reading yet
    response = tester.post(f"/circuits/{cid}/outlets?step=ln",
                           data={"label": "Hall", "kind": "twin_socket", "spur_from_key": "",
                                 "fuse_a": "", "spur_csa_mm2": "", "spur_cpc_csa_mm2": "",
                                 "client_id": "pytest-add-focus", "submit": "Add outlet"})
    assert response.status_code == 302
    location = response.headers["Location"]
    assert location.endswith("?at=r-ln-b") and "#" not in location  # a fragment steals focus
    page = parse(tester.get(location))
    focused = page.select("input[autofocus]")
    assert [i["id"] for i in focused] == ["v-r-ln-b"]


def test_a_satisfactory_circuit_with_a_check_to_make_is_no_plain_pass_on_the_job_page(
        tester, make_circuit, parse, app, monkeypatch):
    # the results page says "Satisfactory, with checks to make" in amber; the job page's card
    # says the same (it showed a green tick), from the one rule in fieldapp.labels
    from fieldapp.extensions import db
    from fieldapp.models import Circuit
    from fieldapp.ringtest import filters

    cid = make_circuit(e2e=E2E, outlets=SOUND)
    with app.app_context():
        job_id = db.session.get(Circuit, cid).job_id
    checked = {"verdict": "satisfactory", "summary": "Not established, but possible: x.",
               "findings": [{"code": "unrecorded_spur", "severity": "warning", "message": "m",
                             "outlets": ["a"], "confidence": 0.9, "possible": True}]}
    monkeypatch.setattr(filters, "diagnose_circuit", lambda circuit: (checked, None))
    badge = parse(tester.get(f"/jobs/{job_id}")).select_one(".card .verdict-badge")
    assert badge.text.strip() == "! Satisfactory, with checks to make"
    assert "with-checks" in badge["class"]
