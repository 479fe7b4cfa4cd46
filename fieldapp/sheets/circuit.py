"""One circuit of the job sheet: its details, the schedule of outlets, the findings in words
and the Zs result, from the circuit's record and its diagnosis (plain dicts only)."""

from __future__ import annotations

import base64
import re

from fieldapp.drawings import point_names
from fieldapp.labels import KIND_WORDS, outlet_name, severity_word
from fieldapp.sheets.words import (
    DASH,
    NO_BAND,
    READING_STATUS_WORDS,
    _pass_word,
    _yes,
    ohm,
    quantity,
    recorded,
    when,
)


def _device(circuit: dict) -> str:
    ocpd = circuit.get("ocpd") or {}
    curve = f" type {ocpd['curve']}" if ocpd.get("curve") else ""
    return f"{ocpd.get('standard', '')}{curve} {quantity(ocpd.get('rating_a'))} A".strip()



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
            x for x in ((safety or {}).get("confirmed_by"), when((safety or {}).get("confirmed_at"))
                        if (safety or {}).get("confirmed_at") else None) if x) or DASH),
    ]


def _reading_status(diagnosis: dict) -> dict[tuple, dict]:
    return {(r.get("outlet"), r.get("step")): r for r in diagnosis.get("readings") or []}


def _status_word(status: dict | None) -> str:
    status = status or {}
    if status.get("status") == "pending" and status.get("value") is not None:
        return NO_BAND
    return READING_STATUS_WORDS.get(status.get("status") or "", "")


def _names(rec: dict, diagnosis: dict) -> dict[str, str]:
    """Each outlet's short name: the one it carries in the ring picture when there is a
    diagnosis (fieldapp.drawings.point_names), else its id, as every screen names it."""
    names = point_names(diagnosis) if diagnosis else {}
    for outlet in rec.get("outlets") or []:
        names.setdefault(str(outlet["id"]), str(outlet["id"]))
    return names


def _named_in(diagnosis: dict) -> dict[str, str]:
    """Per outlet id, the most serious fault or warning finding that names it, in the
    screens' words ("FAULT", "CHECK"), so the schedule can point at the findings."""
    named: dict[str, str] = {}
    for severity in ("warning", "fault"):
        for finding in diagnosis.get("findings") or []:
            if finding.get("severity") == severity:
                named.update({str(o): severity_word(severity).upper()
                              for o in finding.get("outlets") or []})
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
        "severity": severity_word(f.get("severity")).upper(),  # the screens' words
        "message": f.get("message") or "",
        "next_check": f.get("next_check") or "",
        "outlets": ", ".join(outlet(o) for o in f.get("outlets") or []),
    } for f in diagnosis.get("findings") or []]


def _zs_result(summary: dict) -> str:
    """The circuit's Zs result in words: the diagnosis' own ``circuit.zs_ok`` (any point
    failing, predicted or measured: FAIL; any not known: not proved), never re-judged here."""
    return _pass_word(summary.get("zs_ok"))


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
