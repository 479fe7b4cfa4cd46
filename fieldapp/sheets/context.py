"""A job's results as ready-to-print strings, from plain values only.

Inputs: a job document in the ``ringtest/1`` format (what the JSON export gives), one
``ringmath.diagnose`` result per circuit in the same order (``None`` where a circuit could not
be assessed, with the reason in ``problems``), and the people and dates of the job (who tested,
submitted, reviewed, approved). No models, no Flask, no numpy: the printed sheet
(fieldapp/sheets/pdf.py) and the supervisor's review page both show this context.
"""

from __future__ import annotations

import base64
import datetime as dt
import math
import re

from markupsafe import Markup

from fieldapp.drawings import KIND_WORDS, point_names, ring_picture
from fieldapp.labels import outlet_name
from fieldapp.live.feedback import live_summary
from ringmath.messages import CAUTIONS

VERDICT_WORDS = {
    "satisfactory": "Satisfactory",
    "investigate": "Investigate",
    "incomplete": "Incomplete",
}
#: The job's overall verdict is its worst circuit's, in this order (worst first).
VERDICT_ORDER = ("investigate", "incomplete", "satisfactory")
STATUS_WORDS = {
    "in_progress": "In progress",
    "submitted": "Submitted for review",
    "returned": "Returned to the tester",
    "approved": "Approved",
}
READING_STATUS_WORDS = {
    "ok": "in band",
    "high": "HIGH",
    "low": "LOW",
    "open": "OPEN",
    "pending": "not taken",
}
#: A reading that was taken but has nothing to be checked against yet (its band needs a step 1
#: reading that is missing or OL).
NO_BAND = "no band"
#: A Zs that cannot be judged yet (a reading missing or OL), in words for a black-and-white copy.
NOT_PROVED = "not proved"
#: What a Zs "pass" does not say when the circuit as a whole is not satisfactory.
ZS_ONLY = {
    "investigate": "The Zs result covers the readings as taken only: the circuit is not "
                   "satisfactory until the findings below are resolved and the steps repeated.",
    "incomplete": "The Zs result covers the readings taken so far only: the test is not "
                  "complete.",
}
STEP1 = (("r1", "r1 (line)"), ("rn", "rn (neutral)"), ("r2", "r2 (cpc)"))
DASH = "—"


def ohm(value) -> str:
    """A computed resistance for print: two decimals, "OL", or a dash when unknown."""
    if value is None:
        return DASH
    if value == "OL" or (isinstance(value, float) and math.isinf(value)):
        return "OL"
    return f"{float(value):.2f}"


def recorded(value) -> str:
    """A reading as it was recorded: at least two decimals, never rounded away."""
    if value is None:
        return DASH
    if value == "OL":
        return "OL"
    text = f"{float(value):.2f}"
    return text if float(text) == float(value) else repr(float(value))


def when(value) -> str:
    """A date or time (object or ISO text) for print; a dash when absent."""
    if value in (None, ""):
        return DASH
    if isinstance(value, str):
        try:
            value = dt.datetime.fromisoformat(value) if "T" in value else dt.date.fromisoformat(
                value)
        except ValueError:
            return value
    if isinstance(value, dt.datetime):
        return value.strftime("%d %b %Y %H:%M UTC")
    return value.strftime("%d %b %Y")


def verdict_of(diagnoses) -> str | None:
    """The job's verdict: the worst of its circuits' (a circuit not assessed is incomplete)."""
    verdicts = {d["verdict"] if d else "incomplete" for d in diagnoses}
    return next((v for v in VERDICT_ORDER if v in verdicts), None)


def _pass_word(ok) -> str:
    return {True: "pass", False: "FAIL"}.get(ok, NOT_PROVED)


def _yes(flag) -> str:
    return "yes" if flag else "NO"


def _device(circuit: dict) -> str:
    ocpd = circuit.get("ocpd") or {}
    curve = f" type {ocpd['curve']}" if ocpd.get("curve") else ""
    return f"{ocpd.get('standard', '')}{curve} {quantity(ocpd.get('rating_a'))} A".strip()


