"""Marshmallow schemas for a job document in the ``ringtest/1`` record format.

A job document is ``{"format": "ringtest/1", "job": {...}, "circuits": [record, ...]}`` where a
record is ``{"circuit": {...}, "end_to_end": {...}, "outlets": [...]}`` (ringmath/record.py).
Besides what ringmath reads, a circuit carries ``safety`` (the checks ticked before testing) so
that nothing the app stores about a circuit is lost in a round trip.

``JobDocumentSchema().load(doc)`` checks the structure and types and returns the same shape
with plain Python values (dates as ``datetime.date``); ``dump`` of that shape gives the JSON
document back, every key present (``null`` where empty), so export -> import -> export is
exact. Domain checks (ranges, FCU fuse ratings, spur topology) stay in ``ringmath``:
``document_errors`` runs both and reports every problem with its path in the document, e.g.
``circuits[0].outlets[3].ln: not a number``.

The pieces: `field_types.py` (field types), `record_schemas.py` (one schema per block),
`checking.py` (every error with its path; load and dump). This module keeps every name at its
old import path and holds the replies of the JSON endpoints.
"""

from __future__ import annotations

from marshmallow import Schema, fields

from fieldapp.transfer.checking import (  # noqa: F401  (the import paths the app and tests use)
    OUTLET_READINGS,
    DocumentError,
    document_errors,
    domain_errors,
    dump_document,
    flatten_errors,
    load_document,
)
from fieldapp.transfer.field_types import (  # noqa: F401
    OL,
    OL_SPELLINGS,
    Date,
    DateTime,
    Flag,
    IrReading,
    Number,
    Reading,
    StrictSchema,
    Text,
)
from fieldapp.transfer.record_schemas import (  # noqa: F401
    CURVE_LETTERS,
    RCD_RATINGS_MA,
    RCD_TYPES,
    STANDARDS,
    CircuitRecordSchema,
    CircuitSchema,
    EndToEndSchema,
    InsulationSchema,
    JobDocumentSchema,
    JobSchema,
    OcpdSchema,
    OutletSchema,
    RcdSchema,
    SafetySchema,
)

# ---------------------------------------------------------------- JSON endpoint replies


class ImportResultSchema(Schema):
    """The reply to a successful import."""

    job_id = fields.Integer()
    reference = fields.String()
    url = fields.String()
    notes = fields.List(fields.String())


class ImportErrorsSchema(Schema):
    """The reply to a refused import: every problem, each ``"path: message"``."""

    errors = fields.List(fields.String())
