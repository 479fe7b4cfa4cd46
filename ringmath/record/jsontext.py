"""Reading JSON text for a record without any input crashing the reader.

``loads(text)`` is ``json.loads`` with three guards, so a hostile or broken file gets a
RecordError naming where it went wrong, never a RecursionError, OverflowError or a message
naming no field:

- nesting deeper than MAX_DEPTH arrays/objects is refused before parsing (a record needs 5:
  document, circuits list, record, circuit, insulation);
- a number literal longer than ``values.MAX_NUMBER_CHARS`` is kept as an ``Oversize`` marker,
  which the field's parser then refuses as too long with the field's path (Python's own int
  conversion would fail with no field named);
- NaN and Infinity literals are kept as floats, which every number field refuses.
"""

from __future__ import annotations

import json
import re

from ringmath.record.values import MAX_NUMBER_CHARS, Oversize, RecordError

#: Deepest nesting of arrays and objects accepted in a document.
MAX_DEPTH = 20

_STRING = re.compile(r'"(?:[^"\\]|\\.)*"', re.DOTALL)
_BRACKET = re.compile(r"[\[\]{}]")


def _line_col(text: str, index: int) -> tuple[int, int]:
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def check_depth(text: str, max_depth: int = MAX_DEPTH) -> None:
    """Refuse JSON text nested more than ``max_depth`` levels (RecordError, kind "size",
    path "record"). Strings are skipped, so brackets inside text do not count."""
    blanked = _STRING.sub(lambda m: " " * len(m.group()), text)
    depth = 0
    for m in _BRACKET.finditer(blanked):
        depth += 1 if m.group() in "[{" else -1
        if depth > max_depth:
            line, col = _line_col(text, m.start())
            raise RecordError("record", "size", f"nested more than {max_depth} levels deep "
                              f"(line {line}, column {col})")


def _int(literal: str) -> int | Oversize:
    return Oversize(len(literal)) if len(literal) > MAX_NUMBER_CHARS else int(literal)


def _float(literal: str) -> float | Oversize:
    return Oversize(len(literal)) if len(literal) > MAX_NUMBER_CHARS else float(literal)


def loads(text: str) -> object:
    """Parse JSON text for ``ringmath.record``; RecordError for too-deep nesting and
    json.JSONDecodeError (a ValueError) for text that is not JSON."""
    check_depth(text)
    return json.loads(text, parse_int=_int, parse_float=_float)
