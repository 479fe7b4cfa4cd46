"""Maximum earth fault loop impedance (Zs) for the circuit's protective device and for FCU fuses.

Circuit-breakers (BS EN 60898) and RCBOs (BS EN 61009), curves B, C and D: the limit is
computed the way BS 7671:2018 Table 41.3 is built,

    Zs_tabulated = Cmin × U0 / Ia,   Cmin = 0.95, U0 = 230 V, Ia = 5, 10 or 20 × In (B, C, D),

the current that trips the breaker instantaneously (well inside 0.4 s), rounded to 0.01 Ω.

Fuses (BS 88-3, BS 3036, BS 1362): the 0.4 s values of BS 7671:2018 Table 41.2. These figures
are quoted from memory and must be checked against the printed table before they are relied on.

The limit for a *measured* or predicted-from-readings value, ``zs_max_ohm``, is 80 % of the
tabulated maximum, rounded to 0.01 Ω: the common-practice rule of thumb of the IET On-Site
Guide and Guidance Note 3, allowing for the rise in conductor resistance from test temperature
to the temperature under fault. Example: 32 A type B, 1.37 Ω tabulated, 1.10 Ω measured limit.

TT systems: fault protection by an RCD (BS 7671:2018 411.5.3): Zs × IΔn ≤ 50 V, the basis of
Table 41.5 (from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ringmath.record.model import Ocpd
from ringmath.record.values import RecordError, show

#: Minimum voltage factor and nominal line-to-earth voltage, BS 7671:2018 Appendix 3 / 411.4.
CMIN = 0.95
U0_V = 230.0
#: Instantaneous tripping current as a multiple of In (BS EN 60898 upper limits: B 5, C 10,
#: D 20), as used for BS 7671:2018 Table 41.3.
CURVE_MULTIPLE = {"B": 5, "C": 10, "D": 20}
BREAKER_STANDARDS = {"BS EN 60898": "circuit-breaker", "BS EN 61009": "RCBO"}
BREAKER_RATINGS_A = (6, 10, 13, 16, 20, 25, 32, 40, 45, 50)
#: Fraction of the tabulated maximum used as the limit for a measured value (common practice,
#: IET On-Site Guide / Guidance Note 3).
MEASURED_FRACTION = 0.8
#: Touch voltage limit for RCD fault protection in TT systems, BS 7671:2018 411.5.3.
TT_TOUCH_VOLTAGE_V = 50.0

#: BS 7671:2018 Table 41.2, 0.4 s disconnection, Zs in ohms by fuse rating in amperes.
#: Every value from memory: check against the printed table.
FUSE_ZS_OHM: dict[str, dict[int, float]] = {
    "BS 88-3": {5: 9.83, 16: 2.70, 20: 1.70, 32: 1.03, 45: 0.60},
    "BS 3036": {5: 9.58, 15: 2.55, 20: 1.77, 30: 1.09},
    "BS 1362": {3: 15.33, 13: 2.30},
}
FUSE_NAMES = {
    "BS 88-3": "cartridge fuse",
    "BS 3036": "semi-enclosed (rewirable) fuse",
    "BS 1362": "cartridge fuse",
}
STANDARDS = (*BREAKER_STANDARDS, *FUSE_ZS_OHM)

_MEASURED_NOTE = ("measured limit 80 % of tabulated (rule of thumb, IET On-Site Guide / "
                  "Guidance Note 3)")


@dataclass(frozen=True)
class DeviceLimit:
    """The Zs limits for one protective device.

    zs_tabulated_ohm: maximum Zs in ohms for 0.4 s disconnection (BS 7671:2018 Table 41.2/41.3).
    zs_max_ohm: limit in ohms for a measured or predicted value (80 % of tabulated).
    rating_a: rated current in amperes; curve: "B", "C", "D" or None for a fuse.
    source: where the figure comes from, in words, for the report.
    """

    description: str
    standard: str
    curve: str | None
    rating_a: float
    zs_tabulated_ohm: float
    zs_max_ohm: float
    source: str


def measured_limit_ohm(zs_tabulated_ohm: float) -> float:
    """80 % of a tabulated Zs in ohms, rounded to 0.01 Ω (On-Site Guide rule of thumb)."""
    return round(MEASURED_FRACTION * zs_tabulated_ohm, 2)


def _standard(text: str, path: str) -> str:
    norm = " ".join(str(text).upper().split())
    # Part numbers of the product standards: "BS EN 60898-1" is the same table.
    for name in STANDARDS:
        if norm == name or (norm == f"{name}-1" and name in BREAKER_STANDARDS):
            return name
    raise RecordError(f"{path}.standard", "choice",
                      f"{show(text)} is not one of {', '.join(STANDARDS)}")


def _rating(rating_a: float, ratings, path: str, what: str) -> int:
    for r in ratings:
        if math.isclose(float(rating_a), r, abs_tol=1e-9):
            return r
    listed = ", ".join(str(r) for r in ratings)
    raise RecordError(f"{path}.rating_a", "choice",
                      f"{rating_a:g} A is not a {what} rating in the table ({listed} A)")


def device_limit(ocpd: Ocpd, path: str = "circuit.ocpd") -> DeviceLimit:
    """The Zs limits for the circuit's overcurrent protective device.

    Breakers (BS EN 60898, BS EN 61009), curve B/C/D, 6–50 A: Zs = 0.95 × 230 V / (k × In),
    k = 5, 10, 20 (BS 7671:2018 Table 41.3 basis), rounded to 0.01 Ω. Fuses BS 88-3, BS 3036,
    BS 1362: BS 7671:2018 Table 41.2 (values from memory). ValueError naming
    ``<path>.standard``, ``<path>.curve`` or ``<path>.rating_a`` for anything not tabulated.
    """
    standard = _standard(ocpd.standard, path)
    if standard in BREAKER_STANDARDS:
        curve = (ocpd.curve or "").upper()
        if curve not in CURVE_MULTIPLE:
            raise RecordError(f"{path}.curve", "choice", f"{show(ocpd.curve)} is not one of "
                              f"{', '.join(CURVE_MULTIPLE)} for a {standard} device")
        rating = _rating(ocpd.rating_a, BREAKER_RATINGS_A, path, standard)
        multiple = CURVE_MULTIPLE[curve]
        return _overcurrent_limit(
            f"{rating} A type {curve} {BREAKER_STANDARDS[standard]} ({standard})",
            standard, curve, rating, round(CMIN * U0_V / (multiple * rating), 2),
            f"BS 7671:2018 Table 41.3 basis: Zs = Cmin × U0 / Ia = 0.95 × 230 V / "
            f"({multiple} × {rating} A)")
    if ocpd.curve not in (None, ""):
        raise RecordError(f"{path}.curve", "choice", f"a {standard} fuse has no tripping "
                          f"curve (got {show(ocpd.curve)})")
    return _fuse_limit(standard, ocpd.rating_a, path)


def _fuse_limit(standard: str, rating_a: float, path: str) -> DeviceLimit:
    table = FUSE_ZS_OHM[standard]
    rating = _rating(rating_a, tuple(table), path, standard)
    return _overcurrent_limit(
        f"{rating} A {FUSE_NAMES[standard]} ({standard})", standard, None, rating, table[rating],
        "BS 7671:2018 Table 41.2, 0.4 s (value from memory: check against the printed table)")


def _overcurrent_limit(description: str, standard: str, curve: str | None, rating_a: int,
                       tabulated_ohm: float, table_source: str) -> DeviceLimit:
    """A DeviceLimit whose measured limit is 80 % of ``tabulated_ohm`` (ohms)."""
    return DeviceLimit(
        description=description, standard=standard, curve=curve, rating_a=float(rating_a),
        zs_tabulated_ohm=tabulated_ohm, zs_max_ohm=measured_limit_ohm(tabulated_ohm),
        source=f"{table_source}; {_MEASURED_NOTE}",
    )


def fcu_limit(fuse_a: float) -> DeviceLimit:
    """The Zs limits beyond a fused connection unit with a BS 1362 fuse of ``fuse_a`` amperes.

    Only 3 A (15.33 Ω) and 13 A (2.30 Ω) are tabulated (BS 7671:2018 Table 41.2, from memory);
    other BS 1362 ratings (1, 2, 5, 7, 10 A) have no published figure we can cite, so they are
    refused with a ValueError naming ``fuse_a`` (use the fuse maker's time-current data).
    """
    if isinstance(fuse_a, bool) or not isinstance(fuse_a, int | float):
        raise ValueError(f"fuse_a: expected a number of amperes, got {fuse_a!r}")
    table = FUSE_ZS_OHM["BS 1362"]
    if not any(math.isclose(float(fuse_a), r, abs_tol=1e-9) for r in table):
        raise ValueError(f"fuse_a: no tabulated Zs for a {fuse_a:g} A BS 1362 fuse "
                         f"(BS 7671 Table 41.2 lists {', '.join(str(r) for r in table)} A)")
    return _fuse_limit("BS 1362", fuse_a, "fcu")


def rcd_limit(rated_ma: float) -> DeviceLimit:
    """The Zs limit where an RCD of ``rated_ma`` mA gives fault protection on a TT system.

    Zs ≤ 50 V / IΔn (BS 7671:2018 411.5.3, the basis of Table 41.5; from memory), e.g. 1667 Ω for
    30 mA. No 80 % reduction: the electrode resistance dominates, not conductor temperature, so
    ``zs_max_ohm`` equals the tabulated value.
    """
    if isinstance(rated_ma, bool) or not isinstance(rated_ma, int | float) or not (
            math.isfinite(rated_ma) and rated_ma > 0):
        raise ValueError(f"circuit.rcd.rated_ma: {rated_ma!r} is not a positive current in mA")
    tabulated = round(TT_TOUCH_VOLTAGE_V / (rated_ma / 1000.0), 2)
    return DeviceLimit(
        description=f"{rated_ma:g} mA RCD (fault protection, TT)",
        standard="RCD", curve=None, rating_a=rated_ma / 1000.0,
        zs_tabulated_ohm=tabulated, zs_max_ohm=tabulated,
        source="BS 7671:2018 411.5.3: Zs × IΔn ≤ 50 V (Table 41.5 basis, from memory)",
    )
