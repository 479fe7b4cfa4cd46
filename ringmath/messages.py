"""Plain words for the fitted explanations: what each means and what to check next.

Written for an apprentice on site: what the pattern of readings says, why it matters, and the
one measurement or inspection that settles it. The trade's own terms only.
"""

from __future__ import annotations

CAUTIONS = (
    "Test only a circuit that has been safely isolated, locked off and proved dead with an "
    "approved voltage indicator that was proved on a known source before and after.",
    "This tool advises; it does not certify. Testing and certification must be carried out by "
    "a competent person.",
    "BS 7671 and local codes prevail over anything shown here.",
    "Every reading and every result must be verified by the person responsible for the test.",
)

#: The one set of words for the verdicts, used by every screen, the sheet and the JSON.
VERDICT_WORDS = {"satisfactory": "Satisfactory", "investigate": "Investigate",
                 "retest": "Re-test", "incomplete": "Incomplete"}

_NAMES = {"line": "line", "neutral": "neutral", "cpc": "cpc (earth)"}
_STEP_NAMES = {"ln": "step 2 (L–N)", "le": "step 3 (L–CPC)"}
_STEP_JOINS = {"ln": ("L1 to N2 and L2 to N1", "L1 to N1 and L2 to N2"),
               "le": ("L1 to CPC2 and L2 to CPC1", "L1 to CPC1 and L2 to CPC2")}


def _list(ids) -> str:
    ids = list(ids)
    if not ids:
        return ""
    if len(ids) == 1:
        return ids[0]
    return ", ".join(ids[:-1]) + " and " + ids[-1]


def interconnection(inside: list[str], located: bool) -> tuple[str, str]:
    """Message and next check for a bridged (interconnected) ring."""
    where = (f" The outlets inside the bridged section are most likely {_list(inside)}."
             if located and inside else " The readings do not pin down which section.")
    msg = ("The readings fit a ring with a bridge across it: a cable joins two points of the "
           "ring, so part of the ring is fed by more than one path and the step 2 and step 3 "
           "readings are not even around the ring." + where)
    nxt = ("Look for a third cable at the outlets at the edges of that section, or a junction "
           "box between them. Remove the bridge, then repeat steps 2 and 3: every reading should "
           "then be close to the expected value.")
    return msg, nxt


def open_ring(conductor: str, between: list[str], located: bool) -> tuple[str, str]:
    """Message and next check for a break in one ring conductor."""
    name = _NAMES[conductor]
    msg = (f"The {name} conductor of the ring is broken: its end-to-end reading is OL. Outlets "
           "still work from one side, so this goes unnoticed in use, but the cable is then "
           "overloaded as a long radial.")
    if located and between:
        msg += f" The break is most likely next to {_list(between)}."
        nxt = (f"Inspect the {name} terminations at {_list(between)} (loose, cut back or not "
               "in the terminal), repair, and repeat all three steps.")
    elif conductor == "neutral":
        msg += (" A break in the neutral cannot be located from these readings: step 2 reads the "
                "same either side of it and step 3 does not use the neutral.")
        nxt = ("Join a long lead to N1 and measure from it to the neutral of each outlet in turn: "
               "the outlets beyond the break read OL.")
    else:
        msg += " These readings do not locate the break well."
        nxt = (f"Join a long lead to the {name} at one end and measure to each outlet: the "
               "outlets beyond the break read OL.")
    return msg, nxt


def joint(conductor: str, r_ohm: float, near: list[str], located: bool,
          at_outlet: bool = False) -> tuple[str, str]:
    """Message and next check for a high-resistance joint."""
    name = _NAMES[conductor]
    if at_outlet:
        msg = (f"At {_list(near)} the readings imply about {r_ohm:.2f} Ω more than the ring "
               f"predicts, in the {name} only (inferred): a poor {name} connection at that "
               "outlet, or its socket contacts if the readings were taken at the front.")
        nxt = f"Isolate, open {_list(near)} and remake the {name} termination; re-measure."
        return msg, nxt
    msg = (f"The {name} conductor reads about {r_ohm:.2f} Ω more end to end than the other "
           "conductors imply (inferred from r1, rn and r2): a loose or poor joint in the ring, "
           "which can overheat in use.")
    if located and near:
        msg += f" It is most likely at or next to {_list(near)}."
        nxt = (f"Check and remake the {name} terminations at {_list(near)}, then repeat step 1: "
               "r1, rn and r2 should then be in the usual proportion.")
    else:
        nxt = (f"Check every {name} termination on the ring (and at the board), then repeat "
               "step 1.")
    return msg, nxt


def wrong_cross(step: str) -> tuple[str, str]:
    """Message and next check for a wrong cross-connection in step 2 or 3."""
    right, wrong = _STEP_JOINS[step]
    mid = "(r1 + rn)/4" if step == "ln" else "(r1 + r2)/4"
    msg = (f"The {_STEP_NAMES[step]} readings fit the pattern given when the ends are joined "
           f"{wrong} instead of {right}: low at outlets near either end of the ring, rising to "
           f"{mid} only in the middle, where a sound ring reads about {mid} at every outlet.")
    nxt = f"Check the joins at the board: {right} (the ends crossed), then repeat the readings."
    return msg, nxt


