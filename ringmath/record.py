"""The test record: frozen dataclasses for one ring final circuit and its readings.

The same JSON document is the app's import/export format and the demo job format.
A circuit record looks like::

    {
      "format": "ringtest/1",                      # optional on input
      "job": {"reference": "J-1001", "site": "...", "client": "...",
              "date": "2026-11-30", "tester": "...", "notes": ""},   # optional
      "circuit": {
        "reference": "DB1/3", "description": "Ground floor sockets",
        "ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
        "rcd": {"rated_ma": 30, "type": "A"},        # or null
        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5,
        "ze_ohm": 0.35, "ze_source": "measured",     # or "declared"
        "earthing": "TN-C-S", "cable_length_m": null
      },
      "end_to_end": {"r1": 0.52, "rn": 0.52, "r2": 0.85},
      "outlets": [
        {"id": "a", "label": "Kitchen by door", "kind": "twin_socket",
         "spur_from": null, "fuse_a": null, "ln": 0.26, "le": 0.34}
      ]
    }

A job with several circuits is ``{"format", "job", "circuits": [record, ...]}`` where each
record has ``circuit``, ``end_to_end`` and ``outlets``.

Readings are in ohms: a number, the string ``"OL"`` (open / over range, stored as
``math.inf``) or ``null`` (not taken yet, stored as ``None``). ``"0,52"`` is read as 0.52.
Every parse error is a ``ValueError`` whose message starts with the path of the field.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ringmath.conductors import resistance_mohm_per_m

FORMAT = "ringtest/1"
OL = math.inf

#: Highest finite reading accepted, in ohms. A continuity reading above this at a socket
#: is recorded as "OL" (common practice: low-ohm ranges saturate well below this).
MAX_READING_OHM = 200.0

OUTLET_KINDS = (
    "twin_socket",
    "single_socket",
    "fcu",
    "junction_box",
    "fixed_equipment",
)
#: Outlet kinds that carry a socket (for the unfused-spur rules).
SOCKET_KINDS = ("twin_socket", "single_socket")
EARTHING_SYSTEMS = ("TN-S", "TN-C-S", "TT")
ZE_SOURCES = ("measured", "declared")
#: BS 1362 cartridge fuse ratings in amperes (BS 1362:1973, common ratings 3, 5, 7, 10, 13 A;
#: 1, 2 A are also made).
FCU_FUSE_RATINGS_A = (1, 2, 3, 5, 7, 10, 13)


@dataclass(frozen=True)
class Ocpd:
    """The circuit's overcurrent protective device.

    standard: "BS EN 60898", "BS EN 61009", "BS 88-3", "BS 3036" or "BS 1362".
    curve: "B", "C" or "D" for circuit-breakers; None for fuses.
    rating_a: rated current In in amperes.
    """

    standard: str
    curve: str | None
    rating_a: float


@dataclass(frozen=True)
class Rcd:
    """Residual current protection of the circuit: rated residual current in milliamperes."""

    rated_ma: float
    type: str | None = None


@dataclass(frozen=True)
class Circuit:
    """Circuit details. Resistances in ohms, cross-sections in mm², lengths in metres."""

    ocpd: Ocpd
    live_csa_mm2: float = 2.5
    cpc_csa_mm2: float = 1.5
    ze_ohm: float | None = None
    ze_source: str = "measured"
    earthing: str | None = None
    cable_length_m: float | None = None
    rcd: Rcd | None = None
    reference: str = ""
    description: str = ""


@dataclass(frozen=True)
class EndToEnd:
    """Step 1 readings in ohms: each a float, ``OL`` (math.inf) or None (not taken)."""

    r1_ohm: float | None = None
    rn_ohm: float | None = None
    r2_ohm: float | None = None

    def complete(self) -> bool:
        """True when all three end-to-end readings have been taken."""
        return None not in (self.r1_ohm, self.rn_ohm, self.r2_ohm)


@dataclass(frozen=True)
class Outlet:
    """One point on the circuit, in the order the tester visited it.

    ln_ohm: step 2 reading (L–N with L1–N2 and L2–N1 joined), ohms, OL = math.inf, None = not taken.
    le_ohm: step 3 reading (L–CPC with L1–CPC2 and L2–CPC1 joined), same conventions.
    spur_from: None for a point on the ring, else the id of the point that feeds it.
    fuse_a: BS 1362 fuse rating in amperes for an FCU, else None.
    spur_csa_mm2 / spur_cpc_csa_mm2: cross-sections of the spur cable feeding this point (None: same
    as the ring).
    """

    id: str
    kind: str = "twin_socket"
    spur_from: str | None = None
    fuse_a: float | None = None
    ln_ohm: float | None = None
    le_ohm: float | None = None
    label: str = ""
    spur_csa_mm2: float | None = None
    spur_cpc_csa_mm2: float | None = None

    @property
    def on_ring(self) -> bool:
        """True when the point is on the ring itself (not a spur)."""
        return self.spur_from is None


@dataclass(frozen=True)
class RingTest:
    """One circuit's record: details, step 1 readings and the outlets in visiting order."""

    circuit: Circuit
    end_to_end: EndToEnd = field(default_factory=EndToEnd)
    outlets: tuple[Outlet, ...] = ()

    def outlet(self, outlet_id: str) -> Outlet:
        """The outlet with this id; ValueError when there is none."""
        for o in self.outlets:
            if o.id == outlet_id:
                return o
        raise ValueError(f"outlets: no outlet with id {outlet_id!r}")


