"""The cable of a recorded spur: resistance per metre, the step 3 / step 2 rise ratio, the
largest plausible rise."""

from __future__ import annotations

from ringmath.conductors import resistance_mohm_per_m, spur_cable
from ringmath.record import Outlet, RingTest

#: ring is normally a few metres to one socket; 25 m is generous (a fused spur to an outbuilding
#: may be longer and will then be flagged for a look, not as a fault).
SPUR_MAX_LENGTH_M = 25.0


def _per_m_ohm(csa_mm2: float, path: str) -> float:
    """Resistance per metre in ohms of ``csa_mm2`` copper; ValueError naming ``path``."""
    return resistance_mohm_per_m(csa_mm2, path) / 1000.0



def spur_cable_per_m_ohm(test: RingTest, outlet: Outlet) -> tuple[float, float]:
    """(live, cpc) resistance per metre in ohms of the cable feeding spur ``outlet``: the one
    spur-cable model, ``conductors.spur_cable`` (its recorded sizes, else the ring's live size
    and the twin-and-earth cpc of that live size). ValueError naming the outlet's field."""
    i = test.outlets.index(outlet)
    try:
        cable = spur_cable(outlet.spur_csa_mm2, outlet.spur_cpc_csa_mm2,
                           ring_live_csa_mm2=test.circuit.live_csa_mm2)
    except ValueError as exc:
        text = str(exc)
        if text.startswith("live_csa_mm2"):  # the spur's live size has no companion cpc
            text = "spur_csa_mm2" + text[len("live_csa_mm2"):]
        raise ValueError(f"outlets[{i}].{text}") from exc
    return cable.live_ohm_per_m, cable.cpc_ohm_per_m


def le_per_ln_factor(test: RingTest, outlet: Outlet) -> float:
    """How much more a spur's cable raises step 3 than step 2: (r_live + r_cpc) / (2 r_live),
    i.e. (1 + r2/r1) / (1 + rn/r1) with the neutral the size of the line (1.32 for 2.5/1.5)."""
    live, cpc = spur_cable_per_m_ohm(test, outlet)
    return (live + cpc) / (2 * live)


def spur_excess_limit_ohm(test: RingTest, outlet: Outlet, step: str) -> float:
    """Largest plausible rise in ohms of spur ``outlet`` over its parent on ``step`` ("ln" or
    "le"): SPUR_MAX_LENGTH_M × (r_live + r_neutral or r_cpc per metre)."""
    live, cpc = spur_cable_per_m_ohm(test, outlet)
    return SPUR_MAX_LENGTH_M * (live + (live if step == "ln" else cpc))
