"""How the diagnosis benchmark scores one result against the simulator's truth.

Finding-code conventions the benchmark relies on (the diagnosis names its codes to match):

* wiring faults: ``ringmath.simulate.FAULT_CODES``;
* set-up or instrument findings ("check your set-up"): any code starting with ``setup_``, and
  for the kind of error (used for calibration) the rest of the code names it:
  ``setup_lead_offset`` (leads not nulled or drifting), ``setup_socket_contacts`` (outlets
  reading high from the front), ``setup_instrument`` (a scale error, an unsuitable meter,
  readings that cannot all be true), ``setup_gain`` (steps 2–3 scaled against step 1, e.g. a
  warmer cable), ``setup_scatter`` (reading scatter too large to judge),
  ``setup_cross_join_open`` (one of a step's cross-connections not made); any other
  ``setup_...`` code is a general "check the set-up" and is right for any set-up error.
  The names in ``SETUP_ALIASES`` are set-up findings too (the diagnosis' own codes:
  ``lead_offset``, ``step_offset``, ``end_to_end_zero`` -> leads; ``socket_contact`` ->
  contacts; ``instrument_inconsistent`` -> instrument; ``step_gain`` -> gain;
  ``readings_inconsistent`` -> any set-up error);
* metallic cpc / parallel earth path: ``METALLIC_CODES``.

An outlet's OL readings that two explanations predict exactly alike (``diagnose.TIE_CODES``:
swapped terminals, or one conductor not connected there) are reported as two findings on that
outlet, each saying the readings cannot tell them apart and giving the one check that does.
The readings cannot separate them, so a true fault named by the tied partner of a leading
finding counts as the right class; ``tie_only`` marks the cases right only that way (the
benchmark prints how many).

In the calibration tables such a pair is one claim: its stated confidence is the pair's sum
(the probability the diagnosis gives "one of these two") and it is true when either is; the
split between the two is by the explanations' priors, not by the readings.

A set-up error is scored "named as such" when the verdict is ``"retest"`` or the leading
finding (the first in the result's list) is a set-up finding.
"""

from __future__ import annotations

import math

from ringmath.diagnose import TIE_CODES
from ringmath.simulate import FAULT_CODES

FAULTS = set(FAULT_CODES)
SETUP_PREFIX = "setup_"
SETUP_ALIASES = {"lead_offset": "lead", "step_offset": "lead", "end_to_end_zero": "lead",
                 "contact_resistance": "contacts", "socket_contact": "contacts",
                 "socket_contacts": "contacts", "instrument_scale": "instrument",
                 "instrument_inconsistent": "instrument", "step_gain": "gain",
                 "readings_inconsistent": "any"}
#: code fragment -> set-up error kind (for calibration: is the named kind really there?)
SETUP_KINDS = (("lead", "lead"), ("contact", "contacts"), ("socket", "contacts"),
               ("front", "contacts"), ("instrument", "instrument"), ("meter", "instrument"),
               ("scale", "instrument"), ("gain", "gain"), ("temperature", "gain"),
               ("warm", "gain"), ("scatter", "scatter"), ("noise", "scatter"),
               ("join", "join"))
METALLIC_CODES = {"parallel_earth_path", "metallic_cpc", "cpc_metallic"}
#: A lead offset up to this (ohms, either sign) leaves a sound ring satisfactory: it is part
#: of the "typical site". Beyond it the readings must be re-taken (named as a set-up error).
LEAD_TOLERATED_OHM = 0.05
#: A fault is "above the stated limit" when its noise-free signal (Truth.signal_ohm, the
#: largest departure of a noise-free reading from every sound ring) reaches both this (0.05 Ω:
#: the hand rule's own tolerance) and the least departure the result itself says a fault
#: must cause to be seen (``result["detection"]["reading_ohm"]``, from the scatter the
#: diagnosis estimated on those readings): the benchmark checks the app's statement of what
#: it cannot see. "Above the fixed limit" (the earlier measure, printed beside it): this and
#: three times the simulated contact scatter.
VISIBLE_OHM = 0.05
BINS = ((0.0, 0.5), (0.5, 0.7), (0.7, 0.8), (0.8, 0.9), (0.9, 0.95), (0.95, 1.0001))


def setup_kind(code: str) -> str | None:
    """The set-up error kind a finding code names ("any" for a general one), else None."""
    if code in SETUP_ALIASES:
        return SETUP_ALIASES[code]
    if not code.startswith(SETUP_PREFIX):
        return None
    return next((kind for frag, kind in SETUP_KINDS if frag in code), "any")


