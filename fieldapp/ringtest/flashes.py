"""What the page says after a reading is saved (a flash message)."""

from __future__ import annotations

from flask import flash

from fieldapp import changes
from fieldapp.labels import ohm, outlet_name, reading_name
from ringmath import parse_reading


def flash_saved(field: str, outlet, result: changes.ReadingWrite, raw) -> None:
    """Saved, corrected (old -> new) or already saved (a form sent twice)."""
    where = outlet_name(outlet.key, outlet.label) if outlet is not None else "end to end"
    name = reading_name(field)
    if result.duplicate:
        if changes.reading_text(parse_reading(raw, "value")) != result.new:
            flash(f"This form was already sent: {name} at {where} was kept at "
                  f"{ohm(result.new)}. Enter the new value again to change it.", "warning")
        else:
            flash(f"Already saved: {name} at {where} = {ohm(result.new)}.", "info")
        return
    if result.old is not None and result.old != result.new:
        flash(f"Corrected {name} at {where}: {ohm(result.old)} → {ohm(result.new)} "
              "(the old value stays in the history).", "ok")
    else:
        flash(f"Saved {name} at {where}: {ohm(result.new)}.", "ok")
