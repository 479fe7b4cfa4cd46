"""Forms for jobs and circuits. Choices come from the record format where it fixes them."""

from __future__ import annotations

from flask_wtf import FlaskForm
from wtforms import (
    DateField,
    FloatField,
    SelectField,
    StringField,
    SubmitField,
    TextAreaField,
)
from wtforms.validators import DataRequired, Length, NumberRange, Optional

from fieldapp.choices import (  # noqa: F401  (one list for the form and the import)
    BREAKER_STANDARDS,
    CURVES,
    OCPD_STANDARDS,
    RATINGS_A,
    RCD_MA,
    RCD_TYPES,
)
from fieldapp.live.forms import ScheduleFields, schedule_data
from fieldapp.web import options
from ringmath.record import EARTHING_SYSTEMS, ZE_SOURCES

LIVE_CSA = (("1.5", "1.5 mm²"), ("2.5", "2.5 mm²"), ("4", "4 mm²"), ("6", "6 mm²"))
CPC_CSA = (("1", "1.0 mm²"), ("1.5", "1.5 mm²"), ("2.5", "2.5 mm²"), ("4", "4 mm²"),
           ("6", "6 mm²"))
DECIMAL = {"inputmode": "decimal", "autocomplete": "off"}


class JobForm(FlaskForm):
    reference = StringField("Job reference", validators=[DataRequired(), Length(max=40)])
    site = StringField("Site address", validators=[DataRequired(), Length(max=200)])
    client = StringField("Client", validators=[Optional(), Length(max=200)])
    date = DateField("Test date", validators=[Optional()])
    tester_id = SelectField("Tester", coerce=int, validators=[Optional()])
    notes = TextAreaField("Notes", validators=[Optional(), Length(max=4000)])
    instrument_model = StringField(
        "Test instrument", validators=[Optional(), Length(max=80)],
        description="Make and model as on the instrument; printed on the job sheet")
    instrument_serial = StringField("Instrument serial number",
                                    validators=[Optional(), Length(max=60)])
    submit = SubmitField("Save job")


class CircuitForm(ScheduleFields, FlaskForm):
    board = StringField("Board", default="DB1", validators=[DataRequired(), Length(max=40)])
    way = StringField("Way", validators=[DataRequired(), Length(max=20)],
                      description="The circuit's number on the board, e.g. 3")
    description = StringField("Description", validators=[Optional(), Length(max=200)],
                              description="e.g. Ground floor sockets")
    ocpd_standard = SelectField("Protective device", choices=options(OCPD_STANDARDS),
                                default="BS EN 60898")
    ocpd_curve = SelectField("Curve", choices=options(CURVES), default="B")
    ocpd_rating_a = SelectField("Rating", coerce=float, default=32.0,
                                choices=options((float(r), f"{r} A") for r in RATINGS_A))
    rcd_rated_ma = SelectField("RCD", choices=options(RCD_MA), default="30")
    rcd_type = SelectField("RCD type", choices=options(RCD_TYPES), default="A")
    live_csa_mm2 = SelectField("Line and neutral size", choices=options(LIVE_CSA), default="2.5")
    cpc_csa_mm2 = SelectField("CPC (earth) size", choices=options(CPC_CSA), default="1.5")
    ze_ohm = FloatField("Ze (Ω)", validators=[Optional(), NumberRange(min=0, max=200)],
                        render_kw=DECIMAL,
                        description="External earth fault loop impedance at the origin")
    ze_source = SelectField("Ze is", default="measured",
                            choices=options((s, s) for s in ZE_SOURCES))
    earthing = SelectField("Earthing system", default="TN-C-S",
                           choices=options((s, s) for s in EARTHING_SYSTEMS))
    cable_length_m = FloatField("Estimated cable length (m)", render_kw=DECIMAL,
                                validators=[Optional(), NumberRange(min=0.1, max=2000)],
                                description="Optional: the whole ring, end to end")
    submit = SubmitField("Save circuit")

    def validate(self, extra_validators=None) -> bool:
        ok = super().validate(extra_validators)
        breaker = self.ocpd_standard.data in BREAKER_STANDARDS
        if breaker and not self.ocpd_curve.data:
            self.ocpd_curve.errors.append("A circuit-breaker needs its curve (B, C or D).")
            ok = False
        if not breaker and self.ocpd_curve.data:
            self.ocpd_curve.errors.append("A fuse has no curve: choose “none (fuse)”.")
            ok = False
        if self.rcd_type.data and not self.rcd_rated_ma.data:
            self.rcd_type.errors.append("Choose the RCD's rating, or “—” for no RCD.")
            ok = False
        rcd = ({"rated_ma": float(self.rcd_rated_ma.data), "type": self.rcd_type.data or None}
               if self.rcd_rated_ma.data else None)
        self.schedule = self.schedule_values(rcd) if ok else None
        return ok and self.schedule is not None

    def values(self) -> dict:
        """The circuit columns from the submitted form."""
        return {
            "board": self.board.data.strip(), "way": self.way.data.strip(),
            "description": (self.description.data or "").strip(),
            "ocpd_standard": self.ocpd_standard.data, "ocpd_curve": self.ocpd_curve.data or None,
            "ocpd_rating_a": float(self.ocpd_rating_a.data),
            "rcd_rated_ma": float(self.rcd_rated_ma.data) if self.rcd_rated_ma.data else None,
            "rcd_type": (self.rcd_type.data or None) if self.rcd_rated_ma.data else None,
            "live_csa_mm2": float(self.live_csa_mm2.data),
            "cpc_csa_mm2": float(self.cpc_csa_mm2.data),
            "ze_ohm": self.ze_ohm.data, "ze_source": self.ze_source.data,
            "earthing": self.earthing.data, "cable_length_m": self.cable_length_m.data,
            **(self.schedule or {}),
        }


def circuit_form_data(circuit) -> dict:
    """A stored circuit as form data (select values are the choices' strings)."""
    def g(value):
        return None if value is None else f"{value:g}"

    return {
        "board": circuit.board, "way": circuit.way, "description": circuit.description,
        "ocpd_standard": circuit.ocpd_standard, "ocpd_curve": circuit.ocpd_curve or "",
        "ocpd_rating_a": circuit.ocpd_rating_a, "rcd_rated_ma": g(circuit.rcd_rated_ma) or "",
        "rcd_type": circuit.rcd_type or "", "live_csa_mm2": g(circuit.live_csa_mm2),
        "cpc_csa_mm2": g(circuit.cpc_csa_mm2), "ze_ohm": circuit.ze_ohm,
        "ze_source": circuit.ze_source, "earthing": circuit.earthing or "TN-C-S",
        "cable_length_m": circuit.cable_length_m, **schedule_data(circuit),
    }


class SubmitJobForm(FlaskForm):
    reason = TextAreaField("Why submit it with these problems", validators=[
        Optional(), Length(max=2000)])
    submit = SubmitField("Submit for review")