def quantity(value) -> str:
    """A plain quantity without trailing zeros (32.0 -> "32", 2.5 -> "2.5"); dash if None."""
    return DASH if value is None else f"{float(value):g}"


def _details(circuit: dict) -> list[tuple[str, str]]:
    rcd = circuit.get("rcd")
    rcd_text = (f"{quantity(rcd['rated_ma'])} mA" + (f" type {rcd['type']}" if rcd.get("type")
                                                      else "")) if rcd else "none recorded"
    safety = circuit.get("safety")
    ze = circuit.get("ze_ohm")
    return [
        ("Protective device (OCPD)", _device(circuit)),
        ("RCD", rcd_text),
        ("Live / cpc csa", f"{quantity(circuit.get('live_csa_mm2'))} / "
                           f"{quantity(circuit.get('cpc_csa_mm2'))} mm²"),
        ("Ze", f"{ohm(ze)} Ω ({circuit.get('ze_source') or 'measured'})" if ze is not None
         else "not recorded"),
        ("Earthing", circuit.get("earthing") or "not recorded"),
        ("Estimated cable length", f"{quantity(circuit.get('cable_length_m'))} m"
         if circuit.get("cable_length_m") is not None else "not recorded"),
        ("Isolated / locked off / proved dead",
         " / ".join(_yes(safety.get(k)) for k in ("isolated", "locked_off", "proved_dead"))
         if safety is not None else "not recorded"),
        ("Safety checks confirmed", " ".join(
            x for x in ((safety or {}).get("confirmed_by"), when(safety.get("confirmed_at"))
                        if (safety or {}).get("confirmed_at") else None) if x) or DASH),
    ]


def _reading_status(diagnosis: dict) -> dict[tuple, dict]:
    return {(r.get("outlet"), r.get("step")): r for r in diagnosis.get("readings") or []}


def _status_word(status: dict | None) -> str:
    status = status or {}
    if status.get("status") == "pending" and status.get("value") is not None:
        return NO_BAND
    return READING_STATUS_WORDS.get(status.get("status"), "")


def _names(rec: dict, diagnosis: dict) -> dict[str, str]:
    """Each outlet's short name: the one it carries in the ring picture when there is a
    diagnosis (fieldapp.drawings.point_names), else its id, as every screen names it."""
    names = point_names(diagnosis) if diagnosis else {}
    for outlet in rec.get("outlets") or []:
        names.setdefault(str(outlet["id"]), str(outlet["id"]))
    return names


def _named_in(diagnosis: dict) -> dict[str, str]:
    """Per outlet id, the most serious fault or warning finding that names it ("FAULT",
    "WARNING"), so the schedule can point at the findings."""
    named: dict[str, str] = {}
    for severity in ("warning", "fault"):
        for finding in diagnosis.get("findings") or []:
            if finding.get("severity") == severity:
                named.update({str(o): severity.upper() for o in finding.get("outlets") or []})
    return named


def _outlet_rows(rec: dict, diagnosis: dict) -> list[dict]:
    points = {p.get("id"): p for p in diagnosis.get("points") or []}
    named = _named_in(diagnosis)
    checks = _reading_status(diagnosis)
    labels = {o["id"]: o.get("label") or o["id"] for o in rec.get("outlets") or []}
    names = _names(rec, diagnosis)
    rows = []
    for outlet in rec.get("outlets") or []:
        point = points.get(outlet["id"], {})
        fed = outlet.get("spur_from")
        rows.append({
            "n": names[str(outlet["id"])],
            "id": outlet["id"],
            "label": outlet.get("label") or "",
            "kind": KIND_WORDS.get(outlet.get("kind"), outlet.get("kind") or ""),
            "fuse": f"{quantity(outlet['fuse_a'])} A" if outlet.get("fuse_a") else "",
            "fed": f"spur from {outlet_name(names.get(str(fed), fed), labels.get(fed))}" if fed
                   else "ring",
            "ln": recorded(outlet.get("ln")),
            "ln_check": _status_word(checks.get((outlet["id"], "ln"))),
            "le": recorded(outlet.get("le")),
            "le_check": _status_word(checks.get((outlet["id"], "le"))),
            "r1r2": ohm(point.get("r1r2_ohm")),
            "zs": ohm(point.get("zs_ohm")),
            "zs_max": ohm(point.get("zs_max_ohm")),
            "result": _pass_word(point.get("ok")),
            "failed": point.get("ok") is False,
            "named": named.get(str(outlet["id"]), ""),
        })
    return rows


