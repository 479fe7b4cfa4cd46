"""The numeric view of a record that every hypothesis is fitted to (``Prepared``, ``prepare``):
readings as arrays in visiting order (the terminal re-measure where one was taken), recorded
spurs with their cable's ratios, whether the cpc is the cable's own, and where each outlet's
readings were taken (for the socket-contact prior).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ringmath.checks.expected import used_reading
from ringmath.conductors import resistance_mohm_per_m, spur_cable
from ringmath.record import RingTest

#: r2 below this fraction of the cable's own value: the cpc is not (only) the cable core
#: (metallic containment or a parallel earth path), so r2/r1 says nothing about the cable.
CPC_FREE_BELOW = 0.6
#: Prior probability, per outlet, of a high contact resistance at the socket (worn contacts,
#: plug-in lead), by where the reading was taken (our working figures).
CONTACT_FAULT_PRIOR = {"front": 0.12, None: 0.02, "terminals": 0.0005}


@dataclass(frozen=True)
class Prepared:
    """Numeric view of a RingTest. Readings in ohms: nan = not taken, inf = OL.

    e2e_ohm: (3,) r1, rn, r2. ring_ids / ln_ohm / le_ohm: ring outlets in visiting order.
    child_*: outlets spurred directly from a ring outlet (child_parent indexes ring_ids);
    child_kn / child_ke: the spur cable's neutral/line and cpc/line resistance ratios;
    child_fused: fed through an FCU (free excesses). ratio_n / ratio_e: the ring's expected
    rn/r1 and r2/r1 from the conductor table (ratio_e as measured when ``cpc_free``).
    contact_prior: per ring outlet, the prior of a high socket contact (CONTACT_FAULT_PRIOR by
    where it was read). cpc_free: the cpc is metallic containment, has parallel paths, or r2 is
    far below the cable's value: r2/r1 is then not a check of the cable, and the finite step 3
    readings are left out of the fit (they follow the metalwork, not the ring).
    """

    e2e_ohm: np.ndarray
    ring_ids: tuple[str, ...]
    ln_ohm: np.ndarray
    le_ohm: np.ndarray
    child_ids: tuple[str, ...]
    child_parent: np.ndarray
    child_ln_ohm: np.ndarray
    child_le_ohm: np.ndarray
    child_kn: np.ndarray
    child_ke: np.ndarray
    child_fused: np.ndarray
    ratio_n: float
    ratio_e: float
    contact_prior: np.ndarray | None = None
    cpc_free: bool = False

    def n_readings(self) -> int:
        """Readings that carry information (taken, finite or OL)."""
        arrays = (self.e2e_ohm, self.ln_ohm, self.le_ohm, self.child_ln_ohm, self.child_le_ohm)
        return int(sum(np.count_nonzero(~np.isnan(a)) for a in arrays))

    def step_median_ohm(self, step: str) -> float | None:
        """Median of the finite ring-outlet readings of ``step`` ("ln" or "le"), ohms; None
        when there are none."""
        x = self.ln_ohm if step == "ln" else self.le_ohm
        x = x[np.isfinite(x)]
        return float(np.median(x)) if x.size else None

    def ring_top_ohm(self, step: str) -> float:
        """The most a sound ring point reads in ``step``: (a + b)/4 of the step's two
        conductors end to end (series-parallel reduction, mid-ring; common practice), ohms."""
        return float(self.e2e_ohm[0] + self.e2e_ohm[1 if step == "ln" else 2]) / 4


def _val(x: float | None) -> float:
    return np.nan if x is None else float(x)


def prepare(test: RingTest) -> Prepared:
    """The numeric view of ``test`` used by the fits."""
    c = test.circuit
    rho_l = resistance_mohm_per_m(c.live_csa_mm2)
    rho_e = resistance_mohm_per_m(c.cpc_csa_mm2)
    ring = [o for o in test.outlets if o.on_ring]
    index = {o.id: i for i, o in enumerate(ring)}
    by_id = {o.id: o for o in test.outlets}
    kids = [o for o in test.outlets if o.spur_from in index]
    kn, ke, fused = [], [], []
    for o in kids:
        cable = spur_cable(o.spur_csa_mm2, o.spur_cpc_csa_mm2, ring_live_csa_mm2=c.live_csa_mm2)
        kn.append(1.0)
        ke.append(cable.cpc_ohm_per_m / cable.live_ohm_per_m)
        fused.append(by_id[o.spur_from].kind == "fcu")
    e = test.end_to_end
    ratio_e = rho_e / rho_l
    cpc_kind = getattr(c, "cpc_kind", "cable_core") or "cable_core"
    cpc_free = cpc_kind != "cable_core" or bool(getattr(c, "parallel_paths", False))
    r1, r2 = _val(e.r1_ohm), _val(e.r2_ohm)
    if np.isfinite(r1) and np.isfinite(r2) and r1 > 0 and r2 < CPC_FREE_BELOW * r1 * ratio_e:
        cpc_free = True
    if cpc_free and np.isfinite(r1) and np.isfinite(r2) and r1 > 0 and r2 > 0:
        ratio_e = r2 / r1
    le_ring = np.array([_val(used_reading(o, "le")) for o in ring])
    le_kids = np.array([_val(used_reading(o, "le")) for o in kids])
    if cpc_free:
        # through metalwork the step 3 readings follow the metal's route, not the ring cable's:
        # they cannot test the ring, so only their OL readings are kept
        le_ring = np.where(np.isinf(le_ring), le_ring, np.nan)
        le_kids = np.where(np.isinf(le_kids), le_kids, np.nan)
    return Prepared(
        e2e_ohm=np.array([_val(e.r1_ohm), _val(e.rn_ohm), _val(e.r2_ohm)]),
        ring_ids=tuple(o.id for o in ring),
        ln_ohm=np.array([_val(used_reading(o, "ln")) for o in ring]),
        le_ohm=le_ring,
        child_ids=tuple(o.id for o in kids),
        child_parent=np.array([index[o.spur_from] for o in kids], dtype=np.intp),
        child_ln_ohm=np.array([_val(used_reading(o, "ln")) for o in kids]),
        child_le_ohm=le_kids,
        child_kn=np.array(kn),
        child_ke=np.array(ke),
        child_fused=np.array(fused, dtype=bool),
        ratio_n=1.0,
        ratio_e=float(ratio_e),
        contact_prior=np.array([CONTACT_FAULT_PRIOR[_where(o)] for o in ring]),
        cpc_free=cpc_free,
    )


def _where(outlet) -> str | None:
    """Where an outlet's readings were taken: "terminals" when re-measured there, else the
    recorded ``taken_at`` ("front", "terminals" or None)."""
    if (getattr(outlet, "ln_terminals_ohm", None) is not None
            or getattr(outlet, "le_terminals_ohm", None) is not None):
        return "terminals"
    where = getattr(outlet, "taken_at", None)
    return where if where in CONTACT_FAULT_PRIOR else None
