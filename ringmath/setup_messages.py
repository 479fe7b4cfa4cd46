"""Plain words for the test's own errors, readings that cannot all be true, socket contacts and
the smallest fault these readings could show.

Every message separates what was measured (the readings, quoted as taken) from what the
diagnosis infers ("the readings imply", "about"), and ends in the action that confirms it.
"""

from __future__ import annotations

_STEP = {"r": "step 1 (r1, rn, r2)", "ln": "step 2 (L–N)", "le": "step 3 (L–CPC)"}


def _list(items) -> str:
    items = list(items)
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]


def lead_offset(offset_ohm: float, ratios: str, gain: float = 0.0,
                shift_ohm: float | None = None) -> tuple[str, str]:
    """All readings shifted by one offset: leads not nulled (positive) or over-nulled.
    ``gain``: steps 2-3 also read this fraction more than step 1 implies (a warmer cable);
    ``shift_ohm``: what both do to a step 2 reading against step 1 (default offset/2)."""
    if offset_ohm > 0:
        what = (f"every reading looks about {offset_ohm:.2f} Ω high, as when the test leads are "
                "not nulled")
    else:
        what = (f"every reading looks about {-offset_ohm:.2f} Ω low, as when the leads were "
                "nulled with a different lead set or a poor contact (over-nulled)")
    shift = offset_ohm / 2 if shift_ohm is None else shift_ohm
    warm = (f", with steps 2 and 3 also reading about {100 * gain:.0f} % more than step 1 "
            "implies (as with a warmer cable on the later day)") if abs(gain) >= 0.01 else ""
    msg = (f"The readings fit a sound ring, but {what}{warm}: each step 2 and step 3 reading "
           f"sits about {abs(shift):.2f} Ω {'above' if shift > 0 else 'below'} what "
           f"step 1 implies, the same at every outlet (inferred; {ratios}). No wiring fault "
           "shifts every reading alike.")
    nxt = ("Null the leads on the leads actually used, then re-take r1, rn and r2 and a few "
           "step 2 and step 3 readings: they should then agree with the expected values.")
    if offset_ohm < 0:
        nxt += " Readings that are too low make R1+R2 and Zs look better than they are."
    return msg, nxt


def step_offset(step: str, offset_ohm: float, ratios: str,
                gain: float = 0.0) -> tuple[str, str]:
    """The readings of one step shifted alike. ``gain``: steps 2-3 also read this fraction
    more than step 1 implies (said apart: it is on both steps alike)."""
    shift = offset_ohm
    word = "high" if shift > 0 else "low"
    warm = (f", and steps 2 and 3 read about {100 * gain:.0f} % more than step 1 implies (as "
            "with a warmer cable on the later day)") if abs(gain) >= 0.01 else ""
    msg = (f"The {_STEP[step]} readings all look about {abs(shift):.2f} Ω {word} against "
           f"the other steps, by the same amount at every point{warm} (inferred; {ratios}). No "
           "wiring fault does that to one step only: the leads were nulled differently for that "
           "step, or a join at the board for it was poor.")
    if step == "r":
        nxt = "Null the leads and re-take r1, rn and r2."
    else:
        nxt = (f"Check the joins at the board for {_STEP[step]} are tight and the leads nulled, "
               "then re-take two or three of its readings.")
    return msg, nxt


def step_gain(gain: float, ratios: str) -> tuple[str, str]:
    """Steps 2-3 a few percent off what step 1 implies (temperature, meter range)."""
    msg = (f"Steps 2 and 3 read about {abs(gain):.0%} {'more' if gain > 0 else 'less'} than step 1 "
           f"implies at every point ({ratios}). Copper rises about 0.4 % per °C, so a warmer "
           "cable on the day of steps 2 and 3, or the meter on another range, explains it.")
    nxt = "Nothing to remake; if the steps were taken on different days, note it on the sheet."
    return msg, nxt


def instrument(factor: float, ratios: str) -> tuple[str, str]:
    """Steps 2-3 a multiple of what step 1 implies: the readings cannot all be true."""
    msg = (f"These readings cannot all be true of one ring: steps 2 and 3 read about "
           f"{factor:.2f}× what the end-to-end readings imply at every outlet ({ratios}). A "
           "sound ring reads about a quarter of r1 + rn at every outlet in step 2; no wiring "
           "fault scales every reading alike. Check the test set-up or the instrument before "
           "looking for faults.")
    nxt = ("Check the meter is a low-resistance ohmmeter on its lowest range, null the leads, "
           "confirm which ends were joined for each step, then repeat all three steps.")
    return msg, nxt


