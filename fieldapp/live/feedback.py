"""Plain values for the live tests from ``ringmath.diagnose`` output and the record.

No judgement of our own: pass / fail of a measured Zs, the cross-check findings, the
insulation and RCD results all come from ringmath. These helpers pick the entries and put
them in words for the live tests page, Results, the review page and the printed sheet.
"""

from __future__ import annotations

from fieldapp import labels
from fieldapp.live.values import TAKEN_AT_LABELS

#: The findings of the live tests and the dead tests beside the ring test (ringmath codes).
LIVE_CODES = ("zs_measured_over_limit", "parallel_earth_path", "zs_measured_high",
              "insulation_low", "insulation_test_voltage", "rcd_slow", "rcd_button")
#: The findings about one outlet's measured Zs: over its limit, and the cross-check against
#: Ze + R1+R2.
CROSS_CHECK_CODES = ("zs_measured_over_limit", "parallel_earth_path", "zs_measured_high")
#: Said wherever live results are shown, beside the usual cautions (common practice).
LIVE_CAUTION = ("Zs, RCD and fault current are measured with the supply on: only by a "
                "competent person, with suitable test leads and probes, keeping to the "
                "instrument maker's instructions.")
MARGINAL_WORDS = "marginal: re-measure"
ESTIMATED_WORDS = "estimated"
DASH = "—"
#: How many suggestions of each kind the page makes.
SUGGEST_RING, SUGGEST_SPURS = 2, 2


def ohm(value) -> str:
    """A resistance for display: "0.66", "OL" or a dash (the app's one formatter, without the
    unit: the words around it say Ω)."""
    return labels.ohm(value, unit=False)


def result_word(ok) -> str:
    """ringmath's True / False / None as a word that reads in black and white."""
    return labels.result_word(ok)


def _points(diagnosis: dict | None) -> dict[str, dict]:
    return {str(p.get("id")): p for p in (diagnosis or {}).get("points") or []}


def _findings_for(diagnosis: dict | None, key: str, codes=CROSS_CHECK_CODES) -> list[dict]:
    return [f for f in (diagnosis or {}).get("findings") or []
            if f.get("code") in codes and key in [str(o) for o in f.get("outlets") or []]]


def zs_feedback(diagnosis: dict | None, key: str) -> dict | None:
    """What to show beside one outlet's measured Zs: its limit, the prediction, the result
    and the cross-check finding, all from the diagnosis; None when it has no such point."""
    point = _points(diagnosis).get(key)
    if point is None:
        return None
    measured = point.get("zs_measured_ohm")
    ok = point.get("zs_measured_ok")
    limit = point.get("zs_max_ohm")
    parts = []
    if limit is not None:
        parts.append(f"Limit for a measured Zs here: {ohm(limit)} Ω.")
    if point.get("zs_ohm") is not None:
        estimated = " (R1+R2 estimated)" if point.get("r1r2_estimated") else ""
        parts.append(f"Predicted Ze + R1+R2 = {ohm(point['zs_ohm'])} Ω{estimated}.")
    span = point.get("zs_expected_range_ohm")
    if span:
        parts.append(f"A sound circuit measures {ohm(span[0])} to {ohm(span[1])} Ω here.")
    if measured is None:
        status = "pending"
    elif ok is True:
        status = "ok"
    elif ok is False:
        status = "open" if measured == "OL" else "high"
    else:
        status = "unknown"
    words = {"pending": "not measured yet", "ok": "within the limit",
             "high": "over the limit", "open": "no loop: OL",
             "unknown": "no limit to judge it by"}[status]
    return {
        "status": status, "status_words": words, "text": " ".join(parts),
        "ok": status == "ok", "alert": status in ("high", "open"), "pending": status == "pending",
        "measured": measured, "limit_ohm": limit,
        "marginal": bool(point.get("zs_marginal")),
        "findings": _findings_for(diagnosis, key),
    }


def suggestions(diagnosis: dict | None) -> dict[str, str]:
    """Outlet id -> why the page suggests measuring Zs there: the ring points with the
    highest predicted Zs, and the spurs at the end of their chains with the highest
    (the furthest points electrically). Ranking only: no pass / fail here."""
    points = list((diagnosis or {}).get("points") or [])
    feeds = {p.get("spur_from") for p in points if p.get("spur_from")}

    def height(p):
        for name in ("zs_ohm", "r1r2_ohm"):
            if isinstance(p.get(name), int | float):
                return float(p[name])
        return -1.0

    ring = sorted((p for p in points if p.get("on_ring")), key=height, reverse=True)
    spurs = sorted((p for p in points if not p.get("on_ring") and p.get("id") not in feeds),
                   key=height, reverse=True)
    chosen = {}
    for p in ring[:SUGGEST_RING]:
        if height(p) >= 0:
            chosen[str(p["id"])] = "highest predicted Zs"
    for p in spurs[:SUGGEST_SPURS]:
        chosen[str(p["id"])] = "furthest spur"
    return chosen


