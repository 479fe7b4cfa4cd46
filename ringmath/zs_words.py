"""The Zs findings in words, built from the plain values of ``ringmath.zs.point_values``."""

from __future__ import annotations

from typing import Any

from ringmath.findings import Finding
from ringmath.meter import GAIN_TOLERANCE, OFFSET_OHM, RESOLUTION_OHM
from ringmath.record import RingTest

_TOLERANCE_WORDS = (f"the continuity meter's tolerance, ±({GAIN_TOLERANCE:.0%} + "
                    f"{OFFSET_OHM + RESOLUTION_OHM / 2:.3f} Ω)")


def over_limit(point: dict[str, Any]) -> Finding:
    """"zs_over_limit": fault from a step 3 reading, warning when R1+R2 is estimated."""
    where = "the circuit's worst point" if point["id"] is None else point["id"]
    estimated = bool(point.get("r1r2_estimated"))
    return Finding(
        code="zs_over_limit", severity="warning" if estimated else "fault",
        outlets=() if point["id"] is None else (point["id"],), conductor="cpc", step="le",
        message=(f"Predicted Zs at {where} is {point['zs_ohm']:.2f} Ω, above the "
                 f"{point['zs_max_ohm']:.2f} Ω limit for a measured value"
                 + (" (R1+R2 estimated, no step 3 reading yet)." if estimated else ".")
                 + " The protective device may not disconnect within 0.4 s on an earth fault."),
        next_check=("Take the step 3 reading there to confirm." if estimated else
                    "Check the cpc and line terminations towards this point, confirm Ze, and "
                    "review the device rating or cable size before putting it into service."),
    )


def marginal(point: dict[str, Any]) -> Finding:
    """"zs_marginal" (warning): the predicted Zs passes, but not with the meter's tolerance."""
    return Finding(
        code="zs_marginal", severity="warning", outlets=(point["id"],), conductor="cpc",
        step="le",
        message=(f"Marginal: re-measure. Predicted Zs at {point['id']} is "
                 f"{point['zs_ohm']:.2f} Ω against a {point['zs_max_ohm']:.2f} Ω limit; with "
                 f"{_TOLERANCE_WORDS} on its R1+R2 it could reach the limit."),
        next_check=("Re-take the step 3 reading at the terminals with the leads nulled; measure "
                    "Zs live at this point."),
    )


def limit_unknown(points: list[dict[str, Any]], circuit_source: str) -> list[Finding]:
    """"zs_limit_unknown" (info) for points whose device has no checked figure."""
    unknown = [p for p in points if p["zs_max_ohm"] is None]
    if not unknown:
        return []
    fcus = sorted({p["protected_by"].removeprefix("fcu:") for p in unknown
                   if p["protected_by"] != "circuit"})
    parts = []
    if any(p["protected_by"] == "circuit" for p in unknown):
        parts.append(f"The circuit's device: {circuit_source}.")
    if fcus:
        parts.append(f"The fuse in FCU {', '.join(fcus)}: only 3 A and 13 A BS 1362 fuses have a "
                     "checked figure.")
    return [Finding(
        code="zs_limit_unknown", severity="info", outlets=tuple(p["id"] for p in unknown),
        message="No checked Zs limit, so Zs is not judged. " + " ".join(parts),
        next_check="Check the predicted Zs against the printed BS 7671 table or the device "
                   "maker's time-current data.",
    )]


def rcd_info(test: RingTest) -> list[Finding]:
    """"rcd" (info): what the RCD does for this circuit."""
    c = test.circuit
    if c.rcd is None:
        return []
    if c.earthing == "TT":
        message = (f"TT system with a {c.rcd.rated_ma:g} mA RCD: the RCD gives fault protection "
                   "and the limit used is 50 V / IΔn (BS 7671:2018 411.5.3). An electrode "
                   "resistance above about 200 Ω may not be stable (IET On-Site Guide, from "
                   "memory).")
    else:
        message = (f"The circuit has a {c.rcd.rated_ma:g} mA RCD. It gives additional protection; "
                   "the Zs limits for the circuit's overcurrent device still apply for fault "
                   "protection.")
    return [Finding(code="rcd", severity="info", message=message,
                    next_check="Test the RCD's operation as part of the installation tests.")]


def ze_source(test: RingTest) -> list[Finding]:
    """"ze_source" (warning) when Ze is declared or missing."""
    c = test.circuit
    if c.ze_ohm is None:
        message = "Ze is not recorded, so Zs cannot be predicted at any point."
    elif c.ze_source == "declared":
        message = (f"Ze {c.ze_ohm:.2f} Ω is the supplier's declared value, not a measurement; "
                   "predicted Zs may be lower than the real value.")
    else:
        return []
    return [Finding(code="ze_source", severity="warning", message=message,
                    next_check=("Measure Ze at the origin with the main earthing conductor "
                                "disconnected (installation isolated), then reconnect it."))]
