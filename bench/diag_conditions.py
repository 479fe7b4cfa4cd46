"""The site conditions the diagnosis benchmark runs, each a seeded draw of the test's errors.

Each condition draws a ``ringmath.simulate_nuisance.Nuisance`` per simulated test (None: a
clean meter). ``pairs``: every faulty ring carries a second, different fault as well.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ringmath.simulate_nuisance import Nuisance, sample_nuisance


@dataclass(frozen=True)
class Condition:
    key: str
    title: str
    draw: Callable[[np.random.Generator], Nuisance | None]
    pairs: bool = False


def _one_step(rng: np.random.Generator) -> str:
    return ("e2e", "ln", "le")[int(rng.integers(0, 3))]


def _typical(rng: np.random.Generator) -> Nuisance:
    """Contact 0.02 Ω, leads anywhere in ±0.05 Ω on every reading or on one step, 2 % warmer."""
    step = [None, "e2e", "ln", "le"][int(rng.integers(0, 4))]
    return Nuisance(contact_sd_ohm=0.02, lead_ohm=float(rng.uniform(-0.05, 0.05)),
                    lead_step=step, warm=0.02)


CONDITIONS = (
    Condition("clean", "clean meter", lambda rng: None),
    Condition("contact01", "probe contact sd 0.01 Ω", lambda rng: Nuisance(contact_sd_ohm=0.01)),
    Condition("contact02", "probe contact sd 0.02 Ω", lambda rng: Nuisance(contact_sd_ohm=0.02)),
    Condition("contact03", "probe contact sd 0.03 Ω", lambda rng: Nuisance(contact_sd_ohm=0.03)),
    Condition("contact02t", "probe contact sd 0.02 Ω, heavy-tailed (t3)",
              lambda rng: Nuisance(contact_sd_ohm=0.02, contact_tail="t3")),
    Condition("lead+02", "leads +0.02 Ω on every reading", lambda rng: Nuisance(lead_ohm=0.02)),
    Condition("lead+05", "leads +0.05 Ω on every reading", lambda rng: Nuisance(lead_ohm=0.05)),
    Condition("lead-03", "leads −0.03 Ω on every reading (over-nulled)",
              lambda rng: Nuisance(lead_ohm=-0.03)),
    Condition("step+05", "+0.05 Ω on every reading of one step",
              lambda rng: Nuisance(lead_ohm=0.05, lead_step=_one_step(rng))),
    Condition("lead+10", "leads +0.10 Ω on every reading (set-up error)",
              lambda rng: Nuisance(lead_ohm=0.10)),
    Condition("step+08", "+0.08 Ω on every reading of one step (set-up error)",
              lambda rng: Nuisance(lead_ohm=0.08, lead_step=_one_step(rng))),
    Condition("warm2", "cable 2 % warmer for steps 2–3", lambda rng: Nuisance(warm=0.02)),
    Condition("warm4", "cable 4 % warmer for steps 2–3", lambda rng: Nuisance(warm=0.04)),
    Condition("worn", "1–4 worn sockets, 0.1–0.6 Ω, read from the front (set-up error)",
              lambda rng: Nuisance(worn=int(rng.integers(1, 5)))),
    Condition("worn_remeasured", "1–4 worn sockets, re-measured at the terminals",
              lambda rng: Nuisance(worn=int(rng.integers(1, 5)), remeasure=True)),
    Condition("metallic", "metallic cpc (steel conduit, in parallel or alone), declared",
              lambda rng: Nuisance(metallic_cpc=("parallel", "instead")[int(rng.integers(0, 2))])),
    Condition("metallic_undeclared", "metallic cpc, not declared on the record",
              lambda rng: Nuisance(metallic_cpc=("parallel", "instead")[int(rng.integers(0, 2))],
                                   cpc_declared=False)),
    Condition("meter", "unsuitable meter: steps 2–3 read x1.8–2.3 (set-up error)",
              lambda rng: Nuisance(meter_scale=float(rng.uniform(1.8, 2.3)))),
    Condition("join_open", "one cross-connection not made for step 2 or 3 (set-up error)",
              lambda rng: Nuisance(join_open=("ln", "le")[int(rng.integers(0, 2))])),
    Condition("two", "two faults at once, clean meter", lambda rng: None, pairs=True),
    Condition("typical", "typical site: contact 0.02, leads up to ±0.05 all/one step, 2 % warmer",
              _typical),
    Condition("typical_two", "typical site, two faults at once", _typical, pairs=True),
    Condition("mix", "random site mix: contact 0.01–0.03, leads −0.03..+0.10, 0–4 % warmer, "
              "worn sockets in a quarter", sample_nuisance),
)
BY_KEY = {c.key: c for c in CONDITIONS}
