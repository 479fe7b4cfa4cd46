"""Instant checks of each reading against what a healthy ring of the recorded cable would give.

Step 2 and step 3 readings at a point a fraction ``t`` of the way round a ring whose two
cross-connected conductors have end-to-end resistances ``a`` and ``b`` ohms (step 2: a = r1,
b = rn; step 3: a = r1, b = r2) are two paths in parallel, ``t·a + (1−t)·b`` and
``(1−t)·a + t·b``, so

    R(t) = [a·b + t(1−t)(a−b)²] / (a+b)

(series-parallel reduction of the cross-connected ring). It is lowest at the ends,
a·b/(a+b), and highest mid-ring, (a+b)/4. With a = b every point reads (a+b)/4: the familiar
"same reading at every socket". The band a ring point is checked against is that range widened
by the meter tolerance: BAND_SIGMAS × meter.sigma_ohm, never less than the common-practice
±0.05 Ω.

A spur point reads its parent's value plus its own spur cable (a dead end adds in series):
step 2 adds line + neutral of the spur, step 3 adds line + cpc. The same cable raises step 3
(1 + r2/r1) / (1 + rn/r1) times as much as step 2: 1.32 for 2.5/1.5 mm² twin and earth.
"""

from __future__ import annotations

import math

from ringmath.conductors import expected_end_to_end_ohm, resistance_mohm_per_m
from ringmath.findings import Finding
from ringmath.meter import sigma_ohm
from ringmath.record import Circuit, Outlet, RingTest, format_reading

#: Narrowest tolerance either side of an expected reading, ohms (common practice: step 2
#: readings "substantially the same", within 0.05 Ω).
MIN_TOLERANCE_OHM = 0.05
#: Width of the meter allowance in standard deviations (≈ 1 % two-sided for normal noise).
BAND_SIGMAS = 2.5
#: The spur-ratio check combines four readings and is our own addition to common practice, so
#: it waits for a clearer gap (3 sigma) before it warns.
SPUR_RATIO_SIGMAS = 3.0
#: r1 and rn should agree within this, ohms (common practice, same-size conductors).
ENDS_TOLERANCE_OHM = 0.05
#: Relative tolerance on r2/r1 against the BS EN 60228 ratio. Chosen: the table gives maximum
#: resistances and real conductors of different sizes sit a few percent below them by different
#: amounts (common practice, from memory), and each end-to-end reading carries the meter error;
#: 10 % covers both for a typical ring. For short rings the meter error grows as a fraction, so
#: the tolerance is widened to BAND_SIGMAS combined relative sigmas when that is larger.
CPC_RATIO_TOLERANCE = 0.10
#: Relative differences of r1 from the cable-length estimate that give an info / a warning.
CABLE_LENGTH_INFO = 0.25
CABLE_LENGTH_WARNING = 0.50
#: Longest spur cable we treat as plausible, metres. Chosen: an unfused spur off a domestic
#: ring is normally a few metres to one socket; 25 m is generous (a fused spur to an outbuilding
#: may be longer and will then be flagged for a look, not as a fault).
SPUR_MAX_LENGTH_M = 25.0

STEP_CONDUCTORS = {"r1": "line", "rn": "neutral", "r2": "cpc"}
STEP_NAMES = {"ln": "step 2 (L–N)", "le": "step 3 (L–CPC)"}


def finite(value: float | None) -> bool:
    """True for a reading that is a number (not None and not OL)."""
    return value is not None and math.isfinite(value)


def tolerance_ohm(reading_ohm: float) -> float:
    """Allowance in ohms either side of a reading of ``reading_ohm`` ohms:
    max(BAND_SIGMAS × meter.sigma_ohm(reading), MIN_TOLERANCE_OHM)."""
    return max(BAND_SIGMAS * sigma_ohm(reading_ohm), MIN_TOLERANCE_OHM)


def step_reading_ohm(a_ohm: float, b_ohm: float, t: float) -> float:
    """Healthy step 2/3 reading in ohms at fraction ``t`` (0..1) round a ring whose cross-connected
    conductors measure ``a_ohm`` and ``b_ohm`` end to end: [a·b + t(1−t)(a−b)²]/(a+b)."""
    if not 0.0 <= t <= 1.0:
        raise ValueError(f"t: {t!r} is not a ring fraction between 0 and 1")
    if a_ohm < 0 or b_ohm < 0:
        raise ValueError(f"a_ohm/b_ohm: negative resistance ({a_ohm!r}, {b_ohm!r})")
    total = a_ohm + b_ohm
    if total == 0:
        return 0.0
    return (a_ohm * b_ohm + t * (1 - t) * (a_ohm - b_ohm) ** 2) / total


