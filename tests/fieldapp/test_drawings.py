"""The SVG drawings: well-formed, complete, escaped, and geometrically faithful to the data.

Every drawing is made from ``ringmath.diagnose`` output on small records and the demo jobs;
where a geometry check needs ring positions a sound ring cannot give, they are set on a real
diagnosis (``placed``). Geometry is read back from the markup itself (the ring arc, the node
centres, the plot ticks), so the checks hold whatever sizes the drawings use.
"""

from __future__ import annotations

import json
import math
import random
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from fieldapp import drawings
from ringmath.diagnose import diagnose

SVG = "{http://www.w3.org/2000/svg}"
HOSTILE = '<script>alert("x")</script> & \'quoted\''


# ---------------------------------------------------------------- real diagnoses

DEMO = Path(__file__).resolve().parents[2] / "demo_jobs"
B32 = {"standard": "BS EN 60898", "curve": "B", "rating_a": 32}
#: A healthy 2.5/1.5 mm² ring of about 70 m: r1 = rn, r2 ≈ 1.63 × r1 (copper 7.41 and
#: 12.1 mΩ/m, BS EN 60228 Table 1), so every outlet reads about (r1 + rn) / 4 = 0.26 Ω at
#: step 2 and (r1 + r2) / 4 ≈ 0.34 Ω at step 3 (the three-step test, common practice).
E2E = {"r1": 0.52, "rn": 0.52, "r2": 0.85}


def record(outlets, e2e=E2E, **circuit):
    return {"circuit": {"ocpd": B32, "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.35,
                        "ze_source": "measured", "earthing": "TN-C-S", **circuit},
            "end_to_end": e2e, "outlets": list(outlets)}


def outlet(oid, label, ln=0.26, le=0.34, **fields):
    return {"id": oid, "label": label, "kind": "twin_socket", "ln": ln, "le": le, **fields}


def demo(stem: str, index: int = 0) -> dict:
    doc = json.loads((DEMO / f"{stem}.json").read_text(encoding="utf-8"))
    return doc["circuits"][index]


def placed(diag: dict, positions: dict) -> dict:
    """A real diagnosis with ring positions put where a geometry check needs them (the
    readings of a sound ring give none), ``ring_order`` sorted as ringmath sorts it."""
    for p in diag["points"]:
        if p["id"] in positions:
            p["position"] = positions[p["id"]]
    if all(p["position"] is not None for p in diag["points"] if p["on_ring"]):
        diag["ring_order"] = [p["id"] for p in sorted(
            (p for p in diag["points"] if p["on_ring"]), key=lambda p: p["position"])]
    return diag


def healthy():
    labels = ["Kitchen by door", "Kitchen worktop", "Dining room", "Lounge TV", "Hall"]
    return diagnose(record(outlet(chr(97 + i), lab) for i, lab in enumerate(labels)))


def bridged():
    return diagnose(demo("02-bridged-ring"))


def open_cpc():
    return diagnose(demo("03-open-cpc"))


def with_spurs():
    return diagnose(demo("05-fused-spurs"))


def unrecorded_spur():
    return diagnose(demo("04-unrecorded-spur"))


def zs_failing():
    """Ze 1.0 Ω: Zs over the 32 A type B limit at the far outlets; outlet c reads OL at
    step 3 (no earth path proved)."""
    outlets = [outlet("a", "Front room"), outlet("b", "Back room", le=0.40),
               outlet("c", "Hall", le="OL"), outlet("s", "Garden spur", ln=0.34, le=0.48,
                                                 spur_from="b")]
    return diagnose(record(outlets, ze_ohm=1.0))


def empty():
    return diagnose(record([], e2e={"r1": None, "rn": None, "r2": None}))


CASES = {"healthy": healthy, "bridged": bridged, "open_cpc": open_cpc,
         "with_spurs": with_spurs, "unrecorded_spur": unrecorded_spur,
         "zs_failing": zs_failing, "empty": empty}


def fault_findings(diag):
    return [f for f in diag["findings"] if f["severity"] == "fault"]


# ---------------------------------------------------------------- reading the SVG back


