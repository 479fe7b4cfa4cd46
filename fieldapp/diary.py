"""The change history as a diary: who changed what, when (local time, to the minute), from
which device, in words ("0.38 → 0.40 Ω"), never the database's own names, codes or a browser's
identification string. A reading queued on a phone offline says when it was taken as well as
when it arrived.

``diary_rows(rows, users, what)`` turns ChangeLog rows into plain dicts for the templates; both
history pages (a circuit's, under ringtest, and a job's, under review) use it.
"""

from __future__ import annotations

import datetime as dt
import re
from zoneinfo import ZoneInfo

from sqlalchemy import or_, select

from fieldapp.labels import KIND_WORDS, outlet_name, reading_name, step_reading
from fieldapp.records import circuit_reference

#: Times are stored in UTC and shown in the company's own time zone.
LOCAL = ZoneInfo("Europe/London")
READING_FIELDS = ("r1", "rn", "r2", "ln", "le")
FIELD_WORDS = {
    # the readings by the app's one name for each (fieldapp/labels.py)
    **{f: step_reading(f, capital=False) for f in READING_FIELDS},
    **{f: reading_name(f) for f in ("zs_measured", "ln_terminals", "le_terminals")},
    "created": "created", "deleted_at": "deleted", "label": "label", "kind": "kind",
    "spur_from_key": "fed from", "fuse_a": "FCU fuse", "spur_csa_mm2": "spur cable size",
    "spur_cpc_csa_mm2": "spur cpc size", "key": "outlet id", "position": "order",
    "safety_isolated": "safety: isolated", "safety_locked_off": "safety: locked off",
    "safety_proved_dead": "safety: proved dead", "safety_confirmed_by_id": "safety confirmed by",
    "safety_confirmed_at": "safety confirmed at", "imported_safety": "safety as the file states",
    "current_step": "step reached", "status": "status", "submitted_at": "submitted",
    "reviewed_by_id": "reviewed by", "reviewed_at": "reviewed", "approved_by_id": "approved by",
    "approved_at": "approved", "review_comment": "review comment",
    "submit_reason": "reason for submitting with problems",
    "approve_reason": "reason for approving with problems",
    "submit_problems": "problems when submitted", "approve_problems": "problems when approved",
    "ocpd_standard": "protective device", "ocpd_curve": "curve", "ocpd_rating_a": "rating",
    "rcd_rated_ma": "RCD", "rcd_type": "RCD type", "live_csa_mm2": "line and neutral size",
    "cpc_csa_mm2": "cpc size", "ze_ohm": "Ze", "ze_source": "Ze is", "earthing": "earthing",
    "cable_length_m": "cable length", "board": "board", "way": "way",
    "description": "description", "reference": "reference", "site": "site", "client": "client",
    "date": "test date", "notes": "notes", "tester_id": "tester", "created_by": "created by",
    "job_id": "job", "circuit_id": "circuit", "instrument_model": "test instrument",
    "instrument_serial": "instrument serial number",
    "taken_at": "readings taken at",
    "cpc_kind": "cpc is", "parallel_paths": "parallel earth paths expected",
    "pfc_ka": "prospective fault current", "ir_test_v": "insulation test voltage",
    "ir_ln_mohm": "insulation L–N", "ir_le_mohm": "insulation L–E",
    "ir_ne_mohm": "insulation N–E", "rcd_trip_ms": "RCD trip time",
    "rcd_button_ok": "RCD test button works",
}
#: Readings in ohms besides the ring test's own (shown like them: "0.74 Ω").
OHM_READINGS = ("zs_measured", "ln_terminals", "le_terminals")
#: Outlet readings' "where taken" and the cpc's kind, in words.
CHOICE_WORDS = {
    "taken_at": {"front": "the socket front (plug-in lead)", "terminals": "the terminals"},
    "cpc_kind": {"cable_core": "a core of the cable", "conduit": "the conduit",
                 "trunking": "the trunking", "armour": "the cable armour",
                 "separate": "a separate conductor"},
}
#: Fields that only join the tables together: not a diary entry.
HIDDEN = ("job_id", "circuit_id", "position", "id")
#: Fields whose value is a user's id, shown as the person's name.
USER_FIELDS = ("tester_id", "created_by", "reviewed_by_id", "approved_by_id",
               "safety_confirmed_by_id")
