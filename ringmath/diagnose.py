"""diagnose(record): verdict, ranked findings, Zs at every point and an inferred ring order.

Flow: parse the record -> checks of each reading as it stands (``checks``), topology rules
(``rules``), Zs at every point (``zs``) -> when step 1 is complete and outlet readings exist,
fit the whole-ring hypotheses (``fitting``), add outlet-level faults on top of the best few
(``local``), rank the combinations by score and turn the winner into findings in plain words
(``messages``) with the outlets located from the position posterior.

The result is plain JSON-able values; its shape is listed in DEVELOPERS.md.
"""

from __future__ import annotations

import numpy as np

from ringmath import checks, messages, rules, zs
from ringmath.findings import Finding
from ringmath.fitting import Fit, fit_all, position_posterior
from ringmath.likelihood import Prepared, prepare, t_grid
from ringmath.local import LocalFault, local_faults
from ringmath.record import RingTest, format_reading, parse_record

#: A fault position whose spread (ring fractions, over the uniform search grid) exceeds this
#: is "not located". A flat profile over half the ring gives 0.144. Calibrated on simulated
#: rings (bench/diagnosis.py): bridges and breaks are placed right well past 0.1, while a
#: joint's place is rarely right above 0.06 (step 2 shifts evenly and step 3 only shows a gap).
LOCATE_SD = {"interconnection": 0.12, "open_conductor": 0.11, "high_resistance_joint": 0.06}
#: Whole-ring explanations whose readings do not depend on which end an outlet is nearer.
POSITIONLESS = ("healthy", "wrong_cross_connection")
#: Two combined explanations closer than this in score (nats) "fit about equally".
LOOK_ALIKE_NATS = 2.0


def _combine(prep: Prepared, fits: list[Fit], n: int) -> list[tuple[float, Fit, list]]:
    """The best few whole-ring fits, each with the outlet faults that raise its score."""
    out = []
    for fit in fits[:3]:
        extra = local_faults(prep, fit)
        out.append((fit.score(n) + sum(lf.gain for lf in extra), fit, extra))
    return sorted(out, key=lambda c: c[0], reverse=True)


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
                 place: np.ndarray, names: dict) -> Finding:
    """The whole-ring fault of ``fit`` as a Finding, located where the readings allow."""
    located = fit.theta_sd is not None and fit.theta_sd <= LOCATE_SD.get(fit.code, 0.0)
    if fit.code == "interconnection":
        a, b = fit.theta["a"], fit.theta["b"]
        # inside by posterior mass (a boundary outlet's best place can sit just outside)
        t = t_grid(post.shape[1])
        inside_p = post[:, (t > a) & (t < b)].sum(axis=1)
        inside = [prep.ring_ids[i] for i in range(len(place)) if inside_p[i] > 0.5]
        msg, nxt = messages.interconnection(_named(inside, names), located)
        return Finding("interconnection", "fault", msg, nxt, tuple(inside if located else ()),
                       confidence=confidence, section=(a, b))
    if fit.code == "wrong_cross_connection":
        msg, nxt = messages.wrong_cross(fit.step)
        return Finding("wrong_cross_connection", "fault", msg, nxt, step=fit.step,
                       confidence=confidence)
    x = fit.theta["x"]
    near = _neighbours(prep, post, x) if located else []
    if fit.code == "open_conductor":
        msg, nxt = messages.open_ring(fit.conductor, _named(near, names), located)
    else:
        msg, nxt = messages.joint(fit.conductor, fit.theta["r_ohm"], _named(near, names),
                                  located)
    return Finding(fit.code, "fault", msg, nxt, tuple(near), conductor=fit.conductor,
                   confidence=confidence, position=x if located else None)


def _local_finding(lf: LocalFault, names: dict) -> list[Finding]:
    name = names.get(lf.outlet, lf.outlet)
    if lf.code == "unrecorded_spur":
        msg, nxt = messages.unrecorded_spur(name, 2.0 * (lf.r_ohm or 0.0))
        return [Finding("unrecorded_spur", "fault", msg, nxt, (lf.outlet,),
                        confidence=lf.confidence())]
    if lf.code == "high_resistance_joint" and lf.swap is None and lf.tie is None:
        msg, nxt = messages.joint(lf.conductor, lf.r_ohm or 0.0, [name], True, at_outlet=True)
        return [Finding("high_resistance_joint", "fault", msg, nxt, (lf.outlet,),
                        conductor=lf.conductor, confidence=lf.confidence())]
    out = []
    for code, conductor, swap in ((lf.code, lf.conductor, lf.swap), lf.tie):
        msg, nxt = messages.ol_pattern(name, code, conductor, swap)
        if lf.tie:
            msg += " Both explanations fit these readings equally."
        out.append(Finding(code, "fault", msg, nxt, (lf.outlet,), conductor=conductor,
                           confidence=lf.confidence()))
    return out


