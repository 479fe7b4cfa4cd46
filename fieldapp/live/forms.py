"""Forms of the live tests: the circuit's schedule fields and one outlet's "taken at".

``ScheduleFields`` is mixed into the circuit form (jobs/) and used alone on the live tests
page, so both parse the same way: every value goes through ringmath's circuit parser and an
error is put on the field it names (nothing is written then).
"""

from __future__ import annotations

from flask_wtf import FlaskForm
from wtforms import BooleanField, HiddenField, SelectField, StringField, SubmitField
from wtforms.validators import Length

from fieldapp.live.values import (
    CPC_KIND_LABELS,
    CPC_KINDS,
    TAKEN_AT,
    TAKEN_AT_LABELS,
    parse_circuit_fields,
)
from fieldapp.web import new_client_id, options

DECIMAL = {"inputmode": "decimal", "autocomplete": "off", "spellcheck": "false"}
#: Insulation test voltages of BS 7671:2018 Table 64 (SELV/PELV 250 V; up to 500 V circuits
#: 500 V; above 500 V 1000 V).
TEST_VOLTAGES = (("", "—"), ("250", "250 V"), ("500", "500 V"), ("1000", "1000 V"))
BUTTON = (("", "not checked yet"), ("yes", "yes: it tripped"), ("no", "no: it did not trip"))
#: Form field -> the path ringmath names in its errors (below "circuit.").
FIELD_PATHS = {
    "cpc_kind": "cpc_kind", "parallel_paths": "parallel_paths", "pfc_ka": "pfc_ka",
    "ir_test_v": "insulation.test_v", "ir_ln_mohm": "insulation.ln_mohm",
    "ir_le_mohm": "insulation.le_mohm", "ir_ne_mohm": "insulation.ne_mohm",
    "rcd_trip_ms": "rcd.trip_ms", "rcd_button_ok": "rcd.button_ok",
}
#: The fields of the live tests page (the cpc kind and parallel paths are on the circuit form).
LIVE_PAGE_FIELDS = ("pfc_ka", "ir_test_v", "ir_ln_mohm", "ir_le_mohm", "ir_ne_mohm",
                    "rcd_trip_ms", "rcd_button_ok")


def _ir_field(label: str) -> StringField:
    return StringField(label, validators=[Length(max=16)], render_kw=DECIMAL)


