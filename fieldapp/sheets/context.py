"""A job's results as ready-to-print strings, from plain values only.

Inputs: a job document in the ``ringtest/1`` format (what the JSON export gives), one
``ringmath.diagnose`` result per circuit in the same order (``None`` where a circuit could not
be assessed, with the reason in ``problems``), and the people and dates of the job (who tested,
submitted, reviewed, approved). No models, no Flask, no numpy: the printed sheet
(fieldapp/sheets/pdf.py) and the supervisor's review page both show this context.

The pieces: ``words.py`` (the sheet's words and print formats), ``circuit.py`` (one circuit's
details, schedule, findings and Zs result); this module assembles the sheet and keeps every
name at its old import path.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from markupsafe import Markup

from fieldapp import labels
from fieldapp.drawings import ring_picture
from fieldapp.live.feedback import live_summary
from fieldapp.sheets.circuit import (  # noqa: F401  (old import paths)
    _details,
    _device,
    _findings,
    _names,
    _outlet_rows,
    _reading_status,
    _status_word,
    _zs_line,
    _zs_result,
    sketch_uri,
)
from fieldapp.sheets.words import (  # noqa: F401  (old import paths)
    DASH,
    NO_BAND,
    NOT_PROVED,
    READING_STATUS_WORDS,
    STATUS_WORDS,
    STEP1,
    VERDICT_ORDER,
    VERDICT_WORDS,
    ZS_ONLY,
    _pass_word,
    ohm,
    quantity,
    recorded,
    verdict_of,
    when,
)


def _job_assessment(diagnoses: list, verdict: str | None) -> str:
    """The job's verdict in words (its worst circuit's); a satisfactory job where a circuit
    has a check standing says so, as that circuit does (``labels.assessment_words``)."""
    if verdict == "satisfactory":
        checked = next((d for d in diagnoses if labels.with_checks(d)), None)
        return labels.assessment_words(checked or {"verdict": verdict})
    return VERDICT_WORDS.get(verdict or "", labels.NOT_ASSESSED)


def _circuit_context(index: int, rec: dict, diagnosis: dict | None, problem: str | None,
                     drawing: str = "screen") -> dict:
    circuit = rec.get("circuit") or {}
    e2e = rec.get("end_to_end") or {}
    ctx: dict[str, Any] = {
        "index": index + 1,
        "reference": circuit.get("reference") or f"Circuit {index + 1}",
        "description": circuit.get("description") or "",
        "details": _details(circuit),
        "problem": problem,
        "diagnosis": diagnosis is not None,
    }
    diagnosis = diagnosis or {}
    checks = _reading_status(diagnosis)
    ctx["step1"] = [{"key": key, "name": label, "value": recorded(e2e.get(key)),
                     "check": _status_word(checks.get((None, key)))} for key, label in STEP1]
    expected = diagnosis.get("expected") or {}
    ctx["expected"] = {
        "ln": ohm(expected.get("ln_ohm")),
        "le": ohm(expected.get("le_ohm")),
        "ln_band": " – ".join(ohm(v) for v in expected.get("ln_band_ohm") or []) or DASH,
        "le_band": " – ".join(ohm(v) for v in expected.get("le_band_ohm") or []) or DASH,
        "ln_known": expected.get("ln_ohm") is not None,
        "le_known": expected.get("le_ohm") is not None,
    }
    ctx["outlets"] = _outlet_rows(rec, diagnosis)
    summary = diagnosis.get("circuit") or {}
    ctx["summary"] = {
        "r1r2": ohm(summary.get("r1r2_ohm")),
        "zs": ohm(summary.get("zs_ohm")),
        "zs_max": ohm(summary.get("zs_max_ohm")),
        "zs_tabulated": ohm(summary.get("zs_tabulated_ohm")),
        "device": summary.get("device") or _device(circuit),
        "limit_source": summary.get("limit_source") or "",
        "result": _zs_result(summary),
    }
    ctx["zs_line"] = _zs_line(summary, ctx["outlets"])
    ctx["verdict"] = labels.assessment_words(diagnosis)
    ctx["verdict_key"] = diagnosis.get("verdict") or "none"
    ctx["checks"] = labels.with_checks(diagnosis)
    ctx["summary_sentence"] = diagnosis.get("summary") or problem or ""
    ctx["zs_only"] = (ZS_ONLY.get(diagnosis.get("verdict") or "", "")
                      if ctx["summary"]["result"] == _pass_word(True) else "")
    ctx["findings"] = _findings(diagnosis, _names(rec, diagnosis),
                                {str(o["id"]): o.get("label") for o in rec.get("outlets") or []})
    # one drawing per circuit: the screen's picture with its own key, or the printed one
    # without (the schedule beside it carries the names, the findings are printed in full)
    ctx["picture"] = Markup("")
    ctx["sketch"] = ""
    if diagnosis and drawing == "screen":
        ctx["picture"] = ring_picture(diagnosis)
    elif diagnosis and drawing == "print":
        ctx["sketch"] = sketch_uri(ring_picture(diagnosis, key=False))
    ctx["live"] = live_summary(rec, diagnosis or None)
    return ctx


def _cautions(diagnoses) -> list[str]:
    """The diagnoses' cautions, each once; ringmath's own list when no diagnosis ran."""
    seen: list[str] = []
    for d in diagnoses:
        for text in (d or {}).get("cautions") or []:
            if text not in seen:
                seen.append(text)
    return seen or list(labels.CAUTIONS)


def _instrument(people: dict) -> str:
    model = (people.get("instrument_model") or "").strip()
    serial = (people.get("instrument_serial") or "").strip()
    if not model and not serial:
        return "not recorded"
    return ", ".join(x for x in (model or "model not recorded",
                                 f"serial no. {serial}" if serial else "no serial number") if x)


def _day(value) -> str:
    """The date part of a time for a signature line; blank (to write by hand) when unknown."""
    text = when(value)
    return "" if text == DASH else text.removesuffix(" UTC")[:11]


def _signoff(document: dict, diagnoses: list, problems: list, people: dict) -> dict:
    """The sign-off rule's problems (fieldapp/review/gate.py) and the reasons given to go on."""
    from fieldapp.review.gate import document_problems  # the review package imports this one

    reasons = []
    for stage, key, who, at in (("Submitted", "submit_reason", "tester", "submitted_at"),
                                ("Approved", "approve_reason", "approved_by", "approved_at")):
        if people.get(key):
            reasons.append({"stage": stage, "text": people[key], "when": when(people.get(at)),
                            "who": people.get(who) or DASH})
    return {"problems": document_problems(document, diagnoses, problems), "reasons": reasons}


