"""diagnose(record): verdict, ranked findings, Zs at every point and an inferred ring order.

Flow: parse the record -> checks of each reading as it stands (``checks``), topology rules
(``rules``), Zs at every point (``zs``) -> when step 1 is complete and outlet readings exist,
fit the whole-ring hypotheses (``fitting``), add outlet-level faults on top of the best few
(``local``), rank the combinations by score and turn the winner into findings in plain words
(``messages``) with the outlets located from the position posterior.

The result is plain JSON-able values; its shape is listed in DEVELOPERS.md.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ringmath import calibration, checks, explain, messages, ranking, rules, setup_messages, zs
from ringmath import verdict as verdicts
from ringmath.findings import Finding
from ringmath.fitting import SETUP_FITS, Fit, position_posterior, wiring_fault
from ringmath.likelihood import Prepared, prepare, t_grid
from ringmath.record import RingTest, format_reading, parse_record
from ringmath.verdict import LEADING_CODES, complete

#: A fault position whose spread (ring fractions, over the uniform search grid) exceeds this
#: is "not located". A flat profile over half the ring gives 0.144. Calibrated on simulated
#: rings (bench/diagnosis.py): bridges and breaks are placed right well past 0.1, while a
#: joint's place is rarely right above 0.06 (step 2 shifts evenly and step 3 only shows a gap).
LOCATE_SD = {"interconnection": 0.12, "open_conductor": 0.11, "high_resistance_joint": 0.06}
#: Whole-ring explanations whose readings do not depend on which end an outlet is nearer.
POSITIONLESS = ("healthy", "wrong_cross_connection", *SETUP_FITS)
#: Two combined explanations closer than this in score (nats) "fit about equally".
LOOK_ALIKE_NATS = 2.0
#: Highest confidence ever stated, and the highest with a whole step missing (see _cap).
CONFIDENCE_CAP = calibration.CAP
MISSING_STEP_CAP = 0.85
#: A best explanation needing this many independent faults is doubted as a whole.
MANY_FAULTS = 3
#: The two explanations of an outlet's OL readings that the readings cannot tell apart.
TIE_CODES = ("reversed_polarity", "open_conductor")


def _posterior(prep: Prepared, fit: Fit) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each ring outlet's posterior over the grid, its most probable place (ring fraction,
    the centre of the highest mode) and the posterior spread.

    The most probable place rather than the mean: on a broken or bridged ring a reading often
    fits two places (one each side of the fault), and the mean would fall between them.
    """
    post = position_posterior(prep, fit)
    t = t_grid(post.shape[1])
    mean = post @ t
    sd = np.sqrt(np.maximum(post @ (t * t) - mean**2, 0.0))
    return post, np.array([_mode_centre(row, t) for row in post]), sd


def _mode_centre(row: np.ndarray, t: np.ndarray) -> float:
    """Centre of the posterior's highest mode: the mean over the run of grid points around
    the peak that stay above half the peak (a flat stretch gives its middle, not a random
    point of it)."""
    peak = int(np.argmax(row))
    lo = hi = peak
    while lo > 0 and row[lo - 1] >= 0.5 * row[peak]:
        lo -= 1
    while hi < len(row) - 1 and row[hi + 1] >= 0.5 * row[peak]:
        hi += 1
    w = row[lo:hi + 1]
    return float(np.sum(w * t[lo:hi + 1]) / np.sum(w))


def _neighbours(prep: Prepared, post: np.ndarray, x: float) -> list[str]:
    """The two ring outlets nearest position x (smallest expected distance).

    Beside a break the readings fall towards the break from both sides, so the outlets
    nearest it are well determined even where the side each one is on is not.
    """
    t = t_grid(post.shape[1])
    distance = post @ np.abs(t - x)
    return [prep.ring_ids[i] for i in np.argsort(distance)[:2]]


def _named(ids, names: dict) -> list[str]:
    return [names.get(i, i) for i in ids]


def _fit_finding(prep: Prepared, fit: Fit, confidence: float, post: np.ndarray,
                 place: np.ndarray, names: dict, some_fault: bool) -> Finding:
    """The whole-ring fault of ``fit`` as a Finding, located where the readings allow; below
    ``explain.RING_FAULT_P`` a warning that says a sound ring fits nearly as well, unless
    ``some_fault`` (``explain.doubted``)."""
    return explain.doubted(_fit_words(prep, fit, confidence, post, place, names), confidence,
                           explain.RING_FAULT_P, some_fault)


