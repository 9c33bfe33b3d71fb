"""The request fields of the air at a point, shared by every endpoint that takes them: the altitude (pressure or
geometric, with a QNH), the ISA deviation or outside air temperature, the total air temperature and recovery
factor, the dew point or relative humidity; their bounds and the rules between them (api.air computes the air
from them).
"""

from __future__ import annotations

import math

import marshmallow as ma

from service.api.fields import Number, Quantity, quantity_schema
from service.api.rules import Given, Needs, Never, NotTogether, Rule, Unit, grouped
from service.physics import atmosphere as atm
from service.physics import humidity as hum
from service.physics.constants import H_MAX, H_MIN

#: Bounds of the ISA deviation [K]: wider than any observed atmosphere, and narrow enough
#: that the temperature stays above 0 K everywhere in the model (its coldest point is 186.9 K).
ISA_DEVIATION_LIMIT = 100.0
#: Bounds of an outside air temperature [degC]: the ISA-deviation limits around the coldest and the warmest
#: standard temperature of the model (at its top and its bottom); at a given altitude the deviation limits
#: hold as well (check_isa_deviation): one validity range whatever the form of the temperature.
TEMPERATURE_MIN_C = math.floor((float(atm.standard_temperature(H_MAX)) - ISA_DEVIATION_LIMIT - 273.15) * 10) / 10
TEMPERATURE_MAX_C = math.ceil((float(atm.standard_temperature(H_MIN)) + ISA_DEVIATION_LIMIT - 273.15) * 10) / 10
#: Bounds of QNH [hPa]: beyond the lowest and highest sea-level pressures ever recorded.
QNH_MIN_HPA, QNH_MAX_HPA = 800.0, 1100.0


#: The model's range of geometric heights [m] (the range of pressure altitudes, H_MIN..H_MAX, converted).
GEOMETRIC_MIN, GEOMETRIC_MAX = float(atm.geometric_altitude(H_MIN)), float(atm.geometric_altitude(H_MAX))

KIND_FIELD, QNH_FIELD = "altitude_kind", "qnh"
#: The groups of the rules over the forms of the temperature and of the altitude (api.rules.grouped): each
#: published as one list of alternatives.
TEMPERATURE, ALTITUDE = "temperature", "altitude"
_GEOMETRIC = Given(KIND_FIELD, value={KIND_FIELD: "geometric"})


def not_flight_level(name: str, what: str) -> Never:
    """The rule of a height or an elevation (``name``, ``what`` in the message): not in FL, which is a pressure
    altitude (a unit that does not fit is a 422, never a silent reading as hundreds of feet)."""
    return Never(Given(name, value={name: Unit("FL")}), name,
                 f"A flight level is a pressure altitude; give the {what} in ft or m.")


class Altitude(Quantity):
    """An altitude, within the model's range in the unit given.

    The range is that of pressure altitudes, H_MIN..H_MAX, or of geometric heights when the
    request has ``altitude_kind: "geometric"``. With QNH the corrected pressure altitude is
    checked later (:func:`pressure_altitude`): its range depends on two inputs at once.
    """

    def __init__(self, **kwargs):
        super().__init__("altitude", minimum=H_MIN, maximum=H_MAX, bounds_unit="m", **kwargs)
        self.geometric_bounds = self.unit_bounds(GEOMETRIC_MIN, GEOMETRIC_MAX, "m")

    def _beside(self, name: str) -> bool:
        """Whether the request schema holding this field also has field ``name``."""
        return name in getattr(self.parent, "fields", {})

    def describe_range(self, lo, hi, unit_text=""):
        kind = "geometric heights" if (lo, hi) == self.geometric_bounds.get(unit_text) else "pressure altitudes"
        return f"Must lie within the model's range of {kind}, {lo:.12g} to {hi:.12g} {unit_text}."

    def bounds_in(self, unit, data):
        if self._beside(KIND_FIELD) and isinstance(data, dict) and data.get(KIND_FIELD) == "geometric":
            return self.geometric_bounds[unit]
        return self.bounds[unit]

    def openapi(self) -> dict:
        """Within the model's range; with altitude_kind, the wider of the two (rules_for narrows it)."""
        bounds = self.bounds
        if self._beside(KIND_FIELD):
            bounds = {unit: (min(lo, self.geometric_bounds[unit][0]), max(hi, self.geometric_bounds[unit][1]))
                      for unit, (lo, hi) in self.bounds.items()}
        return quantity_schema(self, bounds) | {"x-default-unit": self.default_unit}

    def rules_for(self, name: str) -> list[Rule]:
        """The rules of this altitude beside altitude_kind and qnh (those not in the schema do not apply)."""
        fl = Unit("FL")
        return [
            _KindRange(self, name),
            *grouped(
                ALTITUDE,
                Never(Given(name, KIND_FIELD, value={name: fl, KIND_FIELD: "geometric"}), KIND_FIELD,
                      "A flight level is a pressure altitude, never a geometric height."),
                Never(Given(name, QNH_FIELD, value={name: fl}), QNH_FIELD,
                      "A flight level is a pressure altitude: it takes no QNH. Give the altitude in ft or m."),
                Never(Given(all_of=(_GEOMETRIC, Given(QNH_FIELD))), QNH_FIELD,
                      "QNH corrects an indicated altitude; it does not apply to a geometric height.")),
        ]