def band_ohm(a_ohm: float, b_ohm: float) -> list[float]:
    """[low, high] in ohms for a ring point: from step_reading_ohm at the ends (t = 0) to
    mid-ring (t = 0.5), each widened by tolerance_ohm, rounded to 0.01 Ω (low never below 0)."""
    low = step_reading_ohm(a_ohm, b_ohm, 0.0)
    high = step_reading_ohm(a_ohm, b_ohm, 0.5)
    return [round(max(low - tolerance_ohm(low), 0.0), 2), round(high + tolerance_ohm(high), 2)]


def expected(test: RingTest) -> dict:
    """What a healthy ring point reads, from step 1 (ohms, rounded to 0.01 Ω).

    {"ln_ohm": (r1+rn)/4, "le_ohm": (r1+r2)/4, "ln_band_ohm": [lo, hi], "le_band_ohm": [lo, hi]};
    each entry is None until the two end-to-end readings it needs are in (and not OL).
    """
    e = test.end_to_end
    out = {}
    for step, other in (("ln", e.rn_ohm), ("le", e.r2_ohm)):
        if finite(e.r1_ohm) and finite(other):
            out[f"{step}_ohm"] = round((e.r1_ohm + other) / 4, 2)
            out[f"{step}_band_ohm"] = band_ohm(e.r1_ohm, other)
        else:
            out[f"{step}_ohm"] = None
            out[f"{step}_band_ohm"] = None
    return {k: out[k] for k in ("ln_ohm", "le_ohm", "ln_band_ohm", "le_band_ohm")}


# ------------------------------------------------------------------ step 1 (end to end)


def _per_m_ohm(csa_mm2: float, path: str) -> float:
    """Resistance per metre in ohms of ``csa_mm2`` copper; ValueError naming ``path``."""
    return resistance_mohm_per_m(csa_mm2, path) / 1000.0


def ring_cpc_ratio(test: RingTest) -> float:
    """Expected r2/r1 for the recorded ring cable (BS EN 60228 table ratio)."""
    c = test.circuit
    return (_per_m_ohm(c.cpc_csa_mm2, "circuit.cpc_csa_mm2")
            / _per_m_ohm(c.live_csa_mm2, "circuit.live_csa_mm2"))


def cpc_ratio_tolerance(r1_ohm: float, r2_ohm: float) -> float:
    """Relative tolerance on r2/r1: max(CPC_RATIO_TOLERANCE, BAND_SIGMAS × sqrt((σ1/r1)² +
    (σ2/r2)²)) with σ from meter.sigma_ohm (the relative error of a ratio of two readings)."""
    relative = math.hypot(sigma_ohm(r1_ohm) / r1_ohm, sigma_ohm(r2_ohm) / r2_ohm)
    return max(CPC_RATIO_TOLERANCE, BAND_SIGMAS * relative)


def _end_to_end_limits(test: RingTest) -> dict[str, tuple]:
    """(expected, low, high) in ohms (0.01 Ω) for r1, rn and r2, None where there is no
    reference; the readings list and the findings both judge against these figures."""
    e, c = test.end_to_end, test.circuit
    limits = {"r1": (None, None, None), "rn": (None, None, None), "r2": (None, None, None)}
    if c.cable_length_m is not None:
        length_ohm = expected_end_to_end_ohm(c.cable_length_m, c.live_csa_mm2)
        limits["r1"] = (length_ohm, length_ohm * (1 - CABLE_LENGTH_INFO),
                        length_ohm * (1 + CABLE_LENGTH_INFO))
    if finite(e.r1_ohm):
        limits["rn"] = (e.r1_ohm, e.r1_ohm - ENDS_TOLERANCE_OHM, e.r1_ohm + ENDS_TOLERANCE_OHM)
        if e.r1_ohm > 0 and finite(e.r2_ohm) and e.r2_ohm > 0:
            r2_ohm = e.r1_ohm * ring_cpc_ratio(test)
            tol = cpc_ratio_tolerance(e.r1_ohm, e.r2_ohm)
            limits["r2"] = (r2_ohm, r2_ohm * (1 - tol), r2_ohm * (1 + tol))
    return {step: tuple(None if x is None else round(x, 2) for x in values)
            for step, values in limits.items()}