# ---------------------------------------------------------------- parsing helpers


def _num(value, path: str, *, minimum: float | None = None, maximum: float | None = None,
         allow_none: bool = True, strict_min: bool = False) -> float | None:
    """A number from JSON (int, float, or text with a decimal point or comma).

    Raises ValueError naming ``path``.
    """
    if value is None or (isinstance(value, str) and value.strip() == ""):
        if allow_none:
            return None
        raise ValueError(f"{path}: a number is required")
    if isinstance(value, bool):
        raise ValueError(f"{path}: expected a number, got {value!r}")
    if isinstance(value, str):
        text = value.strip().replace(",", ".")
        try:
            number = float(text)
        except ValueError:
            raise ValueError(f"{path}: {value!r} is not a number") from None
    elif isinstance(value, int | float):
        number = float(value)
    else:
        raise ValueError(f"{path}: expected a number, got {type(value).__name__}")
    if not math.isfinite(number):
        raise ValueError(f"{path}: {value!r} is not a finite number")
    if minimum is not None and (number <= minimum if strict_min else number < minimum):
        raise ValueError(f"{path}: {number:g} is below the lowest allowed value {minimum:g}")
    if maximum is not None and number > maximum:
        raise ValueError(f"{path}: {number:g} is above the highest allowed value {maximum:g}")
    return number


def parse_reading(value, path: str) -> float | None:
    """A reading in ohms: number, "OL" (-> math.inf), or None/"" (not taken).

    Accepts a decimal comma ("0,52"). Raises ValueError naming ``path`` for text, negative,
    or values above MAX_READING_OHM.
    """
    if isinstance(value, str) and value.strip().upper() in ("OL", "O/L", "OPEN", "∞", "INF"):
        return OL
    return _num(value, path, minimum=0.0, maximum=MAX_READING_OHM)


def format_reading(value: float | None):
    """The JSON form of a reading: float, "OL" or None."""
    if value is None:
        return None
    if math.isinf(value):
        return "OL"
    return value


def _text(value, path: str, default: str = "", *, choices=None, required: bool = False) -> str:
    if value is None:
        if required:
            raise ValueError(f"{path}: is required")
        return default
    if not isinstance(value, str | int) or isinstance(value, bool):
        raise ValueError(f"{path}: expected text, got {type(value).__name__}")
    text = str(value).strip()
    if required and not text:
        raise ValueError(f"{path}: is required")
    if choices is not None and text not in choices:
        raise ValueError(f"{path}: {text!r} is not one of {', '.join(choices)}")
    return text


