"""The answer at a glance on the results page and the step pages' sticky line.

Two presentation rules, pure functions over ``diagnose`` output:

- a failing outlet is never hidden: every point whose Zs fails (over its limit, or no earth
  path proved because step 3 reads OL) is named first, before the verdict's summary, and the
  summary tiles say "fails" / "not proved" instead of a reassuring highest value;
- findings keep ringmath's order, except that among fitted explanations (faults with a
  confidence) of similar likelihood, within a factor ``SIMILAR_LIKELIHOOD``, the more
  dangerous comes first, so a harmless reading of the pattern never hides a dangerous one
  that fits about as well. Checks without a confidence (Zs, rules) are facts, not rival
  explanations, and stay where they are.

The circuit-level pass/fail is ``diagnosis["circuit"]["zs_ok"]`` (None without a diagnosis);
point verdicts (``points[].ok``) are ringmath's own. Nothing is compared here.
"""

from __future__ import annotations

from fieldapp.labels import SEVERITY_WORDS, assessment_words, ohm, outlet_names, with_checks

#: Two fault explanations whose confidences are within this factor "fit about as well": odds
#: below about 3.2 to 1 are "not worth more than a bare mention" on Jeffreys' scale of
#: evidence (H. Jeffreys, Theory of Probability, 3rd ed. 1961, Appendix B), so the readings do
#: not decide between them and the more dangerous is listed first.
SIMILAR_LIKELIHOOD = 3.2
#: Danger rank of each fault code (higher first), common practice of the trade: a missing
#: earth path leaves no fault protection at all; reversed polarity leaves parts live when
#: switched off; a broken ring conductor leaves a
#: long radial overloaded; a bridge or a poor joint can overheat; an unrecorded spur breaks
#: the design; crossed ends at the board are a set-up slip of the test itself.
DANGER = {
    "zs_over_limit": 9,
    "open_conductor:cpc": 9,
    "reversed_polarity": 8,
    "open_conductor": 6,
    "interconnection": 5,
    "high_resistance_joint": 4,
    "unrecorded_spur": 3,
    "wrong_cross_connection": 1,
}


def danger(finding: dict) -> int:
    code = str(finding.get("code") or "")
    return DANGER.get(f"{code}:{finding.get('conductor')}", DANGER.get(code, 2))


def _fitted(finding: dict) -> bool:
    return finding.get("severity") == "fault" and finding.get("confidence") is not None


def order_findings(findings: list[dict]) -> list[dict]:
    """ringmath's findings with each run of fitted faults of similar likelihood ordered by
    danger (then likelihood); everything else keeps its place."""
    out = [f for f in findings or [] if isinstance(f, dict)]
    i = 0
    while i < len(out):
        if not _fitted(out[i]):
            i += 1
            continue
        j = i + 1
        while j < len(out) and _fitted(out[j]):
            j += 1
        run = sorted(out[i:j], key=lambda f: -float(f["confidence"]))
        ordered: list[dict] = []
        k = 0
        while k < len(run):
            lead = float(run[k]["confidence"])
            m = k + 1
            while m < len(run) and float(run[m]["confidence"]) * SIMILAR_LIKELIHOOD >= lead:
                m += 1
            ordered += sorted(run[k:m], key=lambda f: (-danger(f), -float(f["confidence"])))
            k = m
        out[i:j] = ordered
        i = j
    return out


def zs_state(diagnosis: dict) -> dict:
    """Which outlets fail Zs and how, and the circuit's result.

    {"ok": True | False | None, "failing": [point], "unproved": [point] (step 3 OL: no earth
    path proved), "over": [point] (Zs over its limit), "lines": [str] (the words to put
    first)}."""
    points = [p for p in diagnosis.get("points") or [] if isinstance(p, dict)]
    circuit = diagnosis.get("circuit") or {}
    failing = [p for p in points if p.get("ok") is False]
    unproved = [p for p in failing if p.get("le_ohm") == "OL" or p.get("zs_ohm") is None]
    over = [p for p in failing if p not in unproved]
    ok = circuit.get("zs_ok")  # the diagnosis' own circuit result, never re-derived here
    names = outlet_names(points)
    lines = []
    if unproved:
        lines.append("Zs fails: no earth path proved at "
                     + ", ".join(names[str(p["id"])] for p in unproved)
                     + " (step 3 reads OL). Do not put the circuit into service.")
    if over:
        lines.append("Zs fails: over the limit at " + ", ".join(
            f"{names[str(p['id'])]} ({p['zs_ohm']:.2f} Ω, limit {p['zs_max_ohm']:.2f} Ω)"
            if p.get("zs_max_ohm") is not None else names[str(p["id"])] for p in over) + ".")
    if ok is False and not failing:
        lines.append("Zs fails at the circuit's worst point.")
    return {"ok": ok, "failing": failing, "unproved": unproved, "over": over, "lines": lines}


def tiles(diagnosis: dict, state: dict) -> list[dict]:
    """The summary tiles, Zs result first: [{"term", "value", "bad"}]."""
    c = diagnosis.get("circuit") or {}
    n = len(state["failing"])
    result = ("✗ fails at " + (f"{n} outlets" if n > 1 else "1 outlet") if n else
              "✗ fails" if state["ok"] is False else "✓ within limit" if state["ok"] else
              "not known yet")
    highest = "not proved" if state["unproved"] else ohm(c.get("zs_ohm"))
    r1r2 = "not proved" if state["unproved"] else ohm(c.get("r1r2_ohm"))
    return [
        {"term": "Zs result", "value": result, "bad": state["ok"] is False},
        {"term": "Highest Zs", "value": highest, "bad": bool(state["unproved"])},
        {"term": "Max Zs allowed", "value": ohm(c.get("zs_max_ohm")), "bad": False},
        {"term": "Highest R1+R2", "value": r1r2, "bad": bool(state["unproved"])},
    ]


def leading(diagnosis: dict | None) -> dict | None:
    """The current leading statement: verdict, Zs failures, summary and the finding it rests
    on. ``where`` lists the finding's outlets its message does not already name."""
    if not diagnosis:
        return None
    findings = order_findings(diagnosis.get("findings") or [])
    top = next((f for sev in ("fault", "warning") for f in findings
                if f.get("severity") == sev), None)
    verdict = diagnosis.get("verdict") or "incomplete"
    message = (top or {}).get("message") or ""
    state = zs_state(diagnosis)
    core_top = next((f for f in diagnosis.get("findings") or []
                     if isinstance(f, dict) and f.get("severity") == "fault"), None)
    summary = diagnosis.get("summary") or ""
    if top is not None and core_top is not None and top is not core_top and _fitted(core_top):
        summary = top.get("message") or summary  # the dangerous reading leads, in its words
    return {
        "verdict": verdict,
        "verdict_words": assessment_words(diagnosis),
        # satisfactory, yet a check stands: not shown as a plain pass
        "checks": with_checks(diagnosis),
        "zs_lines": state["lines"],
        "summary": summary,
        "finding": top,
        "severity_words": SEVERITY_WORDS.get(top["severity"], "") if top else "",
        "where": [o for o in (top or {}).get("outlets") or [] if f"({o})" not in message],
    }


def as_shown(diagnosis: dict) -> dict:
    """The diagnosis as the page shows it: findings in the order above and the summary of the
    finding that leads, so the ring picture marks the same fault the page names first."""
    lead = leading(diagnosis) or {}
    return {**diagnosis, "findings": order_findings(diagnosis.get("findings") or []),
            "summary": lead.get("summary") or diagnosis.get("summary")}