def _fit_words(prep: Prepared, fit: Fit, confidence: float, post: np.ndarray,
               place: np.ndarray, names: dict) -> Finding:
    """``_fit_finding`` before its severity is graded by confidence."""
    located = fit.theta_sd is not None and fit.theta_sd <= LOCATE_SD.get(fit.code, 0.0)
    if fit.code == "interconnection":
        a, b = fit.theta["a"], fit.theta["b"]
        # inside by posterior mass (a boundary outlet's best place can sit just outside)
        t = t_grid(post.shape[1])
        inside_p = post[:, (t > a) & (t < b)].sum(axis=1)
        inside = [prep.ring_ids[i] for i in range(len(place)) if inside_p[i] > 0.5]
        msg, nxt = messages.interconnection(_named(inside, names), located)
        return Finding("interconnection", "fault", msg, nxt, tuple(inside if located else ()),
                       confidence=confidence, section=(a, b), basis="ring")
    if fit.code in SETUP_FITS:
        msg, nxt = setup_messages.cross_join_open(fit.step, *fit.ring_ohm,
                                                  prep.step_median_ohm(fit.step))
        return Finding(fit.code, "warning", msg, nxt, step=fit.step, confidence=confidence,
                       basis="setup")
    if fit.code == "wrong_cross_connection":
        msg, nxt = messages.wrong_cross(fit.step)
        return Finding("wrong_cross_connection", "fault", msg, nxt, step=fit.step,
                       confidence=confidence, basis="ring")
    x = fit.theta["x"]
    near = _neighbours(prep, post, x) if located else []
    if fit.code == "open_conductor":
        msg, nxt = messages.open_ring(fit.conductor, _named(near, names), located)
        severity = "fault"
    else:
        msg, nxt = messages.joint(fit.conductor, fit.theta["r_ohm"], _named(near, names),
                                  located)
        severity = explain.joint_severity(fit.theta["r_ohm"])
    return Finding(fit.code, severity, msg, nxt, tuple(near), conductor=fit.conductor,
                   confidence=confidence, position=x if located else None,
                   basis="ring")


def _missing_step(prep: Prepared) -> bool:
    return bool(np.all(np.isnan(prep.ln_ohm)) or np.all(np.isnan(prep.le_ohm)))


def _cap(p: float, prep: Prepared) -> float:
    """A posterior as a confidence: never above CONFIDENCE_CAP (the model is never the whole
    truth: readings carry meter noise, and the simulator the model was checked on is not the
    site), and lower with a step missing (MISSING_STEP_CAP: faults that differ only in the
    missing step cannot be told apart)."""
    return float(min(p, MISSING_STEP_CAP if _missing_step(prep) else CONFIDENCE_CAP))


def _stated(findings: list[Finding], hypotheses: list[dict], prep: Prepared) -> list[Finding]:
    """Confidences as stated: each through the benchmark's monotone calibration
    (``calibration.calibrated``), capped again. Two tied explanations of one outlet's OL
    readings share one probability: their sum is calibrated and split as before. Decisions
    made on the posterior (severity, worn-contacts doubt, tie shares) are not moved by it.
    ``hypotheses`` are restated in place."""
    top = MISSING_STEP_CAP if _missing_step(prep) else CONFIDENCE_CAP

    def stated(p: float, basis: str | None) -> float:
        return min(calibration.calibrated(min(p, 1.0), basis or "ring"), top)

    for h in hypotheses:
        h["confidence"] = round(stated(h["confidence"], h["basis"]), 3)
    ties: dict[tuple[str, ...], list[int]] = {}
    for i, f in enumerate(findings):
        if f.confidence is not None and f.code in TIE_CODES and len(f.outlets) == 1:
            ties.setdefault(f.outlets, []).append(i)
    scale = {}
    for members in ties.values():
        total = sum(findings[i].confidence or 0.0 for i in members)
        if len(members) > 1 and total > 0:
            basis = findings[members[0]].basis
            scale.update({i: stated(total, basis) / total for i in members})
    return [f if f.confidence is None else replace(
        f, confidence=f.confidence * scale[i] if i in scale else stated(f.confidence, f.basis))
        for i, f in enumerate(findings)]


