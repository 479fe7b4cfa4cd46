"""Parsing one value of the record: numbers, readings, insulation readings, text, choices.

Every refusal is a ``RecordError`` (a ``ValueError``) whose message starts with the field's path
and whose ``kind`` says what was wrong, so callers match on ``.kind`` / ``.path``, never on words.

Numbers are strict: a JSON number, or text of ASCII digits with at most one ``.`` or ``,`` as
the decimal mark (``"0,52"`` is 0.52) and an optional leading minus (so a negative reading is
refused as out of range, not as unreadable). No exponents, underscores (``"0_52"``), spaces
inside, or digits of other scripts (Arabic-Indic, full-width). Text longer than
``MAX_NUMBER_CHARS`` and integers of more than ``MAX_INT_BITS`` bits are refused as too long
before any conversion, so nothing overflows.
"""

from __future__ import annotations

import math
import re
from typing import Any

from ringmath.record.model import MAX_INSULATION_MOHM, MAX_READING_OHM, OL, IrValue

#: Kinds of refusal (CONTRACT: views match on these).
KINDS = ("missing", "type", "range", "choice", "format", "topology", "size")
#: Longest numeric text accepted, characters (a meter shows at most a handful of digits; the
#: app stores readings as text of up to 16 characters).
MAX_NUMBER_CHARS = 16
#: Largest integer magnitude accepted before conversion, bits (2^64: far above any field's range).
MAX_INT_BITS = 64
#: Longest free text (labels, references, descriptions), characters; ids are shorter.
MAX_TEXT_CHARS = 200
MAX_ID_CHARS = 40
#: The spellings of an open / over-range reading.
OL_SPELLINGS = ("OL", "O/L", "OPEN", "∞", "INF")

_NUMBER_TEXT = re.compile(r"-?(?:[0-9]+(?:[.,][0-9]*)?|[.,][0-9]+)")


class RecordError(ValueError):
    """A field of a record that cannot be read. ``path`` names the field (``"outlets[3].ln"``),
    ``kind`` is one of KINDS; ``str(error)`` is ``"<path>: <message>"``."""

    def __init__(self, path: str, kind: str, message: str):
        if kind not in KINDS:
            raise ValueError(f"kind: {kind!r} is not one of {', '.join(KINDS)}")
        self.path = path or "record"
        self.kind = kind
        self.detail = message
        super().__init__(f"{self.path}: {message}")


class Oversize:
    """A JSON number too long to convert safely (see ``ringmath.record.jsontext``);
    ``digits`` is the length of its text."""

    __slots__ = ("digits",)

    def __init__(self, digits: int):
        self.digits = digits

    def __repr__(self) -> str:
        return f"<number of {self.digits} characters>"


def show(value: object) -> str:
    """A short, always-safe rendering of a bad value for a message (never huge, never raises)."""
    if isinstance(value, bool) or value is None:
        return repr(value)
    if isinstance(value, int):
        return repr(value) if value.bit_length() <= MAX_INT_BITS else "a very long integer"
    if isinstance(value, float | Oversize):
        return repr(value)
    if isinstance(value, str):
        return repr(value if len(value) <= 24 else value[:20] + "…")
    return f"a {type(value).__name__}"


def _too_long(value: object) -> int | None:
    """The length of a number that must be refused as too long, else None."""
    if isinstance(value, Oversize):
        return value.digits
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > MAX_INT_BITS:
        return value.bit_length()  # in bits: never convert it to text
    if isinstance(value, str) and len(value.strip()) > MAX_NUMBER_CHARS:
        return len(value.strip())
    return None


def number(value: object, path: str, *, minimum: float | None = None,
           maximum: float | None = None, allow_none: bool = True,
           strict_min: bool = False) -> float | None:
    """A number from JSON (int, float, or strict number text; see the module docstring).

    None or blank text gives None when ``allow_none`` (else kind "missing"). Raises RecordError
    naming ``path``: "type", "format", "size", "range".
    """
    if value is None or (isinstance(value, str) and value.strip() == ""):
        if allow_none:
            return None
        raise RecordError(path, "missing", "a number is required")
    if isinstance(value, bool) or not isinstance(value, str | int | float | Oversize):
        raise RecordError(path, "type", f"expected a number, got {show(value)}")
    length = _too_long(value)
    if length is not None:
        raise RecordError(path, "size", f"a number of {length} digits is too long")
    if isinstance(value, str):
        text = value.strip()
        if not _NUMBER_TEXT.fullmatch(text):
            raise RecordError(path, "format", f"{show(value)} is not a number (use digits with "
                              "one decimal point or comma)")
        number_ = float(text.replace(",", "."))
    else:
        assert not isinstance(value, Oversize)  # refused as too long above
        number_ = float(value)  # int within MAX_INT_BITS, or float: cannot overflow
    if not math.isfinite(number_):
        raise RecordError(path, "format", f"{show(value)} is not a finite number")
    if minimum is not None and (number_ <= minimum if strict_min else number_ < minimum):
        raise RecordError(path, "range",
                          f"{number_:g} is below the lowest allowed value {minimum:g}")
    if maximum is not None and number_ > maximum:
        raise RecordError(path, "range",
                          f"{number_:g} is above the highest allowed value {maximum:g}")
    return number_


