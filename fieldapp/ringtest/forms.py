"""Forms of the guided test: safety checks, one reading, an outlet, moving on."""

from __future__ import annotations

from flask_wtf import FlaskForm
from wtforms import BooleanField, HiddenField, SelectField, StringField, SubmitField
from wtforms.validators import DataRequired, Length

from fieldapp.labels import KIND_LABELS
from fieldapp.web import new_client_id, options
from ringmath.record import FCU_FUSE_RATINGS_A, OUTLET_KINDS

SPUR_CSA = (("", "same as the ring"), ("1", "1.0 mm²"), ("1.5", "1.5 mm²"), ("2.5", "2.5 mm²"),
            ("4", "4 mm²"))

def _float_or_none(value):
    return None if value in ("", None) else float(value)

class SafetyForm(FlaskForm):
    isolated = BooleanField("The circuit is isolated (its device is off and the circuit "
                            "disconnected at the board)")
    locked_off = BooleanField("The device is locked off and labelled; I hold the key")
    proved_dead = BooleanField("I proved it dead with an approved voltage indicator, checked on "
                               "a known source before and after")
    submit = SubmitField("Confirm and start testing")

class ReadingForm(FlaskForm):
    """One reading. The OL button sends "OL" instead of the typed value."""

    field = HiddenField(validators=[DataRequired()])
    outlet = HiddenField()
    value = StringField("Reading (Ω)", validators=[Length(max=20)],
                        render_kw={"inputmode": "decimal", "autocomplete": "off",
                                   "enterkeyhint": "send", "spellcheck": "false"})
    client_id = HiddenField(default=new_client_id)
    device = HiddenField()
    keep = HiddenField()  # "1": keep the value as typed although it looks like a slip
    save = SubmitField("Save")
    ol = SubmitField("OL")

    def raw_value(self):
        """What was entered: "OL" for the OL button, else the typed text (None when empty)."""
        if self.ol.data:
            return "OL"
        text = (self.value.data or "").strip()
        return text or None

class OutletForm(FlaskForm):
    label = StringField("Where is it?", validators=[DataRequired(), Length(max=120)],
                        description="e.g. Kitchen left of cooker",
                        render_kw={"autocomplete": "off"})
    kind = SelectField("What is it?", choices=options((k, KIND_LABELS[k]) for k in OUTLET_KINDS),
                       default="twin_socket")
    spur_from_key = SelectField("Fed from",
                                description="On the ring, or a spur from another point")
    fuse_a = SelectField("FCU fuse",
                         choices=options([("", "— (not an FCU)")]
                                         + [(f"{r}", f"{r} A") for r in FCU_FUSE_RATINGS_A]))
    spur_csa_mm2 = SelectField("Spur cable line size", choices=options(SPUR_CSA))
    spur_cpc_csa_mm2 = SelectField("Spur cable CPC size", choices=options(SPUR_CSA))
    client_id = HiddenField(default=new_client_id)
    device = HiddenField()
    submit = SubmitField("Add outlet")

    def set_sources(self, outlets, exclude: str | None = None) -> None:
        self.spur_from_key.choices = options([("", "On the ring")] + [
            (o.key, f"Spur from {o.key}: {o.label}") for o in outlets if o.key != exclude])

    def values(self) -> dict:
        spur = self.spur_from_key.data or None
        return {
            "label": self.label.data.strip(), "kind": self.kind.data, "spur_from_key": spur,
            "fuse_a": _float_or_none(self.fuse_a.data),
            "spur_csa_mm2": _float_or_none(self.spur_csa_mm2.data) if spur else None,
            "spur_cpc_csa_mm2": _float_or_none(self.spur_cpc_csa_mm2.data) if spur else None,
        }

class ActionForm(FlaskForm):
    """A bare button (move to the next step, delete an outlet): CSRF only."""

    submit = SubmitField("Continue")