def parse(markup) -> ET.Element:
    root = ET.fromstring(str(markup))
    assert root.tag == f"{SVG}svg"
    assert root.get("width") == "100%"
    assert root.get("viewBox").startswith("0 0 360 ")
    return root


def texts(root) -> list[str]:
    return ["".join(t.itertext()) if t.find(f"{SVG}title") is None
            else (t.find(f"{SVG}title").tail or "") for t in root.iter(f"{SVG}text")]


def ring_geometry(root):
    """(cx, cy, r) from the ring arc 'M x1 y1 A r r 0 1 0 x2 y2'."""
    arcs = [p.get("d") for p in root.iter(f"{SVG}path") if " A " in p.get("d", "")]
    assert len(arcs) == 1
    x1, y1, r, _, _, _, _, x2, y2 = (float(v) for v in re.findall(r"-?[\d.]+", arcs[0]))
    half = math.dist((x1, y1), (x2, y2)) / 2
    cx, cy = (x1 + x2) / 2, (y1 + y2) / 2 + math.sqrt(r * r - half * half)
    return cx, cy, r


def turn(geometry, x, y) -> float:
    """Angle of (x, y) round the ring, anticlockwise on screen from the top (radians, 0..2π)."""
    cx, cy, _ = geometry
    return math.atan2(cx - x, cy - y) % (2 * math.pi)


def nodes(root) -> dict[str, tuple[float, float, str]]:
    """Label -> (x, y, shape tag) for every point symbol drawn on the ring (not in the key)."""
    geometry = ring_geometry(root)
    out = {}
    for g in root.iter(f"{SVG}g"):
        title = g.find(f"{SVG}title")
        shape = next((c for c in g if c.tag != f"{SVG}title" and c.tag != f"{SVG}text"), None)
        if title is None or shape is None:
            continue
        x, y = centre_of(shape)
        if y < geometry[1] + geometry[2] + 20:  # above the key
            out[title.text] = (x, y, shape.tag.removeprefix(SVG))
    return out


def centre_of(shape) -> tuple[float, float]:
    if shape.tag == f"{SVG}circle":
        return float(shape.get("cx")), float(shape.get("cy"))
    if shape.tag == f"{SVG}rect":
        return (float(shape.get("x")) + float(shape.get("width")) / 2,
                float(shape.get("y")) + float(shape.get("height")) / 2)
    xs, ys = zip(*(map(float, p.split(",")) for p in shape.get("points").split()), strict=True)
    return sum(xs) / len(xs), sum(ys) / len(ys)


def alert_lines(root):
    return [ln for ln in root.iter(f"{SVG}line") if ln.get("stroke") == drawings.ALERT]


def ends(line):
    return ((float(line.get("x1")), float(line.get("y1"))),
            (float(line.get("x2")), float(line.get("y2"))))


# ---------------------------------------------------------------- every drawing, every case


@pytest.mark.parametrize("case", CASES)
@pytest.mark.parametrize("draw", [drawings.ring_picture, drawings.readings_plot])
def test_well_formed_and_every_outlet_shown_by_name_and_label(case, draw):
    diag = CASES[case]()
    root = parse(draw(diag))
    shown = texts(root)
    for p in diag["points"]:
        assert p["label"] in shown, p["label"]
        assert p["id"] in shown, p["id"]  # the outlet's one short name, inside its symbol


@pytest.mark.parametrize("draw", [drawings.ring_picture, drawings.readings_plot])
def test_hostile_labels_are_escaped(draw):
    outlets = [outlet("a", HOSTILE), outlet("b", "<img src=x>", ln=0.40),
               outlet("c", "Hall")]
    diag = diagnose(record(outlets))
    markup = str(draw(diag))
    assert "<script" not in markup and "<img" not in markup
    root = parse(markup)
    assert HOSTILE in texts(root)


def test_empty_outlets_list_says_so():
    assert "No outlets recorded yet" in texts(parse(drawings.ring_picture(empty())))
    plot = texts(parse(drawings.readings_plot(empty())))
    assert plot.count("No outlet readings yet") == 2
    assert plot.count("expected range not known yet") == 2


