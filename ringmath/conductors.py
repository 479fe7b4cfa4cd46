"""Copper conductor resistance: the per-metre table and what it predicts for a ring.

Values are the maximum DC resistance of class 1 and class 2 plain annealed copper conductors at
20 °C, BS EN 60228 (IEC 60228) Table 1/Table 2, in milliohms per metre. They are widely tabulated
in UK wiring guidance; the figures below are quoted from memory and must be checked against the
published table before they are relied on.

Because the table gives maxima, real cable usually reads a few percent lower than these figures
(common practice). Resistance rises with temperature by the copper coefficient
ALPHA_COPPER_PER_K (BS EN 60228 Annex B, 0.00393 /K at 20 °C, from memory).
"""

from __future__ import annotations

import math

#: BS EN 60228 maximum DC resistance at 20 °C, plain copper, class 1/2 (mΩ/m), from memory.
COPPER_MOHM_PER_M_20C: dict[float, float] = {
    1.0: 18.10,
    1.5: 12.10,
    2.5: 7.41,
    4.0: 4.61,
    6.0: 3.08,
    10.0: 1.83,
    16.0: 1.15,
}

#: Temperature coefficient of resistance of annealed copper at 20 °C, per kelvin
#: (BS EN 60228 Annex B, from memory).
ALPHA_COPPER_PER_K = 0.00393

#: Reference temperature of the table, °C.
REFERENCE_TEMPERATURE_C = 20.0


def resistance_mohm_per_m(csa_mm2: float, field: str = "csa_mm2") -> float:
    """Resistance of a copper conductor of ``csa_mm2`` mm² at 20 °C, in milliohms per metre.

    Source: BS EN 60228 maximum DC resistance, class 1/2 plain copper (from memory).
    ``field`` names the input in the ValueError raised for a size that is not in the table.
    """
    if isinstance(csa_mm2, bool) or not isinstance(csa_mm2, int | float):
        raise ValueError(f"{field}: expected a number of mm², got {csa_mm2!r}")
    for size, mohm in COPPER_MOHM_PER_M_20C.items():
        if math.isclose(float(csa_mm2), size, abs_tol=1e-9):
            return mohm
    sizes = ", ".join(f"{s:g}" for s in COPPER_MOHM_PER_M_20C)
    raise ValueError(f"{field}: {csa_mm2!r} mm² is not a tabulated copper size ({sizes} mm²)")


def cpc_ratio(live_csa_mm2: float, cpc_csa_mm2: float) -> float:
    """Expected r2/r1 for a ring wired with live conductors of ``live_csa_mm2`` mm² and a cpc of
    ``cpc_csa_mm2`` mm² (dimensionless).

    ratio = R(cpc, mΩ/m) / R(live, mΩ/m) from the BS EN 60228 table; for 2.5/1.5 mm² twin and
    earth this is 12.10 / 7.41 = 1.633 (not the 2.5/1.5 = 1.67 area ratio, because the table
    values are not exactly inverse to the nominal area).
    """
    live = resistance_mohm_per_m(live_csa_mm2, "live_csa_mm2")
    cpc = resistance_mohm_per_m(cpc_csa_mm2, "cpc_csa_mm2")
    return cpc / live


def expected_end_to_end_ohm(length_m: float, csa_mm2: float, *,
                            temperature_c: float = REFERENCE_TEMPERATURE_C) -> float:
    """End-to-end resistance in ohms of one conductor of ``csa_mm2`` mm² over ``length_m`` metres
    of ring cable, at ``temperature_c`` °C (20 °C by default).

    R = length_m × R20(mΩ/m) / 1000 × (1 + α (T − 20)), α = ALPHA_COPPER_PER_K
    (BS EN 60228 values and Annex B coefficient, from memory).
    """
    if isinstance(length_m, bool) or not isinstance(length_m, int | float):
        raise ValueError(f"length_m: expected a number of metres, got {length_m!r}")
    if not math.isfinite(length_m) or length_m <= 0:
        raise ValueError(f"length_m: {length_m!r} m is not a positive length")
    if isinstance(temperature_c, bool) or not isinstance(temperature_c, int | float) or not (
            -40.0 <= temperature_c <= 120.0):
        raise ValueError(f"temperature_c: {temperature_c!r} °C is outside -40..120 °C")
    per_m_ohm = resistance_mohm_per_m(csa_mm2) / 1000.0
    warming = 1 + ALPHA_COPPER_PER_K * (temperature_c - REFERENCE_TEMPERATURE_C)
    return length_m * per_m_ohm * warming