def _fitted(test: RingTest, prep: Prepared) -> dict:
    """Fit, rank and locate. Returns findings, hypotheses, positions and ring order."""

    def cap(p: float) -> float:
        return _cap(p, prep)

    combos, weights = ranking.rank(prep)
    if not combos:
        return {"findings": [], "hypotheses": [], "positions": {}, "contact_sd": None}
    names = {o.id: (f"{o.label} ({o.id})" if o.label and o.label != o.id else o.id)
             for o in test.outlets}
    best = combos[0]
    best_fit, used = best.fit, best.prep
    post, place, sd = _posterior(used, best_fit)
    findings: list[Finding] = []
    # every fitted finding below is part of the best combination: where the readings put some
    # wiring fault beyond RING_FAULT_P, they stay faults even when each alone is doubtful
    some_fault = ranking.sound_weight(combos, weights) <= 1.0 - explain.RING_FAULT_P
    if best_fit.code != "healthy":
        conf = cap(ranking.fit_weight(combos, weights, best_fit))
        findings.append(_fit_finding(used, best_fit, conf, post, place, names, some_fault))
    front = {o.id for o in test.outlets if getattr(o, "taken_at", None) == "front"}
    local = []
    for lf in best.local:
        p = ranking.local_weight(combos, weights, lf)
        # tied explanations share one probability: the pair is capped, each keeps its part
        local.append((lf, min(cap(p), cap(1.0) * lf.tie_share) if lf.tie else cap(p)))
    findings.extend(explain.local_findings(used, local, names, front, some_fault))
    p_setup = ranking.setup_weight(combos, weights)
    if best.setup is not None:
        # "some set-up error" times this kind's share among the kinds: a finding names one kind
        found = explain.setup_finding(best.setup, prep, cap(p_setup * best.setup.p_kind))
        if found is not None:
            findings.insert(0, found)
    independent = wiring_fault(best_fit.code) + sum(
        lf.code != "setup_socket_contacts" for lf in best.local)
    if independent >= MANY_FAULTS:
        codes = ([best_fit.code] if wiring_fault(best_fit.code) else []) + [
            lf.code for lf in best.local if lf.code != "setup_socket_contacts"]
        msg, nxt = setup_messages.many_faults(independent, codes)
        findings = [Finding("setup_readings_inconsistent", "warning", msg, nxt,
                            confidence=cap(float(weights[0])), basis="setup")] + [
            replace(f, severity="warning" if f.severity == "fault" else f.severity,
                    confidence=None if f.confidence is None else f.confidence / 2)
            for f in findings]
    hypotheses = []
    for w, c in zip(weights, combos, strict=True):
        hypotheses.append({"code": c.fit.code, "conductor": c.fit.conductor, "step": c.fit.step,
                           "outlets": [lf.outlet for lf in c.local],
                           "local": [lf.code for lf in c.local],
                           "setup": None if c.setup is None else c.setup.kind,
                           "confidence": round(cap(float(w)), 3),
                           "score": round(float(c.score), 2), "basis": _basis(c)})
    if len(combos) > 1 and combos[0].score - combos[1].score < LOOK_ALIKE_NATS:
        first = _lead_code(combos[0])
        second = _lead_code(combos[1])
        setups = sum(code.startswith("setup_") for code in (first, second))
        if first != second and "healthy" not in (first, second) and setups < 2:
            findings.append(Finding("look_alike", "info", messages.look_alike(first, second),
                                    confidence=cap(float(weights[1])),
                                    basis=_basis(combos[1])))
    # A sound ring (or one with crossed ends) reads the same whichever end an outlet is near:
    # its readings give no order to draw. A fault breaks that symmetry and places outlets.
    placed = best_fit.code not in POSITIONLESS
    positions = {oid: (float(place[i]) if placed else None, float(sd[i]))
                 for i, oid in enumerate(prep.ring_ids)}
    return {"findings": findings, "hypotheses": hypotheses, "positions": positions,
            "contact_sd": best_fit.contact_sd, "healthy": best_fit.code == "healthy"
            and not best.local, "prep": used}


def _basis(combo) -> str:
    """What a combination's confidence rests on (``findings.BASES``): its whole-ring fault,
    else its outlet faults, else its set-up error (or a slip of the test read as a whole-ring
    fit, ``SETUP_FITS``); a sound ring is a whole-ring claim."""
    if combo.fit.code in SETUP_FITS:
        return "setup"
    if combo.fit.code == "healthy" and combo.local:
        return "outlet"
    if combo.fit.code == "healthy" and combo.setup is not None:
        return "setup"
    return "ring"


