"""Maximum earth fault loop impedance (Zs) for the circuit's protective device and for FCU fuses.

The figures are checked data (``ringmath.tables``, CSV files in ``ringmath/data``), each row
with its edition, table, basis and where it was checked against a published copy:

- Circuit-breakers (BS EN 60898, RCBOs to BS EN 61009, BS 3871 types B/C/D), 0.4 s, the way
  BS 7671:2018 Table 41.3 is built: Zs = Cmin × U0 / Ia, Cmin = 0.95, U0 = 230 V,
  Ia = 5, 10 or 20 × In (B, C, D), rounded to 0.01 Ω. BS 3871 types 1, 2, 3 are recognised
  but their tripping multiples could not be checked, so no limit is given for them.
- Fuses (BS 88-2, BS 88-3, BS 3036, BS 1361, BS 1362), 0.4 s, BS 7671:2018 Table 41.2 where
  a published figure was found (see each row); the rest are recognised but refused.

A device the tables do not list at all is a record error (``RecordError`` kind "choice",
naming ``<path>.standard``, ``.curve`` or ``.rating_a``). A listed device whose figure could not
be checked raises ``NoCheckedLimit`` from ``device_limit``: callers show "limit unknown", never a
guessed figure.

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
from ringmath.tables import BREAKERS, FUSES, LimitRow

#: Minimum voltage factor and nominal line-to-earth voltage, BS 7671:2018 Appendix 3 / 411.4.
CMIN = 0.95
U0_V = 230.0
#: Instantaneous tripping current as a multiple of In (BS EN 60898 upper limits: B 5, C 10,
#: D 20), as used for BS 7671:2018 Table 41.3.
CURVE_MULTIPLE = {"B": 5, "C": 10, "D": 20}
BREAKER_STANDARDS = {"BS EN 60898": "circuit-breaker", "BS EN 61009": "RCBO",
                     "BS 3871": "circuit-breaker"}
FUSE_NAMES = {
    "BS 88-2": "general purpose (gG) fuse",
    "BS 88-3": "cartridge fuse",
    "BS 3036": "semi-enclosed (rewirable) fuse",
    "BS 1361": "cartridge fuse",
    "BS 1362": "cartridge fuse",
}
STANDARDS = (*BREAKER_STANDARDS, *FUSE_NAMES)
#: Fraction of the tabulated maximum used as the limit for a measured value (common practice,
#: IET On-Site Guide / Guidance Note 3).
MEASURED_FRACTION = 0.8
#: Touch voltage limit for RCD fault protection in TT systems, BS 7671:2018 411.5.3.
TT_TOUCH_VOLTAGE_V = 50.0

_MEASURED_NOTE = ("measured limit 80 % of tabulated (rule of thumb, IET On-Site Guide / "
                  "Guidance Note 3)")


class NoCheckedLimit(ValueError):
    """A recognised device whose Zs figure could not be checked against a published copy."""

    def __init__(self, description: str, basis: str):
        self.description = description
        super().__init__(f"no checked Zs limit for a {description}: {basis}; use the printed "
                         "BS 7671 table or the device maker's data")


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


def breaker_zs_ohm(curve: str, rating_a: float) -> float:
    """Cmin × U0 / (k × In) in ohms, rounded to 0.01 Ω, k = 5, 10, 20 for curves B, C, D
    (BS 7671:2018 Table 41.3 basis)."""
    return round(CMIN * U0_V / (CURVE_MULTIPLE[curve] * rating_a), 2)


def _standard(text: str, path: str) -> str:
    norm = " ".join(str(text).upper().split())
    # Part numbers of the product standards: "BS EN 60898-1" is the same table.
    for name in STANDARDS:
        if norm == name or (norm == f"{name}-1" and name in BREAKER_STANDARDS):
            return name
    raise RecordError(f"{path}.standard", "choice",
                      f"{show(text)} is not one of {', '.join(STANDARDS)}")


def _rating(rating_a: float, ratings: list[int], path: str, what: str) -> int:
    for r in ratings:
        if math.isclose(float(rating_a), r, abs_tol=1e-9):
            return r
    listed = ", ".join(str(r) for r in ratings)
    raise RecordError(f"{path}.rating_a", "choice",
                      f"{rating_a:g} A is not a {what} rating in the table ({listed} A)")


def _row(ocpd: Ocpd, path: str) -> tuple[str, LimitRow]:
    """(description, table row) for the device; RecordError naming the field if not listed."""
    standard = _standard(ocpd.standard, path)
    curve = (ocpd.curve or "").upper()
    if standard in BREAKER_STANDARDS:
        curves = sorted({c for s, c, _ in BREAKERS if s == standard})
        if curve not in curves:
            raise RecordError(f"{path}.curve", "choice", f"{show(ocpd.curve)} is not one of "
                              f"{', '.join(curves)} for a {standard} device")
        ratings = sorted(r for s, c, r in BREAKERS if s == standard and c == curve)
        rating = _rating(ocpd.rating_a, ratings, path, standard)
        return (f"{rating} A type {curve} {BREAKER_STANDARDS[standard]} ({standard})",
                BREAKERS[(standard, curve, rating)])
    if curve:
        raise RecordError(f"{path}.curve", "choice", f"a {standard} fuse has no tripping "
                          f"curve (got {show(ocpd.curve)})")
    ratings = sorted(r for s, r in FUSES if s == standard)
    rating = _rating(ocpd.rating_a, ratings, path, standard)
    return f"{rating} A {FUSE_NAMES[standard]} ({standard})", FUSES[(standard, rating)]


def check_device(ocpd: Ocpd, path: str = "circuit.ocpd") -> None:
    """RecordError naming the field unless the tables list this device (checked or not)."""
    _row(ocpd, path)


def _limit(description: str, row: LimitRow) -> DeviceLimit:
    if not row.checked or row.zs_ohm is None:
        raise NoCheckedLimit(description, row.basis)
    return DeviceLimit(
        description=description, standard=row.standard, curve=row.curve,
        rating_a=float(row.rating_a), zs_tabulated_ohm=row.zs_ohm,
        zs_max_ohm=measured_limit_ohm(row.zs_ohm),
        # the sheet prints the edition and table; where each row was checked stays in the data
        source=f"{row.edition} {row.table}: {row.basis}; {_MEASURED_NOTE}",
    )


def device_limit(ocpd: Ocpd, path: str = "circuit.ocpd") -> DeviceLimit:
    """The Zs limits for the circuit's overcurrent protective device.

    RecordError naming ``<path>.standard``, ``<path>.curve`` or ``<path>.rating_a`` for a device
    the tables do not list; NoCheckedLimit for a listed one whose figure is not checked.
    """
    return _limit(*_row(ocpd, path))


def fcu_limit(fuse_a: float) -> DeviceLimit:
    """The Zs limits beyond a fused connection unit with a BS 1362 fuse of ``fuse_a`` amperes.

    ValueError naming ``fuse_a`` for a rating BS 1362 does not have; NoCheckedLimit for one
    with no checked figure (only 3 A and 13 A have one: see ``ringmath/data/zs_fuses.csv``).
    """
    if isinstance(fuse_a, bool) or not isinstance(fuse_a, int | float):
        raise ValueError(f"fuse_a: expected a number of amperes, got {show(fuse_a)}")
    try:
        return device_limit(Ocpd("BS 1362", None, fuse_a), "fcu")
    except RecordError as exc:
        raise ValueError(f"fuse_a: {exc.detail}") from None


def rcd_limit(rated_ma: float) -> DeviceLimit:
    """The Zs limit where an RCD of ``rated_ma`` mA gives fault protection on a TT system.

    Zs ≤ 50 V / IΔn (BS 7671:2018 411.5.3, the basis of Table 41.5; from memory), e.g. 1667 Ω for
    30 mA. No 80 % reduction: the electrode resistance dominates, not conductor temperature, so
    ``zs_max_ohm`` equals the tabulated value.
    """
    if isinstance(rated_ma, bool) or not isinstance(rated_ma, int | float) or not (
            math.isfinite(rated_ma) and rated_ma > 0):
        raise ValueError(f"circuit.rcd.rated_ma: {show(rated_ma)} is not a positive current in mA")
    tabulated = round(TT_TOUCH_VOLTAGE_V / (rated_ma / 1000.0), 2)
    return DeviceLimit(
        description=f"{rated_ma:g} mA RCD (fault protection, TT)",
        standard="RCD", curve=None, rating_a=rated_ma / 1000.0,
        zs_tabulated_ohm=tabulated, zs_max_ohm=tabulated,
        source="BS 7671:2018 411.5.3: Zs × IΔn ≤ 50 V (Table 41.5 basis, from memory)",
    )