UNITS = {"ocpd_rating_a": "A", "fuse_a": "A", "rcd_rated_ma": "mA", "live_csa_mm2": "mm²",
         "cpc_csa_mm2": "mm²", "spur_csa_mm2": "mm²", "spur_cpc_csa_mm2": "mm²",
         "cable_length_m": "m", "ze_ohm": "Ω", "pfc_ka": "kA", "ir_test_v": "V",
         "rcd_trip_ms": "ms"}
STATUS_WORDS = {"in_progress": "in progress", "submitted": "submitted",
                "returned": "returned to the tester", "approved": "approved"}
STEP_WORDS = {"safety": "safety checks", "e2e": "step 1", "ln": "step 2", "le": "step 3",
              "results": "results"}
#: Words that only a browser's identification string contains.
BROWSER = re.compile(r"Mozilla/|AppleWebKit|Gecko/|Chrome/|Safari/|HeadlessChrome")
NOTHING = "nothing"


def local(at: dt.datetime | None) -> str:
    """A stored UTC time as local time to the minute: "2 Dec 2026 16:52"."""
    if at is None:
        return ""
    if at.tzinfo is None:
        at = at.replace(tzinfo=dt.UTC)
    at = at.astimezone(LOCAL)
    return f"{at.day} {at:%b %Y %H:%M}"


def device_words(device: str | None) -> str:
    """A device label as typed ("phone A"), or a browser's identification string as the kind
    of device it names ("Android phone"); "" when there is none."""
    device = (device or "").strip()
    if not device or not BROWSER.search(device):
        return device
    for token, words in (("iPhone", "iPhone"), ("iPad", "iPad"), ("Android", "Android phone"),
                         ("Windows", "Windows computer"), ("Macintosh", "Mac"),
                         ("CrOS", "Chromebook"), ("Linux", "computer")):
        if token in device:
            return words
    return "web browser"


def _number(text: str) -> str:
    try:
        return f"{float(text):g}"
    except ValueError:
        return text


def _reading(text: str) -> str:
    """A reading as recorded: at least two decimals ("0.40"), never rounded away."""
    try:
        value = float(text)
    except ValueError:
        return text
    shown = f"{value:.2f}"
    return shown if float(shown) == value else repr(value)


def _iso_time(text: str) -> str:
    try:
        value = dt.datetime.fromisoformat(text)
    except ValueError:
        return text
    if "T" not in text:
        return f"{value.day} {value:%b %Y}"
    return local(value)


def value_words(field: str, text: str | None, users: dict[int, str]) -> str:
    """One logged value in words, without its unit (the change line adds it once)."""
    if text is None or text == "":
        return NOTHING
    if field in READING_FIELDS or field in OHM_READINGS:
        return "OL" if text == "OL" else _reading(text)
    if field in CHOICE_WORDS:
        return CHOICE_WORDS[field].get(text, text)
    if field.startswith("ir_") and field.endswith("_mohm"):
        return f"{text.replace('>', '> ', 1)} MΩ"
    if text in ("true", "false"):
        return "yes" if text == "true" else "no"
    if field in USER_FIELDS:
        try:
            return users.get(int(text), "someone")
        except ValueError:
            return text
    if field == "status":
        return STATUS_WORDS.get(text, text)
    if field == "current_step":
        return STEP_WORDS.get(text, text)
    if field == "kind":
        return KIND_WORDS.get(text, text)
    if field in UNITS:
        return _number(text)
    if re.fullmatch(r"\d{4}-\d\d-\d\d(T[\d:.]+)?", text):
        return _iso_time(text)
    return text


