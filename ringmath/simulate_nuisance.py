"""The test's own errors for the simulator: what a real site adds to every reading.

A ``Nuisance`` lists them for one simulated test; ``sample_nuisance`` draws a random mix over
the ranges seen on site. Each acts where it physically acts:

* probe contact: independent scatter on every reading, sd ``contact_sd_ohm`` (normal, or a
  heavy-tailed Student t with 3 degrees of freedom scaled to the same sd);
* leads not nulled (or drifting, or over-nulled when negative): ``lead_ohm`` added to every
  reading, or only to every reading of one step (``lead_step`` "e2e", "ln" or "le");
* a warmer cable on the day of steps 2–3: every wiring resistance ``1 + warm`` times its step 1
  value (copper rises about 0.4 %/K, BS EN 60228 Annex B, so 2 % is about 5 K);
* worn socket contacts read from the front: ``worn`` socket outlets with a contact resistance
  per accessory drawn from ``worn_ohm``, shared between the line pin and the other pin and put
  in series with the probes in the netlist;
* a metallic cpc: steel conduit bonded at every box, in parallel with the cable's cpc core
  ("parallel") or as the only cpc ("instead"); declared on the record or not;
* an unsuitable instrument: every step 2 and step 3 reading ``meter_scale`` times what it
  should be;
* one cross-connection not made (a clip off, a join forgotten): step ``join_open`` ("ln" or
  "le") read with only L1–N2 (L1–CPC2) joined, in the netlist.

Values here are our own working assumptions of what a site shows (common practice), not from
a standard. Everything random comes from the ``numpy.random.Generator`` passed in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ringmath.simulate_net import Conduit

LEAD_STEPS = (None, "e2e", "ln", "le")
TAILS = ("normal", "t3")
FRONT_MARKS = ("auto", "sockets", "worn", "none")
METALLIC = (None, "parallel", "instead")
SOCKET_KINDS = ("twin_socket", "single_socket")
#: Steel conduit resistance along the run, ohms per metre (order of magnitude from memory for
#: 20 mm steel conduit with its couplings; it only needs to be far below a 1.5 mm² core).
CONDUIT_OHM_PER_M = (0.001, 0.005)


@dataclass(frozen=True)
class Nuisance:
    """The set-up and site errors applied to one simulated test (see the module docstring).

    Ohms for ``contact_sd_ohm``, ``lead_ohm`` and ``worn_ohm``; ``warm`` a fraction (0.02 =
    2 % warmer); ``meter_scale`` a factor (1 = a suitable instrument). front_marks: which
    outlets the record marks ``taken_at: "front"``: "auto" (every socket when any is worn),
    "sockets", "worn" (only the worn ones) or "none". remeasure: the worn outlets are read
    again at their terminals (``ln_terminals`` / ``le_terminals`` on the record).
    """

    contact_sd_ohm: float = 0.0
    contact_tail: str = "normal"
    lead_ohm: float = 0.0
    lead_step: str | None = None
    warm: float = 0.0
    worn: int = 0
    worn_ohm: tuple[float, float] = (0.1, 0.6)
    front_marks: str = "auto"
    metallic_cpc: str | None = None
    cpc_declared: bool = True
    meter_scale: float = 1.0
    remeasure: bool = False
    join_open: str | None = None

    def __post_init__(self):
        checks = (
            ("contact_sd_ohm", 0.0 <= self.contact_sd_ohm <= 0.5),
            ("contact_tail", self.contact_tail in TAILS),
            ("lead_ohm", -0.5 <= self.lead_ohm <= 0.5),
            ("lead_step", self.lead_step in LEAD_STEPS),
            ("warm", -0.2 <= self.warm <= 0.2),
            ("worn", 0 <= self.worn <= 20),
            ("worn_ohm", 0.0 <= self.worn_ohm[0] <= self.worn_ohm[1] <= 5.0),
            ("front_marks", self.front_marks in FRONT_MARKS),
            ("metallic_cpc", self.metallic_cpc in METALLIC),
            ("meter_scale", 0.2 <= self.meter_scale <= 5.0),
            ("join_open", self.join_open in (None, "ln", "le")),
        )
        for name, ok in checks:
            if not ok:
                raise ValueError(f"{name}: {getattr(self, name)!r} is out of range")

    def lead_on(self, step: str) -> float:
        """The lead offset in ohms on a reading of ``step`` ("e2e", "ln" or "le")."""
        return self.lead_ohm if self.lead_step in (None, step) else 0.0

    def labels(self) -> tuple[str, ...]:
        """The nuisances applied, in short words (for the benchmark's listings)."""
        out = []
        if self.contact_sd_ohm:
            out.append(f"contact sd {self.contact_sd_ohm:.3f}"
                       + (" heavy-tailed" if self.contact_tail == "t3" else ""))
        if self.lead_ohm:
            out.append(f"leads {self.lead_ohm:+.3f} on {self.lead_step or 'all'}")
        if self.warm:
            out.append(f"{100 * self.warm:.1f} % warmer")
        if self.worn:
            out.append(f"{self.worn} worn sockets"
                       + (", re-measured at the terminals" if self.remeasure else ""))
        if self.metallic_cpc:
            out.append(f"metallic cpc {self.metallic_cpc}"
                       + ("" if self.cpc_declared else " undeclared"))
        if self.meter_scale != 1.0:
            out.append(f"meter scale x{self.meter_scale:.2f}")
        if self.join_open:
            out.append(f"one cross-connection open on {self.join_open}")
        return tuple(out)


def sample_nuisance(rng: np.random.Generator) -> Nuisance:
    """A random mix over the site ranges: contact sd 0.01–0.03 Ω (a third heavy-tailed), lead
    offset −0.03 to +0.10 Ω on all readings or one step, 0–4 % warmer, and in a quarter of the
    tests 1–4 worn sockets of 0.1–0.6 Ω."""
    return Nuisance(
        contact_sd_ohm=float(rng.uniform(0.01, 0.03)),
        contact_tail=str(rng.choice(TAILS, p=[2 / 3, 1 / 3])),
        lead_ohm=float(rng.uniform(-0.03, 0.10)),
        lead_step=[None, "e2e", "ln", "le"][int(rng.integers(0, 4))],
        warm=float(rng.uniform(0.0, 0.04)),
        worn=int(rng.integers(1, 5)) if rng.random() < 0.25 else 0,
    )


def contact_noise(rng: np.random.Generator, n: int, sd_ohm: float, tail: str) -> np.ndarray:
    """``n`` independent probe-contact errors in ohms with standard deviation ``sd_ohm``.

    "t3": Student t with 3 degrees of freedom (variance 3) scaled by sd/sqrt(3).
    """
    if tail == "t3":
        return rng.standard_t(3, n) * sd_ohm / math.sqrt(3.0)
    return rng.normal(0.0, sd_ohm, n)


def draw_conduit(rng: np.random.Generator, mode: str) -> Conduit:
    """A steel conduit cpc: per-metre resistance, box bonds and the board enclosure path."""
    return Conduit(ohm_per_m=float(rng.uniform(*CONDUIT_OHM_PER_M)),
                   bond_ohm=float(rng.uniform(0.002, 0.02)),
                   board_ohm=float(rng.uniform(0.005, 0.03)),
                   replaces_cpc=mode == "instead")


def draw_worn(rng: np.random.Generator, nuisance: Nuisance,
              sockets: list[str]) -> dict[str, tuple[float, float, float]]:
    """Worn accessories: outlet id -> (line pin, neutral pin, cpc pin) contact ohms.

    Each accessory's resistance R (uniform over ``worn_ohm``) is split with a share f of
    0.2–0.8 on the line pin and (1 − f)·R times 0.5–1.5 on each of the other two, so both its
    step 2 and step 3 front readings rise by about R.
    """
    k = min(nuisance.worn, len(sockets))
    chosen = [sockets[i] for i in sorted(rng.choice(len(sockets), size=k, replace=False))]
    out = {}
    for oid in chosen:
        r = float(rng.uniform(*nuisance.worn_ohm))
        f = float(rng.uniform(0.2, 0.8))
        u_n, u_e = (float(x) for x in rng.uniform(0.5, 1.5, 2))
        out[oid] = (f * r, (1 - f) * r * u_n, (1 - f) * r * u_e)
    return out


def shown(true_ohm: float, *, gain: float, digit_ohm: float, ideal: bool = False):
    """What the instrument displays for a resistance of ``true_ohm`` ohms in its loop: "OL"
    beyond range, else round(true·(1 + gain) + digit, 2) and never below 0 (an ideal meter
    shows ``true_ohm`` itself)."""
    if not math.isfinite(true_ohm) or true_ohm > 199:
        return "OL"
    if ideal:
        return max(true_ohm, 0.0)
    return round(max(true_ohm * (1 + gain) + digit_ohm, 0.0), 2)


def front_marks(n: Nuisance, kinds: dict[str, str], worn) -> dict[str, str]:
    """The outlets (id -> kind) the record marks as read from the socket front (plug-in lead)
    or at the terminals; ``worn``: the worn outlets' ids."""
    mode = n.front_marks
    if mode == "auto":
        mode = "sockets" if n.worn else "none"
    if mode == "none":
        return {}
    if mode == "worn":
        return {oid: "front" for oid in worn}
    return {oid: ("front" if kind in SOCKET_KINDS else "terminals")
            for oid, kind in kinds.items()}
