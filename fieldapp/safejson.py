"""JSON in from the network, with limits: nesting depth, no NaN/Infinity, bounded numbers.

The app's JSON provider (``SafeJSONProvider``) uses ``loads`` for every request body, and the
import endpoint calls it on uploaded files, so a hostile document becomes a ValueError (a 400
or 422 naming the document) instead of a RecursionError deep in a parser.
"""

from __future__ import annotations

import json
from collections.abc import Iterable
from typing import Any

from flask.json.provider import DefaultJSONProvider

#: A job document nests 6 levels (document, circuits, record, outlets, outlet, value);
#: anything much deeper is not one of ours.
MAX_DEPTH = 20


def _constant(name: str):
    raise ValueError(f"document: {name} is not a JSON number")


def depth(value) -> int:
    """How deeply lists and objects nest in a parsed value (iterative: no recursion limit)."""
    deepest, stack = 0, [(value, 1)]
    while stack:
        item, level = stack.pop()
        if isinstance(item, dict):
            children: Iterable[Any] = item.values()
        elif isinstance(item, list):
            children = item
        else:
            continue
        deepest = max(deepest, level)
        if deepest > MAX_DEPTH:
            return deepest
        stack.extend((child, level + 1) for child in children)
    return deepest


def loads(text: str | bytes, **kwargs):
    """json.loads with the limits above; ValueError (never RecursionError) when refused."""
    kwargs.setdefault("parse_constant", _constant)
    try:
        value = json.loads(text, **kwargs)
    except RecursionError:
        raise ValueError(f"document: nested deeper than {MAX_DEPTH} levels") from None
    if depth(value) > MAX_DEPTH:
        raise ValueError(f"document: nested deeper than {MAX_DEPTH} levels")
    return value


class SafeJSONProvider(DefaultJSONProvider):
    """Flask's JSON provider, reading request bodies through ``loads``."""

    def loads(self, s: str | bytes, **kwargs):
        return loads(s, **kwargs)
