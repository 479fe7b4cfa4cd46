"""The simulated ring as an explicit named-node netlist, and the true value of every reading.

A ``Wiring`` describes what was really built: the ring outlets at their places (fractions of
the cable from end 1), spurs hanging off them, the cable's resistance per metre per conductor,
and any faults (a bridging cable, a break, a joint, swapped terminals, crossed ends at the
board) and a metallic conduit bonded to the cpc at every box. ``reading_ohm`` solves it by
nodal analysis (``ringmath.nodal.Netlist``) for one test step, with the board joins of that
step and, where given, the probe's contact resistance at the socket front. The simulator
shares only the nodal solver with the diagnosis, not the diagnosis' fast layouts.

Node names are ``<conductor>:<outlet id>`` with conductors ``L``, ``N``, ``E`` and ``C`` for
the conduit; ``end0``/``end1`` are the two ring ends at the board.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from ringmath.conductors import resistance_mohm_per_m
from ringmath.nodal import Netlist

CONDUCTORS = ("L", "N", "E")
READ_STEPS = ("e2e:L", "e2e:N", "e2e:E", "ln", "le", "ln_wrong", "le_wrong", "ln_half",
              "le_half", "service")


@dataclass(frozen=True)
class Point:
    """One outlet: on the ring (``parent`` None, ``pos`` its ring fraction from end 1) or a
    spur fed from ``parent`` through ``spur_m`` metres of cable (``spur_live``/``spur_cpc``
    mm²), with an FCU fuse of ``fuse_ohm`` ohms in the line where there is one."""

    id: str
    pos: float = 0.0
    parent: str | None = None
    spur_m: float = 0.0
    spur_live: float = 2.5
    spur_cpc: float = 1.5
    fuse_ohm: float = 0.0
    kind: str = "twin_socket"
    fuse_a: float | None = None


@dataclass(frozen=True)
class Conduit:
    """A metallic conduit (or trunking) bonded to the cpc at every ring box.

    ohm_per_m: its resistance per metre along the ring, ohms. bond_ohm: each box's bond
    between the cpc terminal and the conduit. board_ohm: the path between the conduit's two
    entries at the board enclosure. replaces_cpc: the conduit is the only cpc (no cable core).
    """

    ohm_per_m: float
    bond_ohm: float = 0.01
    board_ohm: float = 0.01
    replaces_cpc: bool = False


@dataclass(frozen=True)
class Wiring:
    """Everything that was built. rho_ohm_per_m: (line, neutral, cpc) ohms per metre of the
    ring cable; length_m: ring length. Faults: ``bridge`` (a, b, fraction of the ring
    resistance) joins positions a and b in every conductor; ``open`` (conductor, position);
    ``joint`` (conductor, outlet id, ohms) just after that outlet's terminal; ``swap``
    (outlet id, "ln" | "le") swaps L with N or with the cpc at that outlet; ``wrong`` ("ln" |
    "le") crosses the ends at the board the wrong way for that step; ``unwired`` (outlet id,
    conductor) leaves that conductor off the outlet's terminal (the ring's cores still joined
    in it), so that pin reaches nothing."""

    ring: tuple[Point, ...]
    spurs: tuple[Point, ...]
    rho_ohm_per_m: tuple[float, float, float]
    length_m: float
    bridge: tuple[float, float, float] | None = None
    open: tuple[str, float] | None = None
    joint: tuple[str, str, float] | None = None
    swap: tuple[str, str] | None = None
    wrong: str | None = None
    conduit: Conduit | None = None
    unwired: tuple[str, str] | None = None

    def cable_ohm(self) -> tuple[float, float, float]:
        """End-to-end resistance of each conductor's ring cable alone (no faults), ohms."""
        return tuple(r * self.length_m for r in self.rho_ohm_per_m)


def mirrored(w: Wiring) -> Wiring:
    """The same ring seen from its other end (end 1 and end 2 swapped at the board).

    Joints are not mirrored (a joint sits on the end-2 side of its outlet's terminal).
    """
    if w.joint is not None:
        raise ValueError("joint: a joint's side of the terminal is not mirrored")
    ring = tuple(replace(p, pos=1.0 - p.pos) for p in w.ring)
    bridge = None if w.bridge is None else (1.0 - w.bridge[1], 1.0 - w.bridge[0], w.bridge[2])
    broken = None if w.open is None else (w.open[0], 1.0 - w.open[1])
    return replace(w, ring=ring, bridge=bridge, open=broken)


