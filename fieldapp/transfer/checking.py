"""Every problem in a job document, each ``"path: message"``: the schema's and ringmath's.

``document_errors`` runs both and reports every problem with its path in the document, e.g.
``circuits[0].outlets[3].ln: not a number``; ``load_document`` / ``dump_document`` are the
import and export of the plain values.
"""

from __future__ import annotations

import re

from marshmallow import ValidationError

from fieldapp import limits
from fieldapp.transfer.record_schemas import JobDocumentSchema
from ringmath import record

#: The readings of an outlet, each parsed by ringmath on its own.
OUTLET_READINGS = ("ln", "le", "zs_measured", "ln_terminals", "le_terminals")


def flatten_errors(messages, path: str = "") -> list[str]:
    """Marshmallow's nested error dict as ``"path: message"`` lines, in document order."""
    if isinstance(messages, str):
        return [f"{path or 'document'}: {messages}"]
    if isinstance(messages, list):
        lines = []
        for item in messages:
            lines.extend(flatten_errors(item, path))
        return lines
    lines = []
    for key, value in messages.items():
        if key == "_schema":
            child = path
        elif isinstance(key, int):
            child = f"{path}[{key}]"
        else:
            child = f"{path}.{key}" if path else str(key)
        lines.extend(flatten_errors(value, child))
    return lines


def _error_path(line: str) -> str:
    return line.split(": ", 1)[0]


def domain_errors(doc) -> list[str]:
    """What ringmath's parser refuses, one message per circuit part, each starting with its path.

    Every circuit block, end-to-end reading and outlet is parsed on its own so that one bad
    value does not hide the next; then each whole record (spur topology) and the whole
    document through ``ringmath.parse_document`` (only for a document with ``circuits``:
    without them ringmath would read it as a single record and blame its fields).
    """
    found: list[str] = []

    def attempt(fn, *args):
        try:
            fn(*args)
        except (ValueError, OverflowError) as exc:
            path = args[-1] if len(args) > 1 and isinstance(args[-1], str) else "document"
            text = str(exc)
            found.append(text if isinstance(exc, ValueError) else f"{path}: not a number")
            return False
        return True

    if _too_big(doc):  # the schema reports the size; ringmath need not walk it all
        return found

    circuits = doc.get("circuits") if isinstance(doc, dict) else None
    for i, rec in enumerate(circuits if isinstance(circuits, list) else []):
        if not isinstance(rec, dict):
            continue
        base = f"circuits[{i}]"
        ok = attempt(record.parse_circuit, rec.get("circuit"), f"{base}.circuit")
        e2e = rec.get("end_to_end")
        for name in ("r1", "rn", "r2"):
            if isinstance(e2e, dict):
                ok &= attempt(record.parse_reading, e2e.get(name), f"{base}.end_to_end.{name}")
        outlets = rec.get("outlets")
        for j, outlet in enumerate(outlets if isinstance(outlets, list) else []):
            where = f"{base}.outlets[{j}]"
            for name in OUTLET_READINGS if isinstance(outlet, dict) else ():
                ok &= attempt(record.parse_reading, outlet.get(name), f"{where}.{name}")
            ok &= attempt(record.parse_outlet, outlet, where)
        if ok:
            attempt(record.parse_record, rec, base)
    if isinstance(doc, dict) and "circuits" in doc:
        attempt(record.parse_document, doc)
    return found


def _too_big(doc) -> bool:
    circuits = doc.get("circuits") if isinstance(doc, dict) else None
    if not isinstance(circuits, list):
        return False
    if len(circuits) > limits.MAX_CIRCUITS_PER_JOB:
        return True
    lengths = [len(rec["outlets"]) for rec in circuits
               if isinstance(rec, dict) and isinstance(rec.get("outlets"), list)]
    if sum(lengths) > limits.MAX_OUTLETS_PER_JOB:
        return True
    return any(isinstance(rec, dict) and isinstance(rec.get("outlets"), list)
               and len(rec["outlets"]) > limits.MAX_OUTLETS_PER_CIRCUIT for rec in circuits)


def document_errors(doc) -> list[str]:
    """Every problem in a job document (schema and ringmath), each ``"path: message"``.

    Where both report the same path, the schema's message is kept; ringmath adds the paths the
    schema accepts but the domain does not (a negative reading, a 4 A fuse, a spur loop).
    """
    errors: list[str] = []
    try:
        JobDocumentSchema().load(doc)
    except ValidationError as exc:
        errors = flatten_errors(exc.messages)
    seen = {_error_path(line) for line in errors}
    for line in domain_errors(doc):
        if _error_path(line) not in seen:
            seen.add(_error_path(line))
            errors.append(line)
    return sorted(errors, key=_document_order)


def _document_order(line: str) -> list[int]:
    """Sort key: the list indices in the path (circuit, outlet); a stable sort keeps the rest."""
    return [int(n) for n in re.findall(r"\[(\d+)\]", _error_path(line))]


def load_document(doc) -> dict:
    """The validated job document as plain values; ``DocumentError`` listing every problem."""
    errors = document_errors(doc)
    if errors:
        raise DocumentError(errors)
    return JobDocumentSchema().load(doc)


def dump_document(data: dict) -> dict:
    """The JSON job document for plain values in the schema's shape (all keys present)."""
    return JobDocumentSchema().dump(data)


class DocumentError(ValueError):
    """A job document that cannot be imported; ``errors`` holds one ``"path: message"`` each."""

    def __init__(self, errors: list[str]):
        super().__init__("; ".join(errors))
        self.errors = list(errors)