class ScheduleFields:
    """The circuit's schedule fields beside the ring test (mixed into a FlaskForm)."""

    cpc_kind = SelectField("The cpc is", default="cable_core",
                           choices=options((k, CPC_KIND_LABELS.get(k, k)) for k in CPC_KINDS))
    parallel_paths = BooleanField("Parallel earth paths expected (bonded metalwork, metal "
                                  "pipework or containment touching the circuit)")
    pfc_ka = StringField("Prospective fault current (kA)", validators=[Length(max=16)],
                         render_kw=DECIMAL, description="As measured or declared at the board")
    ir_test_v = SelectField("Insulation test voltage", choices=options(TEST_VOLTAGES), default="")
    ir_ln_mohm = _ir_field("Insulation L–N (MΩ)")
    ir_le_mohm = _ir_field("Insulation L–E (MΩ)")
    ir_ne_mohm = _ir_field("Insulation N–E (MΩ)")
    rcd_trip_ms = StringField("RCD trip time at IΔn (ms)", validators=[Length(max=16)],
                              render_kw=DECIMAL,
                              description="The instrument's reading at the rated residual "
                                          "current, 0° and 180°: record the longer")
    rcd_button_ok = SelectField("RCD test button", choices=options(BUTTON), default="")

    def schedule_names(self) -> tuple[str, ...]:
        return tuple(FIELD_PATHS)

    def schedule_values(self, rcd: dict | None) -> dict | None:
        """The schedule columns, parsed by ringmath; None (errors on the fields) when bad.

        rcd: the circuit's RCD as the record has it ({"rated_ma", "type"}) or None.
        """
        names = self.schedule_names()
        text = {name: (getattr(self, name).data or "").strip() for name in names
                if name not in ("parallel_paths",)}
        if ("rcd_trip_ms" in names and not rcd
                and (text.get("rcd_trip_ms") or text.get("rcd_button_ok"))):
            field = self.rcd_trip_ms if text.get("rcd_trip_ms") else self.rcd_button_ok
            field.errors = list(field.errors) + [
                "No RCD is recorded for this circuit: choose its rating first."]
            return None
        doc = {}
        if "cpc_kind" in names:
            doc["cpc_kind"] = text["cpc_kind"] or "cable_core"
        if "parallel_paths" in names:
            doc["parallel_paths"] = bool(self.parallel_paths.data)
        if text.get("pfc_ka"):
            doc["pfc_ka"] = text["pfc_ka"]
        insulation = {key: _ir_raw(text.get(f"ir_{key}", "")) for key in
                      ("ln_mohm", "le_mohm", "ne_mohm")}
        insulation["test_v"] = text.get("ir_test_v") or None
        if any(v is not None for v in insulation.values()):
            doc["insulation"] = insulation
        if rcd:
            doc["rcd"] = {**rcd, "trip_ms": text.get("rcd_trip_ms") or None,
                          "button_ok": {"yes": True, "no": False}.get(
                              text.get("rcd_button_ok") or "")}
        try:
            values = parse_circuit_fields(doc)
        except ValueError as error:
            self._put_error(error)
            return None
        return {name: values[name] for name in names}

    def _put_error(self, error: ValueError) -> None:
        path = getattr(error, "path", None) or str(error).split(": ", 1)[0]
        path = path.removeprefix("circuit.")
        name = next((n for n, p in FIELD_PATHS.items() if path == p or path.startswith(p)),
                    None)
        if name is None or name not in self.schedule_names():
            name = next(n for n in self.schedule_names() if n != "parallel_paths")
        text = str(error)
        detail = getattr(error, "detail", None) or (text.split(": ", 1)[1] if ": " in text
                                                     else text)
        field = getattr(self, name)
        field.errors = list(field.errors) + [f"{detail[0].upper()}{detail[1:]}."]


def _ir_raw(text: str):
    """An insulation entry as the record has it: ">999" kept as text, else the typed number
    (ringmath reads "0,5" and refuses what is not a number)."""
    if not text:
        return None
    if text.startswith(">"):
        return ">" + text[1:].strip()
    return text


def schedule_data(circuit) -> dict:
    """A stored circuit's schedule fields as form data."""
    def g(value):
        return "" if value is None else f"{value:g}"

    return {
        "cpc_kind": circuit.cpc_kind or "cable_core", "parallel_paths": circuit.parallel_paths,
        "pfc_ka": g(circuit.pfc_ka), "ir_test_v": g(circuit.ir_test_v),
        "ir_ln_mohm": circuit.ir_ln_mohm or "", "ir_le_mohm": circuit.ir_le_mohm or "",
        "ir_ne_mohm": circuit.ir_ne_mohm or "", "rcd_trip_ms": g(circuit.rcd_trip_ms),
        "rcd_button_ok": {True: "yes", False: "no"}.get(circuit.rcd_button_ok, ""),
    }


class LiveCircuitForm(ScheduleFields, FlaskForm):
    """The live tests page's circuit results: fault current, insulation, RCD."""

    device = HiddenField()
    submit = SubmitField("Save these results")

    def schedule_names(self) -> tuple[str, ...]:
        return LIVE_PAGE_FIELDS


class TakenAtForm(FlaskForm):
    """Where one outlet's readings were taken."""

    outlet = HiddenField()
    taken_at = SelectField("Readings taken", choices=options(
        [("", "not said")] + [(k, TAKEN_AT_LABELS[k]) for k in TAKEN_AT]))
    client_id = HiddenField(default=new_client_id)
    device = HiddenField()
    submit = SubmitField("Save")
