"""Template filters and globals of the guided test (registered on the app by the blueprint)."""

from __future__ import annotations

import logging

from markupsafe import Markup, escape

from fieldapp import labels
from fieldapp.records import diagnose_circuit
from fieldapp.ringtest import bp
from fieldapp.ringtest.text import STEP_BADGES

log = logging.getLogger(__name__)


@bp.app_template_filter("ohm")
def ohm_filter(value, places: int = 2, unit: bool = True) -> str:
    return labels.ohm(value, places, unit)


@bp.app_template_filter("named")
def named_filter(ids, names: dict | None) -> str:
    """Outlet ids as "a · Kitchen, c · Hall" (ids alone where the name is unknown)."""
    return ", ".join((names or {}).get(str(i), str(i)) for i in ids or ())


@bp.app_template_global("reading_name")
def reading_name(field: str, with_step: bool = False) -> str:
    return labels.reading_name(field, with_step)


@bp.app_template_global("outlet_name")
def outlet_name(oid, label: str | None = None, kind: str | None = None) -> str:
    return labels.outlet_name(oid, label, kind)


@bp.app_template_global("severity_word")
def severity_word(severity: str | None) -> str:
    return labels.severity_word(severity)


@bp.app_template_global("job_status_word")
def job_status_word(status: str | None, capital: bool = False) -> str:
    return labels.job_status_word(status, capital)


@bp.app_template_global("fed_from")
def fed_from(spur_from) -> str:
    return labels.fed_from(spur_from)


@bp.app_template_global("term")
def term(word: str, shown: str | None = None) -> Markup:
    """A trade term that opens its one-line explanation on tap (no script, no tooltip)."""
    meaning = labels.TERMS.get(word)
    text = escape(shown or word)
    if meaning is None:
        return Markup(text)
    return Markup('<details class="term"><summary>{}</summary><span class="term-says">{}'
                  "</span></details>").format(text, meaning)


@bp.app_template_global("circuit_verdict")
def circuit_verdict(circuit) -> dict:
    """{"verdict", "words", "checks"} for a circuit card; "Not assessed" when it cannot be
    diagnosed.
    One bad circuit never breaks a page that lists several."""
    try:
        diagnosis, reason = diagnose_circuit(circuit)
    except Exception:  # a card must render whatever one circuit's data holds
        log.exception("diagnosis failed for circuit %s", circuit.id)
        diagnosis, reason = None, "diagnosis failed"
    if not diagnosis:
        return {"verdict": "none", "words": labels.NOT_ASSESSED, "checks": False,
                "reason": reason}
    verdict = diagnosis.get("verdict") or "incomplete"
    return {"verdict": verdict, "words": labels.assessment_words(diagnosis),
            "checks": labels.with_checks(diagnosis), "reason": None}


@bp.app_context_processor
def step_words() -> dict:
    """The step badges of circuit cards (the job page)."""
    return {"step_badges": STEP_BADGES}