def end_to_end_findings(test: RingTest) -> list[Finding]:
    """Findings from step 1: an OL conductor (fault), r1 against rn ("ends_mismatch"), r2/r1
    against the cable's ratio ("cpc_ratio") and r1 against the cable length ("cable_length")."""
    e, c = test.end_to_end, test.circuit
    findings = [_open_end_to_end(step, conductor)
                for step, conductor in STEP_CONDUCTORS.items()
                if _reading(test, None, step) == math.inf]
    findings += [_zero_end_to_end(step) for step in STEP_CONDUCTORS
                 if _reading(test, None, step) == 0.0]
    if finite(e.r1_ohm) and finite(e.rn_ohm):
        diff = round(e.rn_ohm - e.r1_ohm, 2)
        if abs(diff) > ENDS_TOLERANCE_OHM:
            findings.append(_ends_mismatch(e.r1_ohm, e.rn_ohm, diff))
    limits = _end_to_end_limits(test)
    if limits["r2"][0] is not None:
        findings.extend(_cpc_ratio_finding(test, *limits["r2"]))
    length_ohm, low_ohm, high_ohm = limits["r1"]
    if length_ohm is not None and finite(e.r1_ohm) and not low_ohm <= e.r1_ohm <= high_ohm:
        findings.append(_cable_length_finding(e.r1_ohm, length_ohm, c))
    return findings


def _zero_end_to_end(step: str) -> Finding:
    """A 0.00 Ω end-to-end reading: no ring cable reads that low (under a metre of cable)."""
    return Finding(
        code="end_to_end_zero", severity="warning", step=None,
        message=(f"{step} reads 0.00 Ω. Even a short ring reads a few hundredths of an ohm end "
                 "to end, so the two ends were probably touching each other or the leads were "
                 "measured instead of the conductor."),
        next_check=(f"Null the leads, separate the two ends at the board and measure {step} "
                    "again between the two ends of the same conductor."),
    )


def _open_end_to_end(step: str, conductor: str) -> Finding:
    return Finding(
        code="open_conductor", severity="fault", conductor=conductor, step=None,
        message=(f"The ring is broken in the {conductor} conductor: the end-to-end {step} reads "
                 f"OL, so the two {conductor} ends at the board are not joined through the ring. "
                 "Steps 2 and 3 cannot prove the ring until this is found."),
        next_check=(f"With the circuit isolated and proved dead, confirm both {conductor} ends at "
                    f"the board belong to this ring, then check the {conductor} terminations at "
                    "each outlet and junction box in turn (loose screw, conductor not in the "
                    "terminal, cut cable) and repeat step 1."),
    )


def _ends_mismatch(r1_ohm: float, rn_ohm: float, diff_ohm: float) -> Finding:
    higher, lower = ("neutral", "line") if diff_ohm > 0 else ("line", "neutral")
    return Finding(
        code="ends_mismatch", severity="warning", conductor=higher, step=None,
        message=(f"The {higher} end-to-end reading is {abs(diff_ohm):.2f} Ω higher than the "
                 f"{lower} (r1 {r1_ohm:.2f} Ω, rn {rn_ohm:.2f} Ω). Line and neutral are the same "
                 "size and run together, so they should agree within 0.05 Ω. It suggests a "
                 f"loose or high-resistance joint in the {higher}, part of the ring in another "
                 "cable, or ends that are not the two ends of the same ring."),
        next_check=(f"Check and remake the {higher} terminations at each outlet and junction box, "
                    f"confirm the two {higher} ends at the board belong to this ring, then repeat "
                    "step 1."),
    )


