"""The safety tables as checked data: loaded once at import from the CSV files in
``ringmath/data`` into read-only mappings of frozen rows.

Every row names its edition, table and row, the basis of the figure and where it was checked
against a published copy (``where_checked``). A row whose figure could not be checked keeps an
empty value: it is loaded (so the device is recognised) but ``checked`` is False and
``ringmath.devices`` refuses to give a limit for it. A figure without a ``where_checked`` is a
data error and fails the import loudly.

- ``COPPER``: csa_mm2 -> CopperRow, maximum resistance of plain annealed copper at 20 °C,
  IEC 60228 / BS EN 60228 Table 1, mΩ/m.
- ``BREAKERS``: (standard, curve, rating_a) -> BreakerRow, BS 7671 Table 41.3 (0.4 s).
- ``FUSES``: (standard, rating_a) -> LimitRow, BS 7671 Table 41.2 (0.4 s).
- ``INSULATION``: tuple of InsulationRow, BS 7671 Table 64 (minimum insulation resistance).
- ``RCD_TRIP``: tuple of RcdTripRow, the longest trip time at IΔn for a general (non-delay) RCD.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Mapping
from dataclasses import dataclass
from importlib.resources import files
from types import MappingProxyType


@dataclass(frozen=True)
class CopperRow:
    """One conductor size: mΩ/m at 20 °C and where the figure was checked."""

    csa_mm2: float
    mohm_per_m_20c: float
    edition: str
    table: str
    row: str
    where_checked: str


@dataclass(frozen=True)
class LimitRow:
    """One protective device's maximum Zs in ohms (None: not checked, refused)."""

    standard: str
    curve: str | None
    rating_a: int
    zs_ohm: float | None
    edition: str
    table: str
    basis: str
    where_checked: str

    @property
    def checked(self) -> bool:
        """True when the figure is there and was checked against a published copy."""
        return self.zs_ohm is not None and bool(self.where_checked)


@dataclass(frozen=True)
class InsulationRow:
    """One voltage band of BS 7671 Table 64: circuits up to ``nominal_max_v`` V, tested at
    ``test_v`` V d.c., satisfactory at ``min_mohm`` MΩ or more."""

    band: str
    nominal_max_v: float
    test_v: float
    min_mohm: float
    edition: str
    table: str
    where_checked: str


@dataclass(frozen=True)
class RcdTripRow:
    """The longest trip time in ms at the stated test current for RCDs of these types."""

    kind: str
    types: tuple[str, ...]
    standard: str
    test: str
    max_trip_ms: float
    edition: str
    where_checked: str


def _rows(name: str) -> list[dict[str, str]]:
    text = files("ringmath").joinpath("data", name).read_text(encoding="utf-8")
    return list(csv.DictReader(io.StringIO(text)))


def _limit(row: dict[str, str], name: str, line: int) -> LimitRow:
    value = row["zs_ohm"].strip()
    if value and not row["where_checked"].strip():
        raise ValueError(f"ringmath/data/{name} line {line}: a figure with no where_checked")
    return LimitRow(
        standard=row["standard"], curve=row.get("curve") or None, rating_a=int(row["rating_a"]),
        zs_ohm=float(value) if value else None, edition=row["edition"], table=row["table"],
        basis=row["basis"], where_checked=row["where_checked"].strip())


def _load_copper() -> Mapping[float, CopperRow]:
    out = {}
    for i, row in enumerate(_rows("copper_resistance.csv"), start=2):
        if not row["where_checked"].strip():
            raise ValueError(f"ringmath/data/copper_resistance.csv line {i}: no where_checked")
        size = float(row["csa_mm2"])
        out[size] = CopperRow(size, float(row["mohm_per_m_20c"]), row["edition"], row["table"],
                              row["row"], row["where_checked"])
    return MappingProxyType(out)


def _load_breakers() -> Mapping[tuple[str, str, int], LimitRow]:
    out = {}
    for i, row in enumerate(_rows("zs_breakers.csv"), start=2):
        limit = _limit(row, "zs_breakers.csv", i)
        out[(limit.standard, limit.curve or "", limit.rating_a)] = limit
    return MappingProxyType(out)


def _load_fuses() -> Mapping[tuple[str, int], LimitRow]:
    out = {}
    for i, row in enumerate(_rows("zs_fuses.csv"), start=2):
        limit = _limit(row, "zs_fuses.csv", i)
        out[(limit.standard, limit.rating_a)] = limit
    return MappingProxyType(out)


def _checked(row: dict[str, str], name: str, line: int) -> dict[str, str]:
    if not row["where_checked"].strip():
        raise ValueError(f"ringmath/data/{name} line {line}: no where_checked")
    return row


def _load_insulation() -> tuple[InsulationRow, ...]:
    rows = [_checked(r, "insulation_min.csv", i)
            for i, r in enumerate(_rows("insulation_min.csv"), start=2)]
    return tuple(InsulationRow(r["band"], float(r["nominal_max_v"]), float(r["test_v"]),
                               float(r["min_mohm"]), r["edition"], r["table"], r["where_checked"])
                 for r in rows)


def _load_rcd() -> tuple[RcdTripRow, ...]:
    rows = [_checked(r, "rcd_trip_times.csv", i)
            for i, r in enumerate(_rows("rcd_trip_times.csv"), start=2)]
    return tuple(RcdTripRow(r["kind"], tuple(r["types"].split()), r["standard"], r["test"],
                            float(r["max_trip_ms"]), r["edition"], r["where_checked"])
                 for r in rows)


COPPER: Mapping[float, CopperRow] = _load_copper()
BREAKERS: Mapping[tuple[str, str, int], LimitRow] = _load_breakers()
FUSES: Mapping[tuple[str, int], LimitRow] = _load_fuses()
INSULATION: tuple[InsulationRow, ...] = _load_insulation()
RCD_TRIP: tuple[RcdTripRow, ...] = _load_rcd()