def test_missing_keys_do_not_break_drawings():
    bare = {"points": [{"id": "a"}, {"id": "b", "spur_from": "a"}]}
    for draw in (drawings.ring_picture, drawings.readings_plot):
        shown = texts(parse(draw(bare)))
        assert "a" in shown and "b" in shown


@pytest.mark.parametrize("case, known", [("healthy", False), ("with_spurs", False),
                                         ("bridged", True), ("open_cpc", True)])
def test_ring_picture_says_when_the_order_is_only_as_entered(case, known):
    diag = CASES[case]()
    words = " ".join(texts(parse(drawings.ring_picture(diag))))
    assert drawings.order_known(diag) is known
    assert known == any(p["position"] is not None for p in diag["points"])
    if known:
        assert "inferred from the readings" in words and "Order as entered" not in words
    else:
        assert "Order as entered" in words and "inferred from the readings" not in words


@pytest.mark.parametrize("draw", [drawings.ring_picture, drawings.readings_plot])
def test_drawings_carry_the_core_cautions(draw):
    from ringmath.messages import CAUTIONS

    words = " ".join(texts(parse(draw(healthy()))))
    flat = " ".join(words.split())
    for caution in (CAUTIONS[2], CAUTIONS[3]):
        assert " ".join(caution.split()) in flat


# ---------------------------------------------------------------- connection diagrams


def terminal_links(root) -> set[frozenset[str]]:
    """Pairs of terminal names joined by a link (thick black line) in a connection diagram."""
    terminals = [(float(c.get("cx")), float(c.get("cy"))) for c in root.iter(f"{SVG}circle")
                 if c.get("r") == "6"]
    assert len(terminals) == 6
    names = {}
    for t in root.iter(f"{SVG}text"):
        if re.fullmatch(r"(L|N|CPC)[12]", t.text or ""):
            x, y = float(t.get("x")), float(t.get("y"))
            names[min(terminals, key=lambda p: math.dist(p, (x, y)))] = t.text
    assert sorted(names.values()) == ["CPC1", "CPC2", "L1", "L2", "N1", "N2"]
    links = set()
    for line in root.iter(f"{SVG}line"):
        if line.get("stroke") == drawings.INK and line.get("stroke-width") == "4":
            a, b = ends(line)
            links.add(frozenset(names[min(names, key=lambda p, q=q: math.dist(p, q))]
                                for q in (a, b)))
    return links


# The three-step ring final circuit continuity test: step 1 measures each conductor end to end,
# step 2 cross-connects L1-N2 and L2-N1, step 3 L1-CPC2 and L2-CPC1 (BS 7671:2018 Regulation
# 643.2.1 and the IET's Guidance Note 3 description of the test, from memory).
@pytest.mark.parametrize("step, links", [
    ("e2e", set()),
    ("ln", {frozenset({"L1", "N2"}), frozenset({"L2", "N1"})}),
    ("le", {frozenset({"L1", "CPC2"}), frozenset({"L2", "CPC1"})}),
])
def test_connection_diagram_joins_the_right_ends(step, links):
    root = parse(drawings.connection_diagram(step))
    assert terminal_links(root) == links
    words = " ".join(texts(root))
    assert "proved dead" in words
    if step == "e2e":
        assert {"1: r1", "2: rn", "3: r2"} <= set(texts(root))
    else:
        assert ("L–N" if step == "ln" else "L–CPC") in texts(root)


def hue(colour: str) -> str:
    r, g, b = (int(colour[i:i + 2], 16) for i in (1, 3, 5))
    if r > 200 and g > 150 and b < 80:
        return "yellow"
    if b > r and b > g:
        return "blue"
    if g > r and g > b:
        return "green"
    if r > g > b:
        return "brown"
    return "other"