def _obj(value, path: str, *, required: bool = True) -> dict:
    if value is None and not required:
        return {}
    if not isinstance(value, dict):
        raise ValueError(f"{path}: expected an object")
    return value


def parse_ocpd(doc, path: str = "circuit.ocpd") -> Ocpd:
    """Parse the OCPD block; the device itself is checked against the tables in ``devices``."""
    d = _obj(doc, path)
    standard = _text(d.get("standard"), f"{path}.standard", required=True)
    curve = d.get("curve")
    curve = None if curve in (None, "") else _text(curve, f"{path}.curve").upper()
    rating = _num(d.get("rating_a"), f"{path}.rating_a", minimum=0.0, strict_min=True,
                  allow_none=False)
    return Ocpd(standard=standard, curve=curve, rating_a=rating)


def parse_circuit(doc, path: str = "circuit") -> Circuit:
    """Parse the circuit block (see module docstring)."""
    d = _obj(doc, path)
    rcd_doc = d.get("rcd")
    rcd = None
    if rcd_doc is not None:
        r = _obj(rcd_doc, f"{path}.rcd")
        rcd = Rcd(
            rated_ma=_num(r.get("rated_ma"), f"{path}.rcd.rated_ma", minimum=0.0,
                          strict_min=True, allow_none=False),
            type=_text(r.get("type"), f"{path}.rcd.type") or None,
        )
    earthing = d.get("earthing")
    return Circuit(
        ocpd=parse_ocpd(d.get("ocpd"), f"{path}.ocpd"),
        live_csa_mm2=_csa(d.get("live_csa_mm2", 2.5), f"{path}.live_csa_mm2"),
        cpc_csa_mm2=_csa(d.get("cpc_csa_mm2", 1.5), f"{path}.cpc_csa_mm2"),
        ze_ohm=_num(d.get("ze_ohm"), f"{path}.ze_ohm", minimum=0.0, maximum=MAX_READING_OHM),
        ze_source=_text(d.get("ze_source"), f"{path}.ze_source", "measured", choices=ZE_SOURCES),
        earthing=None if earthing in (None, "") else _text(
            earthing, f"{path}.earthing", choices=EARTHING_SYSTEMS),
        cable_length_m=_num(d.get("cable_length_m"), f"{path}.cable_length_m", minimum=0.0,
                            strict_min=True, maximum=2000.0),
        rcd=rcd,
        reference=_text(d.get("reference"), f"{path}.reference"),
        description=_text(d.get("description"), f"{path}.description"),
    )


def _csa(value, path: str) -> float:
    number = _num(value, path, minimum=0.0, strict_min=True, maximum=50.0, allow_none=False)
    resistance_mohm_per_m(number, path)  # raises ValueError naming the field if not tabulated
    return number


def parse_outlet(doc, path: str) -> Outlet:
    """Parse one outlet (see module docstring)."""
    d = _obj(doc, path)
    oid = _text(d.get("id"), f"{path}.id", required=True)
    kind = _text(d.get("kind"), f"{path}.kind", "twin_socket", choices=OUTLET_KINDS)
    spur_from = d.get("spur_from")
    spur_from = None if spur_from in (None, "") else _text(spur_from, f"{path}.spur_from")
    fuse = _num(d.get("fuse_a"), f"{path}.fuse_a", minimum=0.0, strict_min=True)
    if kind == "fcu":
        if fuse is None:
            raise ValueError(f"{path}.fuse_a: an FCU needs its fuse rating")
        if fuse not in FCU_FUSE_RATINGS_A:
            raise ValueError(
                f"{path}.fuse_a: {fuse:g} A is not a BS 1362 rating "
                f"({', '.join(str(r) for r in FCU_FUSE_RATINGS_A)} A)")
    elif fuse is not None:
        raise ValueError(f"{path}.fuse_a: only an FCU carries a fuse rating")
    spur_csa = d.get("spur_csa_mm2")
    spur_cpc = d.get("spur_cpc_csa_mm2")
    return Outlet(
        id=oid,
        kind=kind,
        spur_from=spur_from,
        fuse_a=fuse,
        ln_ohm=parse_reading(d.get("ln"), f"{path}.ln"),
        le_ohm=parse_reading(d.get("le"), f"{path}.le"),
        label=_text(d.get("label"), f"{path}.label"),
        spur_csa_mm2=None if spur_csa in (None, "") else _csa(spur_csa, f"{path}.spur_csa_mm2"),
        spur_cpc_csa_mm2=None if spur_cpc in (None, "") else _csa(
            spur_cpc, f"{path}.spur_cpc_csa_mm2"),
    )