def _cpc_ratio_finding(test: RingTest, r2_expected_ohm: float, low_ohm: float,
                       high_ohm: float) -> list[Finding]:
    e, c = test.end_to_end, test.circuit
    if low_ohm <= e.r2_ohm <= high_ohm:
        return []
    ratio, ring_ratio = e.r2_ohm / e.r1_ohm, ring_cpc_ratio(test)
    deviation = ratio / ring_ratio - 1
    head = (f"r2 is {e.r2_ohm:.2f} Ω, {abs(deviation):.0%} {'above' if deviation > 0 else 'below'}"
            f" the {r2_expected_ohm:.2f} Ω expected for a {c.cpc_csa_mm2:g} mm² cpc with "
            f"{c.live_csa_mm2:g} mm² live conductors (r2/r1 = {ratio:.2f}, expected "
            f"{ring_ratio:.3f}).")
    if deviation > 0:
        why = (" It suggests a cpc smaller than recorded, a poor cpc joint or part of the ring "
               "in other cable.")
        look = ("Check the cable markings for the cpc size, then the cpc terminations at each "
                "outlet and junction box.")
    else:
        why = (" It suggests a cpc larger than recorded, a parallel earth path through metal "
               "conduit, trunking or bonded back boxes, or an r1 reading that is high.")
        look = ("Check the recorded cable sizes and any metal containment; compare r1 with rn "
                "(a high r1 lowers the ratio).")
    return [Finding(code="cpc_ratio", severity="warning", conductor="cpc", step=None,
                    message=head + why, next_check=look)]


def _cable_length_finding(r1_ohm: float, expected_ohm: float, c: Circuit) -> Finding:
    deviation = r1_ohm / expected_ohm - 1
    if deviation > 0:
        extra = ("A large excess can also mean a high-resistance joint or a longer route than "
                 "thought.")
        look = "Check the length estimate; if it is sound, look for a poor line joint."
    else:
        extra = ("A large shortfall can also mean the ends do not belong to one ring (part of the "
                 "ring bypassed or interconnected).")
        look = "Check the length estimate; if it is sound, confirm both line ends are this ring's."
    return Finding(
        code="cable_length",
        severity="warning" if abs(deviation) > CABLE_LENGTH_WARNING else "info",
        conductor="line", step=None,
        message=(f"r1 is {r1_ohm:.2f} Ω; {c.cable_length_m:g} m of {c.live_csa_mm2:g} mm² cable "
                 f"would read about {expected_ohm:.2f} Ω at 20 °C ({deviation:+.0%}). Readings "
                 "differ from this when the length is a guess, when the cable is warm (about "
                 "+0.4 % per °C), because real cable is a few percent below the BS EN 60228 "
                 f"maximum, or when the leads were not nulled. {extra}"),
        next_check=look,
    )


# ------------------------------------------------------------------ steps 2 and 3 (outlets)


def _reading(test: RingTest, outlet: Outlet | None, step: str) -> float | None:
    """The recorded reading for ``step`` ("r1", "rn", "r2" with outlet None, "ln", "le")."""
    if outlet is None:
        return getattr(test.end_to_end, f"{step}_ohm")
    return outlet.ln_ohm if step == "ln" else outlet.le_ohm


def spur_cable_per_m_ohm(test: RingTest, outlet: Outlet) -> tuple[float, float]:
    """(live, cpc) resistance per metre in ohms of the cable feeding spur ``outlet`` (its
    spur_csa_mm2 / spur_cpc_csa_mm2, else the ring's sizes), from the BS EN 60228 table."""
    i = test.outlets.index(outlet)
    c = test.circuit
    live = outlet.spur_csa_mm2 if outlet.spur_csa_mm2 is not None else c.live_csa_mm2
    cpc = outlet.spur_cpc_csa_mm2 if outlet.spur_cpc_csa_mm2 is not None else c.cpc_csa_mm2
    return (_per_m_ohm(live, f"outlets[{i}].spur_csa_mm2"),
            _per_m_ohm(cpc, f"outlets[{i}].spur_cpc_csa_mm2"))


def le_per_ln_factor(test: RingTest, outlet: Outlet) -> float:
    """How much more a spur's cable raises step 3 than step 2: (r_live + r_cpc) / (2 r_live),
    i.e. (1 + r2/r1) / (1 + rn/r1) with the neutral the size of the line (1.32 for 2.5/1.5)."""
    live, cpc = spur_cable_per_m_ohm(test, outlet)
    return (live + cpc) / (2 * live)


def spur_excess_limit_ohm(test: RingTest, outlet: Outlet, step: str) -> float:
    """Largest plausible rise in ohms of spur ``outlet`` over its parent on ``step`` ("ln" or
    "le"): SPUR_MAX_LENGTH_M × (r_live + r_neutral or r_cpc per metre)."""
    live, cpc = spur_cable_per_m_ohm(test, outlet)
    return SPUR_MAX_LENGTH_M * (live + (live if step == "ln" else cpc))