@pytest.mark.parametrize("step", ["e2e", "ln", "le"])
def test_conductors_carry_core_colour_and_line_style(step):
    """Brown line, blue neutral, green-and-yellow CPC (BS 7671:2018 Table 51), and each a line
    style of its own so the drawing reads in grey print too."""
    root = parse(drawings.connection_diagram(step))
    rows = {}
    for t in root.iter(f"{SVG}text"):
        match = re.fullmatch(r"(L|N|CPC)1", t.text or "")
        if match:
            rows[match.group(1)] = float(t.get("y")) + 9
    styles = {}
    for core, y in rows.items():
        stubs = [ln for ln in root.iter(f"{SVG}line")
                 if ln.get("y1") == ln.get("y2") and abs(float(ln.get("y1")) - y) < 0.5
                 and hue(ln.get("stroke")) != "other"]
        styles[core] = {(hue(ln.get("stroke")), ln.get("stroke-dasharray")) for ln in stubs}
    assert {h for h, _ in styles["L"]} == {"brown"}
    assert {h for h, _ in styles["N"]} == {"blue"}
    assert {h for h, _ in styles["CPC"]} == {"green", "yellow"}
    assert len({frozenset(s) for s in styles.values()}) == 3


@pytest.mark.parametrize("bad", ["", "E2E", "step2", "l-n", None, 2])
def test_connection_diagram_rejects_unknown_steps(bad):
    with pytest.raises(ValueError, match="step"):
        drawings.connection_diagram(bad)


# ---------------------------------------------------------------- ring picture geometry


def angles_in_order(diag) -> list[float]:
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    placed_nodes = nodes(root)
    label = {p["id"]: p["label"] for p in diag["points"]}
    return [turn(geometry, *placed_nodes[label[oid]][:2]) for oid in diag["ring_order"]]


@pytest.mark.parametrize("case", ["healthy", "bridged", "open_cpc", "with_spurs",
                                  "unrecorded_spur"])
def test_ring_points_follow_the_ring_order_at_distinct_places(case):
    diag = CASES[case]()
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    angles = angles_in_order(diag)
    assert all(b - a > 0.05 for a, b in zip(angles, angles[1:], strict=False))
    placed_nodes = nodes(root)
    for p in diag["points"]:
        if p["on_ring"]:
            x, y, _ = placed_nodes[p["label"]]
            assert math.dist((x, y), geometry[:2]) == pytest.approx(geometry[2], abs=0.2)


def three():
    return diagnose(record([outlet("a", "A"), outlet("b", "B"), outlet("c", "C")]))


def four(labels="ABCD"):
    return diagnose(record([outlet(x.lower(), x) for x in labels]))


def test_given_positions_set_the_spacing():
    diag = placed(three(), {"a": 0.1, "b": 0.2, "c": 0.9})
    a, b, c = angles_in_order(diag)
    assert (c - b) == pytest.approx(7 * (b - a), rel=0.02)


def test_a_sound_ring_is_spread_evenly_in_the_order_entered():
    diag = healthy()
    assert diag["ring_order"] == [p["id"] for p in diag["points"]]
    angles = angles_in_order(diag)
    gaps = [b - a for a, b in zip(angles, angles[1:], strict=False)]
    assert max(gaps) == pytest.approx(min(gaps), rel=1e-3)


def test_missing_positions_fill_between_known_neighbours():
    diag = placed(four(), {"a": 0.2, "d": 0.8})
    a, b, c, d = angles_in_order(diag)
    assert b - a == pytest.approx(c - b, rel=1e-3) and c - b == pytest.approx(d - c, rel=1e-3)


@pytest.mark.parametrize("where", [0.0, 0.5, 1.0])
def test_coinciding_positions_still_get_distinct_places_on_the_ring(where):
    diag = placed(four(), dict.fromkeys("abcd", where))
    angles = angles_in_order(diag)
    assert all(b - a > 0.1 for a, b in zip(angles, angles[1:], strict=False))
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    arc = next(p.get("d") for p in root.iter(f"{SVG}path"))
    x1, y1, *_, x2, y2 = (float(v) for v in re.findall(r"-?[\d.]+", arc))
    assert turn(geometry, x1, y1) < angles[0] and angles[-1] < turn(geometry, x2, y2)


def test_positions_that_contradict_the_ring_order_are_not_used():
    diag = placed(four(), {"a": 0.8, "b": 0.2})  # ring_order stays a, b, c, d
    angles = angles_in_order(diag)
    gaps = [b - a for a, b in zip(angles, angles[1:], strict=False)]
    assert min(gaps) > 0 and max(gaps) == pytest.approx(min(gaps), rel=1e-3)