def edges(w: Wiring) -> dict[str, list[tuple[str, str, float]]]:
    """The netlist edges (node, node, ohms) of each conductor; the conduit's are with ``E``."""
    rho = dict(zip(CONDUCTORS, w.rho_ohm_per_m, strict=True))
    order = sorted(w.ring, key=lambda p: p.pos)
    marks = [(0.0, "end0")] + [(p.pos, p.id) for p in order] + [(1.0, "end1")]
    if w.bridge:
        marks = sorted(marks + [(w.bridge[0], "ba"), (w.bridge[1], "bb")])
    out: dict[str, list[tuple[str, str, float]]] = {c: [] for c in CONDUCTORS}
    joint, opened = w.joint, w.open
    cable = [c for c in CONDUCTORS if not (c == "E" and w.conduit and w.conduit.replaces_cpc)]
    for c in cable:
        for (p0, n0), (p1, n1) in zip(marks, marks[1:], strict=False):
            src = f"{c}:{n0}" + (":out" if joint and joint[0] == c and joint[1] == n0 else "")
            if opened and opened[0] == c and p0 <= opened[1] < p1:
                out[c].append((src, f"{c}:brk", (opened[1] - p0) * w.length_m * rho[c]))
                out[c].append((f"{c}:brk2", f"{c}:{n1}", (p1 - opened[1]) * w.length_m * rho[c]))
            else:
                out[c].append((src, f"{c}:{n1}", (p1 - p0) * w.length_m * rho[c]))
        if joint and joint[0] == c:
            out[c].append((f"{c}:{joint[1]}", f"{c}:{joint[1]}:out", joint[2]))
        if w.bridge:
            out[c].append((f"{c}:ba", f"{c}:bb", w.bridge[2] * w.length_m * rho[c]))
    if w.conduit:
        _conduit_edges(w, marks, out["E"])
    for s in w.spurs:
        live = resistance_mohm_per_m(s.spur_live) / 1000 * s.spur_m
        cpc = resistance_mohm_per_m(s.spur_cpc) / 1000 * s.spur_m
        if w.conduit:  # the spur's box is on the conduit too
            tube = w.conduit.ohm_per_m * s.spur_m
            cpc = tube if w.conduit.replaces_cpc else cpc * tube / (cpc + tube)
        per = {"L": live + s.fuse_ohm, "N": live, "E": cpc}
        for c in CONDUCTORS:
            out[c].append((f"{c}:{s.parent}", f"{c}:{s.id}", per[c]))
    return out


def _conduit_edges(w: Wiring, marks, into: list) -> None:
    """The conduit along the ring, bonded to the cpc terminal of every ring box, and its two
    entries joined through the board enclosure. As the only cpc, the boxes' earth terminals
    are the conduit itself (an ideal bond)."""
    cd = w.conduit
    ring_marks = [(p, n) for p, n in marks if n not in ("ba", "bb")]
    for (p0, n0), (p1, n1) in zip(ring_marks, ring_marks[1:], strict=False):
        into.append((f"C:{n0}", f"C:{n1}", (p1 - p0) * w.length_m * cd.ohm_per_m))
    for _, n in ring_marks:
        if cd.replaces_cpc:
            into.append((f"E:{n}", f"C:{n}", 0.0))
        elif not n.startswith("end"):  # the cable cpc's own ends are lifted for the test
            into.append((f"E:{n}", f"C:{n}", cd.bond_ohm))
    into.append(("C:end0", "C:end1", cd.board_ohm))
    if w.joint and w.joint[0] == "E":  # the joint's far side is the same box, on the conduit
        into.append((f"E:{w.joint[1]}:out", f"C:{w.joint[1]}", cd.bond_ohm))