def _findings(diagnosis: dict, names: dict[str, str], labels: dict) -> list[dict]:
    """The findings in words; the outlets they name as the schedule and the ring picture do
    ("c · Kitchen")."""
    def outlet(oid) -> str:
        return outlet_name(names.get(str(oid), oid), labels.get(str(oid)))

    return [{
        "severity": (f.get("severity") or "").upper(),
        "message": f.get("message") or "",
        "next_check": f.get("next_check") or "",
        "outlets": ", ".join(outlet(o) for o in f.get("outlets") or []),
    } for f in diagnosis.get("findings") or []]


def _zs_result(summary: dict, rows: list[dict]) -> str:
    """The circuit's Zs result: FAIL when any outlet or the circuit's figure is over its limit,
    pass when the figure is within it and every outlet passed, else not proved."""
    ok = None
    if summary.get("zs_ohm") is not None and summary.get("zs_max_ohm") is not None:
        ok = summary["zs_ohm"] <= summary["zs_max_ohm"]
    if ok is False or any(row["failed"] for row in rows):
        return _pass_word(False)
    if ok and all(row["result"] == _pass_word(True) for row in rows):
        return _pass_word(True)
    return NOT_PROVED


def _zs_line(summary: dict, rows: list[dict]) -> str:
    """The Zs result in one phrase: the circuit's figure against its limit when known, and the
    outlets over their limit (or open) by number."""
    parts = []
    if summary.get("zs_ohm") is not None and summary.get("zs_max_ohm") is not None:
        parts.append(f"highest Zs {ohm(summary['zs_ohm'])} Ω against a limit of "
                     f"{ohm(summary['zs_max_ohm'])} Ω")
    failing = [outlet_name(row["n"], row["label"]) for row in rows if row["failed"]]
    if failing:
        parts.append("over the limit or open at " + ", ".join(failing))
    if not parts:
        parts.append("Zs cannot be worked out until every step 3 reading is in")
    return "; ".join(parts)


#: Tooltips of the screen's drawing: nothing to show on paper.
_TITLE = re.compile(r"<title>.*?</title>", re.S)


def sketch_uri(svg: str) -> str:
    """The printed ring picture as an image (a data URI, tooltips left out): the layout engine
    then neither styles nor lays out each of its shapes as part of the page."""
    light = _TITLE.sub("", str(svg))
    return "data:image/svg+xml;base64," + base64.b64encode(light.encode()).decode("ascii")


def _circuit_context(index: int, rec: dict, diagnosis: dict | None, problem: str | None,
                     drawing: str = "screen") -> dict:
    circuit = rec.get("circuit") or {}
    e2e = rec.get("end_to_end") or {}
    ctx = {
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
        "result": _zs_result(summary, ctx["outlets"]),
    }
    ctx["zs_line"] = _zs_line(summary, ctx["outlets"])
    ctx["verdict"] = VERDICT_WORDS.get(diagnosis.get("verdict"), "Not assessed")
    ctx["summary_sentence"] = diagnosis.get("summary") or problem or ""
    ctx["zs_only"] = (ZS_ONLY.get(diagnosis.get("verdict"), "")
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
    return seen or list(CAUTIONS)


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
        "status": STATUS_WORDS.get(people.get("status"), people.get("status") or ""),
        "review_comment": people.get("review_comment") or "",
        "verdict": VERDICT_WORDS.get(verdict, "Not assessed"),
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
        "generated": when(generated_at or dt.datetime.now(dt.UTC).replace(tzinfo=None)),
    }