def test_points_sharing_a_position_spread_about_it():
    diag = placed(four("ABCDE"), {"b": 0.5, "c": 0.5, "d": 0.5})
    a, b, c, d, e = angles_in_order(diag)
    assert c == pytest.approx(math.pi, abs=1e-3)  # half way round: straight below the centre
    assert c - b == pytest.approx(d - c, rel=1e-3) and c - b > 0.1
    assert b - a == pytest.approx(e - d, rel=1e-3)


def test_bridge_is_a_chord_across_the_fitted_section():
    diag = bridged()
    bridge = fault_findings(diag)[0]
    assert bridge["code"] == "interconnection" and bridge["section"]
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    chords = [ln for ln in alert_lines(root) if ln.get("stroke-dasharray")]
    assert len(chords) == 1
    section_angles = sorted(turn(geometry, *end) for end in ends(chords[0]))
    for end in ends(chords[0]):
        assert math.dist(end, geometry[:2]) == pytest.approx(geometry[2], abs=0.2)
    # the chord spans the section: its ends sit at the section's fractions of the arc
    arc = next(p.get("d") for p in root.iter(f"{SVG}path"))
    x1, y1, *_, x2, y2 = (float(v) for v in re.findall(r"-?[\d.]+", arc))
    start, stop = turn(geometry, x1, y1), turn(geometry, x2, y2)
    for fraction, angle in zip(bridge["section"], section_angles, strict=True):
        assert angle == pytest.approx(start + fraction * (stop - start), abs=0.02)
    assert "bridge?" in texts(root)


def test_suspect_outlets_are_ringed():
    diag = bridged()
    suspects = set(fault_findings(diag)[0]["outlets"])
    assert suspects
    root = parse(drawings.ring_picture(diag))
    placed_nodes = nodes(root)
    halos = [(float(c.get("cx")), float(c.get("cy"))) for c in root.iter(f"{SVG}circle")
             if c.get("stroke") == drawings.ALERT and c.get("fill") == "none"]
    for p in diag["points"]:
        assert (placed_nodes[p["label"]][:2] in halos) == (p["id"] in suspects), p["id"]


@pytest.mark.parametrize("case", ["healthy", "with_spurs"])
def test_no_fault_marks_without_a_fault(case):
    diag = CASES[case]()
    assert not fault_findings(diag)
    root = parse(drawings.ring_picture(diag))
    assert alert_lines(root) == []
    assert not any(t.startswith("Suspected") for t in texts(root))


def test_break_is_marked_on_the_ring_between_its_neighbours():
    diag = open_cpc()
    brk = fault_findings(diag)[0]
    assert brk["code"] == "open_conductor" and brk["conductor"] == "cpc"
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    placed_nodes = nodes(root)
    cross = alert_lines(root)
    assert len(cross) == 2 and not any(ln.get("stroke-dasharray") for ln in cross)
    spot = tuple((ends(cross[0])[0][k] + ends(cross[0])[1][k]) / 2 for k in (0, 1))
    assert math.dist(spot, geometry[:2]) == pytest.approx(geometry[2], abs=0.2)
    arc = next(p.get("d") for p in root.iter(f"{SVG}path"))
    x1, y1, *_, x2, y2 = (float(v) for v in re.findall(r"-?[\d.]+", arc))
    start, stop = turn(geometry, x1, y1), turn(geometry, x2, y2)
    assert turn(geometry, *spot) == pytest.approx(start + brk["position"] * (stop - start),
                                                  abs=0.02)
    by_label = {p["label"]: p["id"] for p in diag["points"]}
    nearest = min(placed_nodes, key=lambda lab: math.dist(placed_nodes[lab][:2], spot))
    assert by_label[nearest] in brk["outlets"]
    assert "open cpc?" in texts(root)
    words = " ".join(texts(root))
    assert "Suspected:" in words


def test_only_the_first_fault_is_drawn():
    diag = bridged()
    diag["findings"].append({**fault_findings(diag)[0], "code": "open_conductor",
                             "section": None, "position": 0.05})
    root = parse(drawings.ring_picture(diag))
    assert len([ln for ln in alert_lines(root) if ln.get("stroke-dasharray")]) == 1
    assert "open?" not in texts(root)