def reading_ohm(w: Wiring, step: str, outlet: str | None = None, *, warm: float = 0.0,
                contact_ohm: tuple[float, float] | None = None,
                wired: dict | None = None) -> float:
    """True resistance in ohms of one reading (``math.inf`` when the probes are not connected).

    step: "e2e:L" / "e2e:N" / "e2e:E" (step 1, one conductor end to end), "ln" / "le" (steps 2
    and 3 at ``outlet`` with L1–N2, L2–N1 or L1–CPC2, L2–CPC1 joined), "ln_wrong" /
    "le_wrong" (the ends joined L1–N1, L2–N2), "ln_half" / "le_half" (only L1–N2 or L1–CPC2
    joined: one cross-connection not made), "service" (all line and cpc ends joined: the
    in-service R1+R2 at ``outlet``). warm: every wiring resistance is (1 + warm) times its
    step 1 value (a warmer cable on the day of steps 2–3). contact_ohm: (line pin, other pin)
    contact resistance of a plug-in lead at the socket front, in series with each probe.
    wired: ``edges(w)`` when already built.
    """
    if step not in READ_STEPS:
        raise ValueError(f"step: {step!r} is not one of {', '.join(READ_STEPS)}")
    parts = edges(w) if wired is None else wired
    scale = 1.0 + warm
    net = Netlist()
    if step.startswith("e2e:"):
        c = step[-1]
        for a, b, r in parts[c]:
            net.add(a, b, r * scale)
        return net.resistance(f"{c}:end0", f"{c}:end1")
    if outlet is None:
        raise ValueError("outlet: steps 2 and 3 are read at an outlet")
    other = "N" if step.startswith("ln") else "E"
    for c in ("L", other):
        for a, b, r in parts[c]:
            net.add(a, b, r * scale)
    if step in ("ln", "le"):
        net.add("L:end0", f"{other}:end1", 0.0)
        net.add("L:end1", f"{other}:end0", 0.0)
    elif step in ("ln_wrong", "le_wrong"):
        net.add("L:end0", f"{other}:end0", 0.0)
        net.add("L:end1", f"{other}:end1", 0.0)
    elif step in ("ln_half", "le_half"):
        net.add("L:end0", f"{other}:end1", 0.0)
    else:
        for n in ("L:end1", "E:end0", "E:end1"):
            net.add("L:end0", n, 0.0)
        if w.conduit:  # both conduit entries are on the board enclosure, bonded to the bar
            net.add("E:end0", "C:end0", 0.0)
            net.add("E:end1", "C:end1", 0.0)
    pins = {"L": "L", "N": "N", "E": "E"}
    if w.swap and w.swap[0] == outlet:
        pins = {"L": "N", "N": "L", "E": "E"} if w.swap[1] == "ln" else \
            {"L": "E", "N": "N", "E": "L"}
    a, b = (f"{c}:{outlet}" if not (w.unwired and w.unwired == (outlet, c)) else f"x{i}:{outlet}"
            for i, c in enumerate((pins["L"], pins[other])))
    net.node(a)
    net.node(b)
    if contact_ohm is not None:
        net.add("probe:a", a, contact_ohm[0])
        net.add("probe:b", b, contact_ohm[1])
        a, b = "probe:a", "probe:b"
    return net.resistance(a, b)


def signal_ohm(true: list[float], keys, ring_ids: set, cable_cpc: bool) -> float:
    """How far true readings sit from every sound ring with these end-to-end readings, ohms.

    true: r1, rn, r2 then the step 2/3 readings named by ``keys[3:]`` ((step, _, outlet id));
    ring_ids: the outlets recorded on the ring; cable_cpc: the cpc is a cable core, so r2/r1
    should follow the cable table (2.5/1.5 mm²).

    A sound ring reads (r1·rn + t(1 − t)(r1 − rn)²)/(r1 + rn) in step 2 at place t (rn -> r2 for
    step 3): between r1·rn/(r1 + rn) at an end and (r1 + rn)/4 at the middle (series-parallel
    reduction of the cross-connected ring, common practice).
    """
    r1, rn, r2 = true[:3]
    if not all(math.isfinite(v) for v in true):
        return math.inf
    worst = abs(r1 - rn)
    if cable_cpc:
        worst = max(worst, abs(r2 - r1 * resistance_mohm_per_m(1.5) / resistance_mohm_per_m(2.5)))
    for (kind, _c, oid), value in zip(keys[3:], true[3:], strict=True):
        if oid not in ring_ids:
            continue
        other = rn if kind == "ln" else r2
        lo, hi = r1 * other / (r1 + other), (r1 + other) / 4
        worst = max(worst, lo - value, value - hi)
    return float(worst)


def true_readings(wiring: Wiring, keys, warm: float = 0.0, contacts=None,
                  half: str | None = None) -> list[float]:
    """True resistance in ohms of every reading in ``keys`` order: ("e2e", "L" | "N" | "E",
    None) for step 1, ("ln" | "le", _, outlet id) for steps 2–3 (crossed ends where the wiring
    has them). warm and contacts (outlet id -> line, neutral, cpc pin ohms) act on steps 2–3;
    half ("ln" | "le"): that step read with one of its two cross-connections not made."""
    wired = edges(wiring)
    steps = {k: f"{k}_half" if half == k else f"{k}_wrong" if wiring.wrong == k else k
             for k in ("ln", "le")}
    out = []
    for kind, c, oid in keys:
        if kind == "e2e":
            out.append(reading_ohm(wiring, f"e2e:{c}", wired=wired))
            continue
        pins = (contacts or {}).get(oid)
        contact = None if pins is None else (pins[0], pins[1] if kind == "ln" else pins[2])
        out.append(reading_ohm(wiring, steps[kind], oid, warm=warm, contact_ohm=contact,
                               wired=wired))
    return out
