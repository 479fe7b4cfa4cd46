"""Finding: one statement about a circuit (a fault hypothesis, a failed check or a rule)."""

from __future__ import annotations

from dataclasses import dataclass

SEVERITIES = ("fault", "warning", "info")
CONDUCTORS = ("line", "neutral", "cpc")
#: What a fitted confidence rests on: a whole-ring fit, one outlet's readings on top of it, or
#: the test's own set-up (each calibrated by its own map, ``ringmath.calibration``).
BASES = ("ring", "outlet", "setup")


@dataclass(frozen=True)
class Finding:
    """A plain-words statement about the circuit.

    code: machine code (``interconnection``, ``open_conductor``, ``zs_over_limit``, ...).
    severity: "fault" (the circuit must not go into service as it is), "warning" (check before
    signing off) or "info".
    message: what it means, in plain words; next_check: what to measure or look at next.
    outlets: ids of the outlets it points at. conductor: "line", "neutral", "cpc" or None.
    step: "ln" (step 2) or "le" (step 3) or None. confidence: 0..1 for fitted hypotheses.
    position: a place around the ring as a fraction 0..1 from end 1; section: (start, end)
    fractions of a bridged section. basis: what a fitted confidence rests on (``BASES``), None
    for a check or rule. possible: a fitted fault graded down to a warning because other
    explanations fit the readings nearly as well (suggested, not established).
    """

    code: str
    severity: str
    message: str
    next_check: str = ""
    outlets: tuple[str, ...] = ()
    conductor: str | None = None
    step: str | None = None
    confidence: float | None = None
    position: float | None = None
    section: tuple[float, float] | None = None
    basis: str | None = None
    possible: bool = False

    def __post_init__(self):
        if self.severity not in SEVERITIES:
            raise ValueError(f"severity: {self.severity!r} is not one of {', '.join(SEVERITIES)}")
        if self.conductor is not None and self.conductor not in CONDUCTORS:
            raise ValueError(f"conductor: {self.conductor!r} is not one of {', '.join(CONDUCTORS)}")
        if self.basis is not None and self.basis not in BASES:
            raise ValueError(f"basis: {self.basis!r} is not one of {', '.join(BASES)}")

    def as_dict(self) -> dict:
        """Plain JSON-able form (the shape listed in DEVELOPERS.md)."""
        return {
            "code": self.code,
            "severity": self.severity,
            "conductor": self.conductor,
            "step": self.step,
            "outlets": list(self.outlets),
            "confidence": None if self.confidence is None else round(float(self.confidence), 2),
            "message": self.message,
            "next_check": self.next_check,
            "position": None if self.position is None else round(float(self.position), 3),
            "section": None if self.section is None else [round(float(s), 3) for s in self.section],
            "basis": self.basis,
            "possible": self.possible,
        }
