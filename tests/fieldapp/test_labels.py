"""The app's words, one home each (fieldapp.labels), and the presentation rules of the answer
(fieldapp.ringtest.answer) on real diagnoses."""

from __future__ import annotations

import math

import pytest

from fieldapp import labels
from fieldapp.ringtest import answer
from ringmath import messages
from ringmath.diagnose import diagnose

B32 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}
# Healthy 2.5/1.5 mm² ring (copper 7.41 / 12.1 mΩ/m, BS EN 60228 Table 1): step 2 about
# (r1 + rn) / 4 = 0.26 Ω, step 3 about (r1 + r2) / 4 ≈ 0.34 Ω everywhere (common practice).
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}


def record(outlets, ze=0.35):
    return {"circuit": {"ocpd": B32, "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": ze,
                        "ze_source": "measured", "earthing": "TN-C-S"},
            "end_to_end": E2E, "outlets": outlets}


def socket(oid, label, ln=0.26, le=0.34, **more):
    return {"id": oid, "label": label, "kind": "twin_socket", "ln": ln, "le": le, **more}


@pytest.mark.parametrize("value, shown", [
    (None, "—"), ("", "—"), (0.256, "0.26 Ω"), ("0.5", "0.50 Ω"), ("OL", "OL"), ("ol", "OL"),
    (math.inf, "OL"), (0, "0.00 Ω"), ("n/a", "n/a"),
])
def test_one_ohm_formatter(value, shown):
    assert labels.ohm(value) == shown


def test_ohm_without_the_unit_for_a_table_in_ohms():
    assert labels.ohm(0.3, unit=False) == "0.30" and labels.ohm("OL", unit=False) == "OL"


def test_reading_names_say_the_step():
    assert labels.reading_name("ln") == "L–N"
    assert labels.reading_name("ln", with_step=True) == "L–N (step 2)"
    assert labels.reading_name("le", with_step=True) == "L–CPC (step 3)"
    assert [labels.reading_name(f) for f in ("r1", "rn", "r2")] == ["r1", "rn", "r2"]


def test_one_name_per_outlet():
    diag = diagnose(record([socket("a", "Kitchen"), socket("b", ""),
                            socket("c", "Garden", ln=0.30, le=0.40, spur_from="a")]))
    names = labels.outlet_names(diag)
    assert names == {"a": "a · Kitchen", "b": "b · Twin socket", "c": "c · Garden"}
    assert labels.fed_from("a") == "spur from a" and labels.fed_from(None) == ""


def test_verdict_words_are_the_contract_words():
    words = getattr(messages, "VERDICT_WORDS", None) or labels.VERDICT_WORDS
    assert labels.VERDICT_WORDS == dict(words)
    assert set(labels.VERDICT_WORDS.values()) >= {"Satisfactory", "Investigate", "Incomplete"}
    assert "Not finished" not in labels.VERDICT_WORDS.values()


@pytest.mark.parametrize(("verdicts", "worst"), [
    (["satisfactory", "retest"], "retest"),
    (["retest", "investigate", "satisfactory"], "investigate"),
    (["incomplete", "retest"], "retest"),
    (["satisfactory", "incomplete"], "incomplete"),
    (["satisfactory"], "satisfactory"),
    ([], None),
])
def test_a_jobs_verdict_is_its_worst_circuits_and_knows_every_verdict(verdicts, worst):
    # every verdict ringmath can give has a place in the order (a re-test circuit once made
    # the job sheet say "Not assessed")
    assert set(labels.VERDICT_ORDER) == set(messages.VERDICT_WORDS)
    assert labels.worst_verdict(verdicts) == worst


def test_step_reading_names_come_from_the_one_table():
    assert labels.step_reading("ln") == "Step 2 L–N"
    assert labels.step_reading("r2", capital=False) == "step 1 r2 (cpc)"
    assert labels.reading_name("zs_measured", with_step=True) == "measured Zs"
    assert labels.result_word(True) == "pass" and labels.result_word(False) == "FAIL"
    assert labels.result_word(None) == "not proved"


def test_cautions_are_the_core_cautions():
    assert labels.CAUTIONS == tuple(messages.CAUTIONS)


def test_every_term_has_one_line():
    for word in ("OL", "in band", "nulled", "OCPD", "csa", "R1+R2"):
        text = labels.TERMS[word]
        assert text.endswith(".") and "\n" not in text and len(text) < 160


# ------------------------------------------------------------ a failing outlet is never hidden


def test_an_ol_step_3_fails_zs_and_leads_the_answer():
    diag = diagnose(record([socket("a", "Kitchen"), socket("b", "Hall", le="OL"),
                            socket("c", "Lounge")]))
    state = answer.zs_state(diag)
    assert [p["id"] for p in state["unproved"]] == ["b"]
    assert state["ok"] is False
    assert "no earth path proved at b · Hall" in state["lines"][0]
    tiles = answer.tiles(diag, state)
    assert tiles[0]["term"] == "Zs result" and tiles[0]["value"].startswith("✗ fails")
    assert {t["term"]: t["value"] for t in tiles}["Highest Zs"] == "not proved"
    lead = answer.leading(diag)
    assert lead["zs_lines"] == state["lines"]


def test_zs_over_the_limit_is_named_with_its_figures():
    # Ze 1.0 Ω: Zs ≈ 1.0 + 0.34 above the 32 A type B limit for a measured value
    # (0.8 × 1.37 Ω, BS 7671:2018 Table 41.3 with the 80 % rule of thumb, common practice)
    diag = diagnose(record([socket("a", "Kitchen"), socket("b", "Hall")], ze=1.0))
    state = answer.zs_state(diag)
    assert {p["id"] for p in state["over"]} == {"a", "b"}
    assert "over the limit at a · Kitchen (" in state["lines"][0]


