"""Plain values for the pages from ``ringmath.diagnose`` output: no computation of our own.

The diagnosis dict already carries the expected value, band and status of every reading and
the findings in order of likelihood; these helpers only pick the right entry and put it in
words for the page and the JSON feedback.
"""

from __future__ import annotations

from fieldapp.labels import STATUS_WORDS, ohm

#: What to do about a reading out of band, before trusting it (common practice: a reading
#: is re-taken before it is believed; a poor probe contact is the usual cause).
RETRY_WORDS = {
    "open": "Check that the probes touch the terminals and the joins at the board are tight, "
            "then measure again.",
    "high": "Press the probes firmly onto the terminals and measure again.",
    "low": "Check that the probes are on the right terminals and measure again.",
}


def reading_entry(diagnosis: dict | None, field: str, key: str | None) -> dict | None:
    """The diagnosis' entry for one reading (step 1: key None), or None."""
    if not diagnosis:
        return None
    for entry in diagnosis.get("readings") or []:
        if entry.get("step") == field and (entry.get("outlet") or None) == (key or None):
            return entry
    return None


def feedback(diagnosis: dict | None, field: str, key: str | None) -> dict | None:
    """What to show beside a reading: expected value, band, how far off, in or out of band."""
    entry = reading_entry(diagnosis, field, key)
    if entry is None:
        return None
    status = entry.get("status") or "pending"
    expected = entry.get("expected_ohm")
    low, high = entry.get("low_ohm"), entry.get("high_ohm")
    deviation = entry.get("deviation_ohm")
    parts = []
    if expected is not None:
        band = (f" ({low:.2f} to {high:.2f} Ω)" if low is not None and high is not None
                else "")
        parts.append(f"Expected about {ohm(expected)}{band}.")
    if deviation is not None and status != "pending":
        direction = "above" if deviation > 0 else "below"
        parts.append(f"This is {ohm(abs(deviation))} {direction}." if deviation else
                     "Exactly as expected.")
    return {
        "status": status,
        "status_words": STATUS_WORDS.get(status, status),
        "expected_ohm": expected,
        "low_ohm": low,
        "high_ohm": high,
        "deviation_ohm": deviation,
        "text": " ".join(parts),
        "retry": RETRY_WORDS.get(status, ""),
        "ok": status == "ok",
        "alert": status in ("high", "low", "open"),
        "pending": status == "pending",
    }