def _ir_words(value) -> str:
    if value is None:
        return DASH
    if isinstance(value, str):
        return value.replace(">", "> ", 1) if value.startswith(">") else value
    return f"{float(value):g}"


def _quantity(value, unit: str) -> str:
    return DASH if value is None else f"{float(value):g} {unit}"


def live_summary(record: dict, diagnosis: dict | None) -> dict:
    """Everything the live tests add to a circuit's results, as strings.

    record: the circuit's ``ringtest/1`` record (``circuit`` and ``outlets``); diagnosis: its
    ``ringmath.diagnose`` result or None.
    """
    circuit = record.get("circuit") or {}
    points = _points(diagnosis)
    result = (diagnosis or {}).get("circuit") or {}
    rows = []
    for outlet in record.get("outlets") or []:
        key = str(outlet.get("id"))
        point = points.get(key, {})
        notes = []
        if point.get("r1r2_estimated"):
            notes.append(f"R1+R2 {ESTIMATED_WORDS}")
        if point.get("zs_marginal"):
            notes.append(MARGINAL_WORDS)
        if outlet.get("taken_at"):
            notes.append("readings " + TAKEN_AT_LABELS.get(outlet["taken_at"],
                                                           outlet["taken_at"]))
        for name in ("ln_terminals", "le_terminals"):
            if outlet.get(name) is not None:
                notes.append(f"{labels.reading_name(name)} {ohm(outlet[name])} Ω")
        notes += [f.get("code", "").replace("_", " ") for f in _findings_for(diagnosis, key)]
        measured = outlet.get("zs_measured")
        rows.append({
            "id": key, "label": outlet.get("label") or key,
            # the one name each outlet has everywhere (fieldapp/labels.py): "c · Kitchen"
            "name": labels.outlet_name(key, outlet.get("label"), outlet.get("kind")),
            "r1r2": ohm(point.get("r1r2_ohm")),
            "estimated": bool(point.get("r1r2_estimated")),
            "predicted": ohm(point.get("zs_ohm")),
            "marginal": bool(point.get("zs_marginal")),
            "measured": ohm(measured),
            "limit": ohm(point.get("zs_max_ohm")),
            "result": result_word(point.get("zs_measured_ok")) if measured is not None
            else DASH,
            "failed": measured is not None and point.get("zs_measured_ok") is False,
            "notes": ", ".join(notes),
        })
    insulation = circuit.get("insulation") or {}
    ir_result = result.get("insulation") or {}
    ir_ok = ir_result.get("ok") if isinstance(ir_result.get("ok"), dict) else {}
    rcd = circuit.get("rcd") or {}
    rcd_result = result.get("rcd") or {}
    return {
        "rows": rows,
        "any_measured": any(r["measured"] != DASH for r in rows),
        "cpc_kind": circuit.get("cpc_kind") or "cable_core",
        "parallel_paths": bool(circuit.get("parallel_paths")),
        "pfc": _quantity(circuit.get("pfc_ka"), "kA"),
        "insulation": {
            "recorded": bool(insulation),
            "test_v": _quantity(insulation.get("test_v"), "V"),
            **{pair: _ir_words(insulation.get(f"{pair}_mohm"))
               + (" LOW" if ir_ok.get(pair) is False else "") for pair in ("ln", "le", "ne")},
            "minimum": _quantity(ir_result.get("min_mohm"), "MΩ"),
            "result": result_word(ir_result.get("all_ok")) if insulation else DASH,
            "source": ir_result.get("source") or ir_result.get("limit_source") or "",
        },
        "rcd": {
            "recorded": bool(rcd),
            "rated": _quantity(rcd.get("rated_ma"), "mA"),
            "type": rcd.get("type") or DASH,
            "trip": _quantity(rcd.get("trip_ms"), "ms"),
            "button": {True: "yes", False: "NO"}.get(rcd.get("button_ok"), "not checked"),
            "limit": _quantity(rcd_result.get("max_trip_ms"), "ms"),
            "result": result_word(rcd_result.get("trip_ok")) if rcd.get("trip_ms") is not None
            else DASH,
            "source": rcd_result.get("source") or rcd_result.get("limit_source") or "",
        },
        "findings": [f for f in (diagnosis or {}).get("findings") or []
                     if f.get("code") in LIVE_CODES],
        "marginal": [r["name"] for r in rows if r["marginal"]],
        "estimated": [r["name"] for r in rows if r["estimated"]],
        "caution": LIVE_CAUTION,
    }