def parse_record(doc, path: str = "") -> RingTest:
    """Parse one circuit record into a RingTest; ValueError naming the field on bad input."""
    prefix = f"{path}." if path else ""
    d = _obj(doc, path or "record")
    circuit = parse_circuit(d.get("circuit"), f"{prefix}circuit")
    e = _obj(d.get("end_to_end"), f"{prefix}end_to_end", required=False)
    e2e = EndToEnd(
        r1_ohm=parse_reading(e.get("r1"), f"{prefix}end_to_end.r1"),
        rn_ohm=parse_reading(e.get("rn"), f"{prefix}end_to_end.rn"),
        r2_ohm=parse_reading(e.get("r2"), f"{prefix}end_to_end.r2"),
    )
    raw_outlets = d.get("outlets", [])
    if not isinstance(raw_outlets, list):
        raise ValueError(f"{prefix}outlets: expected a list")
    outlets = tuple(parse_outlet(o, f"{prefix}outlets[{i}]") for i, o in enumerate(raw_outlets))
    _check_topology(outlets, f"{prefix}outlets")
    return RingTest(circuit=circuit, end_to_end=e2e, outlets=outlets)


def _check_topology(outlets: tuple[Outlet, ...], path: str) -> None:
    index = {}
    for i, o in enumerate(outlets):
        if o.id in index:
            raise ValueError(f"{path}[{i}].id: duplicate id {o.id!r}")
        index[o.id] = i
    for i, o in enumerate(outlets):
        if o.spur_from is None:
            continue
        if o.spur_from not in index:
            raise ValueError(f"{path}[{i}].spur_from: no outlet with id {o.spur_from!r}")
        seen = {o.id}
        cur = o
        while cur.spur_from is not None:
            if cur.spur_from in seen:
                raise ValueError(f"{path}[{i}].spur_from: spurs form a loop through {o.id!r}")
            seen.add(cur.spur_from)
            cur = outlets[index[cur.spur_from]]


def parse_document(doc) -> list[RingTest]:
    """A circuit record or a job document ({"circuits": [...]}) as a list of RingTest."""
    d = _obj(doc, "record")
    if "circuits" in d:
        circuits = d["circuits"]
        if not isinstance(circuits, list) or not circuits:
            raise ValueError("circuits: expected a non-empty list")
        return [parse_record(c, f"circuits[{i}]") for i, c in enumerate(circuits)]
    return [parse_record(d)]


def ring_outlets(test: RingTest) -> tuple[Outlet, ...]:
    """The outlets on the ring itself, in visiting order."""
    return tuple(o for o in test.outlets if o.on_ring)


def ring_root(test: RingTest, outlet: Outlet) -> Outlet:
    """The ring point a spur outlet is fed from (the outlet itself when on the ring)."""
    by_id = {o.id: o for o in test.outlets}
    cur = outlet
    while cur.spur_from is not None:
        cur = by_id[cur.spur_from]
    return cur


def beyond_fcu(test: RingTest, outlet: Outlet) -> Outlet | None:
    """The nearest FCU upstream of this outlet on its spur chain, or None."""
    by_id = {o.id: o for o in test.outlets}
    cur = outlet
    while cur.spur_from is not None:
        cur = by_id[cur.spur_from]
        if cur.kind == "fcu":
            return cur
    return None
