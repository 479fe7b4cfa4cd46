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
- ``FUSES``: (standard, rating_a) -> FuseRow, BS 7671 Table 41.2 (0.4 s).
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


COPPER: Mapping[float, CopperRow] = _load_copper()
BREAKERS: Mapping[tuple[str, str, int], LimitRow] = _load_breakers()
FUSES: Mapping[tuple[str, int], LimitRow] = _load_fuses()
