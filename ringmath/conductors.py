"""Copper conductor resistance: the per-metre table, the cpc ratio, the one spur-cable model.

Values are the maximum DC resistance of class 1 and class 2 plain annealed copper conductors at
20 °C, IEC 60228 / BS EN 60228 Table 1 (class 2 Table 2 is the same for these sizes), in
milliohms per metre, loaded from ``ringmath/data/copper_resistance.csv`` where each row names
the published copy it was checked against.

Because the table gives maxima, real cable usually reads a few percent lower than these figures
(common practice), so the estimates built on them lean to the safe (high) side. Resistance rises
with temperature by the copper coefficient ALPHA_COPPER_PER_K (1/254.5 K, the IEC 60228 Annex B
correction for copper, from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

from ringmath.tables import COPPER

#: IEC 60228 maximum DC resistance at 20 °C, plain copper, class 1/2 (mΩ/m), checked data.
COPPER_MOHM_PER_M_20C = MappingProxyType({size: row.mohm_per_m_20c
                                          for size, row in COPPER.items()})

#: Temperature coefficient of resistance of annealed copper at 20 °C, per kelvin
#: (IEC 60228 Annex B, from memory).
ALPHA_COPPER_PER_K = 0.00393

#: Reference temperature of the table, °C.
REFERENCE_TEMPERATURE_C = 20.0

#: The cpc of flat twin-and-earth cable for each live size, mm² (BS 6004 6242Y: 1.0/1.0,
#: 1.5/1.0, 2.5/1.5, 4/1.5, 6/2.5, 10/4, 16/6; common practice, from memory). The companion is
#: the smallest cpc a spur of that live size is normally wired with, so assuming it when only
#: the live size is known can only raise an R1+R2 estimate.
TWIN_AND_EARTH_CPC_MM2 = MappingProxyType({1.0: 1.0, 1.5: 1.0, 2.5: 1.5, 4.0: 1.5, 6.0: 2.5,
                                           10.0: 4.0, 16.0: 6.0})


def resistance_mohm_per_m(csa_mm2: float, field: str = "csa_mm2") -> float:
    """Resistance of a copper conductor of ``csa_mm2`` mm² at 20 °C, in milliohms per metre.

    Source: IEC 60228 Table 1 (``ringmath/data/copper_resistance.csv``). ``field`` names the
    input in the ValueError raised for a size that is not in the table.
    """
    if isinstance(csa_mm2, bool) or not isinstance(csa_mm2, int | float):
        raise ValueError(f"{field}: expected a number of mm², got {type(csa_mm2).__name__}")
    for size, mohm in COPPER_MOHM_PER_M_20C.items():
        if math.isclose(float(csa_mm2), size, abs_tol=1e-9):
            return mohm
    sizes = ", ".join(f"{s:g}" for s in COPPER_MOHM_PER_M_20C)
    raise ValueError(f"{field}: {csa_mm2:g} mm² is not a tabulated copper size ({sizes} mm²)")


def cpc_ratio(live_csa_mm2: float, cpc_csa_mm2: float) -> float:
    """Expected r2/r1 for a cable with live conductors of ``live_csa_mm2`` mm² and a cpc of
    ``cpc_csa_mm2`` mm² (dimensionless): R(cpc) / R(live) from the IEC 60228 table.

    For 2.5/1.5 mm² twin and earth this is 12.10 / 7.41 = 1.633 (not the 2.5/1.5 = 1.67 area
    ratio: the table values are not exactly inverse to the nominal area).
    """
    live = resistance_mohm_per_m(live_csa_mm2, "live_csa_mm2")
    cpc = resistance_mohm_per_m(cpc_csa_mm2, "cpc_csa_mm2")
    return cpc / live


def r2_per_r1(live_csa_mm2: float = 2.5, cpc_csa_mm2: float = 1.5) -> float:
    """The r2/r1 figure to show a user (drawings, guidance), to 3 decimals: 1.633 for 2.5/1.5."""
    return round(cpc_ratio(live_csa_mm2, cpc_csa_mm2), 3)


def twin_and_earth_cpc_mm2(live_csa_mm2: float) -> float:
    """The cpc size of flat twin-and-earth cable with live conductors of ``live_csa_mm2``."""
    for live, cpc in TWIN_AND_EARTH_CPC_MM2.items():
        if math.isclose(float(live_csa_mm2), live, abs_tol=1e-9):
            return cpc
    raise ValueError(f"live_csa_mm2: {live_csa_mm2:g} mm² has no twin-and-earth companion")


@dataclass(frozen=True)
class SpurCable:
    """The cable feeding a spur: sizes in mm², resistances in ohms per metre at 20 °C."""

    live_csa_mm2: float
    cpc_csa_mm2: float
    live_ohm_per_m: float
    cpc_ohm_per_m: float

    @property
    def cpc_ratio(self) -> float:
        """r_cpc / r_live of the spur cable."""
        return self.cpc_ohm_per_m / self.live_ohm_per_m

    @property
    def le_per_ln(self) -> float:
        """How much more the cable raises step 3 than step 2: (r_live + r_cpc) / (2 r_live)
        (the neutral is the size of the line): 1.32 for 2.5/1.5, 1.25 for 1.5/1.0."""
        return (self.live_ohm_per_m + self.cpc_ohm_per_m) / (2 * self.live_ohm_per_m)


def spur_cable(live_csa_mm2: float | None = None, cpc_csa_mm2: float | None = None, *,
               ring_live_csa_mm2: float = 2.5) -> SpurCable:
    """The one spur-cable model used by the fit, the checks and Zs.

    live: the spur's recorded live size, else the ring's (``ring_live_csa_mm2``); cpc: the
    recorded cpc size, else the twin-and-earth companion of the live size (never the ring's
    cpc: a 1.5 mm² spur off a 2.5/1.5 ring is 1.5/1.0 cable). ValueError naming the size for one
    the table does not list.
    """
    live = ring_live_csa_mm2 if live_csa_mm2 is None else live_csa_mm2
    cpc = twin_and_earth_cpc_mm2(live) if cpc_csa_mm2 is None else cpc_csa_mm2
    return SpurCable(live_csa_mm2=float(live), cpc_csa_mm2=float(cpc),
                     live_ohm_per_m=resistance_mohm_per_m(live, "spur_csa_mm2") / 1000.0,
                     cpc_ohm_per_m=resistance_mohm_per_m(cpc, "spur_cpc_csa_mm2") / 1000.0)


def expected_end_to_end_ohm(length_m: float, csa_mm2: float, *,
                            temperature_c: float = REFERENCE_TEMPERATURE_C) -> float:
    """End-to-end resistance in ohms of one conductor of ``csa_mm2`` mm² over ``length_m`` metres
    of ring cable, at ``temperature_c`` °C (20 °C by default).

    R = length_m × R20(mΩ/m) / 1000 × (1 + α (T − 20)), α = ALPHA_COPPER_PER_K
    (IEC 60228 values; Annex B coefficient, from memory).
    """
    if isinstance(length_m, bool) or not isinstance(length_m, int | float):
        raise ValueError(f"length_m: expected a number of metres, got {type(length_m).__name__}")
    if not math.isfinite(length_m) or length_m <= 0:
        raise ValueError(f"length_m: {length_m!r} m is not a positive length")
    if isinstance(temperature_c, bool) or not isinstance(temperature_c, int | float) or not (
            -40.0 <= temperature_c <= 120.0):
        raise ValueError(f"temperature_c: {temperature_c!r} °C is outside -40..120 °C")
    per_m_ohm = resistance_mohm_per_m(csa_mm2) / 1000.0
    warming = 1 + ALPHA_COPPER_PER_K * (temperature_c - REFERENCE_TEMPERATURE_C)
    return length_m * per_m_ohm * warming
