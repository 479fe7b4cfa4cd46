"""Parsing a whole ``ringtest/1`` document into the record's dataclasses (format: see
``ringmath.record``). Every refusal is a RecordError naming the field."""

from __future__ import annotations

from typing import Any

from ringmath.conductors import resistance_mohm_per_m
from ringmath.record.model import (
    CPC_KINDS,
    EARTHING_SYSTEMS,
    FCU_FUSE_RATINGS_A,
    INSULATION_TEST_V,
    MAX_CIRCUITS,
    MAX_OUTLETS,
    MAX_PFC_KA,
    MAX_READING_OHM,
    MAX_TRIP_MS,
    OUTLET_KINDS,
    RCD_RATINGS_MA,
    RCD_TYPES,
    TAKEN_AT,
    ZE_SOURCES,
    Circuit,
    EndToEnd,
    Insulation,
    Ocpd,
    Outlet,
    Rcd,
    RingTest,
)
from ringmath.record.topology import check_topology
from ringmath.record.values import (
    MAX_ID_CHARS,
    RecordError,
    flag,
    number,
    obj,
    optional_choice,
    parse_ir,
    parse_reading,
    show,
    text,
)


def _listed(value: float, path: str, allowed: tuple[float, ...], unit: str) -> float:
    if not any(abs(value - a) < 1e-9 for a in allowed):
        raise RecordError(path, "choice", f"{value:g} {unit} is not one of "
                          f"{', '.join(f'{a:g}' for a in allowed)} {unit}")
    return value


def parse_ocpd(doc: object, path: str = "circuit.ocpd") -> Ocpd:
    """Parse the OCPD block and check the device is one ``ringmath.devices`` lists (RecordError
    "choice" naming ``<path>.standard`` / ``.curve`` / ``.rating_a``); a listed device whose
    limit is not checked is still a valid record (its Zs limit is then unknown)."""
    from ringmath.devices import check_device  # devices imports the model: import on use

    d = obj(doc, path)
    standard = text(d.get("standard"), f"{path}.standard", required=True)
    curve_raw = d.get("curve")
    curve = None if curve_raw in (None, "") else text(curve_raw, f"{path}.curve").upper()
    rating = number(d.get("rating_a"), f"{path}.rating_a", minimum=0.0, strict_min=True,
                    maximum=10_000.0, allow_none=False)
    assert rating is not None
    ocpd = Ocpd(standard=standard, curve=curve, rating_a=rating)
    check_device(ocpd, path)
    return ocpd


def parse_rcd(doc: object, path: str = "circuit.rcd") -> Rcd | None:
    """Parse the RCD block (null: no RCD)."""
    if doc is None:
        return None
    r = obj(doc, path)
    rated = number(r.get("rated_ma"), f"{path}.rated_ma", allow_none=False, minimum=0.0,
                   strict_min=True, maximum=10_000.0)
    assert rated is not None
    return Rcd(
        rated_ma=_listed(rated, f"{path}.rated_ma", RCD_RATINGS_MA, "mA"),
        type=optional_choice(r.get("type"), f"{path}.type", RCD_TYPES),
        trip_ms=number(r.get("trip_ms"), f"{path}.trip_ms", minimum=0.0, maximum=MAX_TRIP_MS),
        button_ok=flag(r.get("button_ok"), f"{path}.button_ok"),
    )


def parse_insulation(doc: object, path: str = "circuit.insulation") -> Insulation | None:
    """Parse the insulation resistance block (null: not tested)."""
    if doc is None:
        return None
    d = obj(doc, path)
    test_v = number(d.get("test_v"), f"{path}.test_v")
    return Insulation(
        test_v=None if test_v is None else _listed(test_v, f"{path}.test_v", INSULATION_TEST_V,
                                                   "V"),
        ln_mohm=parse_ir(d.get("ln_mohm"), f"{path}.ln_mohm"),
        le_mohm=parse_ir(d.get("le_mohm"), f"{path}.le_mohm"),
        ne_mohm=parse_ir(d.get("ne_mohm"), f"{path}.ne_mohm"),
    )


def csa(value: object, path: str) -> float:
    """A copper cross-section in mm² that the conductor table lists."""
    size = number(value, path, minimum=0.0, strict_min=True, maximum=50.0, allow_none=False)
    assert size is not None
    try:
        resistance_mohm_per_m(size, path)
    except ValueError as exc:
        raise RecordError(path, "choice", str(exc).removeprefix(f"{path}: ")) from None
    return size


def _optional_csa(value: object, path: str) -> float | None:
    return None if value in (None, "") else csa(value, path)