def must_report(truth) -> set[str]:
    """Set-up errors in the truth that a tester has to correct before the readings count."""
    n = truth.nuisance
    if n is None:
        return set()
    out = set()
    if abs(n.lead_ohm) > LEAD_TOLERATED_OHM + 1e-9:
        out.add("lead")
    if truth.worn_ohm and not n.remeasure:
        out.add("contacts")
    if abs(n.meter_scale - 1.0) > 0.1:
        out.add("instrument")
    if n.join_open:
        out.add("join")
    return out


def present(truth) -> set[str]:
    """Every set-up error kind present at all (a finding naming one of these is right)."""
    n = truth.nuisance
    if n is None:
        return set()
    out = must_report(truth)
    if truth.worn_ohm:
        out.add("contacts")
    if abs(n.lead_ohm) >= 0.02:
        out.add("lead")
    if n.warm >= 0.01 or abs(n.meter_scale - 1.0) > 0.1:
        out.add("gain")
    if n.contact_sd_ohm >= 0.02:
        out.add("scatter")
    return out


def matches(f: dict, fault) -> bool:
    """The finding names this true fault (and its conductor or step where it has one)."""
    if f["code"] != fault.code:
        return False
    if fault.code in ("open_conductor", "high_resistance_joint"):
        return f["conductor"] == fault.conductor
    if fault.code == "wrong_cross_connection":
        return f["step"] == fault.step
    return True


def located(f: dict, fault) -> bool:
    """The finding's outlets are the true fault's (one outlet either way for a bridge)."""
    got, want = set(f["outlets"]), set(fault.outlets)
    if not got:
        return False
    if fault.code == "interconnection":
        return len(got ^ want) <= 1
    if fault.code in ("open_conductor", "high_resistance_joint"):
        return bool(got & want) and len(got) <= 2
    return got == want


def _tied(wiring: list[dict], top: list[dict]) -> list[dict]:
    """The findings that are the declared exact tie of one in ``top`` (same single outlet)."""
    return [f for f in wiring if f not in top and f["code"] in TIE_CODES
            and len(f["outlets"]) == 1
            and any(t["code"] in TIE_CODES and t["code"] != f["code"]
                    and t["outlets"] == f["outlets"] for t in top)]


def _wiring(result: dict) -> list[dict]:
    return [f for f in result["findings"] if f["code"] in FAULTS
            and f["severity"] in ("fault", "warning")]


def leading_claim(result: dict) -> dict | None:
    """The first finding that states a confidence (``look_alike`` aside)."""
    return next((f for f in result["findings"] if f["confidence"] is not None
                 and f["code"] != "look_alike"), None)


def tied_partner(result: dict, f: dict) -> dict | None:
    """The declared exact tie of finding ``f`` (the other explanation of one outlet's OL
    readings, with a confidence), if the result states one."""
    if f["code"] not in TIE_CODES or len(f["outlets"]) != 1:
        return None
    return next((g for g in result["findings"] if g["code"] in TIE_CODES
                 and g["code"] != f["code"] and g["outlets"] == f["outlets"]
                 and g["confidence"] is not None), None)


def leading_claim_scored(result: dict, truth) -> tuple[float, bool | None] | None:
    """The leading claim's stated confidence and whether it is true. A declared exact tie is
    one claim ("one of these two, the readings cannot tell which"): its confidence is the sum
    of the pair's, and it is true when either is."""
    claim = leading_claim(result)
    if claim is None:
        return None
    pair = [claim] + [g for g in [tied_partner(result, claim)] if g is not None]
    said = [claim_correct(f, truth) for f in pair]
    ok = None if all(o is None for o in said) else any(bool(o) for o in said)
    return min(sum(f["confidence"] for f in pair), 1.0), ok


def claim_correct(f: dict, truth) -> bool | None:
    """Whether a stated finding is true of the simulated test (None: not scoreable)."""
    if f["code"] in FAULTS:
        return any(matches(f, fault) for fault in truth.faults)
    kind = setup_kind(f["code"])
    if kind is not None:
        have = present(truth)
        return bool(have) if kind == "any" else kind in have
    if f["code"] in METALLIC_CODES:
        return truth.conduit is not None
    return None


def sound_claim(result: dict) -> float | None:
    """The stated confidence of "no wiring fault" when that is the leading explanation."""
    hyp = result.get("hypotheses") or []
    if hyp and hyp[0]["code"] == "healthy" and not hyp[0].get("local"):
        return hyp[0]["confidence"]
    return None


def stated_limit(result: dict) -> float:
    """The least reading departure (ohms) the result says a fault must cause to be seen; 0
    where it states none (step 1 not usable: an open reading, which is always seen)."""
    return float((result.get("detection") or {}).get("reading_ohm") or 0.0)


