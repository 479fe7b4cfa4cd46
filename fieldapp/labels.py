"""The app's words and formatting, one home each: ohms, outlet kinds, reading names, outlet
names, verdict words, and the short explanations of trade terms.

What the computation core says (finding messages, cautions, verdict words) lives in
``ringmath.messages``; this module only formats and names things for screens, drawings, tables
and the job sheet.

Outlet names, one scheme everywhere: an outlet is called by its id in the record (the letter
the app gives it when it is added: a, b, c, ... in the order the building is walked; an
imported job keeps its own ids), followed by the label where there is room: "c · Kitchen by
door". A spur says where it is fed from with the same short name: "spur from c". The drawings
carry the same short name inside each symbol, so the ring picture, the plot, the step pages,
the results table and the sheet all say "c" for the same socket.
"""

from __future__ import annotations

import math

from ringmath import messages as _core_words

#: Outlet kinds: the long form for forms, the short one for tables and drawing keys.
KIND_LABELS = {
    "twin_socket": "Twin socket",
    "single_socket": "Single socket",
    "fcu": "Fused connection unit (FCU)",
    "junction_box": "Junction box",
    "fixed_equipment": "Fixed equipment (no plug)",
}
KIND_WORDS = {
    "twin_socket": "twin socket",
    "single_socket": "single socket",
    "fcu": "FCU",
    "junction_box": "junction box",
    "fixed_equipment": "fixed equipment",
}

#: Reading names by field: the short form and the form that says which step it is.
READING_NAMES = {"r1": "r1", "rn": "rn", "r2": "r2", "ln": "L–N", "le": "L–CPC",
                 "zs_measured": "measured Zs",
                 "ln_terminals": "L–N re-measured at the terminals",
                 "le_terminals": "L–CPC re-measured at the terminals"}
READING_STEP_NAMES = {"r1": "r1 (step 1)", "rn": "rn (step 1)", "r2": "r2 (step 1)",
                      "ln": "L–N (step 2)", "le": "L–CPC (step 3)"}
#: The end-to-end readings with the conductor each is taken on.
CONDUCTOR_NAMES = {"r1": "r1 (line)", "rn": "rn (neutral)", "r2": "r2 (cpc)"}
#: The step each dead-test reading belongs to.
STEP_OF = {"r1": 1, "rn": 1, "r2": 1, "ln": 2, "le": 3}

#: Verdict words: ringmath's own (``ringmath.messages.VERDICT_WORDS``), never restated here.
VERDICT_WORDS: dict[str, str] = dict(_core_words.VERDICT_WORDS)
#: The verdict of a group of circuits (a job) is its worst one's, in this order (worst first).
VERDICT_ORDER = ("investigate", "retest", "incomplete", "satisfactory")
#: A circuit that could not be assessed at all (no diagnosis).
NOT_ASSESSED = "Not assessed"

#: The cautions shown wherever results are shown: only ever the core's own.
CAUTIONS: tuple[str, ...] = tuple(_core_words.CAUTIONS)

#: What each reading status means beside a reading.
STATUS_WORDS = {
    "ok": "in band",
    "high": "too high",
    "low": "too low",
    "open": "open circuit (OL)",
    "pending": "not taken yet",
}
SEVERITY_WORDS = {"fault": "Fault", "warning": "Check", "info": "Note"}
#: A job's status in words (badges, filters, sentences, the sheet).
JOB_STATUS_WORDS = {
    "in_progress": "in progress",
    "submitted": "submitted",
    "returned": "returned",
    "approved": "approved",
}


def job_status_word(status: str | None, capital: bool = False) -> str:
    """"submitted" (or "Submitted") for a job's status; the status itself when unknown."""
    words = JOB_STATUS_WORDS.get(status or "", status or "")
    return words[:1].upper() + words[1:] if capital else words


def severity_word(severity: str | None) -> str:
    """A finding's severity in words ("fault" or "FAULT" -> "Fault"); "Note" when unknown."""
    return SEVERITY_WORDS.get(str(severity or "").lower(), "Note")

#: One-line explanations of the terms an apprentice may not know, opened on tap.
TERMS = {
    "OL": "The meter's over-range sign: no connection it can measure (an open circuit).",
    "in band": "Within the range a sound ring would give here, allowing for meter error.",
    "nulled": "The test leads' own resistance zeroed on the meter before measuring, so "
              "readings show the circuit only.",
    "OCPD": "Overcurrent protective device: the breaker or fuse protecting the circuit.",
    "csa": "Cross-sectional area of a conductor, in mm² (2.5 mm² for a usual ring's live "
           "conductors).",
    "R1+R2": "Line plus protective conductor (CPC) resistance from the board to a point: the "
             "step 3 reading at that outlet.",
    "Zs": "Earth fault loop impedance at a point: Ze plus R1+R2. It must be low enough for "
          "the device to disconnect in time.",
    "Ze": "The part of the earth fault loop outside the installation, measured at the origin.",
    "CPC": "Circuit protective conductor: the earth wire of the circuit.",
    "spur": "A branch cable fed from one point of the ring rather than part of the loop.",
}


