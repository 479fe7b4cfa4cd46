"""Arrangement rules for spurs and fused connection units on a ring final circuit.

The rules follow the guidance for ring final circuits in BS 7671:2018 Appendix 15 and the IET
On-Site Guide (quoted from memory: check against the current printed editions):

- one unfused spur per ring point (socket, junction box or fixed item on the ring);
- an unfused spur feeds one single or one twin socket, or one fixed item (an FCU counts as one
  item; what is beyond the FCU is a fused spur and may feed more);
- no spur is taken off an unfused spur;
- an unfused spur is cable of at least the ring's size (it is protected only by the circuit's
  30/32 A device); cable beyond an FCU is at least 1.5 mm² (13 A fuse, from memory);
- the number of unfused spurs does not exceed the number of sockets and fixed items connected
  directly in the ring;
- an FCU fuse above the circuit's rating, or above an upstream FCU's fuse, protects nothing;
- a spur leaves the ring from a socket, junction box or FCU, not from a fixed item's
  terminals (common practice).

Each broken rule gives a "warning" Finding with its own code (RULE_CODES).
"""

from __future__ import annotations

from ringmath.findings import Finding
from ringmath.record import FCU_FUSE_RATINGS_A, Outlet, RingTest, beyond_fcu, ring_outlets

#: Smallest live conductor beyond an FCU, mm² (On-Site Guide, from memory).
FUSED_SPUR_MIN_CSA_MM2 = 1.5

RULE_CODES = (
    "spur_per_point",
    "spur_items",
    "spur_from_spur",
    "spur_csa",
    "spur_count",
    "fcu_fuse",
    "spur_from_equipment",
)

_SOURCE = "BS 7671:2018 Appendix 15 / IET On-Site Guide, from memory"


def topology_findings(test: RingTest) -> list[Finding]:
    """Warnings for every spur or FCU arrangement rule the recorded topology breaks.

    ValueError naming ``outlets[i].fuse_a`` for an FCU without a BS 1362 fuse rating (the parser
    already refuses these; records built in code are checked here too).
    """
    _check_fuses(test)
    children = _children(test)
    findings = []
    for point in ring_outlets(test):
        heads = [] if point.kind == "fcu" else children[point.id]
        if len(heads) > 1:
            findings.append(_per_point(point, heads))
        findings.extend(_spur_shape(head, children) for head in heads)
    findings = [f for f in findings if f is not None]
    findings.extend(_spur_csa(test))
    findings.extend(_spur_count(test, children))
    findings.extend(_fcu_fuses(test))
    findings.extend(_from_equipment(test, children))
    return findings


def _check_fuses(test: RingTest) -> None:
    for i, o in enumerate(test.outlets):
        if o.kind == "fcu" and o.fuse_a not in FCU_FUSE_RATINGS_A:
            raise ValueError(f"outlets[{i}].fuse_a: {o.fuse_a!r} is not a BS 1362 rating "
                             f"({', '.join(str(r) for r in FCU_FUSE_RATINGS_A)} A)")


def _children(test: RingTest) -> dict[str, list[Outlet]]:
    out: dict[str, list[Outlet]] = {o.id: [] for o in test.outlets}
    for o in test.outlets:
        if o.spur_from is not None:
            out[o.spur_from].append(o)
    return out


def _warning(code: str, outlets, *, message: str, next_check: str) -> Finding:
    return Finding(code=code, severity="warning", outlets=tuple(outlets), message=message,
                   next_check=next_check)


def _name(outlet: Outlet) -> str:
    return f"{outlet.label} ({outlet.id})" if outlet.label else outlet.id


def _names(outlets) -> str:
    return ", ".join(_name(o) for o in outlets)


def _per_point(point: Outlet, heads: list[Outlet]) -> Finding:
    return _warning("spur_per_point", (point.id, *(h.id for h in heads)),
        message=(f"{len(heads)} unfused spurs leave the ring at {_name(point)} ({_names(heads)}). "
                 f"Only one unfused spur may be taken from each ring point ({_SOURCE})."),
        next_check=("Confirm at the back box how the spurs are connected; move all but one to "
                    "other ring points, or feed them through an FCU."),
    )


def _unfused_subtree(head: Outlet, children: dict) -> list[Outlet]:
    """The outlets an unfused spur feeds, from ``head`` down to (and including) any FCU."""
    out, stack = [], [head]
    while stack:
        node = stack.pop()
        out.append(node)
        if node.kind != "fcu":
            stack.extend(reversed(children[node.id]))
    return out


