"""Every write to a job, circuit or outlet goes through here and leaves ChangeLog rows.

Forms, the JSON API and the importer all call these helpers, so nothing is overwritten without
a record of the old value, the new value, who made the change and from which device. A reading
write may carry a client-made id (idempotency key): a write whose id is already in the log is
not applied again.

Modules: ``writes`` (the log, the lock, ``create``, ``update``, ``Refused``, ``Actor``),
``reading_writes`` (``set_reading``), ``outlet_writes`` (add, edit, delete an outlet).
``from fieldapp import changes`` gives every name.
"""

from fieldapp.changes.outlet_writes import (
    add_outlet,
    delete_outlet,
    edit_outlet,
    live_outlets,
    next_outlet_key,
)
from fieldapp.changes.reading_writes import ReadingWrite, reading_text, set_reading
from fieldapp.changes.writes import (
    CIRCUIT_READINGS,
    CLIENT_ID_PATTERN,
    EDITABLE_STATUSES,
    LIVE_OUTLET_READINGS,
    NEW_JOBS,
    OUTLET_READINGS,
    READING_FIELDS,
    REVIEW_FIELDS,
    Actor,
    Refused,
    as_text,
    check_client_id,
    check_editable,
    check_ready_for_readings,
    check_writable,
    create,
    entity_name,
    history,
    log,
    safety_confirmed,
    seen,
    taken_time,
    update,
)

__all__ = [
    "CIRCUIT_READINGS", "CLIENT_ID_PATTERN", "EDITABLE_STATUSES", "LIVE_OUTLET_READINGS",
    "NEW_JOBS", "OUTLET_READINGS", "READING_FIELDS", "REVIEW_FIELDS", "Actor", "ReadingWrite",
    "Refused", "add_outlet", "as_text", "check_client_id", "check_editable",
    "check_ready_for_readings", "check_writable", "create", "delete_outlet", "edit_outlet",
    "entity_name", "history", "live_outlets", "log", "next_outlet_key", "reading_text",
    "safety_confirmed", "seen", "set_reading", "taken_time", "update",
]
