"""The diagnosis does not depend on the order outlets were visited in, nor on which end of
the ring is called end 1; and the open-conductor fit is what places a break."""

from __future__ import annotations

import numpy as np
import pytest

from ringmath.diagnose import diagnose
from ringmath.network import Layout, step_resistance
from ringmath.simulate import simulate

B32 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}
BRIDGE = Layout(3, (False, False, False), extras=((1, 2),))


def _summary(result):
    return sorted((f["code"], f["severity"], f["conductor"], f["step"], tuple(sorted(f["outlets"])),
                   f["confidence"]) for f in result["findings"])


@pytest.mark.parametrize(("fault", "seed"), [(None, 1), ("interconnection", 2),
                                             ("open_conductor", 3), ("unrecorded_spur", 4),
                                             ("high_resistance_joint", 5)])
def test_visiting_order_does_not_change_the_diagnosis(fault, seed):
    rng = np.random.default_rng(seed)
    record, _ = simulate(rng, fault, n_ring=9)
    base = diagnose(record)
    shuffled = dict(record, outlets=[record["outlets"][i]
                                     for i in rng.permutation(len(record["outlets"]))])
    other = diagnose(shuffled)
    assert other["verdict"] == base["verdict"]
    assert _summary(other) == _summary(base)
    pos = {p["id"]: p["position"] for p in base["points"]}
    assert {p["id"]: p["position"] for p in other["points"]} == pos


def _bridged_record(positions, a, b, fraction=0.05, r=(0.50, 0.50, 0.82)):
    """Readings of a bridged ring by the network solver: outlets at ``positions``, a bridge
    from a to b of ``fraction`` x the ring's resistance."""
    n = len(positions)
    ends = np.tile([a, a, b], (1, 1))
    unit = step_resistance(BRIDGE, "e2e:line", ends, np.ones((1, 3)),
                           extra_fraction=np.array([[fraction]]))[0]
    marks = np.array([[t, a, b] for t in positions])
    ring = np.tile(r, (n, 1))
    extra = np.full((n, 1), fraction)
    ln = step_resistance(BRIDGE, "ln", marks, ring, extra_fraction=extra)
    le = step_resistance(BRIDGE, "le", marks, ring, extra_fraction=extra)
    e2e = {k: round(v * unit, 2) for k, v in zip(("r1", "rn", "r2"), r, strict=True)}
    outlets = [{"id": f"p{i}", "kind": "twin_socket", "spur_from": None,
                "ln": round(float(x), 2), "le": round(float(y), 2)}
               for i, (x, y) in enumerate(zip(ln, le, strict=True))]
    return {"circuit": {"ocpd": dict(B32), "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5,
                        "ze_ohm": 0.3, "ze_source": "measured"},
            "end_to_end": e2e, "outlets": outlets}


def test_mirror_image_ring_gives_the_mirror_diagnosis():
    # t -> 1 - t: every outlet and the bridge ends mirrored. The readings are the same
    # physical quantities, so the findings must be identical and the places mirrored.
    positions = [0.08, 0.2, 0.33, 0.45, 0.58, 0.7, 0.83, 0.93]
    plain = diagnose(_bridged_record(positions, 0.25, 0.62))
    mirror = diagnose(_bridged_record([1 - t for t in positions], 1 - 0.62, 1 - 0.25))
    assert _summary(plain) == _summary(mirror)
    top = plain["findings"][0]
    assert top["code"] == "interconnection"
    p1 = {p["id"]: p["position"] for p in plain["points"]}
    p2 = {p["id"]: p["position"] for p in mirror["points"]}
    same = all(abs(p1[k] - p2[k]) < 0.02 for k in p1)
    flipped = all(abs(p1[k] - (1 - p2[k])) < 0.02 for k in p1)
    assert same or flipped


def test_a_break_is_placed_by_the_open_conductor_fit():
    # Line broken between the 3rd and 4th outlets of 8: step 1 reads r1 OL. The end-to-end
    # check alone says "broken" without a place; the fit places it beside the outlets either
    # side (disabling fitting.fit_open makes this fail).
    rng = np.random.default_rng(8)
    record, truth = simulate(rng, "open_conductor", n_ring=8, conductor="line")
    result = diagnose(record)
    opens = [f for f in result["findings"]
             if f["code"] == "open_conductor" and f["conductor"] == "line"]
    assert len(opens) == 1
    assert opens[0]["confidence"] is not None
    assert opens[0]["outlets"] and set(opens[0]["outlets"]) & set(truth.outlets)