def _spur_shape(head: Outlet, children: dict) -> Finding | None:
    """One item per unfused spur, and no branch off it: at most one finding per spur."""
    nodes = _unfused_subtree(head, children)
    items = [n for n in nodes if n.kind != "junction_box"]
    branch = next((n for n in nodes if n.kind != "fcu" and len(children[n.id]) > 1), None)
    if branch is not None:
        code, message, look = (
            "spur_from_spur",
            f"branches at {_name(branch)} into {_names(children[branch.id])}. No spur may be "
            "taken off an unfused spur",
            "Trace the branch: take it from a ring point of its own, or feed the branch "
            "through an FCU.")
    elif len(items) > 1:
        code, message, look = (
            "spur_items",
            f"feeds {len(items)} items ({_names(items)}). An unfused spur may feed only one "
            "single or twin socket, or one fixed item",
            "Bring the spur into the ring (a cable back to the next ring point) or feed the "
            "extra items through an FCU.")
    else:
        return None
    return _warning(code, (head.spur_from, *(n.id for n in nodes)),
                    message=f"The unfused spur from {head.spur_from} {message} ({_SOURCE}).",
                    next_check=look)


def _spur_csa(test: RingTest) -> list[Finding]:
    ring_csa = test.circuit.live_csa_mm2
    findings = []
    for o in test.outlets:
        if o.spur_from is None or o.spur_csa_mm2 is None:
            continue
        fcu = beyond_fcu(test, o)
        if fcu is None and o.spur_csa_mm2 < ring_csa:
            findings.append(_warning("spur_csa", (o.id,),
                message=(f"The unfused spur cable to {_name(o)} is {o.spur_csa_mm2:g} mm², "
                         f"smaller than the ring's {ring_csa:g} mm². An unfused spur is "
                         "protected only by the circuit's device and must be at least the "
                         f"ring's size ({_SOURCE})."),
                next_check="Check the cable marking; replace the spur or feed it through an FCU.",
            ))
        elif fcu is not None and o.spur_csa_mm2 < FUSED_SPUR_MIN_CSA_MM2:
            findings.append(_warning("spur_csa", (o.id, fcu.id),
                message=(f"The cable to {_name(o)} beyond the FCU {_name(fcu)} is "
                         f"{o.spur_csa_mm2:g} mm²; a fused spur should be at least "
                         f"{FUSED_SPUR_MIN_CSA_MM2:g} mm² ({_SOURCE})."),
                next_check=("Check the cable marking and what it feeds; a smaller cable needs a "
                            "smaller fuse and the equipment maker's instructions."),
            ))
    return findings


def _spur_count(test: RingTest, children: dict) -> list[Finding]:
    ring = ring_outlets(test)
    points = [o for o in ring if o.kind != "junction_box"]
    heads = [h for o in ring if o.kind != "fcu" for h in children[o.id]]
    if len(heads) <= len(points):
        return []
    return [_warning("spur_count", tuple(h.id for h in heads),
        message=(f"The ring has {len(heads)} unfused spurs but only {len(points)} sockets and "
                 "fixed items on the ring itself. The number of unfused spurs should not exceed "
                 f"the number of points connected directly in the ring ({_SOURCE})."),
        next_check="Check the record for points wrongly entered as spurs, then the wiring.",
    )]


def _fcu_fuses(test: RingTest) -> list[Finding]:
    rating_a = test.circuit.ocpd.rating_a
    findings = []
    for o in test.outlets:
        if o.kind != "fcu":
            continue
        upstream = beyond_fcu(test, o)
        if o.fuse_a > rating_a:
            findings.append(_warning("fcu_fuse", (o.id,),
                message=(f"The FCU {_name(o)} has a {o.fuse_a:g} A fuse, above the circuit's "
                         f"{rating_a:g} A device: the fuse protects nothing the circuit device "
                         "does not already."),
                next_check="Fit the fuse rating the equipment or spur cable needs.",
            ))
        elif upstream is not None and o.fuse_a > upstream.fuse_a:
            findings.append(_warning("fcu_fuse", (o.id, upstream.id),
                message=(f"The FCU {_name(o)} has a {o.fuse_a:g} A fuse but is fed through the FCU "
                         f"{_name(upstream)} with a {upstream.fuse_a:g} A fuse: the larger fuse "
                         "downstream protects nothing."),
                next_check="Check which fuse the equipment needs and fit matching ratings.",
            ))
    return findings


def _from_equipment(test: RingTest, children: dict) -> list[Finding]:
    return [_warning("spur_from_equipment", (o.id, *(c.id for c in children[o.id])),
        message=(f"{_names(children[o.id])} is recorded as fed from the fixed item {_name(o)}. "
                 "A fixed item's terminals are not a junction; a spur should leave from a "
                 "socket, a junction box or an FCU (common practice)."),
        next_check=f"Check how the cable is connected at {_name(o)}.",
    ) for o in test.outlets if o.kind == "fixed_equipment" and children[o.id]]