def _lead_code(combo) -> str:
    """The code a combination is known by: its whole-ring fault, else its first outlet
    fault, else its set-up error; "healthy" for a sound ring as read."""
    if combo.fit.code == "healthy" and combo.local:
        return combo.local[0].code
    if combo.fit.code == "healthy" and combo.setup is not None:
        return explain.setup_code(combo.setup.kind)
    return combo.fit.code


def _ring_order(test: RingTest, positions: dict) -> list[str]:
    """Ring outlets by inferred position; in visiting order when the readings give none."""
    ring = [o.id for o in test.outlets if o.on_ring]
    if any(positions.get(oid, (None,))[0] is None for oid in ring):
        return ring
    return sorted(ring, key=lambda oid: positions[oid][0])


def diagnose(record, *, calibrate: bool = True) -> dict:
    """Diagnose one circuit record (dict in the ringtest/1 format, or a parsed RingTest).

    Returns the plain-values result documented in DEVELOPERS.md. Raises ValueError naming the
    field for a bad record. ``calibrate=False`` states the raw posterior (capped): only for
    fitting the calibration (bench/diag_calibrate.py).
    """
    test = record if isinstance(record, RingTest) else parse_record(record)
    findings: list[Finding] = []
    fit_part: dict = {"findings": [], "hypotheses": [], "positions": {}}
    prep = prepare(test)
    finite_e2e = int(np.count_nonzero(np.isfinite(prep.e2e_ohm)))
    has_steps = bool(np.any(~np.isnan(prep.ln_ohm)) or np.any(~np.isnan(prep.le_ohm)))
    if test.end_to_end.complete() and finite_e2e >= 2 and has_steps:
        fit_part = _fitted(test, prep)
    fitted_open = {f.conductor for f in fit_part["findings"] if f.code == "open_conductor"}
    e2e = [f for f in checks.end_to_end_findings(test)
           if not (f.code == "open_conductor" and f.conductor in fitted_open)]
    zs_values = zs.point_values(test)  # once per diagnosis: circuit, points and Zs findings
    findings = (fit_part["findings"] + e2e + checks.spur_findings(test)
                + rules.topology_findings(test) + zs.zs_findings(test, zs_values))
    order = {"fault": 0, "warning": 1, "info": 2}
    findings.sort(key=lambda f: (f.code not in LEADING_CODES, order[f.severity],
                                 -(f.confidence or 0.0)))
    seen = None if fit_part.get("contact_sd") is None else explain.limits(
        fit_part["prep"], fit_part["contact_sd"], test.circuit.live_csa_mm2)
    if seen is not None and fit_part.get("healthy") and complete(test) and not any(
            f.severity in ("fault", "warning") for f in findings):
        # the parallel-path finding, where r2 shows one, already says what it hides
        findings.append(explain.detection_limit(
            seen, fit_part["prep"].cpc_free
            and not any(f.code == "parallel_earth_path" for f in findings)))
    circuit, points = zs_values
    for p in points:
        pos = fit_part["positions"].get(p["id"])
        p["position"] = None if pos is None or pos[0] is None else round(pos[0], 3)
        p["position_sd"] = None if pos is None else round(pos[1], 3)
    if calibrate:
        findings = _stated(findings, fit_part["hypotheses"], prep)
    said, findings = verdicts.agree(test, findings)
    return {
        "verdict": said,
        "verdict_words": messages.VERDICT_WORDS[said],
        "summary": verdicts.summary(said, findings, {o.id: o.label or o.id for o in test.outlets}),
        "findings": [f.as_dict() for f in findings],
        "circuit": circuit,
        "points": points,
        "ring_order": _ring_order(test, fit_part["positions"]),
        "expected": checks.expected(test),
        "readings": checks.reading_checks(test),
        "hypotheses": fit_part["hypotheses"],
        "detection": None if seen is None else seen.as_dict(),
        "end_to_end": {k: format_reading(getattr(test.end_to_end, f"{k}_ohm"))
                       for k in ("r1", "rn", "r2")},
        "cautions": list(messages.CAUTIONS),
    }
