"""ringmath's outlet errors in words for the outlet form (matched on the error's path)."""

from __future__ import annotations

from ringmath.record import parse_outlet

#: Where an outlet error is shown, by the path ringmath names.
FIELD_OF_PATH = {"outlet.fuse_a": "fuse_a", "outlet.kind": "kind"}


def outlet_error(values: dict, fields: dict[str, str] | None = None) -> tuple[str, str] | None:
    """(form field, message) when ringmath's own rules refuse the outlet (FCU fuse ratings
    and so on), else None. ``fields``: the field to blame per ringmath path (default the
    outlet form's, ``FIELD_OF_PATH``; the JSON API passes its own); "label" otherwise."""
    doc = {"id": "new", "kind": values["kind"], "fuse_a": values["fuse_a"],
           "spur_from": values["spur_from_key"], "spur_csa_mm2": values["spur_csa_mm2"],
           "spur_cpc_csa_mm2": values["spur_cpc_csa_mm2"], "label": values["label"]}
    try:
        parse_outlet(doc, "outlet")
    except ValueError as error:
        path = getattr(error, "path", None) or str(error).partition(": ")[0]
        message = str(error).partition(": ")[2] or str(error)
        return (fields or FIELD_OF_PATH).get(path, "label"), f"{message[0].upper()}{message[1:]}."
    return None


def spur_error(error: ValueError) -> str:
    """changes' spur-source error without its field path."""
    return str(error).partition(": ")[2] or str(error)