def sheet_context(document: dict, diagnoses: list, people: dict | None = None, *,
                  problems: list | None = None, generated_at=None,
                  drawing: str = "screen") -> dict:
    """Everything the sheet prints, as strings and lists of strings.

    document: a ``ringtest/1`` job document; diagnoses: one ``ringmath.diagnose`` result per
    circuit (or None); people: ``tester``, ``submitted_at``, ``reviewed_by``, ``reviewed_at``,
    ``approved_by``, ``approved_at``, ``review_comment``, ``status``, ``instrument_model``,
    ``instrument_serial``, ``submit_reason``, ``approve_reason`` (any may be missing);
    problems: per circuit, why it was not assessed; drawing: "screen" (``picture``, an inline
    SVG with its key) or "print" (``sketch``, an image URI without the key).
    """
    records = document.get("circuits") or []
    if len(diagnoses) != len(records):
        raise ValueError(f"diagnoses: {len(diagnoses)} given for {len(records)} circuits")
    problems = list(problems or [None] * len(records))
    people = people or {}
    job = document.get("job") or {}
    verdict = verdict_of(diagnoses)
    return {
        "job": {
            "reference": job.get("reference") or "",
            "site": job.get("site") or "",
            "client": job.get("client") or "",
            "date": when(job.get("date")),
            "notes": job.get("notes") or "",
        },
        "people": [
            ("Tested by", people.get("tester") or job.get("tester") or DASH),
            ("Submitted", when(people.get("submitted_at"))),
            ("Reviewed by", people.get("reviewed_by") or DASH),
            ("Reviewed", when(people.get("reviewed_at"))),
            ("Approved by", people.get("approved_by") or DASH),
            ("Approved", when(people.get("approved_at"))),
        ],
        "status": STATUS_WORDS.get(people.get("status") or "", people.get("status") or ""),
        "review_comment": people.get("review_comment") or "",
        "verdict": _job_assessment(diagnoses, verdict),
        "circuits": [_circuit_context(i, rec, d, p, drawing)
                     for i, (rec, d, p) in enumerate(zip(records, diagnoses, problems,
                                                         strict=True))],
        "instrument": _instrument(people),
        "signoff": _signoff(document, diagnoses, problems, people),
        "signatures": [
            {"role": "Tester", "name": people.get("tester") or job.get("tester") or "",
             "date": _day(people.get("submitted_at"))},
            {"role": "Reviewer",
             "name": people.get("approved_by") or people.get("reviewed_by") or "",
             "date": _day(people.get("approved_at") or people.get("reviewed_at"))},
        ],
        "cautions": _cautions(diagnoses),
        # the readings' names, as every screen names them (fieldapp/labels.py)
        "reading_words": {field: labels.step_reading(field) for field in ("ln", "le")},
        "generated": when(generated_at or dt.datetime.now(dt.UTC).replace(tzinfo=None)),
    }
