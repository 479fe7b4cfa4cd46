"""The SVG drawings: well-formed, complete, escaped, and geometrically faithful to the data.

The diagnosis dicts are built by hand in the shape ``ringmath.diagnose`` returns (DEVELOPERS.md).
Geometry is read back from the markup itself (the ring arc, the node centres, the plot ticks),
so the checks hold whatever sizes the drawings use.
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


# ---------------------------------------------------------------- hand-made diagnoses


def point(oid, label, position=None, ln=0.26, le=0.34, kind="twin_socket", spur_from=None,
          ok=True, protected_by="circuit"):
    return {
        "id": oid, "label": label, "kind": kind, "on_ring": spur_from is None,
        "spur_from": spur_from, "protected_by": protected_by, "ln_ohm": ln, "le_ohm": le,
        "r1r2_ohm": le if isinstance(le, float) else None, "zs_ohm": 0.69, "zs_max_ohm": 1.09,
        "ok": ok, "position": position, "position_sd": None if position is None else 0.04,
    }


def diagnosis(points, ring_order=None, findings=(), band=True, readings=()):
    ring = [p["id"] for p in points if p["spur_from"] is None]
    return {
        "verdict": "investigate" if findings else "satisfactory",
        "summary": "Hand-made case.",
        "findings": list(findings),
        "circuit": {"r1r2_ohm": 0.34, "zs_ohm": 0.69, "zs_max_ohm": 1.09,
                    "zs_tabulated_ohm": 1.37, "device": "BS EN 60898 B32",
                    "limit_source": "hand-made"},
        "points": points,
        "ring_order": ring if ring_order is None else ring_order,
        "expected": ({"ln_ohm": 0.26, "le_ohm": 0.34, "ln_band_ohm": [0.21, 0.31],
                      "le_band_ohm": [0.29, 0.39]} if band else
                     {"ln_ohm": None, "le_ohm": None, "ln_band_ohm": None, "le_band_ohm": None}),
        "readings": list(readings),
        "hypotheses": [],
        "cautions": ["Advice only."],
    }


def fault(code, outlets=(), position=None, section=None, conductor=None):
    return {"code": code, "severity": "fault", "conductor": conductor, "step": "ln",
            "outlets": list(outlets), "confidence": 0.8, "message": f"Suspected {code}.",
            "next_check": "Check the terminals.", "position": position, "section": section}


def healthy():
    labels = ["Kitchen by door", "Kitchen worktop", "Dining room", "Lounge TV", "Hall"]
    return diagnosis([point(chr(97 + i), lab, position=(i + 1) / 6)
                      for i, lab in enumerate(labels)])


def bridged():
    pts = [point("a", "Bed 1", 0.1), point("b", "Bed 2", 0.3, ln=0.18), point("c", "Landing", 0.5,
           ln=0.15), point("d", "Bed 3", 0.7, ln=0.18), point("e", "Bathroom FCU", 0.9)]
    warn = {**fault("cpc_ratio"), "severity": "warning", "section": [0.0, 1.0]}
    return diagnosis(pts, findings=[warn, fault("interconnection", ["b", "c", "d"],
                                                section=[0.3, 0.7], conductor="line")])


def open_neutral():
    pts = [point("a", "Garage left", 0.2, ln="OL"), point("b", "Garage right", 0.4, ln="OL"),
           point("c", "Utility", 0.6, ln=0.7), point("d", "Porch", 0.8, ln=0.5)]
    return diagnosis(pts, findings=[fault("open_conductor", ["b", "c"], position=0.5,
                                          conductor="neutral")])


def with_spurs():
    pts = [point("a", "Kitchen 1", 0.25), point("b", "Kitchen 2", 0.5, ok=False),
           point("c", "Kitchen 3", 0.75),
           point("f", "Cooker hood FCU", None, ln=0.4, le=0.55, kind="fcu", spur_from="b"),
           point("g", "Hood motor", None, ln=0.45, le=0.6, kind="fixed_equipment",
                 spur_from="f", protected_by="fcu:f"),
           point("s", "Garden socket", None, ln=0.9, le=1.4, spur_from="c", ok=False)]
    readings = [{"outlet": "s", "step": "ln", "value": 0.9, "expected_ohm": 0.6, "low_ohm": 0.5,
                 "high_ohm": 0.7, "deviation_ohm": 0.3, "status": "high"}]
    return diagnosis(pts, readings=readings)


def unplaced():
    """No positions known; ring order differs from the visiting (list) order."""
    pts = [point(x, f"Socket {x.upper()}") for x in "pqrs"]
    return diagnosis(pts, ring_order=["r", "p", "s", "q"])


def empty():
    return diagnosis([], ring_order=[], band=False)


CASES = {"healthy": healthy, "bridged": bridged, "open_neutral": open_neutral,
         "with_spurs": with_spurs, "unplaced": unplaced, "empty": empty}


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
def test_well_formed_and_every_label_shown(case, draw):
    diag = CASES[case]()
    root = parse(draw(diag))
    shown = texts(root)
    for p in diag["points"]:
        assert p["label"] in shown, p["label"]


@pytest.mark.parametrize("draw", [drawings.ring_picture, drawings.readings_plot])
def test_hostile_labels_are_escaped(draw):
    diag = healthy()
    diag["points"][0]["label"] = HOSTILE
    diag["points"][1]["id"] = '"><b>'
    diag["ring_order"][1] = '"><b>'
    diag["findings"] = [{**fault("interconnection", ['"><b>']), "message": "<img src=x>"}]
    markup = str(draw(diag))
    assert "<script" not in markup and "<img" not in markup and "<b>" not in markup
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
    placed = nodes(root)
    label = {p["id"]: p["label"] for p in diag["points"]}
    return [turn(geometry, *placed[label[oid]][:2]) for oid in diag["ring_order"]]


@pytest.mark.parametrize("case", ["healthy", "bridged", "open_neutral", "with_spurs", "unplaced"])
def test_ring_points_follow_the_ring_order_at_distinct_places(case):
    diag = CASES[case]()
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    angles = angles_in_order(diag)
    assert all(b - a > 0.1 for a, b in zip(angles, angles[1:], strict=False))
    placed = nodes(root)
    ring_labels = [p["label"] for p in diag["points"] if p["spur_from"] is None]
    for lab in ring_labels:
        x, y, _ = placed[lab]
        assert math.dist((x, y), geometry[:2]) == pytest.approx(geometry[2], abs=0.2)


def test_given_positions_set_the_spacing():
    diag = diagnosis([point("a", "A", 0.1), point("b", "B", 0.2), point("c", "C", 0.9)])
    a, b, c = angles_in_order(diag)
    assert (c - b) == pytest.approx(7 * (b - a), rel=0.02)


def test_missing_positions_spread_evenly_in_ring_order():
    angles = angles_in_order(unplaced())
    gaps = [b - a for a, b in zip(angles, angles[1:], strict=False)]
    assert max(gaps) == pytest.approx(min(gaps), rel=1e-3)


def test_missing_positions_fill_between_known_neighbours():
    diag = diagnosis([point("a", "A", 0.2), point("b", "B"), point("c", "C"),
                      point("d", "D", 0.8)])
    a, b, c, d = angles_in_order(diag)
    assert b - a == pytest.approx(c - b, rel=1e-3) and c - b == pytest.approx(d - c, rel=1e-3)


@pytest.mark.parametrize("where", [0.0, 0.5, 1.0])
def test_coinciding_positions_still_get_distinct_places_on_the_ring(where):
    diag = diagnosis([point(x, x.upper(), where) for x in "abcd"])
    angles = angles_in_order(diag)
    assert all(b - a > 0.1 for a, b in zip(angles, angles[1:], strict=False))
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    arc = next(p.get("d") for p in root.iter(f"{SVG}path"))
    x1, y1, *_, x2, y2 = (float(v) for v in re.findall(r"-?[\d.]+", arc))
    assert turn(geometry, x1, y1) < angles[0] and angles[-1] < turn(geometry, x2, y2)


def test_positions_that_contradict_the_ring_order_are_not_used():
    diag = diagnosis([point("a", "A", 0.8), point("b", "B", 0.2), point("c", "C"),
                      point("d", "D")])
    angles = angles_in_order(diag)
    gaps = [b - a for a, b in zip(angles, angles[1:], strict=False)]
    assert min(gaps) > 0 and max(gaps) == pytest.approx(min(gaps), rel=1e-3)


def test_points_sharing_a_position_spread_about_it():
    diag = diagnosis([point("a", "A"), point("b", "B", 0.5), point("c", "C", 0.5),
                      point("d", "D", 0.5), point("e", "E")])
    a, b, c, d, e = angles_in_order(diag)
    assert c == pytest.approx(math.pi, abs=1e-3)  # half way round: straight below the centre
    assert c - b == pytest.approx(d - c, rel=1e-3) and c - b > 0.1
    assert b - a == pytest.approx(e - d, rel=1e-3)


def test_bridge_is_a_chord_between_the_section_ends():
    diag = bridged()
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    placed = nodes(root)
    chords = [ln for ln in alert_lines(root) if ln.get("stroke-dasharray")]
    assert len(chords) == 1
    # section [0.3, 0.7] falls exactly on "Bed 2" and "Bed 3"
    wanted = {placed["Bed 2"][:2], placed["Bed 3"][:2]}
    for end in ends(chords[0]):
        assert math.dist(end, geometry[:2]) == pytest.approx(geometry[2], abs=0.2)
        assert min(math.dist(end, w) for w in wanted) < 0.2
    assert "bridge?" in texts(root)


def test_suspect_outlets_are_ringed():
    diag = bridged()
    root = parse(drawings.ring_picture(diag))
    placed = nodes(root)
    halos = [(float(c.get("cx")), float(c.get("cy"))) for c in root.iter(f"{SVG}circle")
             if c.get("stroke") == drawings.ALERT and c.get("fill") == "none"]
    for lab in ("Bed 2", "Landing", "Bed 3"):
        assert placed[lab][:2] in halos
    for lab in ("Bed 1", "Bathroom FCU"):
        assert placed[lab][:2] not in halos


@pytest.mark.parametrize("case", ["healthy", "with_spurs", "unplaced"])
def test_no_fault_marks_without_a_fault(case):
    root = parse(drawings.ring_picture(CASES[case]()))
    assert alert_lines(root) == []
    assert not any(t.startswith("Suspected") for t in texts(root))


def test_break_is_marked_on_the_ring_between_its_neighbours():
    diag = open_neutral()
    root = parse(drawings.ring_picture(diag))
    geometry = ring_geometry(root)
    placed = nodes(root)
    cross = alert_lines(root)
    assert len(cross) == 2 and not any(ln.get("stroke-dasharray") for ln in cross)
    mid = [(a[0] + b[0]) / 2 for a, b in map(ends, cross)], \
        [(a[1] + b[1]) / 2 for a, b in map(ends, cross)]
    spot = (mid[0][0], mid[1][0])
    assert math.dist(spot, geometry[:2]) == pytest.approx(geometry[2], abs=0.2)
    left, right = (turn(geometry, *placed[lab][:2]) for lab in ("Garage right", "Utility"))
    assert left < turn(geometry, *spot) < right
    assert "open neutral?" in texts(root)
    assert "Suspected: Hand-made case." in texts(root)  # the headline, not the whole finding


def test_only_the_first_fault_is_drawn():
    diag = bridged()
    diag["findings"].append(fault("open_conductor", ["a"], position=0.05))
    root = parse(drawings.ring_picture(diag))
    assert len([ln for ln in alert_lines(root) if ln.get("stroke-dasharray")]) == 1
    assert "open?" not in texts(root)


def test_spurs_branch_inward_from_their_parent_and_fcus_are_squares():
    diag = with_spurs()
    root = parse(drawings.ring_picture(diag))
    cx, cy, r = ring_geometry(root)
    placed = nodes(root)
    label = {p["id"]: p["label"] for p in diag["points"]}
    lines = [ends(ln) for ln in root.iter(f"{SVG}line")]
    for p in diag["points"]:
        if p["spur_from"] is None:
            continue
        child, parent = placed[p["label"]][:2], placed[label[p["spur_from"]]][:2]
        assert math.dist(child, (cx, cy)) < math.dist(parent, (cx, cy)) - 20
        assert any({a, b} == {child, parent} for a, b in lines)
    assert placed["Cooker hood FCU"][2] == "rect"
    assert placed["Kitchen 1"][2] == "circle"
    words = " ".join(texts(root))
    assert "FCU · spur off 2" in words and "beyond FCU 4" in words


def test_points_over_their_zs_limit_are_flagged():
    diag = with_spurs()
    failing = [p for p in diag["points"] if p["ok"] is False]
    root = parse(drawings.ring_picture(diag))
    # one warning triangle beside the point on the drawing and one in the key
    assert texts(root).count("!") == 2 * len(failing) == 4
    assert " ".join(texts(root)).count("Zs 0.69 Ω over limit 1.09 Ω") == len(failing)


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
    diag = healthy()
    for k, p in enumerate(diag["points"]):
        p["ln_ohm"], p["le_ohm"] = 0.22 + 0.02 * k, 0.30 + 0.02 * k
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


def out_of_band(diag) -> dict[str, int]:
    """Count the readings the test itself finds outside the band (ring points only)."""
    counts = {"high": 0, "low": 0}
    for p in diag["points"]:
        for field, band in (("ln_ohm", "ln_band_ohm"), ("le_ohm", "le_band_ohm")):
            v = p[field]
            lo, hi = diag["expected"][band]
            if isinstance(v, float) and p["spur_from"] is None:
                counts["high"] += v > hi
                counts["low"] += v < lo
    return counts


@pytest.mark.parametrize("case", ["healthy", "bridged", "open_neutral"])
def test_out_of_band_readings_get_a_triangle_and_a_word(case):
    diag = CASES[case]()
    root = parse(drawings.readings_plot(diag))
    words = texts(root)
    counts = out_of_band(diag)
    assert words.count("high") == counts["high"]
    assert words.count("low") == counts["low"]
    triangles = [pg for pg in root.iter(f"{SVG}polygon") if pg.get("fill") == drawings.ALERT]
    opens = sum(p[f] == "OL" for p in diag["points"] for f in ("ln_ohm", "le_ohm"))
    assert len(triangles) == counts["high"] + counts["low"] + opens
    if case == "bridged":
        assert counts["low"] == 3  # the bridged section reads low at step 2


def test_ol_is_drawn_at_the_top_edge_with_its_name():
    diag = open_neutral()
    root = parse(drawings.readings_plot(diag))
    ln_panel = panels(root)[0]
    top_tick = min(ln_panel["ticks"].values())
    ols = [t for t in root.iter(f"{SVG}text") if "".join(t.itertext()).endswith("OL")]
    assert len(ols) == 2
    for t in ols:
        assert top_tick - 2 < float(t.get("y")) < top_tick + 30


def test_columns_follow_the_ring_order_then_spurs():
    diag = unplaced()
    diag["points"].append(point("z", "Loft spur", spur_from="q", ln=0.5, le=0.7))
    root = parse(drawings.readings_plot(diag))
    label = {p["id"]: p["label"] for p in diag["points"]}
    key = [t for t in texts(root) if t in label.values()]
    assert key == [label[i] for i in ["r", "p", "s", "q", "z"]]
    assert "spurs" in texts(root)


def test_spur_judged_by_its_own_range_not_the_ring_band():
    diag = with_spurs()  # garden spur ln 0.9 against its own 0.5-0.7: high; the others unjudged
    words = texts(parse(drawings.readings_plot(diag)))
    assert words.count("high") == 1 and words.count("low") == 0


def test_no_band_no_verdicts():
    diag = bridged()
    diag["expected"] = {"ln_ohm": None, "le_ohm": None, "ln_band_ohm": None,
                        "le_band_ohm": None}
    words = texts(parse(drawings.readings_plot(diag)))
    assert words.count("expected range not known yet") == 2
    assert "high" not in words and "low" not in words


def test_reading_far_above_the_scale_is_pinned_with_its_value():
    diag = healthy()
    diag["points"][2]["ln_ohm"] = 7.5
    words = texts(parse(drawings.readings_plot(diag)))
    assert "high 7.50" in words


# ---------------------------------------------------------------- on real diagnoses


DEMO_JOBS = sorted((Path(__file__).resolve().parents[2] / "demo_jobs").glob("*.json"))


def demo_records():
    for path in DEMO_JOBS:
        doc = json.loads(path.read_text(encoding="utf-8"))
        for i, record in enumerate(doc.get("circuits") or [doc]):
            yield pytest.param(record, id=f"{path.stem}-{i}")


@pytest.mark.parametrize("record", demo_records())
def test_drawings_of_ringmath_diagnoses(record):
    diag = diagnose(record)
    ring = parse(drawings.ring_picture(diag))
    plot = parse(drawings.readings_plot(diag))
    for p in diag["points"]:
        assert p["label"] in texts(ring) and p["label"] in texts(plot)
    angles = angles_in_order(diag)
    assert all(b - a > 0.05 for a, b in zip(angles, angles[1:], strict=False))
    first = next((f for f in diag["findings"] if f["severity"] == "fault"), None)
    chords = [ln for ln in alert_lines(ring) if ln.get("stroke-dasharray")]
    assert len(chords) == (1 if first and first["section"] else 0)
    halos = [c for c in ring.iter(f"{SVG}circle")
             if c.get("stroke") == drawings.ALERT and c.get("fill") == "none"]
    # each suspect outlet ringed twice: on the drawing and in the key
    assert len(halos) == 2 * len(first["outlets"] if first else [])
    opens = sum(p[f] == "OL" for p in diag["points"] for f in ("ln_ohm", "le_ohm"))
    assert texts(plot).count("OL") == opens


def test_demo_jobs_cover_the_fault_marks():
    codes = {f["code"] for record in demo_records() for f in diagnose(record.values[0])[
        "findings"] if f["severity"] == "fault"}
    assert {"interconnection", "open_conductor"} <= codes


def test_labels_round_the_ring_do_not_overlap():
    diag = diagnosis([point("f", "Loft", 0.05)]
                     + [point(x, f"Bedroom {x} long label", 0.5) for x in "abcde"]
                     + [point("g", "Porch", 0.95)])
    root = parse(drawings.ring_picture(diag))
    boxes = []
    for t in root.iter(f"{SVG}text"):
        if t.find(f"{SVG}title") is None:
            continue
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


def test_a_crowded_plot_keeps_its_numbers_apart_and_shortens_its_words():
    rng = random.Random(7)  # seeded: the same readings every run
    pts = [point(f"o{i}", f"Room {i}", ln=round(rng.uniform(0.17, 0.36), 2),
                 le=round(rng.uniform(0.25, 0.44), 2)) for i in range(24)]
    diag = diagnosis(pts)
    root = parse(drawings.readings_plot(diag))
    counts = out_of_band(diag)
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
