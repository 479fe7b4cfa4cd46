"""Page text of the guided test: the steps' names and what to join, and step 1's readings."""

from __future__ import annotations

READING_STEPS = ("e2e", "ln", "le")
STEP_INFO = {
    "safety": {"number": 0, "short": "Safety", "title": "Safe isolation"},
    "e2e": {
        "number": 1, "short": "Step 1", "title": "End-to-end readings",
        "join": "Nothing joined yet. Null the meter's leads first. At the board, take the two "
                "ends of the ring apart and measure each conductor from one end to the other.",
    },
    "ln": {
        "number": 2, "short": "Step 2", "title": "Line to neutral at every outlet",
        "join": "At the board, join L1 to N2 and L2 to N1 (line of one end to neutral of the "
                "other). Then at each outlet measure between line and neutral.",
    },
    "le": {
        "number": 3, "short": "Step 3", "title": "Line to CPC at every outlet",
        "join": "At the board, join L1 to CPC2 and L2 to CPC1 (line of one end to earth of "
                "the other). Then at each outlet measure between line and earth (CPC). "
                "Each reading is that outlet's R1+R2.",
    },
    "results": {"number": 4, "short": "Results", "title": "Results"},
}
E2E_READINGS = (
    ("r1", "r1 · line end to end", "Between the two line ends, L1 and L2."),
    ("rn", "rn · neutral end to end", "Between the two neutral ends, N1 and N2."),
    ("r2", "r2 · CPC end to end", "Between the two CPC (earth) ends, CPC1 and CPC2."),
)
STEP_BADGES = {"safety": "safety checks", "e2e": "step 1", "ln": "step 2", "le": "step 3",
               "results": "results"}
#: The terms each step page explains on tap (fieldapp.labels.TERMS).
STEP_TERMS = {"e2e": ("nulled", "OL", "in band", "CPC"), "ln": ("OL", "in band", "spur"),
              "le": ("R1+R2", "CPC", "OL", "in band", "Zs")}