def change_words(field: str, old: str | None, new: str | None,
                 users: dict[int, str]) -> tuple[str, str, str]:
    """(old, new, unit): "0.38", "0.40", "Ω" for a reading; the unit printed once after new,
    or after each side when only one is a number ("0.26 Ω → OL")."""
    before, after = value_words(field, old, users), value_words(field, new, users)
    unit = "Ω" if field in READING_FIELDS or field in OHM_READINGS else UNITS.get(field, "")
    if not unit:
        return before, after, ""
    numeric = [w not in (NOTHING, "OL") for w in (before, after)]
    if numeric == [True, False]:
        return f"{before} {unit}", after, ""
    return before, after, unit if numeric[1] else ""


def diary_rows(rows, users: dict[int, str], what) -> list[dict]:
    """Plain dicts per ChangeLog row (in the order given): when, taken (when a queued reading
    was taken, or ""), who, device, what (``what(row)``: the thing changed, in words), field,
    old ("" when there is no before: a creation), new, unit. Rows that only link the tables
    together (``HIDDEN``) are left out."""
    out = []
    for row in rows:
        if row.field in HIDDEN:
            continue
        old, new, unit = change_words(row.field, row.old_value, row.new_value, users)
        if row.field == "created":
            old, new = "", "added"
        taken = getattr(row, "taken_at", None)
        out.append({
            "when": local(row.at),
            "taken": local(taken) if taken is not None and taken != row.at else "",
            "who": users.get(row.user_id, "someone") if row.user_id else "the app",
            "device": device_words(row.device),
            "what": what(row),
            "field": FIELD_WORDS.get(row.field, row.field.replace("_", " ")),
            "old": old, "new": new, "unit": unit,
        })
    return out


def _users() -> dict[int, str]:
    from fieldapp.extensions import db
    from fieldapp.models import User

    return {u.id: u.name for u in db.session.scalars(select(User))}


def _thing(row, job, circuits: dict, outlets: dict) -> str:
    """What a row changed: "DB1/4, outlet b · Hall", "DB1/4" or "job J-1"."""
    if row.entity == "outlet" and row.entity_id in outlets:
        outlet = outlets[row.entity_id]
        return (f"{circuit_reference(circuits[outlet.circuit_id])}, outlet "
                f"{outlet_name(outlet.key, outlet.label)}")
    if row.entity == "circuit" and row.entity_id in circuits:
        return circuit_reference(circuits[row.entity_id])
    return f"job {job.reference}"


def job_diary(job, circuit_id: int | None = None, outlet_id: int | None = None,
              field: str | None = None) -> list[dict]:
    """The job's history, newest first, narrowed to a circuit, an outlet (ids) or a field."""
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog

    circuits = {c.id: c for c in job.circuits}
    outlets = {o.id: o for c in job.circuits for o in c.outlets}
    query = select(ChangeLog).where(or_(
        (ChangeLog.entity == "job") & (ChangeLog.entity_id == job.id),
        ChangeLog.circuit_id.in_(list(circuits) or [-1])))
    if circuit_id is not None:
        query = query.where(ChangeLog.circuit_id == circuit_id)
    if outlet_id is not None:
        query = query.where(ChangeLog.entity == "outlet", ChangeLog.entity_id == outlet_id)
    if field:
        query = query.where(ChangeLog.field == field)
    rows = db.session.scalars(query.order_by(ChangeLog.id.desc()))
    return diary_rows(rows, _users(), lambda row: _thing(row, job, circuits, outlets))


def circuit_diary(circuit) -> list[dict]:
    """One circuit's history (its own rows and its outlets'), newest first."""
    from fieldapp.extensions import db
    from fieldapp.models import ChangeLog

    outlets = {o.id: o for o in circuit.outlets}
    rows = db.session.scalars(select(ChangeLog).where(ChangeLog.circuit_id == circuit.id)
                              .order_by(ChangeLog.id.desc()))
    return diary_rows(rows, _users(), lambda row: _thing(row, circuit.job,
                                                         {circuit.id: circuit}, outlets))
