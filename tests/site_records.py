"""Invented records shared by the ringmath and fieldapp tests (not collected as tests)."""

from __future__ import annotations


def ring_with_step_1_read_low() -> dict:
    """A six-socket ring whose step 1 was read with the leads over-nulled by about 0.05 Ω, so
    the step 2 and 3 readings sit unevenly above what r1, rn and r2 imply ((r1+rn)/4 = 0.15 Ω;
    common practice): a bridge and a sound ring with a step 1 offset fit about alike, and the
    diagnosis says a bridge is possible, not established. Invented readings (a seeded
    simulation of a sound ring, leads -0.047 Ω on step 1, probe scatter 0.02 Ω, 2 % warmer)."""
    rows = [("h", 0.20, 0.26), ("f", 0.15, 0.21), ("b", 0.17, 0.23), ("e", 0.15, 0.26),
            ("g", 0.15, 0.21), ("a", 0.21, 0.27)]
    return {"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.21,
                        "ze_source": "measured", "earthing": "TN-C-S",
                        "safety": {"isolated": True, "locked_off": True, "proved_dead": True}},
            "end_to_end": {"r1": 0.30, "rn": 0.31, "r2": 0.50},
            "outlets": [{"id": i, "label": f"Point {i}", "spur_from": None,
                         "kind": "twin_socket", "ln": ln, "le": le} for i, ln, le in rows]}


def ring_bridged_or_spurred_at_c() -> dict:
    """A five-socket ring (two spurs, one beyond an FCU) where outlet c reads about 0.03 Ω high
    in step 2 and 0.05 Ω high in step 3 ((r1+rn)/4 = 0.09 Ω, (r1+r2)/4 = 0.12 Ω; common
    practice): a short bridge from c and an unrecorded spur at c fit about alike, a sound ring
    far worse. Invented readings (a seeded simulation: a bridge between c and g, clean meter)."""
    rows = [("e", "fcu", None, 3.0, 0.09, 0.12), ("c", "twin_socket", None, None, 0.12, 0.17),
            ("h", "single_socket", "i", None, 0.19, 0.26),
            ("a", "twin_socket", None, None, 0.08, 0.12),
            ("g", "twin_socket", None, None, 0.12, 0.15),
            ("d", "fixed_equipment", "e", None, 0.27, 0.32),
            ("i", "twin_socket", None, None, 0.10, 0.12)]
    return {"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.25,
                        "ze_source": "measured", "earthing": "TN-C-S",
                        "safety": {"isolated": True, "locked_off": True, "proved_dead": True}},
            "end_to_end": {"r1": 0.18, "rn": 0.19, "r2": 0.31},
            "outlets": [{"id": i, "label": f"Point {i}", "kind": kind, "spur_from": parent,
                         "fuse_a": fuse, "ln": ln, "le": le}
                        for i, kind, parent, fuse, ln, le in rows]}


def ring_read_about_twice_over() -> dict:
    """A nine-socket ring whose step 2 and 3 readings are all about 2.3 times what r1, rn and
    r2 imply ((r1+rn)/4 = 0.17 Ω, read 0.37-0.39 Ω): a meter or set-up that scales every
    reading, or a bridge joining points near both ends of the ring (a second cable in parallel
    with it), give the same readings. Invented readings (a seeded simulation of a sound ring
    read with a meter scale of x2.28; the spur a is listed after its parent f)."""
    rows = [("g", 0.38, 0.50), ("j", 0.38, 0.48), ("h", 0.38, 0.50), ("e", 0.38, 0.50),
            ("k", 0.39, 0.50), ("m", 0.39, 0.49), ("f", 0.37, 0.50), ("d", 0.38, 0.50),
            ("c", 0.38, 0.50)]
    outlets = [{"id": i, "label": f"Point {i}", "kind": "twin_socket", "spur_from": None,
                "ln": ln, "le": le} for i, ln, le in rows]
    outlets.append({"id": "a", "label": "Point a", "kind": "single_socket", "spur_from": "f",
                    "ln": 0.50, "le": 0.66})
    return {"circuit": {"ocpd": {"standard": "BS EN 60898", "curve": "B", "rating_a": 32},
                        "live_csa_mm2": 2.5, "cpc_csa_mm2": 1.5, "ze_ohm": 0.23,
                        "ze_source": "measured", "earthing": "TN-C-S",
                        "safety": {"isolated": True, "locked_off": True, "proved_dead": True}},
            "end_to_end": {"r1": 0.34, "rn": 0.34, "r2": 0.55}, "outlets": outlets}
