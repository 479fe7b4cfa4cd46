"""The job sheet's words and print formats: verdicts, job statuses, reading checks, Zs
results; ohms, readings as recorded, quantities and dates for print.

Plain functions of plain values (fieldapp/sheets/context.py assembles the sheet from them).
"""

from __future__ import annotations

import datetime as dt

from fieldapp import labels

#: Verdict words and the order of a job's verdict: the app's own (fieldapp/labels.py).
VERDICT_WORDS = labels.VERDICT_WORDS
VERDICT_ORDER = labels.VERDICT_ORDER
#: A job's status as the sheet prints it (the app's one set of words, capitalised).
STATUS_WORDS = {status: labels.job_status_word(status, capital=True)
                for status in labels.JOB_STATUS_WORDS}
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
NOT_PROVED = labels.NOT_PROVED
#: What a Zs "pass" does not say when the circuit as a whole is not satisfactory.
ZS_ONLY = {
    "investigate": "The Zs result covers the readings as taken only: the circuit is not "
                   "satisfactory until the findings below are resolved and the steps repeated.",
    "retest": "The Zs result covers the readings as taken only: they are doubtful and the "
              "steps must be repeated.",
    "incomplete": "The Zs result covers the readings taken so far only: the test is not "
                  "complete.",
}
STEP1 = tuple(labels.CONDUCTOR_NAMES.items())
DASH = "—"


def ohm(value) -> str:
    """A computed resistance for print: two decimals, "OL", or a dash when unknown (the app's
    one formatter, without the unit: the sheet's columns say Ω)."""
    return labels.ohm(value, unit=False)


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
    return labels.worst_verdict(d["verdict"] if d else "incomplete" for d in diagnoses)


def _pass_word(ok) -> str:
    return labels.result_word(ok)


def _yes(flag) -> str:
    return "yes" if flag else "NO"



def quantity(value) -> str:
    """A plain quantity without trailing zeros (32.0 -> "32", 2.5 -> "2.5"); dash if None."""
    return DASH if value is None else f"{float(value):g}"