def test_spurs_branch_inward_from_their_parent_and_fcus_are_squares():
    diag = with_spurs()
    root = parse(drawings.ring_picture(diag))
    cx, cy, r = ring_geometry(root)
    placed_nodes = nodes(root)
    label = {p["id"]: p["label"] for p in diag["points"]}
    lines = [ends(ln) for ln in root.iter(f"{SVG}line")]
    spurs = [p for p in diag["points"] if p["spur_from"]]
    assert spurs
    for p in spurs:
        child, parent = placed_nodes[p["label"]][:2], placed_nodes[label[p["spur_from"]]][:2]
        assert math.dist(child, (cx, cy)) < math.dist(parent, (cx, cy)) - 20
        assert any({a, b} == {child, parent} for a, b in lines)
    kinds = {p["id"]: p["kind"] for p in diag["points"]}
    for p in diag["points"]:
        shape = placed_nodes[p["label"]][2]
        assert (shape == "circle") == (kinds[p["id"]] in ("twin_socket", "single_socket"))
    words = " ".join(texts(root))
    for p in spurs:  # the parent is named as everywhere else: by its id
        assert f"spur from {p['spur_from']}" in words
    beyond = [p for p in diag["points"] if p["protected_by"].startswith("fcu:")]
    assert beyond and all(f"beyond FCU {p['protected_by'][4:]}" in words for p in beyond)


def test_points_failing_zs_are_flagged_and_an_unproved_earth_path_said():
    diag = zs_failing()
    failing = [p for p in diag["points"] if p["ok"] is False]
    assert {p["id"] for p in failing} >= {"c"}
    root = parse(drawings.ring_picture(diag))
    # one warning triangle beside the point on the drawing and one in the key
    assert texts(root).count("!") == 2 * len(failing)
    words = " ".join(texts(root))
    assert "no earth path proved (step 3 OL)" in words
    for p in failing:
        if p["zs_ohm"] is not None:
            assert f"Zs {p['zs_ohm']:.2f} Ω over limit {p['zs_max_ohm']:.2f} Ω" in words


# ---------------------------------------------------------------- readings plot


def panels(root) -> list[dict]:
    """Per panel: tick value -> y, and the panel's vertical extent."""
    out = []
    for t in root.iter(f"{SVG}text"):
        if (t.text or "").startswith("Step "):
            out.append({"top": float(t.get("y")), "ticks": {}})
    for t in root.iter(f"{SVG}text"):
        if t.get("text-anchor") == "end" and re.fullmatch(r"\d+(\.\d+)?", t.text or ""):
            y = float(t.get("y"))
            panel = max((p for p in out if p["top"] < y), key=lambda p: p["top"])
            panel["ticks"][float(t.text)] = y - 4
    return out


def scale(panel):
    """A least-squares straight line y = a + b·ohms through the tick marks."""
    pairs = sorted(panel["ticks"].items())
    n = len(pairs)
    mv = sum(v for v, _ in pairs) / n
    my = sum(y for _, y in pairs) / n
    b = sum((v - mv) * (y - my) for v, y in pairs) / sum((v - mv) ** 2 for v, _ in pairs)
    return lambda v: my + b * (v - mv)


def test_plot_axes_are_linear_in_ohms_and_dots_sit_on_their_value():
    outlets = [outlet(chr(97 + k), f"Room {k}", ln=0.24 + 0.01 * k, le=0.32 + 0.01 * k)
               for k in range(5)]
    diag = diagnose(record(outlets))
    assert all(e["status"] == "ok" for e in diag["readings"])
    root = parse(drawings.readings_plot(diag))
    ln_panel, le_panel = panels(root)
    for panel in (ln_panel, le_panel):
        assert len(panel["ticks"]) >= 3 and 0.0 in panel["ticks"]
        y_of = scale(panel)
        assert all(abs(y_of(v) - y) < 0.15 for v, y in panel["ticks"].items())
    dots = sorted((float(c.get("cy")), float(c.get("cx"))) for c in root.iter(f"{SVG}circle")
                  if c.get("r") == "4.5")
    assert len(dots) == 10
    ln_y, le_y = scale(ln_panel), scale(le_panel)
    expected_y = [ln_y(p["ln_ohm"]) for p in diag["points"]] + \
        [le_y(p["le_ohm"]) for p in diag["points"]]
    assert [y for y, _ in dots] == pytest.approx(sorted(expected_y), abs=0.15)
    assert "Ω" in texts(root)