def cross_join_open(step: str, r1_ohm: float, rn_ohm: float, r2_ohm: float,
                    median_ohm: float | None) -> tuple[str, str]:
    """One of a step's two cross-connections not made: each reading is then the one path
    round the ring in series, t·r1 + (1 − t)·rn (step 2; r2 for step 3), instead of two in
    parallel (star reduction, ``ringmath.star``)."""
    other, pair, join = (("rn", rn_ohm, "L1–N2 and L2–N1") if step == "ln"
                         else ("r2", r2_ohm, "L1–CPC2 and L2–CPC1"))
    seen = "" if median_ohm is None else f" (measured median {median_ohm:.2f} Ω)"
    if abs(r1_ohm - pair) < 0.05 * max(r1_ohm, pair):
        shape = (f"about (r1 + {other})/2 = {(r1_ohm + pair) / 2:.2f} Ω at every outlet, twice "
                 f"the (r1 + {other})/4 = {(r1_ohm + pair) / 4:.2f} Ω a ring reads")
    else:
        lo, hi = sorted((r1_ohm, pair))
        shape = (f"spread from about {lo:.2f} to {hi:.2f} Ω along the ring (r1 at one end, "
                 f"{other} at the other), where a ring reads at most (r1 + {other})/4 = "
                 f"{(r1_ohm + pair) / 4:.2f} Ω")
    msg = (f"The {_STEP[step]} readings fit a test with only one of its two cross-connections "
           f"made: each reading is then the one path round the ring in series, {shape}"
           f"{seen}; inferred from the pattern. It says nothing about the wiring: the "
           f"readings of that step cannot be used.")
    nxt = (f"Make both joins at the board ({join}), check each with the meter, then repeat "
           f"{_STEP[step]} at every outlet.")
    return msg, nxt


def many_faults(count: int, codes: list[str]) -> tuple[str, str]:
    """The best explanation needs several independent faults at once."""
    msg = (f"The best explanation of these readings needs {count} separate faults at once "
           f"({_list(sorted(set(codes)))}). Several independent faults on one ring are rare; "
           "a set-up error or misrecorded readings are far more likely.")
    nxt = ("Check the test set-up (leads nulled, joins at the board, the outlet names against "
           "the readings) and re-take the readings that stand out before remaking anything.")
    return msg, nxt


def socket_contact(outlets: list[str], front: bool) -> tuple[str, str]:
    """A few outlets reading high, most likely through the socket's own contacts."""
    where = ("read with a plug-in lead at the socket front" if front
             else "where the readings were probably taken at the socket front")
    msg = (f"{_list(outlets)} read higher than the rest of the ring implies, "
           f"{where}: this looks like the socket contacts, not the wiring. Worn contacts "
           "add resistance between the plug pins and the terminals.")
    nxt = (f"Re-measure {_list(outlets)} at the terminals (socket off the box). Normal at the "
           "terminals means the socket contacts: replace the accessory. High at the terminals "
           "too means a poor termination: remake it.")
    return msg, nxt


def detection_limit(scatter_ohm: float, joint_ohm: float, spur_m: float,
                    bridge_m: float | None, cpc_free: bool = False) -> tuple[str, str]:
    """What a satisfactory result cannot rule out, from the readings' own scatter. cpc_free:
    the cpc is not the cable's core alone (metallic containment, armour or parallel earth
    paths), so the cpc's own continuity is hidden by the parallel metal (common practice)."""
    bridge = ("a bridge between neighbouring outlets (no outlet between its ends) cannot be seen "
              "at all by this test, whatever its length")
    if bridge_m is not None:
        bridge += (f", and one across a single outlet only when its cable is shorter than about "
                   f"{bridge_m:.0f} m")
    msg = (f"With these readings' scatter (about {scatter_ohm:.3f} Ω, estimated from the "
           f"readings), {bridge}; a joint adding less than about {joint_ohm:.2f} Ω and an "
           f"unrecorded spur shorter than about {spur_m:.0f} m would not show either.")
    nxt = ("Where a hidden bridge or spur matters, inspect the outlets (count the cables in each "
           "box) rather than relying on the readings.")
    if cpc_free:
        msg += (" The cpc here is not the cable's core alone (metal containment or parallel "
                "earth paths), so step 3 cannot show a break or poor joint in the cpc core, and "
                "faults on line and neutral are judged from steps 1 and 2 only.")
        nxt += (" Check each accessory's cpc connection by inspection, and measure Zs at every "
                "outlet with the supply on.")
    return msg, nxt
