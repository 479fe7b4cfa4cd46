"""A seeded simulator of ring final circuits with and without faults, for tests and benchmarks.

Each ring is an explicit named-node netlist (``ringmath.simulate_net``): every outlet's
terminals, the cable between outlets, spurs, fused spurs, bridges, breaks, joints, swapped
terminals and metallic conduit. Every reading is solved by nodal analysis and taken through a
simulated ohmmeter (0.01 Ω display, a gain error per instrument and last-digit noise), with the
site's own errors where a ``Nuisance`` is given (``ringmath.simulate_nuisance``); then the
outlets are shuffled into a visiting order. One or two faults per ring.

Everything random comes from the ``numpy.random.Generator`` passed in. Without a nuisance the
draws are the same as with one, up to the nuisance's own draws which come last, so a seed
gives the same ring, fault and digit noise with and without it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ringmath.conductors import resistance_mohm_per_m
from ringmath.simulate_net import (
    Conduit,
    Point,
    Wiring,
    edges,
    reading_ohm,
    signal_ohm,
    true_readings,
)
from ringmath.simulate_nuisance import (
    SOCKET_KINDS,
    Nuisance,
    contact_noise,
    draw_conduit,
    draw_worn,
    front_marks,
    shown,
)

FAULT_CODES = (
    "interconnection",
    "open_conductor",
    "wrong_cross_connection",
    "unrecorded_spur",
    "reversed_polarity",
    "high_resistance_joint",
)
_BY_NAME = {"line": "L", "neutral": "N", "cpc": "E"}


@dataclass(frozen=True)
class Fault:
    """One fault that was built: code, conductor (breaks and joints), step (crossed ends), the
    outlets it concerns and whether the readings can in principle place it."""

    code: str
    conductor: str | None = None
    step: str | None = None
    outlets: tuple[str, ...] = ()
    locatable: bool = False


@dataclass(frozen=True)
class Truth:
    """What was really built and what the test added.

    code/conductor/step/outlets/locatable: the first fault (code None for a sound ring);
    ``faults`` all of them. outlets: ids the fault concerns (the outlet itself, the two beside a
    break or joint, or the outlets inside a bridged section). service_r1r2_ohm: true in-service
    R1+R2 at every outlet (inf when no earth path). ring_order: ring outlet ids from end 1 to
    end 2; positions: their ring fractions. nuisance: what was applied (None: a clean test);
    worn_ohm: outlet id -> (ohms added to its step 2, step 3 front reading); conduit: the
    metallic cpc built, if any. cable_ohm: (r1, rn, r2) of the ring cable alone.
    signal_ohm: how far the noise-free readings sit from every sound ring with the same
    end-to-end values (the largest of |r1 − rn|, the r2/r1 departure from the cable table
    when the cpc is a cable core, and each ring outlet's step 2 and 3 distance from the range
    a sound ring reads); inf for an open reading.
    """

    code: str | None
    conductor: str | None = None
    step: str | None = None
    outlets: tuple[str, ...] = ()
    locatable: bool = False
    service_r1r2_ohm: dict = field(default_factory=dict)
    ring_order: tuple[str, ...] = ()
    faults: tuple[Fault, ...] = ()
    nuisance: Nuisance | None = None
    worn_ohm: dict = field(default_factory=dict)
    conduit: Conduit | None = None
    positions: dict = field(default_factory=dict)
    cable_ohm: tuple[float, ...] = ()
    signal_ohm: float = 0.0


def _ids(n: int, rng: np.random.Generator) -> list[str]:
    letters = "abcdefghijklmnopqrstuvwxyz"
    names = [letters[i % 26] + ("" if i < 26 else str(i // 26)) for i in range(n)]
    return [str(name) for name in rng.permutation(names)]


def _ring(rng: np.random.Generator, n_ring: int):
    """Outlets, spurs and a fused spur at random places; cable resistance per metre."""
    length_m = float(rng.uniform(25, 95))
    cable = float(rng.uniform(0.95, 1.0))  # real cable sits a little under the table maxima
    rho = tuple(resistance_mohm_per_m(csa) / 1000 * cable * (1 + rng.uniform(-tol, tol))
                for csa, tol in ((2.5, 0.005), (2.5, 0.005), (1.5, 0.01)))
    gaps = rng.uniform(0.4, 1.6, n_ring + 1)
    pos = np.cumsum(gaps)[:-1] / gaps.sum()
    ids = _ids(n_ring + 4, rng)
    ring = [Point(ids[i], float(pos[i])) for i in range(n_ring)]
    spurs: list[Point] = []
    used = set()
    for _ in range(int(rng.integers(0, 3))):
        parent = int(rng.integers(0, n_ring))
        if parent in used:
            continue
        used.add(parent)
        spurs.append(Point(ids[n_ring + len(spurs)], parent=ring[parent].id,
                           spur_m=float(rng.uniform(1.5, 8)),
                           kind=str(rng.choice(["twin_socket", "single_socket"]))))
    if rng.random() < 0.3:
        host = int(rng.integers(0, n_ring))
        if host not in used:
            used.add(host)
            rating = float(rng.choice([3.0, 13.0]))
            fuse = rng.uniform(0.04, 0.15) if rating == 3 else rng.uniform(0.003, 0.01)
            ring[host] = Point(ring[host].id, ring[host].pos, kind="fcu", fuse_a=rating)
            spurs.append(Point(ids[n_ring + 3], parent=ring[host].id,
                               spur_m=float(rng.uniform(1, 6)), spur_live=1.5, spur_cpc=1.0,
                               fuse_ohm=float(fuse), kind="fixed_equipment"))
    return length_m, tuple(float(r) for r in rho), ring, spurs


def _place(rng, code: str, ring: list, spurs: list, spec: dict, choices: dict):
    """Build fault ``code`` into the ring (``spec`` gathers the Wiring's fault fields)."""
    order = sorted(ring, key=lambda p: p.pos)
    n = len(order)
    outlets: tuple[str, ...] = ()
    conductor, step, locatable = choices.get("conductor"), None, True
    if code == "interconnection":
        span = rng.uniform(0.3, 0.6)
        a = float(rng.uniform(0.05, 0.95 - span))
        b = a + span
        spec["bridge"] = (a, b, float(rng.uniform(0.02, 0.15)))
        outlets = tuple(p.id for p in order if a < p.pos < b)
    elif code == "open_conductor" and choices.get("at") == "terminal":
        conductor = conductor or str(rng.choice(["line", "neutral", "cpc"]))
        pool = [p for p in order if p.kind != "junction_box"]
        victim = pool[int(rng.integers(0, len(pool)))]
        spec["unwired"] = (victim.id, _BY_NAME[conductor])
        outlets = (victim.id,)
    elif code == "open_conductor":
        conductor = conductor or str(rng.choice(["line", "neutral", "cpc"]))
        k = int(rng.integers(0, n + 1))
        lo = order[k - 1].pos if k > 0 else 0.0
        hi = order[k].pos if k < n else 1.0
        spec["open"] = (_BY_NAME[conductor], float(rng.uniform(lo + 0.2 * (hi - lo),
                                                                hi - 0.2 * (hi - lo))))
        outlets = tuple(p.id for p in order[max(k - 1, 0):k + 1])
        locatable = conductor != "neutral"
    elif code == "high_resistance_joint":
        conductor = conductor or str(rng.choice(["line", "neutral", "cpc"]))
        k = int(rng.integers(0, n))
        spec["joint"] = (_BY_NAME[conductor], order[k].id, float(rng.uniform(0.1, 0.4)))
        outlets = (order[k].id,)
        # Step 2 rises evenly wherever the joint is, and step 3 only shows a gap in the spread
        # of readings: these readings do not place a joint in general.
        locatable = False
    elif code == "wrong_cross_connection":
        step = choices.get("step") or str(rng.choice(["ln", "le"]))
        spec["wrong"] = step
        locatable = False
    elif code == "unrecorded_spur":
        k = int(rng.integers(0, n))
        victim = order[k]
        ring = [p for p in ring if p.id != victim.id]
        anchor = f"jb{k}"
        ring.append(Point(anchor, victim.pos, kind="junction_box"))
        spurs.append(Point(victim.id, parent=anchor, spur_m=float(rng.uniform(3, 10))))
        spurs = [s if s.parent != victim.id else Point(
            s.id, parent=victim.id, spur_m=s.spur_m, kind=s.kind) for s in spurs]
        outlets = (victim.id,)
    elif code == "reversed_polarity":
        candidates = [p for p in ring if p.kind not in ("fcu", "junction_box")]
        victim = candidates[int(rng.integers(0, len(candidates)))]
        spec["swap"] = (victim.id, choices.get("swap") or str(rng.choice(["ln", "le"])))
        outlets = (victim.id,)
    outlets = tuple(o for o in outlets if not o.startswith("jb"))
    keep = code in ("open_conductor", "high_resistance_joint")
    return ring, spurs, Fault(code, conductor if keep else None, step, outlets, locatable)


def simulate(rng: np.random.Generator, fault: str | None = None, n_ring: int | None = None,
             *, also: str | None = None, nuisance: Nuisance | None = None,
             ideal_meter: bool = False, **choices) -> tuple[dict, Truth]:
    """One simulated ring test as a ``ringtest/1`` record and the truth behind it.

    fault: None (sound) or one of FAULT_CODES; ``choices`` may fix its ``conductor``
    ("line"/"neutral"/"cpc"), ``step`` ("ln"/"le"), ``swap`` ("ln"/"le") or ``at``
    ("terminal": an open conductor is one outlet's core off its terminal). also: a second,
    different fault built into the same ring. nuisance: the site's errors (None: a clean
    test). ideal_meter: readings shown exactly (no gain, digit noise or rounding), for
    worked checks; the random draws are the same.
    """
    for name, code in (("fault", fault), ("also", also)):
        if code is not None and code not in FAULT_CODES:
            raise ValueError(f"{name}: {code!r} is not one of {', '.join(FAULT_CODES)}")
    if also is not None and (fault is None or also == fault):
        raise ValueError(f"also: {also!r} needs a different first fault")
    n_ring = int(n_ring or rng.integers(5, 16))
    if n_ring < 2:
        raise ValueError(f"n_ring: {n_ring} is fewer than the two outlets a ring needs")
    length_m, rho, ring, spurs = _ring(rng, n_ring)
    spec: dict = {}
    built = []
    for code, picks in ((fault, choices), (also, {})):
        if code is not None:
            ring, spurs, f = _place(rng, code, ring, spurs, spec, picks)
            built.append(f)
    wiring = Wiring(tuple(ring), tuple(spurs), rho, length_m, **spec)
    visible = [p for p in ring if not p.id.startswith("jb")] + spurs
    keys = [("e2e", c, None) for c in "LNE"] + [
        (s, s, p.id) for p in visible for s in ("ln", "le")]
    true = true_readings(wiring, keys)
    gain = float(rng.uniform(-0.01, 0.01))
    digits = [float(rng.uniform(-0.008, 0.008)) if math.isfinite(t) and t <= 199 else None
              for t in true]
    perm = rng.permutation(len(visible))
    ze = round(float(rng.uniform(0.1, 0.35)), 2)
    n = nuisance or Nuisance()
    worn: dict = {}
    if nuisance is not None:
        if n.metallic_cpc:
            wiring = replace(wiring, conduit=draw_conduit(rng, n.metallic_cpc))
        sockets = [p.id for p in visible if p.kind in SOCKET_KINDS]
        contacts = draw_worn(rng, n, sockets) if n.worn else {}
        noise = contact_noise(rng, len(keys), n.contact_sd_ohm, n.contact_tail) \
            if n.contact_sd_ohm else np.zeros(len(keys))
        if n.metallic_cpc:
            true = true_readings(wiring, keys)
        site = true_readings(wiring, keys, warm=n.warm, contacts=contacts, half=n.join_open) \
            if (n.warm or contacts or n.join_open) else true
        # the contacts are in series with the probes: each reading gains its two pins' ohms
        worn = {oid: (c_l + c_n, c_l + c_e) for oid, (c_l, c_n, c_e) in contacts.items()}
    else:
        site, noise = true, np.zeros(len(keys))
    wired = edges(wiring)
    values = []
    for i, (kind, _c, _oid) in enumerate(keys):
        loop = site[i] + n.lead_on(kind) + float(noise[i])
        if kind != "e2e":
            loop *= n.meter_scale
        if digits[i] is None and math.isfinite(loop) and loop <= 199:
            digits[i] = float(rng.uniform(-0.008, 0.008))  # read now, OL without the nuisance
        values.append(shown(loop, gain=gain, digit_ohm=digits[i] or 0.0, ideal=ideal_meter))
    fronts = front_marks(n, {p.id: p.kind for p in visible}, worn)
    terminals: dict = {}
    if worn and n.remeasure:  # the worn outlets read again at their terminals, same leads
        again = [k for k in keys if k[2] in worn]
        extra = contact_noise(rng, len(again), n.contact_sd_ohm, n.contact_tail)
        for (kind, _c, oid), t, e in zip(again, true_readings(wiring, again, warm=n.warm),
                                         extra, strict=True):
            loop = (t + n.lead_on(kind) + float(e)) * n.meter_scale
            terminals.setdefault(oid, {})[f"{kind}_terminals"] = shown(
                loop, gain=gain, digit_ohm=float(rng.uniform(-0.008, 0.008)), ideal=ideal_meter)
    outlets = []
    for j, p in enumerate(visible):
        recorded_parent = p.parent if p.parent and not p.parent.startswith("jb") else None
        o = {"id": p.id, "label": f"Point {p.id}", "kind": p.kind, "spur_from": recorded_parent,
             "fuse_a": p.fuse_a, "ln": values[3 + 2 * j], "le": values[4 + 2 * j]}
        if p.id in fronts:
            o["taken_at"] = fronts[p.id]
        o.update(terminals.get(p.id, {}))
        outlets.append(o)
    circuit = {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
               "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": ze, "ze_source": "measured",
               "earthing": "TN-C-S", "cable_length_m": None}
    if wiring.conduit and n.cpc_declared:
        circuit["cpc_kind"] = "conduit"
        circuit["parallel_paths"] = not wiring.conduit.replaces_cpc
    record = {"format": "ringtest/1", "circuit": circuit,
              "end_to_end": dict(zip(("r1", "rn", "r2"), values[:3], strict=True)),
              "outlets": [outlets[i] for i in perm]}
    service = {p.id: reading_ohm(wiring, "service", p.id, wired=wired) for p in visible}
    first = built[0] if built else Fault(None)
    ring_pts = sorted((p for p in ring if not p.id.startswith("jb")), key=lambda p: p.pos)
    truth = Truth(first.code, first.conductor, first.step, first.outlets, first.locatable,
                  service, tuple(p.id for p in ring_pts), tuple(built), nuisance, worn,
                  wiring.conduit, {p.id: p.pos for p in ring_pts}, wiring.cable_ohm(),
                  signal_ohm(true, keys, {p.id for p in visible
                                             if p.parent is None or p.parent.startswith("jb")},
                          cable_cpc=wiring.conduit is None))
    return record, truth