def judged(diag) -> dict[str, int]:
    """How many outlet readings ringmath judged high, low and open."""
    counts = {"high": 0, "low": 0, "open": 0}
    for e in diag["readings"]:
        if e["outlet"] is not None and e["status"] in counts:
            counts[e["status"]] += 1
    return counts


@pytest.mark.parametrize("case", ["healthy", "bridged", "open_cpc", "unrecorded_spur",
                                  "zs_failing"])
def test_out_of_band_readings_get_a_triangle_and_the_word_ringmath_gave(case):
    diag = CASES[case]()
    root = parse(drawings.readings_plot(diag))
    words = texts(root)
    counts = judged(diag)
    assert words.count("high") + words.count("H") == counts["high"]
    assert words.count("low") + words.count("L") == counts["low"]
    triangles = [pg for pg in root.iter(f"{SVG}polygon") if pg.get("fill") == drawings.ALERT]
    opens = sum(p[f] == "OL" for p in diag["points"] for f in ("ln_ohm", "le_ohm"))
    assert len(triangles) == counts["high"] + counts["low"] + opens
    if case == "bridged":
        assert counts["high"] >= 3  # the readings inside the bridged section read high
    if case == "unrecorded_spur":
        assert counts["high"] == 2  # outlet d, at both steps


def test_a_reading_is_never_judged_by_the_drawing_itself():
    """The plot follows ringmath's status: a reading ringmath calls ok is a dot even when it
    lies outside the band a drawing would draw from ``expected``."""
    diag = healthy()
    diag["expected"]["ln_band_ohm"] = [0.01, 0.02]
    root = parse(drawings.readings_plot(diag))
    assert "high" not in texts(root) and "H" not in texts(root)


def test_ol_is_drawn_at_the_top_edge_with_its_name():
    diag = zs_failing()
    root = parse(drawings.readings_plot(diag))
    le_panel = panels(root)[1]
    top_tick = min(le_panel["ticks"].values())
    ols = [t for t in root.iter(f"{SVG}text") if "".join(t.itertext()).endswith("OL")]
    assert len(ols) == 1
    assert top_tick - 2 < float(ols[0].get("y")) < top_tick + 30


def test_columns_follow_the_ring_order_then_spurs():
    diag = bridged()
    diag["points"].append({**diag["points"][0], "id": "z", "label": "Loft spur",
                           "spur_from": "b", "on_ring": False})
    root = parse(drawings.readings_plot(diag))
    label = {p["id"]: p["label"] for p in diag["points"]}
    key = [t for t in texts(root) if t in label.values()]
    assert key == [label[i] for i in diag["ring_order"] + ["z"]]
    assert "spurs" in texts(root)


def test_no_band_no_verdicts():
    diag = diagnose(record([outlet("a", "A", ln=0.9), outlet("b", "B", ln=0.1)],
                           e2e={"r1": None, "rn": None, "r2": None}))
    words = texts(parse(drawings.readings_plot(diag)))
    assert words.count("expected range not known yet") == 2
    assert "high" not in words and "low" not in words


def test_reading_far_above_the_scale_is_pinned_with_its_value():
    outlets = [outlet(chr(97 + k), f"Room {k}") for k in range(5)]
    outlets[2]["ln"] = 7.5
    words = texts(parse(drawings.readings_plot(diagnose(record(outlets)))))
    assert "high 7.50" in words


# ---------------------------------------------------------------- every demo job


DEMO_JOBS = sorted(DEMO.glob("*.json"))


def demo_records():
    for path in DEMO_JOBS:
        doc = json.loads(path.read_text(encoding="utf-8"))
        for i, rec in enumerate(doc.get("circuits") or [doc]):
            yield pytest.param(rec, id=f"{path.stem}-{i}")