def _fitted(test: RingTest, prep: Prepared) -> dict:
    """Fit, rank and locate. Returns findings, hypotheses, positions and ring order."""
    n = prep.n_readings()
    fits = fit_all(prep)
    if not fits:
        return {"findings": [], "hypotheses": [], "positions": {}}
    combos = _combine(prep, fits, n)
    scores = np.array([c[0] for c in combos])
    weights = np.exp(scores - scores.max())
    weights /= weights.sum()
    names = {o.id: (f"{o.label} ({o.id})" if o.label and o.label != o.id else o.id)
             for o in test.outlets}
    best_score, best_fit, best_local = combos[0]
    post, place, sd = _posterior(prep, best_fit)
    findings: list[Finding] = []
    if best_fit.code != "healthy":
        findings.append(_fit_finding(prep, best_fit, float(weights[0]), post, place, names))
    for lf in best_local:
        findings.extend(_local_finding(lf, names))
    hypotheses = []
    for w, (score, fit, extra) in zip(weights, combos, strict=True):
        label_outlets = [lf.outlet for lf in extra]
        hypotheses.append({"code": fit.code, "conductor": fit.conductor, "step": fit.step,
                           "outlets": label_outlets, "local": [lf.code for lf in extra],
                           "confidence": round(float(w), 3), "score": round(float(score), 2)})
    if len(combos) > 1 and scores[0] - scores[1] < LOOK_ALIKE_NATS:
        first = best_local[0].code if best_fit.code == "healthy" and best_local else best_fit.code
        _, fit2, local2 = combos[1]
        second = local2[0].code if fit2.code == "healthy" and local2 else fit2.code
        if first != second and "healthy" not in (first, second):
            findings.append(Finding("look_alike", "info", messages.look_alike(first, second),
                                    confidence=float(weights[1])))
    # A sound ring (or one with crossed ends) reads the same whichever end an outlet is near:
    # its readings give no order to draw. A fault breaks that symmetry and places outlets.
    placed = best_fit.code not in POSITIONLESS
    positions = {oid: (float(place[i]) if placed else None, float(sd[i]))
                 for i, oid in enumerate(prep.ring_ids)}
    return {"findings": findings, "hypotheses": hypotheses, "positions": positions}


def _ring_order(test: RingTest, positions: dict) -> list[str]:
    """Ring outlets by inferred position; in visiting order when the readings give none."""
    ring = [o.id for o in test.outlets if o.on_ring]
    if any(positions.get(oid, (None,))[0] is None for oid in ring):
        return ring
    return sorted(ring, key=lambda oid: positions[oid][0])


def _verdict(test: RingTest, findings: list[Finding]) -> str:
    if any(f.severity in ("fault", "warning") for f in findings):
        return "investigate"
    e = test.end_to_end
    complete = e.complete() and bool(test.outlets) and all(
        o.ln_ohm is not None and o.le_ohm is not None for o in test.outlets)
    return "satisfactory" if complete else "incomplete"


def _summary(verdict: str, findings: list[Finding], names: dict) -> str:
    faults = [f for f in findings if f.severity == "fault"]
    if faults:
        top = faults[0]
        shown = [names.get(o, o) for o in top.outlets] if len(top.outlets) <= 2 else []
        return messages.headline(top.code, top.conductor, top.step, shown)
    if verdict == "investigate":
        return "No fault pattern in the readings, but some checks need attention."
    if verdict == "incomplete":
        return "No fault found so far; the test is not finished."
    return "The readings fit a sound ring with the recorded spurs."


def diagnose(record) -> dict:
    """Diagnose one circuit record (dict in the ringtest/1 format, or a parsed RingTest).

    Returns the plain-values result documented in DEVELOPERS.md. Raises ValueError naming the
    field for a bad record.
    """
    test = record if isinstance(record, RingTest) else parse_record(record)
    findings: list[Finding] = []
    fit_part = {"findings": [], "hypotheses": [], "positions": {}}
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
    findings.sort(key=lambda f: (order[f.severity], -(f.confidence or 0.0)))
    circuit, points = zs_values
    for p in points:
        pos = fit_part["positions"].get(p["id"])
        p["position"] = None if pos is None or pos[0] is None else round(pos[0], 3)
        p["position_sd"] = None if pos is None else round(pos[1], 3)
    verdict = _verdict(test, findings)
    return {
        "verdict": verdict,
        "summary": _summary(verdict, findings, {o.id: o.label or o.id for o in test.outlets}),
        "findings": [f.as_dict() for f in findings],
        "circuit": circuit,
        "points": points,
        "ring_order": _ring_order(test, fit_part["positions"]),
        "expected": checks.expected(test),
        "readings": checks.reading_checks(test),
        "hypotheses": fit_part["hypotheses"],
        "end_to_end": {k: format_reading(getattr(test.end_to_end, f"{k}_ohm"))
                       for k in ("r1", "rn", "r2")},
        "cautions": list(messages.CAUTIONS),
    }