def test_a_sound_ring_has_no_failure_lines():
    diag = diagnose(record([socket("a", "Kitchen"), socket("b", "Hall")]))
    state = answer.zs_state(diag)
    assert state["lines"] == [] and state["ok"] is True
    assert answer.tiles(diag, state)[0]["value"] == "✓ within limit"


def fault(code, confidence, conductor=None):
    return {"code": code, "severity": "fault", "conductor": conductor, "confidence": confidence,
            "message": code, "outlets": []}


@pytest.mark.parametrize("findings, first", [
    # about as likely: the dangerous explanation first
    ([fault("wrong_cross_connection", 0.5), fault("interconnection", 0.45)], "interconnection"),
    ([fault("unrecorded_spur", 0.55), fault("high_resistance_joint", 0.45)],
     "high_resistance_joint"),
    ([fault("high_resistance_joint", 0.5), fault("open_conductor", 0.4, "cpc")],
     "open_conductor"),
    # much more likely: likelihood wins
    ([fault("wrong_cross_connection", 0.9), fault("interconnection", 0.1)],
     "wrong_cross_connection"),
])
def test_danger_orders_explanations_of_similar_likelihood(findings, first):
    assert answer.order_findings(findings)[0]["code"] == first


def test_checks_without_a_confidence_keep_their_place():
    zs = {**fault("zs_over_limit", None), "confidence": None}
    joint = fault("high_resistance_joint", 0.9)
    info = {"code": "rcd", "severity": "info", "confidence": None}
    assert answer.order_findings([joint, zs, info]) == [joint, zs, info]


def test_ordering_keeps_every_finding_once():
    import random

    rng = random.Random(11)  # seeded
    codes = list(answer.DANGER)
    findings = [fault(rng.choice(codes), round(rng.random(), 2)) for _ in range(12)]
    ordered = answer.order_findings(findings)
    assert sorted(map(id, ordered)) == sorted(map(id, findings))
    for a, b in zip(ordered, ordered[1:], strict=False):
        # never a less likely and less dangerous explanation above a more likely one
        assert not (a["confidence"] * answer.SIMILAR_LIKELIHOOD < b["confidence"])


def test_a_missing_earth_is_named_before_swapped_terminals_that_fit_as_well():
    # step 3 OL at one outlet fits both "line and neutral swapped" and "cpc not connected"
    # about equally; the missing earth leaves no fault protection, so it leads
    diag = diagnose(record([socket("a", "Kitchen"), socket("b", "Hall", le="OL"),
                            socket("c", "Lounge")]))
    tied = [f for f in diag["findings"] if f["severity"] == "fault" and "b" in f["outlets"]]
    assert {(f["code"], f.get("conductor")) for f in tied} >= {("open_conductor", "cpc")}
    assert len(tied) >= 2
    first = answer.order_findings(diag["findings"])[0]
    assert (first["code"], first.get("conductor")) == ("open_conductor", "cpc")
    shown = answer.as_shown(diag)
    assert shown["findings"][0] is first and shown["summary"] == first["message"]


def test_a_satisfactory_result_with_a_check_to_make_is_not_shown_as_a_plain_pass():
    # a sound-looking ring whose leading finding is a warning: the answer says checks remain
    plain = {"verdict": "satisfactory", "summary": "The readings fit a sound ring.",
             "findings": [{"code": "detection_limit", "severity": "info", "message": "m",
                           "outlets": [], "confidence": None}], "points": [], "circuit": {}}
    checked = {**plain, "findings": [{"code": "wrong_cross_connection", "severity": "warning",
                                      "message": "possible", "outlets": [], "step": "ln",
                                      "confidence": 0.6}] + plain["findings"]}
    assert answer.leading(plain)["checks"] is False
    assert answer.leading(checked)["checks"] is True
    assert answer.leading({**checked, "verdict": "investigate"})["checks"] is False


def test_the_assessment_in_words_is_one_rule_for_every_screen_and_the_sheet():
    from fieldapp.sheets.context import _circuit_context
    warning = {"code": "unrecorded_spur", "severity": "warning", "message": "m",
               "outlets": [], "confidence": 0.9}
    checked = {"verdict": "satisfactory", "findings": [warning], "points": [], "circuit": {}}
    plain = {**checked, "findings": []}
    assert labels.assessment_words(checked) == "Satisfactory, with checks to make"
    assert labels.assessment_words(plain) == "Satisfactory"
    assert labels.assessment_words({**checked, "verdict": "investigate"}) == "Investigate"
    assert labels.assessment_words(None) == labels.NOT_ASSESSED
    assert answer.leading(checked)["verdict_words"] == labels.assessment_words(checked)
    rec = record([socket("a", "Hall")])
    ctx = _circuit_context(0, rec, checked, None)
    assert (ctx["verdict"], ctx["verdict_key"], ctx["checks"]) == (
        "Satisfactory, with checks to make", "satisfactory", True)
    # and the job's overall assessment on the sheet says the same where every circuit passes
    from fieldapp.sheets.context import sheet_context
    doc = {"job": {"reference": "J1"}, "circuits": [rec, rec]}
    assert sheet_context(doc, [plain, checked], {})["verdict"] == \
        "Satisfactory, with checks to make"
    assert sheet_context(doc, [plain, plain], {})["verdict"] == "Satisfactory"
    # the schedule row points at the finding in the same words (it printed "WARNING")
    named = {**checked, "findings": [{**warning, "outlets": ["a"]}]}
    row = _circuit_context(0, rec, named, None)["outlets"][0]
    assert row["named"] == labels.severity_word("warning").upper() == "CHECK"