def ohm(value, places: int = 2, unit: bool = True) -> str:
    """A reading or resistance for display: "0.26 Ω", "OL" or "—" (nothing yet).

    Takes a number, the stored text ("0.26", "OL"), ringmath's float('inf') for OL, or None.
    Text that is not a number is shown as it is; ``unit=False`` leaves out " Ω" (a table
    whose caption says ohms)."""
    if value is None or value == "":
        return "—"
    if isinstance(value, str):
        if value.strip().upper() == "OL":
            return "OL"
        try:
            value = float(value)
        except ValueError:
            return value
    if isinstance(value, bool):
        return str(value)
    if math.isinf(value):
        return "OL"
    return f"{value:.{places}f} Ω" if unit else f"{value:.{places}f}"


#: ringmath's True / False / None for a pass or fail, in words that read in black and white.
RESULT_WORDS = {True: "pass", False: "FAIL"}
NOT_PROVED = "not proved"


def result_word(ok) -> str:
    """"pass", "FAIL" or "not proved" (None: a reading missing, OL, or no limit)."""
    return RESULT_WORDS.get(ok, NOT_PROVED)


def kind_label(kind: str | None, short: bool = False) -> str:
    """An outlet kind in words ("Twin socket", or "twin socket" with short=True)."""
    table = KIND_WORDS if short else KIND_LABELS
    return table.get(kind or "", kind or "outlet")


def reading_name(field: str, with_step: bool = False) -> str:
    """"L–N" or "L–N (step 2)" for the field "ln"; the field itself when unknown."""
    return ((READING_STEP_NAMES.get(field) if with_step else None)
            or READING_NAMES.get(field, field))


def step_reading(field: str, capital: bool = True) -> str:
    """A dead-test reading led by its step: "Step 2 L–N", "Step 1 r1 (line)"; the reading's
    name alone for a reading of no step."""
    step = STEP_OF.get(field)
    if step is None:
        return reading_name(field)
    name = CONDUCTOR_NAMES.get(field) or reading_name(field)
    return f"{'Step' if capital else 'step'} {step} {name}"


def outlet_name(oid, label: str | None = None, kind: str | None = None) -> str:
    """An outlet's full name: "c · Kitchen by door" (the kind when there is no label)."""
    words = label or (kind_label(kind) if kind else "")
    return f"{oid} · {words}" if words and words != str(oid) else str(oid)


def outlet_names(points) -> dict[str, str]:
    """Outlet id -> full name for a list of points or record outlets (dicts with id, label,
    kind), or for a diagnosis dict (its ``points``)."""
    if isinstance(points, dict):
        points = points.get("points") or []
    return {str(p.get("id")): outlet_name(p.get("id"), p.get("label"), p.get("kind"))
            for p in points or () if isinstance(p, dict)}


def fed_from(spur_from) -> str:
    """"spur from c" for a spur, "" for a ring outlet."""
    return f"spur from {spur_from}" if spur_from else ""


def verdict_word(verdict: str | None) -> str:
    return VERDICT_WORDS.get(verdict or "incomplete", str(verdict))


def with_checks(diagnosis: dict | None) -> bool:
    """A satisfactory verdict with a check still standing (a warning among the findings): it
    is never shown as a plain pass, on any screen or on paper."""
    if not diagnosis or diagnosis.get("verdict") != "satisfactory":
        return False
    return any(isinstance(f, dict) and f.get("severity") == "warning"
               for f in diagnosis.get("findings") or [])


def assessment_words(diagnosis: dict | None) -> str:
    """The verdict in words, "Satisfactory, with checks to make" where ``with_checks``;
    NOT_ASSESSED without a diagnosis."""
    if not diagnosis:
        return NOT_ASSESSED
    words = verdict_word(diagnosis.get("verdict") or "incomplete")
    return f"{words}, with checks to make" if with_checks(diagnosis) else words


def worst_verdict(verdicts) -> str | None:
    """The worst of several verdicts (``VERDICT_ORDER``); None when there are none."""
    found = set(verdicts)
    return next((v for v in VERDICT_ORDER if v in found), None)
