"""Step 1 checks: OL or 0.00 Ω ends, r1 against rn, r2/r1 against the cable, r1 against length."""

from __future__ import annotations

import math

from ringmath.checks.expected import BAND_SIGMAS, _reading, finite
from ringmath.conductors import expected_end_to_end_ohm, resistance_mohm_per_m
from ringmath.findings import Finding
from ringmath.meter import sigma_ohm
from ringmath.record import Circuit, RingTest

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

#: r2 below this fraction of the cable's value is a parallel earth path, not a larger cpc
#: (the next size up lowers r2 by at most about a third; our working figure).
PARALLEL_BELOW = 0.6
STEP_CONDUCTORS = {"r1": "line", "rn": "neutral", "r2": "cpc"}


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
            # the tolerance comes from the expected r2, never the reading: a tiny r2 (a steel
            # conduit cpc) would otherwise widen its own tolerance past itself
            tol = cpc_ratio_tolerance(e.r1_ohm, r2_ohm)
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
    metallic = c.cpc_kind != "cable_core" or c.parallel_paths
    # a declared metallic cpc can read 0.00 Ω end to end: that is the metalwork, not a mistake
    findings += [_zero_end_to_end(step) for step in STEP_CONDUCTORS
                 if _reading(test, None, step) == 0.0 and not (step == "r2" and metallic)]
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
    declared = c.cpc_kind != "cable_core" or c.parallel_paths
    if e.r2_ohm < low_ohm and (declared or e.r2_ohm < PARALLEL_BELOW * r2_expected_ohm):
        return [_parallel_path(test, r2_expected_ohm, declared)]
    if declared or low_ohm <= e.r2_ohm <= high_ohm:
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


def _parallel_path(test: RingTest, r2_expected_ohm: float, declared: bool) -> Finding:
    """r2 far below the cable's value: the cpc is (or is paralleled by) metalwork."""
    e, c = test.end_to_end, test.circuit
    what = {"conduit": "the steel conduit", "trunking": "the metal trunking",
            "armour": "the cable armour", "separate": "the separate cpc"}.get(
        c.cpc_kind, "a parallel earth path (metal conduit, trunking or bonded metalwork)")
    said = " as recorded" if declared else ""
    return Finding(
        code="parallel_earth_path", severity="info" if declared else "warning",
        conductor="cpc", step=None,
        message=(f"r2 reads {e.r2_ohm:.2f} Ω against about {r2_expected_ohm:.2f} Ω for the "
                 f"cable's {c.cpc_csa_mm2:g} mm² cpc (r1 {e.r1_ohm:.2f} Ω): the earth path "
                 f"includes {what}{said}. Step 3 readings and R1+R2 then show that path in "
                 "parallel, not the cable's cpc alone, so they cannot prove the cpc is "
                 "continuous round the ring, and Zs holds only while the metalwork stays "
                 "connected."),
        next_check=("Check the cpc is terminated at every outlet and the metalwork's joints are "
                    "sound; where the cable's cpc must be proved on its own, test with the "
                    "parallel path disconnected. For Zs use the value measured with the path as "
                    "it will stay in service."),
    )


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
