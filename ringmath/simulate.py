"""A seeded simulator of ring final circuits with and without faults, for tests and benchmarks.

It builds each ring as an explicit named-node netlist (``ringmath.nodal.Netlist``): every
outlet's terminals, the cable between outlets, spurs, fused spurs, bridges, breaks, joints and
swapped terminals, and takes every reading through a simulated ohmmeter (0.01 Ω display,
a gain error per instrument and last-digit noise), then shuffles the outlets into a visiting
order. It shares only the nodal solver with the fitting, not the fitting's fast layouts.

Everything random comes from the ``numpy.random.Generator`` passed in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ringmath.conductors import resistance_mohm_per_m
from ringmath.nodal import Netlist

FAULT_CODES = (
    "interconnection",
    "open_conductor",
    "wrong_cross_connection",
    "unrecorded_spur",
    "reversed_polarity",
    "high_resistance_joint",
)
_COND = ("L", "N", "E")
_NAMES = {"L": "line", "N": "neutral", "E": "cpc"}
_BY_NAME = {v: k for k, v in _NAMES.items()}


@dataclass(frozen=True)
class Truth:
    """What was really built: the fault and where it is.

    outlets: ids the fault concerns (the outlet itself, the two beside a break or joint, or the
    outlets inside a bridged section). locatable: whether the readings can in principle place
    it. service_r1r2_ohm: true in-service R1+R2 at every outlet (inf when no earth path).
    ring_order: ids of ring outlets from end 1 to end 2.
    """

    code: str | None
    conductor: str | None = None
    step: str | None = None
    outlets: tuple[str, ...] = ()
    locatable: bool = False
    service_r1r2_ohm: dict = field(default_factory=dict)
    ring_order: tuple[str, ...] = ()


@dataclass(frozen=True)
class _Point:
    id: str
    pos: float = 0.0          # ring fraction from end 1 (ring points only)
    parent: str | None = None
    spur_m: float = 0.0       # spur cable length, metres
    spur_live: float = 2.5
    spur_cpc: float = 1.5
    fuse_ohm: float = 0.0     # FCU fuse in the line, ohms
    kind: str = "twin_socket"
    fuse_a: float | None = None


def _meter(rng: np.random.Generator, true_ohm: float, gain: float) -> float | str:
    if not math.isfinite(true_ohm) or true_ohm > 199:
        return "OL"
    shown = true_ohm * (1 + gain) + rng.uniform(-0.008, 0.008)
    return round(max(shown, 0.0), 2)


def _ids(n: int, rng: np.random.Generator) -> list[str]:
    letters = "abcdefghijklmnopqrstuvwxyz"
    names = [letters[i % 26] + ("" if i < 26 else str(i // 26)) for i in range(n)]
    return [str(name) for name in rng.permutation(names)]


def simulate(rng: np.random.Generator, fault: str | None = None, n_ring: int | None = None,
             **choices) -> tuple[dict, Truth]:
    """One simulated ring test as a ``ringtest/1`` record and the truth behind it.

    fault: None (healthy) or one of FAULT_CODES; ``choices`` may fix ``conductor``
    ("line"/"neutral"/"cpc"), ``step`` ("ln"/"le") or ``swap`` ("ln"/"le").
    """
    if fault is not None and fault not in FAULT_CODES:
        raise ValueError(f"fault: {fault!r} is not one of {', '.join(FAULT_CODES)}")
    n_ring = int(n_ring or rng.integers(5, 16))
    length_m = float(rng.uniform(25, 95))
    cable = float(rng.uniform(0.95, 1.0))  # real cable sits a little under the table maxima
    rho = {"L": resistance_mohm_per_m(2.5) / 1000 * cable * (1 + rng.uniform(-0.005, 0.005)),
           "N": resistance_mohm_per_m(2.5) / 1000 * cable * (1 + rng.uniform(-0.005, 0.005)),
           "E": resistance_mohm_per_m(1.5) / 1000 * cable * (1 + rng.uniform(-0.01, 0.01))}
    gaps = rng.uniform(0.4, 1.6, n_ring + 1)
    pos = np.cumsum(gaps)[:-1] / gaps.sum()
    ids = _ids(n_ring + 4, rng)
    ring = [_Point(ids[i], float(pos[i])) for i in range(n_ring)]
    spurs: list[_Point] = []
    used = set()
    for _ in range(int(rng.integers(0, 3))):
        parent = int(rng.integers(0, n_ring))
        if parent in used:
            continue
        used.add(parent)
        spurs.append(_Point(ids[n_ring + len(spurs)], parent=ring[parent].id,
                            spur_m=float(rng.uniform(1.5, 8)),
                            kind=str(rng.choice(["twin_socket", "single_socket"]))))
    if rng.random() < 0.3:
        host = int(rng.integers(0, n_ring))
        if host not in used:
            used.add(host)
            rating = float(rng.choice([3.0, 13.0]))
            fuse = rng.uniform(0.04, 0.15) if rating == 3 else rng.uniform(0.003, 0.01)
            ring[host] = _Point(ring[host].id, ring[host].pos, kind="fcu", fuse_a=rating)
            spurs.append(_Point(ids[n_ring + 3], parent=ring[host].id,
                                spur_m=float(rng.uniform(1, 6)), spur_live=1.5, spur_cpc=1.0,
                                fuse_ohm=float(fuse), kind="fixed_equipment"))

    spec = {"bridge": None, "open": None, "joint": None, "swap": None, "wrong": None}
    truth_outlets: tuple[str, ...] = ()
    conductor = choices.get("conductor")
    step = None
    locatable = True
    order = sorted(ring, key=lambda p: p.pos)
    if fault == "interconnection":
        span = rng.uniform(0.3, 0.6)
        a = float(rng.uniform(0.05, 0.95 - span))
        b = a + span
        spec["bridge"] = (a, b, float(rng.uniform(0.02, 0.15)))
        truth_outlets = tuple(p.id for p in order if a < p.pos < b)
    elif fault == "open_conductor":
        conductor = conductor or str(rng.choice(["line", "neutral", "cpc"]))
        k = int(rng.integers(0, n_ring + 1))
        lo = order[k - 1].pos if k > 0 else 0.0
        hi = order[k].pos if k < n_ring else 1.0
        spec["open"] = (_BY_NAME[conductor], float(rng.uniform(lo + 0.2 * (hi - lo),
                                                                 hi - 0.2 * (hi - lo))))
        truth_outlets = tuple(p.id for p in order[max(k - 1, 0):k + 1])
        locatable = conductor != "neutral"
    elif fault == "high_resistance_joint":
        conductor = conductor or str(rng.choice(["line", "neutral", "cpc"]))
        k = int(rng.integers(0, n_ring))
        spec["joint"] = (_BY_NAME[conductor], order[k].id, float(rng.uniform(0.1, 0.4)))
        truth_outlets = (order[k].id,)
        # Step 2 rises evenly wherever the joint is, and step 3 only shows a gap in the spread
        # of readings: these readings do not place a joint in general.
        locatable = False
    elif fault == "wrong_cross_connection":
        step = choices.get("step") or str(rng.choice(["ln", "le"]))
        spec["wrong"] = step
        locatable = False
    elif fault == "unrecorded_spur":
        k = int(rng.integers(0, n_ring))
        victim = order[k]
        ring = [p for p in ring if p.id != victim.id]
        anchor = f"jb{k}"
        ring.append(_Point(anchor, victim.pos, kind="junction_box"))
        spurs.append(_Point(victim.id, parent=anchor, spur_m=float(rng.uniform(3, 10))))
        spurs = [s if s.parent != victim.id else _Point(
            s.id, parent=victim.id, spur_m=s.spur_m, kind=s.kind) for s in spurs]
        truth_outlets = (victim.id,)
    elif fault == "reversed_polarity":
        candidates = [p for p in ring if p.kind != "fcu"]
        victim = candidates[int(rng.integers(0, len(candidates)))]
        swap = choices.get("swap") or str(rng.choice(["ln", "le"]))
        spec["swap"] = (victim.id, swap)
        truth_outlets = (victim.id,)

    net_parts = _build(ring, spurs, rho, length_m, spec)
    gain = float(rng.uniform(-0.01, 0.01))
    e2e = {k: _meter(rng, _reading(net_parts, step_name, None, spec), gain)
           for k, step_name in (("r1", "e2e:L"), ("rn", "e2e:N"), ("r2", "e2e:E"))}
    visible = [p for p in ring if not p.id.startswith("jb")] + spurs
    service = {}
    outlets = []
    for p in visible:
        ln_step = "ln_wrong" if spec["wrong"] == "ln" else "ln"
        le_step = "le_wrong" if spec["wrong"] == "le" else "le"
        ln = _meter(rng, _reading(net_parts, ln_step, p.id, spec), gain)
        le = _meter(rng, _reading(net_parts, le_step, p.id, spec), gain)
        service[p.id] = _reading(net_parts, "service", p.id, spec)
        recorded_parent = p.parent if p.parent and not p.parent.startswith("jb") else None
        outlets.append({"id": p.id, "label": f"Point {p.id}", "kind": p.kind,
                        "spur_from": recorded_parent, "fuse_a": p.fuse_a, "ln": ln, "le": le})
    outlets = [outlets[i] for i in rng.permutation(len(outlets))]
    record = {
        "format": "ringtest/1",
        "circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                    "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5,
                    "ze_ohm": round(float(rng.uniform(0.1, 0.35)), 2), "ze_source": "measured",
                    "earthing": "TN-C-S", "cable_length_m": None},
        "end_to_end": e2e,
        "outlets": outlets,
    }
    truth = Truth(fault, conductor if fault in ("open_conductor", "high_resistance_joint")
                  else None, step, truth_outlets, locatable and fault is not None,
                  service, tuple(p.id for p in sorted(ring, key=lambda p: p.pos)
                                 if not p.id.startswith("jb")))
    return record, truth


def _build(ring, spurs, rho, length_m, spec):
    """The netlist edges per conductor as (node, node, ohms) lists, plus pin wiring."""
    order = sorted(ring, key=lambda p: p.pos)
    edges = {c: [] for c in _COND}
    marks = [(0.0, "end0")] + [(p.pos, p.id) for p in order] + [(1.0, "end1")]
    joint = spec["joint"]
    opened = spec["open"]
    if spec["bridge"]:
        edges = _route_bridge(marks, spec["bridge"], length_m, rho)
    for c in () if spec["bridge"] else _COND:
        for (p0, n0), (p1, n1) in zip(marks, marks[1:], strict=False):
            r = (p1 - p0) * length_m * rho[c]
            src = f"{c}:{n0}" + (":out" if joint and joint[0] == c and joint[1] == n0 else "")
            if opened and opened[0] == c and p0 <= opened[1] < p1:
                edges[c].append((src, f"{c}:brk", (opened[1] - p0) * length_m * rho[c]))
                edges[c].append((f"{c}:brk2", f"{c}:{n1}", (p1 - opened[1]) * length_m * rho[c]))
            else:
                edges[c].append((src, f"{c}:{n1}", r))
        if joint and joint[0] == c:
            edges[c].append((f"{c}:{joint[1]}", f"{c}:{joint[1]}:out", joint[2]))
    for s in spurs:
        live = resistance_mohm_per_m(s.spur_live) / 1000
        cpc = resistance_mohm_per_m(s.spur_cpc) / 1000
        per = {"L": live * s.spur_m + s.fuse_ohm, "N": live * s.spur_m, "E": cpc * s.spur_m}
        for c in _COND:
            edges[c].append((f"{c}:{s.parent}", f"{c}:{s.id}", per[c]))
    return edges


def _route_bridge(marks, bridge, length_m, rho):
    a, b, frac = bridge
    out = {}
    pts = sorted(marks + [(a, "ba"), (b, "bb")])
    for c in _COND:
        chain = []
        for (p0, n0), (p1, n1) in zip(pts, pts[1:], strict=False):
            chain.append((f"{c}:{n0}", f"{c}:{n1}", (p1 - p0) * length_m * rho[c]))
        chain.append((f"{c}:ba", f"{c}:bb", frac * length_m * rho[c]))
        out[c] = chain
    return out


def _reading(edges, step: str, outlet: str | None, spec) -> float:
    """True resistance (ohms) of one reading in the simulated circuit."""
    net = Netlist()
    if step.startswith("e2e:"):
        c = step[-1]
        for a, b, r in edges[c]:
            net.add(a, b, r)
        return net.resistance(f"{c}:end0", f"{c}:end1")
    other = "N" if step.startswith("ln") else "E"
    if step == "service":
        other = "E"
    for c in ("L", other):
        for a, b, r in edges[c]:
            net.add(a, b, r)
    if step in ("ln", "le"):
        net.add("L:end0", f"{other}:end1", 0.0)
        net.add("L:end1", f"{other}:end0", 0.0)
    elif step in ("ln_wrong", "le_wrong"):
        net.add("L:end0", f"{other}:end0", 0.0)
        net.add("L:end1", f"{other}:end1", 0.0)
    else:
        for n in ("L:end1", "E:end0", "E:end1"):
            net.add("L:end0", n, 0.0)
    # outlet pins: which conductor each pin is wired to
    pins = {"L": "L", "N": "N", "E": "E"}
    if spec["swap"] and spec["swap"][0] == outlet:
        pins = {"L": "N", "N": "L", "E": "E"} if spec["swap"][1] == "ln" else \
            {"L": "E", "N": "N", "E": "L"}
    a_c, b_c = pins["L"], pins[other if step != "service" else "E"]
    a, b = f"{a_c}:{outlet}", f"{b_c}:{outlet}"
    net.node(a)
    net.node(b)
    return net.resistance(a, b)