class _KindRange(Rule):
    """The altitude's range is that of its kind (published here; the field checks it, Altitude.bounds_in,
    since the range depends on the raw altitude_kind, which no later check needs)."""

    def __init__(self, field: Altitude, name: str):
        self.field, self.names = field, (name, KIND_FIELD)

    def spec(self):
        name = self.names[0]
        return {"if": _GEOMETRIC.schema(),
                "then": {"properties": {name: quantity_schema(self.field, self.field.geometric_bounds)}},
                "else": {"properties": {name: quantity_schema(self.field, self.field.bounds)}}}

    check = None  # the field checks it


def altitude_field(description: str, required: bool = True, example=None) -> Altitude:
    example = {"value": 350, "unit": "FL"} if example is None else example
    return Altitude(required=required, metadata={"description": description, "example": example})


def isa_deviation_field() -> Quantity:
    return Quantity("temperature_difference", minimum=-ISA_DEVIATION_LIMIT, maximum=ISA_DEVIATION_LIMIT, metadata={
        "description": "ISA deviation: the outside air temperature minus the standard temperature at the pressure "
                       "altitude [K]. Not with `temperature`. Default 0 (standard day) when neither is given.",
        "example": 10})


def temperature_field() -> Quantity:
    return Quantity("temperature", minimum=TEMPERATURE_MIN_C, maximum=TEMPERATURE_MAX_C, rules=grouped(
        TEMPERATURE, NotTogether("temperature", "isa_deviation",
                                 message="Give either isa_deviation or temperature, not both.")), metadata={
        "description": "Outside (static) air temperature at the point [degC]. Not with `isa_deviation`.",
        "example": 32})


def qnh_field() -> Quantity:
    return Quantity("pressure", minimum=QNH_MIN_HPA, maximum=QNH_MAX_HPA, metadata={
        "description": "Altimeter setting QNH [hPa]; `altitude` is then the altitude indicated with that setting, "
                       "and pressure altitude = indicated altitude + the standard altitude of the QNH pressure. "
                       "Not with FL or `altitude_kind: geometric`.", "example": 1008})


def altitude_kind_field() -> ma.fields.String:
    return ma.fields.String(load_default="pressure", validate=ma.validate.OneOf(["pressure", "geometric"]), metadata={
        "description": "\"pressure\" (default): `altitude` is a pressure altitude (or, with `qnh`, an indicated "
                       "altitude). \"geometric\": `altitude` is a geometric height above the standard-pressure "
                       "(1013.25 hPa) level on this day, the exact inverse of the `geometric_altitude` output: the ISA "
                       "deviation (or the temperature at the point, taken as the deviation there), constant from "
                       "that level up, stretches or shrinks each layer by the hypsometric relation; on a standard day "
                       "it is the usual geometric-to-geopotential conversion.",
        "example": "pressure", "title": "AltitudeKind"})  # one enum type in generated clients


#: The altitude beside `qnh` and `altitude_kind` (air_fields; an endpoint may add a note).
ALTITUDE_ANY_KIND = ("Altitude [ft]: a pressure altitude (FL allowed), or the indicated altitude with `qnh`, or a "
                     "geometric height with `altitude_kind: geometric`.")