def parse_circuit(doc: object, path: str = "circuit") -> Circuit:
    """Parse the circuit block (see the format in ``ringmath.record``)."""
    d = obj(doc, path)
    return Circuit(
        ocpd=parse_ocpd(d.get("ocpd"), f"{path}.ocpd"),
        live_csa_mm2=csa(d.get("live_csa_mm2", 2.5), f"{path}.live_csa_mm2"),
        cpc_csa_mm2=csa(d.get("cpc_csa_mm2", 1.5), f"{path}.cpc_csa_mm2"),
        ze_ohm=number(d.get("ze_ohm"), f"{path}.ze_ohm", minimum=0.0, maximum=MAX_READING_OHM),
        ze_source=text(d.get("ze_source"), f"{path}.ze_source", "measured", choices=ZE_SOURCES),
        earthing=optional_choice(d.get("earthing"), f"{path}.earthing", EARTHING_SYSTEMS),
        cable_length_m=number(d.get("cable_length_m"), f"{path}.cable_length_m", minimum=0.0,
                              strict_min=True, maximum=2000.0),
        rcd=parse_rcd(d.get("rcd"), f"{path}.rcd"),
        reference=text(d.get("reference"), f"{path}.reference"),
        description=text(d.get("description"), f"{path}.description"),
        cpc_kind=text(d.get("cpc_kind"), f"{path}.cpc_kind", "cable_core", choices=CPC_KINDS),
        parallel_paths=bool(flag(d.get("parallel_paths"), f"{path}.parallel_paths", False)),
        pfc_ka=number(d.get("pfc_ka"), f"{path}.pfc_ka", minimum=0.0, strict_min=True,
                      maximum=MAX_PFC_KA),
        insulation=parse_insulation(d.get("insulation"), f"{path}.insulation"),
    )


def _fuse(d: dict[str, Any], kind: str, path: str) -> float | None:
    fuse = number(d.get("fuse_a"), f"{path}.fuse_a", minimum=0.0, strict_min=True,
                  maximum=1000.0)
    if kind == "fcu":
        if fuse is None:
            raise RecordError(f"{path}.fuse_a", "missing", "an FCU needs its fuse rating")
        if fuse not in FCU_FUSE_RATINGS_A:
            raise RecordError(f"{path}.fuse_a", "choice", f"{fuse:g} A is not a BS 1362 rating "
                              f"({', '.join(str(r) for r in FCU_FUSE_RATINGS_A)} A)")
    elif fuse is not None:
        raise RecordError(f"{path}.fuse_a", "choice", "only an FCU carries a fuse rating")
    return fuse


def parse_outlet(doc: object, path: str) -> Outlet:
    """Parse one outlet (see the format in ``ringmath.record``)."""
    d = obj(doc, path)
    kind = text(d.get("kind"), f"{path}.kind", "twin_socket", choices=OUTLET_KINDS)
    spur_from = d.get("spur_from")
    return Outlet(
        id=text(d.get("id"), f"{path}.id", required=True, max_chars=MAX_ID_CHARS),
        kind=kind,
        spur_from=None if spur_from in (None, "") else text(
            spur_from, f"{path}.spur_from", max_chars=MAX_ID_CHARS),
        fuse_a=_fuse(d, kind, path),
        ln_ohm=parse_reading(d.get("ln"), f"{path}.ln"),
        le_ohm=parse_reading(d.get("le"), f"{path}.le"),
        label=text(d.get("label"), f"{path}.label"),
        spur_csa_mm2=_optional_csa(d.get("spur_csa_mm2"), f"{path}.spur_csa_mm2"),
        spur_cpc_csa_mm2=_optional_csa(d.get("spur_cpc_csa_mm2"), f"{path}.spur_cpc_csa_mm2"),
        zs_measured_ohm=parse_reading(d.get("zs_measured"), f"{path}.zs_measured"),
        taken_at=optional_choice(d.get("taken_at"), f"{path}.taken_at", TAKEN_AT),
        ln_terminals_ohm=parse_reading(d.get("ln_terminals"), f"{path}.ln_terminals"),
        le_terminals_ohm=parse_reading(d.get("le_terminals"), f"{path}.le_terminals"),
    )


def _sized_list(value: object, path: str, most: int, *,
                required: bool = False) -> list[Any]:
    if value is None and not required:
        return []
    if not isinstance(value, list):
        raise RecordError(path, "missing" if value is None else "type",
                          f"expected a list, got {show(value)}")
    if len(value) > most:
        raise RecordError(path, "size", f"{len(value)} entries (at most {most})")
    return value


def parse_record(doc: object, path: str = "") -> RingTest:
    """Parse one circuit record into a RingTest; RecordError naming the field on bad input."""
    prefix = f"{path}." if path else ""
    d = obj(doc, path or "record")
    circuit = parse_circuit(d.get("circuit"), f"{prefix}circuit")
    e = obj(d.get("end_to_end"), f"{prefix}end_to_end", required=False)
    e2e = EndToEnd(
        r1_ohm=parse_reading(e.get("r1"), f"{prefix}end_to_end.r1"),
        rn_ohm=parse_reading(e.get("rn"), f"{prefix}end_to_end.rn"),
        r2_ohm=parse_reading(e.get("r2"), f"{prefix}end_to_end.r2"),
    )
    raw = _sized_list(d.get("outlets", []), f"{prefix}outlets", MAX_OUTLETS)
    outlets = tuple(parse_outlet(o, f"{prefix}outlets[{i}]") for i, o in enumerate(raw))
    check_topology(outlets, f"{prefix}outlets")
    return RingTest(circuit=circuit, end_to_end=e2e, outlets=outlets)


def parse_document(doc: object) -> list[RingTest]:
    """A circuit record or a job document ({"circuits": [...]}) as a list of RingTest."""
    d = obj(doc, "record")
    if "circuits" in d:
        circuits = _sized_list(d["circuits"], "circuits", MAX_CIRCUITS, required=True)
        if not circuits:
            raise RecordError("circuits", "missing", "expected a non-empty list")
        return [parse_record(c, f"circuits[{i}]") for i, c in enumerate(circuits)]
    return [parse_record(d)]