def unrecorded_spur(outlet: str, excess_ohm: float, has_ln: bool = True,
                    has_le: bool = True) -> tuple[str, str]:
    """Message and next check for an outlet that seems to be on a spur not recorded.
    ``excess_ohm`` is the inferred step 2 excess; only the steps taken are described as read."""
    if has_ln and has_le:
        read = (f"{outlet} reads about {excess_ohm:.2f} Ω more in step 2 than a ring outlet "
                "should (inferred from the fit), and more again in step 3, in the proportion a "
                "length of spur cable gives")
    else:
        step = "step 2" if has_ln else "step 3"
        read = (f"{outlet} reads higher in {step} than a ring outlet should ({step} only was "
                "taken there, so the spur is inferred from one reading)")
    msg = read + ": it is probably on a spur that is not recorded."
    nxt = (f"Open {outlet} and count the cables: a single cable means a spur. Record it as a "
           "spur from the point that feeds it (an outlet or a junction box).")
    return msg, nxt


def ol_pattern(outlet: str, code: str, conductor: str | None, swap: str | None) -> tuple[str, str]:
    """Message and next check for an outlet with OL readings (swapped or unconnected)."""
    if code == "reversed_polarity":
        pair = {"line-neutral": "line and neutral", "line-cpc": "line and cpc",
                "neutral-cpc": "neutral and cpc"}[swap]
        msg = f"At {outlet} the readings fit {pair} swapped at the outlet's terminals."
    else:
        msg = f"At {outlet} the readings fit the {_NAMES[conductor]} not connected at the outlet."
    checks = {
        "line-neutral": "With the step 3 joins in place, measure from the neutral terminal to the "
                        "cpc at the outlet: a normal reading means line and neutral are swapped; "
                        "OL again means the cpc is not connected.",
        "cpc": "With the step 3 joins in place, measure from the neutral terminal to the cpc at "
               "the outlet: a normal reading means line and neutral are swapped; OL again means "
               "the cpc is not connected.",
        "line-cpc": "With the step 2 joins in place, measure from the cpc terminal to the neutral "
                    "at the outlet: a normal reading means line and cpc are swapped; OL again "
                    "means the neutral is not connected.",
        "neutral": "With the step 2 joins in place, measure from the cpc terminal to the neutral "
                   "at the outlet: a normal reading means line and cpc are swapped; OL again "
                   "means the neutral is not connected.",
        "neutral-cpc": "Inspect the terminals: if the line is connected, neutral and cpc are "
                       "probably swapped; otherwise remake the line connection and re-measure.",
        "line": "Inspect the terminals: if the line is connected, neutral and cpc are probably "
                "swapped; otherwise remake the line connection and re-measure.",
    }
    return msg, checks[swap or conductor]


#: Said after a fitted fault that other explanations fit nearly as well.
POSSIBLE = (" Other explanations, a sound ring among them, fit these readings nearly as well, so "
            "this is a check to make before signing off, not an established fault.")


def possible_headline(code: str, conductor: str | None = None, step: str | None = None,
                      outlets=()) -> str:
    """The headline of a fault the readings suggest but do not establish."""
    words = headline(code, conductor, step, outlets)
    return f"Not established, but possible: {words[0].lower()}{words[1:]}"


def headline(code: str, conductor: str | None = None, step: str | None = None,
             outlets=()) -> str:
    """A few words for the top of a result: the answer at a glance."""
    where = f" at {_list(list(outlets))}" if outlets else ""
    if code == "interconnection":
        return "The ring looks bridged (interconnected)."
    if code == "open_conductor":
        if outlets and len(outlets) == 1:
            return f"The {_NAMES[conductor]} looks not connected{where}."
        return f"The {_NAMES[conductor]} of the ring is broken."
    if code == "high_resistance_joint":
        return f"A poor {_NAMES[conductor]} joint{where or ' in the ring'}."
    if code == "wrong_cross_connection":
        return f"The ends look wrongly joined for {_STEP_NAMES[step]}."
    if code == "unrecorded_spur":
        return f"An unrecorded spur{where}."
    if code == "reversed_polarity":
        return f"Terminals look swapped{where}."
    if code == "zs_over_limit":
        return f"Zs is over the limit{where}."
    if code == "setup_socket_contacts":
        return f"Socket contacts read high{where}: re-measure at the terminals."
    if code in ("setup_lead_offset", "setup_lead_offset_step"):
        return "The readings look offset: null the leads and re-take them."
    if code in ("setup_instrument", "setup_readings_inconsistent"):
        return "These readings cannot all be true: check the test set-up or the instrument."
    if code == "setup_cross_join_open":
        return (f"One cross-connection looks not made for {_STEP_NAMES[step]}: make both "
                "joins and repeat that step.")
    return "A fault needs checking."


def look_alike(first: str, second: str) -> str:
    """A sentence for two explanations that fit about equally, with what tells them apart."""
    pair = {first, second}
    if pair == {"interconnection", "unrecorded_spur"}:
        return ("A short bridge and an unrecorded spur give similar readings here. Count the "
                "cables at the outlets concerned: a spur has one cable, a bridged point three.")
    if pair & {"wrong_cross_connection", "setup_cross_join_open"}:
        return "Check the joins at the board and repeat the step; the repeat tells them apart."
    if pair == {"interconnection", "setup_instrument"}:
        return ("A bridge joining points near both ends of the ring (or a second cable in "
                "parallel with it) and a meter or set-up that scales every step 2 and 3 reading "
                "give the same readings here. Check the meter on a known low resistance and the "
                "joins at the board, then repeat step 2 at two outlets: readings back at about "
                "(r1 + rn)/4 clear the wiring; the same readings again point to the bridge.")
    setup = next((c for c in pair if c.startswith("setup_")), None)
    if setup is not None:
        return ("A wiring fault and an error of the test itself fit these readings about "
                "equally. Put the set-up right first (null the leads, check the joins at the "
                "board and the meter), then repeat the readings that stand out: a real fault "
                "reads the same again.")
    return ("Two explanations fit these readings about equally; inspect the outlets named in "
            "both before deciding.")