def is_ol(value: object) -> bool:
    """True for text spelling an open / over-range reading ("OL", "o/l", "open", "∞", "inf")."""
    return isinstance(value, str) and len(value) <= 8 and value.strip().upper() in OL_SPELLINGS


def parse_reading(value: object, path: str, *, maximum: float | None = None) -> float | None:
    """A reading in ohms: number, "OL" (-> math.inf), or None/"" (not taken).

    Accepts a decimal comma ("0,52"). Raises RecordError naming ``path`` for text, negative,
    or values above ``maximum`` (MAX_READING_OHM unless given).
    """
    if is_ol(value):
        return OL
    return number(value, path, minimum=0.0,
                  maximum=MAX_READING_OHM if maximum is None else maximum)


def format_reading(value: float | None) -> float | str | None:
    """The JSON form of a reading: float, "OL" or None."""
    if value is None:
        return None
    if math.isinf(value):
        return "OL"
    return value


def text(value: object, path: str, default: str = "", *,
         choices: tuple[str, ...] | None = None, required: bool = False,
         max_chars: int = MAX_TEXT_CHARS) -> str:
    """Text (a JSON string, or an integer written as text) stripped; RecordError naming
    ``path``: "missing", "type", "size", "choice"."""
    if value is None:
        if required:
            raise RecordError(path, "missing", "is required")
        return default
    if isinstance(value, bool) or not isinstance(value, str | int):
        raise RecordError(path, "type", f"expected text, got {show(value)}")
    if isinstance(value, int) and value.bit_length() > MAX_INT_BITS:
        raise RecordError(path, "size", "is too long")
    out = str(value).strip()
    if required and not out:
        raise RecordError(path, "missing", "is required")
    if len(out) > max_chars:
        raise RecordError(path, "size", f"is {len(out)} characters long (at most {max_chars})")
    if choices is not None and out not in choices:
        raise RecordError(path, "choice", f"{show(out)} is not one of {', '.join(choices)}")
    return out


def optional_choice(value: object, path: str, choices: tuple[str, ...]) -> str | None:
    """One of ``choices`` or None (for null or "")."""
    if value is None or value == "":
        return None
    return text(value, path, choices=choices)


def flag(value: object, path: str, default: bool | None = None) -> bool | None:
    """A JSON true/false; None (null or absent) gives ``default``."""
    if value is None:
        return default
    if not isinstance(value, bool):
        raise RecordError(path, "type", f"expected true or false, got {show(value)}")
    return value


def obj(value: object, path: str, *, required: bool = True) -> dict[str, Any]:
    """A JSON object; {} for a missing optional one."""
    if value is None and not required:
        return {}
    if value is None:
        raise RecordError(path, "missing", "is required (an object)")
    if not isinstance(value, dict):
        raise RecordError(path, "type", f"expected an object, got {show(value)}")
    return value


def parse_ir(value: object, path: str) -> IrValue | None:
    """An insulation resistance in MΩ: a number, or text "> N" / ">N" for an instrument showing
    over range (-> IrValue(N, over=True)), or None. RecordError naming ``path``."""
    over = False
    if isinstance(value, str) and value.strip().startswith(">"):
        over = True
        value = value.strip()[1:]
        if value.strip() == "":
            raise RecordError(path, "format", "'>' needs the value the instrument showed")
    reading = number(value, path, minimum=0.0, maximum=MAX_INSULATION_MOHM)
    return None if reading is None else IrValue(value_mohm=reading, over=over)


def format_ir(value: IrValue | None) -> float | str | None:
    """The JSON form of an IrValue: float, "> N" text (e.g. ">999") or None."""
    if value is None:
        return None
    return f">{value.value_mohm:g}" if value.over else value.value_mohm
