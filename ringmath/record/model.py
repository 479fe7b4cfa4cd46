"""The record's frozen dataclasses and the fixed choices of the ``ringtest/1`` format.

Units are in the names: ohms (``_ohm``), megohms (``_mohm``), mm² (``_mm2``), amperes (``_a``),
milliamperes (``_ma``), milliseconds (``_ms``), kiloamperes (``_ka``), volts (``_v``).
A reading is a float, ``OL`` (``math.inf``: open / over range) or None (not taken yet).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

FORMAT = "ringtest/1"
OL = math.inf

#: Highest finite reading accepted, in ohms. A continuity reading above this at a socket
#: is recorded as "OL" (common practice: low-ohm ranges saturate well below this).
MAX_READING_OHM = 200.0
#: Highest insulation resistance accepted, MΩ (instruments show "> 999" or "> 2000" MΩ; we
#: allow a 100 GΩ range and refuse anything beyond as a typing error).
MAX_INSULATION_MOHM = 100_000.0
#: Longest trip time accepted, ms (a tester's RCD range stops well before 2 s).
MAX_TRIP_MS = 2000.0
#: Highest prospective fault current accepted, kA (above any low-voltage supply's).
MAX_PFC_KA = 100.0

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
#: What the circuit protective conductor is: a core of the cable (default), the metal conduit
#: or trunking, the cable's armour, or a separate conductor.
CPC_KINDS = ("cable_core", "conduit", "trunking", "armour", "separate")
#: Where a step 2/3 reading was taken: a plug-in lead at the socket front, or at the terminals.
TAKEN_AT = ("front", "terminals")
#: RCD types by the residual currents they detect (BS EN 61008-1 / 61009-1: AC, A; BS EN 62423:
#: F, B).
RCD_TYPES = ("AC", "A", "F", "B")
#: Rated residual operating currents IΔn in mA (the preferred values of BS EN 61008-1 /
#: 61009-1: 0.006, 0.01, 0.03, 0.1, 0.3, 0.5 A).
RCD_RATINGS_MA = (6, 10, 30, 100, 300, 500)
#: Insulation test voltages, V d.c. (BS 7671:2018 Table 64: 250, 500, 1000 V).
INSULATION_TEST_V = (250, 500, 1000)
#: BS 1362 cartridge fuse ratings in amperes (BS 1362:1973, common ratings 3, 5, 7, 10, 13 A;
#: 1, 2 A are also made).
FCU_FUSE_RATINGS_A = (1, 2, 3, 5, 7, 10, 13)
#: Most outlets on one circuit, and circuits in one job document. Chosen: a ring serving the
#: 100 m² floor area of BS 7671 Appendix 15 rarely has more than 30 points; 200 leaves room for
#: junction boxes and spurs and stops a runaway file.
MAX_OUTLETS = 200
MAX_CIRCUITS = 200


@dataclass(frozen=True)
class Ocpd:
    """The circuit's overcurrent protective device.

    standard: "BS EN 60898", "BS EN 61009", "BS 88-3", "BS 3036", "BS 1361", "BS 3871" or
    "BS 1362" (see ``ringmath.devices``).
    curve: "B", "C" or "D" for BS EN breakers, "1", "2" or "3" for BS 3871; None for fuses.
    rating_a: rated current In in amperes.
    """

    standard: str
    curve: str | None
    rating_a: float


@dataclass(frozen=True)
class Rcd:
    """Residual current protection of the circuit.

    rated_ma: rated residual operating current IΔn in mA; type: AC, A, F, B or None;
    trip_ms: measured trip time at IΔn in ms (None: not tested); button_ok: the test button
    tripped it (None: not checked).
    """

    rated_ma: float
    type: str | None = None
    trip_ms: float | None = None
    button_ok: bool | None = None


@dataclass(frozen=True)
class IrValue:
    """An insulation resistance reading in MΩ; ``over`` when the instrument showed "> value"."""

    value_mohm: float
    over: bool = False


@dataclass(frozen=True)
class Insulation:
    """Insulation resistance test of the circuit: test voltage in V d.c. and the readings in MΩ
    between line and neutral, line and earth, neutral and earth (None: not taken)."""

    test_v: float | None = None
    ln_mohm: IrValue | None = None
    le_mohm: IrValue | None = None
    ne_mohm: IrValue | None = None


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
    cpc_kind: str = "cable_core"
    parallel_paths: bool = False
    pfc_ka: float | None = None
    insulation: Insulation | None = None


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
    ln_terminals_ohm / le_terminals_ohm: the same readings re-measured at the terminals.
    taken_at: "front", "terminals" or None (not said) for ln_ohm / le_ohm.
    zs_measured_ohm: earth fault loop impedance measured live at the point, ohms.
    spur_from: None for a point on the ring, else the id of the point that feeds it.
    fuse_a: BS 1362 fuse rating in amperes for an FCU, else None.
    spur_csa_mm2 / spur_cpc_csa_mm2: cross-sections of the spur cable feeding this point (None: the
    spur cable model of ``conductors.spur_cable`` decides).
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
    zs_measured_ohm: float | None = None
    taken_at: str | None = None
    ln_terminals_ohm: float | None = None
    le_terminals_ohm: float | None = None

    @property
    def on_ring(self) -> bool:
        """True when the point is on the ring itself (not a spur)."""
        return self.spur_from is None

    @property
    def ln_used_ohm(self) -> float | None:
        """The step 2 reading to judge: the terminal re-measure when there is one."""
        return self.ln_terminals_ohm if self.ln_terminals_ohm is not None else self.ln_ohm

    @property
    def le_used_ohm(self) -> float | None:
        """The step 3 reading to judge (this point's R1+R2): the terminal re-measure when there
        is one."""
        return self.le_terminals_ohm if self.le_terminals_ohm is not None else self.le_ohm


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