@pytest.mark.parametrize("rec", demo_records())
def test_drawings_of_ringmath_diagnoses(rec):
    diag = diagnose(rec)
    ring = parse(drawings.ring_picture(diag))
    plot = parse(drawings.readings_plot(diag))
    for p in diag["points"]:
        assert p["label"] in texts(ring) and p["label"] in texts(plot)
    angles = angles_in_order(diag)
    assert all(b - a > 0.05 for a, b in zip(angles, angles[1:], strict=False))
    first = next(iter(fault_findings(diag)), None)
    chords = [ln for ln in alert_lines(ring) if ln.get("stroke-dasharray")]
    assert len(chords) == (1 if first and first["section"] else 0)
    halos = [c for c in ring.iter(f"{SVG}circle")
             if c.get("stroke") == drawings.ALERT and c.get("fill") == "none"]
    # each suspect outlet ringed twice: on the drawing and in the key
    assert len(halos) == 2 * len(first["outlets"] if first else [])
    opens = sum(p[f] == "OL" for p in diag["points"] for f in ("ln_ohm", "le_ohm"))
    assert texts(plot).count("OL") == opens


def test_demo_jobs_cover_the_fault_marks():
    codes = {f["code"] for rec in demo_records() for f in fault_findings(diagnose(rec.values[0]))}
    assert {"interconnection", "open_conductor"} <= codes


def test_labels_round_the_ring_do_not_overlap():
    outlets = ([outlet("f", "Loft")] + [outlet(x, f"Bedroom {x} long label") for x in "abcde"]
               + [outlet("g", "Porch")])
    diag = placed(diagnose(record(outlets)),
                  {"f": 0.05, **dict.fromkeys("abcde", 0.5), "g": 0.95})
    root = parse(drawings.ring_picture(diag))
    boxes = []
    for t in root.iter(f"{SVG}text"):
        if t.find(f"{SVG}title") is None or t.get("font-size") != "11":
            continue
        if t.get("text-anchor") == "middle" and len(t.find(f"{SVG}title").tail or "") <= 3:
            continue  # a name inside its symbol
        words = t.find(f"{SVG}title").tail or ""
        width = 6.6 * len(words)  # about the advance of 11-unit sans text (measured here)
        x, y = float(t.get("x")), float(t.get("y"))
        left = {"end": x - width, "middle": x - width / 2}.get(t.get("text-anchor"), x)
        boxes.append((left, y - 11, left + width, y + 2))
        assert left >= 0 and left + width <= 360
    assert len(boxes) == 7
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert not (a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]), (a, b)


def test_a_crowded_plot_keeps_its_names_apart_and_shortens_its_words():
    rng = random.Random(7)  # seeded: the same readings every run
    outlets = [outlet(f"o{i}", f"Room {i}", ln=round(rng.uniform(0.17, 0.36), 2),
                      le=round(rng.uniform(0.25, 0.44), 2)) for i in range(24)]
    diag = diagnose(record(outlets))
    root = parse(drawings.readings_plot(diag))
    counts = judged(diag)
    assert counts["high"] and counts["low"]
    words = texts(root)
    assert words.count("H") == counts["high"] and words.count("L") == counts["low"]
    assert "high" not in words and "low" not in words
    for panel in panels(root):
        bottom = max(panel["ticks"].values())  # the y of 0 Ω: the x axis
        ticks = sorted(float(t.get("x")) for t in root.iter(f"{SVG}text")
                       if abs(float(t.get("y")) - bottom - 14) < 0.5)
        assert 8 <= len(ticks) <= 12
        assert min(b - a for a, b in zip(ticks, ticks[1:], strict=False)) >= 18


def test_a_sheet_may_number_the_symbols_itself():
    diag = with_spurs()
    numbered = {p["id"]: str(i) for i, p in enumerate(diag["points"], start=1)}
    for draw in (drawings.ring_picture, drawings.readings_plot):
        shown = texts(parse(draw(diag, names=numbered)))
        assert all(n in shown for n in numbered.values())
    assert drawings.point_names(diag) == {p["id"]: p["id"] for p in diag["points"]}
    named = {**diag, "points": [{**p, "name": numbered[p["id"]]} for p in diag["points"]]}
    shown = texts(parse(drawings.ring_picture(named, key=False)))
    assert all(n in shown for n in numbered.values())