def _limits(test: RingTest, outlet: Outlet, step: str, exp: dict) -> tuple:
    """(expected, low, high) in ohms, unrounded, for an outlet's ``step`` reading."""
    if outlet.on_ring:
        band = exp[f"{step}_band_ohm"]
        return (exp[f"{step}_ohm"], *band) if band else (None, None, None)
    parent = test.outlet(outlet.spur_from)
    excess = spur_excess_limit_ohm(test, outlet, step)
    ref = _reading(test, parent, step)
    if finite(ref):
        tol = tolerance_ohm(ref)
        return ref, ref - tol, ref + excess + tol
    if ref is not None:  # parent reads OL: nothing to judge against
        return None, None, None
    ref, low, high = _limits(test, parent, step, exp)
    return ref, low, None if high is None else high + excess


def _status(value: float | None, low: float | None, high: float | None) -> str:
    if value is None:
        return "pending"
    if math.isinf(value):
        return "open"
    if low is None or high is None:
        return "pending"
    if value < low:
        return "low"
    return "high" if value > high else "ok"


def _check(outlet_id: str | None, step: str, value: float | None, limits: tuple) -> dict:
    ref, low, high = (None if x is None else round(x, 2) for x in limits)
    status = _status(value, low, high)
    if step == "r1" and status == "pending" and finite(value):
        status = "ok"  # r1 has no reference without a cable length; it is simply taken
    return {
        "outlet": outlet_id, "step": step, "value": format_reading(value),
        "expected_ohm": ref, "low_ohm": low, "high_ohm": high,
        "deviation_ohm": round(value - ref, 2) if finite(value) and ref is not None else None,
        "status": status,
    }


def reading_checks(test: RingTest) -> list[dict]:
    """One dict per reading taken or due, in the order they are taken (step 1, then step 2 at
    every outlet, then step 3): {"outlet", "step", "value", "expected_ohm", "low_ohm",
    "high_ohm", "deviation_ohm", "status"}, ohms rounded to 0.01 Ω.

    status: "ok", "high", "low", "open" (OL), or "pending" (not taken, or the readings it is
    judged against are not in yet). A ring point is judged against the ``expected`` band; a
    spur against its parent's reading (expected_ohm; deviation_ohm is then the spur's rise),
    from the parent's reading less tolerance to the parent's plus spur_excess_limit_ohm.
    rn is judged against r1 ± 0.05 Ω; r2 against r1 × the cable ratio (cpc_ratio_tolerance);
    r1 against the cable length when one is recorded (± 25 %).
    """
    e2e = _end_to_end_limits(test)
    checks = [_check(None, step, _reading(test, None, step), e2e[step])
              for step in STEP_CONDUCTORS]
    exp = expected(test)
    for step in ("ln", "le"):
        checks.extend(_check(o.id, step, _reading(test, o, step), _limits(test, o, step, exp))
                      for o in test.outlets)
    return checks


# ------------------------------------------------------------------ spur findings


def _spur_excesses(test: RingTest, outlet: Outlet) -> dict[str, tuple[float, float, float]]:
    """step -> (spur reading, parent reading, rise) in ohms where both readings are numbers."""
    parent = test.outlet(outlet.spur_from)
    out = {}
    for step in ("ln", "le"):
        value, ref = _reading(test, outlet, step), _reading(test, parent, step)
        if finite(value) and finite(ref):
            out[step] = (value, ref, value - ref)
    return out