def air_fields(note: str = "", required: bool = True):
    """The five air fields in a request's order: ``altitude, isa_deviation, temperature, qnh, altitude_kind =
    air_fields(...)`` in a schema's body; the altitude described by ALTITUDE_ANY_KIND and ``note``."""
    return (altitude_field(f"{ALTITUDE_ANY_KIND} {note}".rstrip(), required=required), isa_deviation_field(),
            temperature_field(), qnh_field(), altitude_kind_field())


#: Bounds of a dew point [degC]: the saturation formula's range (Hardy 1998, -100 to +100 degC).
DEW_POINT_MIN_C, DEW_POINT_MAX_C = hum.T_SAT_MIN - 273.15, hum.T_SAT_MAX - 273.15
#: Bounds of a probe recovery factor [-]: a fraction of the ram rise, above 0 and at most 1.
RECOVERY_FACTOR_MIN, RECOVERY_FACTOR_MAX = 0.5, 1.0
HUMIDITY_FIELDS = ("dew_point", "relative_humidity")
STATIC_TEMPERATURE_FIELDS = ("temperature", "isa_deviation", "total_air_temperature")


def dew_point_field() -> Quantity:
    return Quantity("temperature", minimum=DEW_POINT_MIN_C, maximum=DEW_POINT_MAX_C, rules=(NotTogether(
        "dew_point", "relative_humidity", message="Give either dew_point or relative_humidity, not both."),),
        metadata={"description": "Dew point (with respect to water) at the point [degC], at most the temperature: "
                                 "the water vapour then lowers the density through the virtual temperature. "
                                 "Not with `relative_humidity`. Default: dry air.", "example": 12})


def relative_humidity_field() -> Number:
    return Number(minimum=0.0, maximum=100.0, metadata={
        "description": "Relative humidity with respect to water at the point, in percent [-], 0 to 100: the "
                       "water vapour then lowers the density through the virtual temperature; the temperature must "
                       "lie within the saturation formula's range, -100 to +100 degC. Not with `dew_point`. "
                       "Default: dry air.", "example": 60})


def total_air_temperature_field() -> Quantity:
    return Quantity("temperature", minimum=TEMPERATURE_MIN_C, maximum=TEMPERATURE_MAX_C, rules=grouped(
        TEMPERATURE,
        *(NotTogether("total_air_temperature", other, message="Give one of temperature, isa_deviation or "
                      "total_air_temperature.") for other in ("temperature", "isa_deviation")),
        Never(Given("total_air_temperature", "altitude_kind", value={"altitude_kind": "geometric"}),
              "total_air_temperature", "A total air temperature gives the static temperature through the Mach "
              "number, which needs the pressure altitude: give a pressure altitude, not a geometric height.")),
        metadata={"description": "Total air temperature read by the probe [degC], in place of `temperature` or "
                                 "`isa_deviation`: the static temperature is TAT / (1 + r (gamma-1)/2 M^2), or "
                                 "TAT - r TAS^2 / (2 cp) from a TAS (closed form), with r the `recovery_factor`; "
                                 "the resulting ISA deviation must lie within +-100 K.", "example": -18})


def recovery_factor_field() -> Number:
    return Number(minimum=RECOVERY_FACTOR_MIN, maximum=RECOVERY_FACTOR_MAX, rules=grouped(TEMPERATURE, Needs(
        "recovery_factor", "total_air_temperature", messages={
            "recovery_factor": "A recovery factor belongs to a total air temperature: give total_air_temperature "
                               "or leave it out."})), metadata={
        "description": "Recovery factor r of the total-temperature probe [-], 0.5 to 1: the fraction of the ram "
                       "rise it reads. Default 1. Only with `total_air_temperature`.", "example": 0.98})


def probe_and_humidity_fields():
    """The four fields of a probe's total air temperature and of the air's water vapour, in a request's order:
    ``total_air_temperature, recovery_factor, dew_point, relative_humidity = probe_and_humidity_fields()`` in a
    schema's body (their rules come with them)."""
    return total_air_temperature_field(), recovery_factor_field(), dew_point_field(), relative_humidity_field()


def every_air_field(note: str = "", required: bool = True):
    """The nine air fields in a request's order, air_fields(...) then probe_and_humidity_fields(): ``(altitude,
    isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
    relative_humidity) = every_air_field(...)`` in a schema's body."""
    return (*air_fields(note, required), *probe_and_humidity_fields())