def score(result: dict, truth, record: dict, hand: bool) -> dict:
    """One case's scores (see the benchmark's docstring for each)."""
    wiring = _wiring(result)
    best = wiring[0]["confidence"] if wiring and wiring[0]["confidence"] is not None else None
    top = [f for f in wiring if best is not None and f["confidence"] is not None
           and best - f["confidence"] < 0.05] or wiring[:1]
    first = result["findings"][0] if result["findings"] else None
    setup = must_report(truth)
    named = result["verdict"] == "retest" or (first is not None and (
        setup_kind(first["code"]) is not None))
    faults = truth.faults
    strict = [any(matches(f, fault) for f in top) for fault in faults]
    tied = _tied(wiring, top)
    hit = [h or any(matches(f, fault) for f in tied) for h, fault in zip(strict, faults,
                                                                         strict=True)]
    placed = []
    for fault in faults:
        match = next((f for f in wiring if matches(f, fault)), None)
        if fault.locatable:
            placed.append(bool(match) and located(match, fault))
    calls = [f for f in result["findings"] if f["code"] in FAULTS and f["severity"] == "fault"]
    sd = truth.nuisance.contact_sd_ohm if truth.nuisance else 0.0
    claim = leading_claim(result)
    return {
        "code": truth.code, "faulty": bool(faults), "setup": bool(setup),
        "verdict": result["verdict"],
        "flagged": result["verdict"] != "satisfactory",
        "wiring_call": bool(calls),
        "wiring_call_80": any((f["confidence"] or 0) >= 0.8 for f in calls),
        "named": named,
        "metallic": truth.conduit is not None,
        "worn": bool(truth.worn_ohm),
        "worn_placed": _worn_placed(result, truth),
        "metallic_named": any(f["code"] in METALLIC_CODES for f in result["findings"]),
        "right": bool(faults) and (any(hit) or (bool(setup) and named)),
        "right_all": bool(faults) and all(hit),
        "tie_only": bool(faults) and any(hit) and not any(strict),
        "locatable": bool(placed), "located": bool(placed) and all(placed),
        "visible": bool(faults) and truth.signal_ohm >= max(VISIBLE_OHM, stated_limit(result)),
        "visible_fixed": bool(faults) and truth.signal_ohm >= max(VISIBLE_OHM, 3 * sd),
        "signal_ohm": truth.signal_ohm, "stated_limit_ohm": stated_limit(result),
        "hand": hand,
        "claim": leading_claim_scored(result, truth),
        "claim_basis": None if claim is None else (claim.get("basis") or "ring"),
        "sound": sound_claim(result) if claim is None else None,
    }


def _worn_placed(result: dict, truth) -> bool:
    """A socket-contacts finding names the worn outlets (one either way)."""
    f = next((f for f in result["findings"] if setup_kind(f["code"]) == "contacts"), None)
    got, want = set(f["outlets"]) if f else set(), set(truth.worn_ohm)
    return bool(got) and len(got ^ want) <= 1


def calibration(claims: list[tuple[float, bool]]) -> tuple[list[tuple], float | None]:
    """Per confidence bin: (lo, hi, count, mean stated, observed accuracy); and the Brier
    score mean((stated − outcome)²) (Brier 1950, Monthly Weather Review 78:1–3)."""
    rows = []
    for lo, hi in BINS:
        inside = [(c, ok) for c, ok in claims if lo <= c < hi]
        if inside:
            rows.append((lo, hi, len(inside), sum(c for c, _ in inside) / len(inside),
                         sum(ok for _, ok in inside) / len(inside)))
        else:
            rows.append((lo, hi, 0, math.nan, math.nan))
    brier = sum((c - ok) ** 2 for c, ok in claims) / len(claims) if claims else None
    return rows, brier


def hand_rule(record: dict) -> bool:
    """True when the common hand rule flags the ring: any OL, r1 and rn more than 0.05 Ω
    apart, or a ring outlet more than 0.05 Ω from (r1+rn)/4 or (r1+r2)/4 (common practice).
    A re-measure at the terminals replaces the front reading."""
    e = record["end_to_end"]
    vals = [e["r1"], e["rn"], e["r2"]]
    if any(v == "OL" for v in vals):
        return True
    r1, rn, r2 = vals
    if abs(r1 - rn) > 0.05:
        return True
    ln_exp, le_exp = (r1 + rn) / 4, (r1 + r2) / 4
    for o in record["outlets"]:
        ln = o["ln_terminals"] if o.get("ln_terminals") is not None else o["ln"]
        le = o["le_terminals"] if o.get("le_terminals") is not None else o["le"]
        if ln == "OL" or le == "OL":
            return True
        if o["spur_from"] is None and (abs(ln - ln_exp) > 0.05 or abs(le - le_exp) > 0.05):
            return True
    return False