def spur_findings(test: RingTest) -> list[Finding]:
    """Findings on recorded spurs, each against the point that feeds it.

    "spur_below_parent": a spur reads lower than its parent by more than tolerance_ohm (a dead
    end cannot lower the reading). "spur_excess_high": its rise is more than
    spur_excess_limit_ohm + tolerance (the "low" and "high" of reading_checks). "spur_excess":
    the step 3 rise disagrees with le_per_ln_factor × the step 2 rise by more than
    max(SPUR_RATIO_SIGMAS × sigma of the difference, MIN_TOLERANCE_OHM): extra resistance in the
    spur's cpc (rise too big) or neutral (too small).
    """
    findings = []
    exp = expected(test)
    for outlet in test.outlets:
        if outlet.on_ring:
            continue
        rises = _spur_excesses(test, outlet)
        status = {s: _check(outlet.id, s, rises[s][0], _limits(test, outlet, s, exp))["status"]
                  for s in rises}
        low = [s for s in rises if status[s] == "low"]
        high = [s for s in rises if status[s] == "high"]
        if low:
            findings.append(_spur_below(outlet, low, rises))
        if high:
            findings.append(_spur_high(test, outlet, high, rises))
        if len(rises) == 2 and not low and not high:
            findings.extend(_spur_ratio(test, outlet, rises))
    return findings


def _steps_text(steps: list[str]) -> str:
    return " and ".join(STEP_NAMES[s] for s in steps)


def _spur_below(outlet: Outlet, steps: list[str], rises: dict) -> Finding:
    drops = ", ".join(f"{-rises[s][2]:.2f} Ω on {STEP_NAMES[s]}" for s in steps)
    return Finding(
        code="spur_below_parent", severity="warning", outlets=(outlet.id, outlet.spur_from),
        step=steps[0] if len(steps) == 1 else None,
        message=(f"{_name(outlet)} is recorded as a spur from {outlet.spur_from} but reads lower "
                 f"than it ({drops}). A spur adds its own cable to its parent's reading, so it "
                 "cannot read lower: the point is probably on the ring itself or fed from "
                 "another point."),
        next_check=(f"Check where the cable to {_name(outlet)} comes from (open the back box) and "
                    "correct the record."),
    )


def _spur_high(test: RingTest, outlet: Outlet, steps: list[str], rises: dict) -> Finding:
    rises_text = ", ".join(
        f"{rises[s][2]:.2f} Ω on {STEP_NAMES[s]} (at most "
        f"{spur_excess_limit_ohm(test, outlet, s):.2f} Ω expected)" for s in steps)
    return Finding(
        code="spur_excess_high", severity="warning", outlets=(outlet.id, outlet.spur_from),
        step=steps[0] if len(steps) == 1 else None,
        message=(f"{_name(outlet)} reads far above {outlet.spur_from}, which feeds it: "
                 f"{rises_text}, more than {SPUR_MAX_LENGTH_M:g} m of spur cable would add. "
                 "It suggests a poor joint in the spur, or that it is fed from somewhere else."),
        next_check=(f"Check the terminations of the spur cable at both ends and confirm "
                    f"{_name(outlet)} is fed from {outlet.spur_from}."),
    )


def _spur_ratio(test: RingTest, outlet: Outlet, rises: dict) -> list[Finding]:
    (ln, ln_ref, ln_rise), (le, le_ref, le_rise) = rises["ln"], rises["le"]
    factor = le_per_ln_factor(test, outlet)
    expected_le_rise = factor * ln_rise
    sigma = math.hypot(factor * math.hypot(sigma_ohm(ln), sigma_ohm(ln_ref)),
                       math.hypot(sigma_ohm(le), sigma_ohm(le_ref)))
    gap = le_rise - expected_le_rise
    if abs(gap) <= max(SPUR_RATIO_SIGMAS * sigma, MIN_TOLERANCE_OHM):
        return []
    if gap > 0:
        conductor, where = "cpc", "the cpc (loose earth terminal, or a smaller cpc than recorded)"
    else:
        conductor, where = "neutral", ("the neutral (loose neutral terminal): step 2 includes the "
                                       "neutral and step 3 does not")
    return [Finding(
        code="spur_excess", severity="warning", outlets=(outlet.id, outlet.spur_from),
        conductor=conductor, step="le" if gap > 0 else "ln",
        message=(f"The spur to {_name(outlet)} raises step 3 by {le_rise:.2f} Ω and step 2 by "
                 f"{ln_rise:.2f} Ω. The same cable would raise step 3 about {factor:.2f} times as "
                 f"much as step 2 ({expected_le_rise:.2f} Ω). It suggests extra resistance in "
                 f"{where}."),
        next_check=(f"Check the {conductor} terminations of the spur cable at {_name(outlet)} "
                    f"and at {outlet.spur_from}."),
    )]


def _name(outlet: Outlet) -> str:
    return f"{outlet.label} ({outlet.id})" if outlet.label else outlet.id
