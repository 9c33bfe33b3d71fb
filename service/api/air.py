"""The air at each point of a request, shared by every endpoint that needs density or pressure.

Reads ``altitude`` (with ``altitude_kind`` and ``qnh`` where the endpoint allows them) and
``isa_deviation`` or ``temperature``, checks them against the model, and evaluates the
standard atmosphere once; every further property is computed on first use only.
"""

from __future__ import annotations

import math

import marshmallow as ma
import numpy as np

from service.api.fields import Number, Quantity, quantity_schema
from service.api.inputs import Inputs
from service.api.lazy import lazy
from service.api.masks import any_true, first_indices
from service.api.problems import invalid
from service.api.rules import Given, Needs, Never, NotTogether, Rule, Unit, grouped
from service.physics import atmosphere as atm
from service.physics import humidity as hum
from service.physics import properties as props
from service.physics import total_temperature as tt
from service.physics.constants import H_MAX, H_MIN
from service.units import from_si

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


def air_fields(altitude_description: str, required: bool = True):
    """The five air fields in a request's order: ``altitude, isa_deviation, temperature, qnh, altitude_kind =
    air_fields(...)`` in a schema's body."""
    return (altitude_field(altitude_description, required=required), isa_deviation_field(), temperature_field(),
            qnh_field(), altitude_kind_field())


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


def _show_ft(metres: float) -> str:
    return f"{metres:.0f} m ({from_si(metres, 'altitude', 'ft'):.0f} ft)"


class Air:
    """The air at each point: pressure altitude and temperature, the rest on demand [SI].

    ``dew_point`` or ``relative_humidity`` (a fraction) make it moist air: the density (and so the density
    altitude) is then that of dry air at the virtual temperature. ``datum``: the QNH [Pa] when one is given,
    so that the geometric altitude is above mean sea level. With a total air temperature ``tat`` the static
    temperature follows from the speed: :meth:`set_temperature` gives it before anything uses it.
    """

    def __init__(self, H, dT=None, T=None, *, dew_point=None, relative_humidity=None, datum=None, tat=None,
                 recovery_factor=None):
        self.H = H
        if T is not None:
            self._T = T
        self._dT = dT
        self.dew_point, self.relative_humidity = dew_point, relative_humidity
        self.datum = datum
        self.tat, self.recovery_factor = tat, (1.0 if recovery_factor is None else recovery_factor)

    @property
    def needs_temperature(self) -> bool:
        """Whether the static temperature still waits for a speed (a total air temperature given, not yet used)."""
        return self.tat is not None and "_T" not in self.__dict__

    @property
    def humid(self) -> bool:
        return self.dew_point is not None or self.relative_humidity is not None

    def set_temperature(self, T, field: str = "total_air_temperature"):
        """The static temperature found from the total air temperature and the speed, then checked."""
        self.__dict__.pop("T", None)
        self.__dict__.pop("dT", None)
        self._T = T
        self.check(field)

    def check(self, field: str | None = None):
        """One validity range whatever the form of the temperature: the ISA deviation within the limits; a
        dew point at most the temperature; a temperature within the saturation formula's range for a relative
        humidity; a vapour pressure below the static pressure. ``field``: the input the temperature came from."""
        if field is not None:
            check_isa_deviation(self.dT, field)
        if self.dew_point is not None:
            refuse_where(self.dew_point > self.T + 1e-9, "dew_point",
                         "The dew point lies above the temperature: saturated air has its dew point at the "
                         "temperature.")
        if self.relative_humidity is not None:
            refuse_where(~((self.T >= hum.T_SAT_MIN) & (self.T <= hum.T_SAT_MAX)), "relative_humidity",
                         "A relative humidity needs a temperature within the saturation formula's range, -100 to "
                         "+100 degC (Hardy 1998).")
        if self.humid:
            refuse_where(~(self.e < self.p), HUMIDITY_FIELDS[0] if self.dew_point is not None else HUMIDITY_FIELDS[1],
                         "The vapour pressure reaches the static pressure here: no air at this altitude holds that "
                         "much water vapour.")

    @lazy
    def _standard(self):
        return atm.standard_state(self.H)

    @property
    def T_std(self):
        return self._standard[0]

    @property
    def p(self):
        return self._standard[1]

    @lazy
    def T(self):
        if "_T" in self.__dict__:
            return self._T
        if self.tat is not None:
            raise RuntimeError("the static temperature follows from the total air temperature and the speed")
        return self.T_std if self._dT is None else atm.temperature_from_deviation(self.H, self._dT, self.T_std)

    @lazy
    def dT(self):
        if self._dT is not None:
            return self._dT
        if "_T" in self.__dict__ or self.tat is not None:
            return self.T - self.T_std
        return np.zeros_like(self.T_std)

    @lazy
    def e(self):
        """Vapour pressure [Pa] (0 for dry air)."""
        if self.dew_point is not None:
            return hum.vapour_pressure_from_dew_point(self.dew_point)
        if self.relative_humidity is not None:
            return hum.vapour_pressure_from_relative_humidity(self.T, self.relative_humidity)
        return np.zeros_like(self.T)

    @lazy
    def Tv(self):
        """Virtual temperature [K] (the temperature for dry air)."""
        return hum.virtual_temperature(self.T, self.e, self.p) if self.humid else self.T

    @lazy
    def rho(self):
        return atm.density(self.p, self.Tv)

    @lazy
    def a(self):
        return atm.speed_of_sound(self.T)

    @lazy
    def mu(self):
        return atm.dynamic_viscosity(self.T)

    @lazy
    def nu(self):
        return atm.kinematic_viscosity(self.T, self.rho)

    @lazy
    def density_altitude(self):
        return atm.density_altitude(self.rho)

    @lazy
    def geometric_altitude(self):
        # the standard state already evaluated; above mean sea level where a QNH gives it
        return atm.pressure_level_height(self.H, self.dT, self.p, datum=self.datum)

    def total_air_temperature(self, mach):
        """The total air temperature the probe reads at Mach ``mach`` [K] (the recovery factor applied)."""
        return tt.total_air_temperature(self.T, mach, self.recovery_factor)

    @lazy
    def _ratios(self):
        return atm.ratios(self.p, self.T, self.rho)

    delta = property(lambda self: self._ratios[0], doc="Pressure ratio p / p0 [-].")
    theta = property(lambda self: self._ratios[1], doc="Temperature ratio T / T0 [-].")
    sigma = property(lambda self: self._ratios[2], doc="Density ratio rho / rho0 [-].")

    # --- the U.S. Standard Atmosphere 1976 property set (dry-air formulas at the day's temperature) ---

    @lazy
    def gravity(self):
        return props.gravity(self.geometric_altitude)

    @property
    def thermal_conductivity(self):
        return props.thermal_conductivity(self.T)

    @property
    def number_density(self):
        return props.number_density(self.p, self.T)

    @property
    def mean_particle_speed(self):
        return props.mean_particle_speed(self.T)

    @property
    def mean_free_path(self):
        return props.mean_free_path(self.p, self.T)

    @property
    def collision_frequency(self):
        return props.collision_frequency(self.p, self.T)

    @property
    def pressure_scale_height(self):
        return props.pressure_scale_height(self.T, self.gravity)


def check_altitude_range(H, field: str, what: str = "pressure altitude") -> None:
    """422 naming ``field`` where H is outside the model's range."""
    bad = (H < H_MIN) | (H > H_MAX)
    if any_true(bad):
        message = (f"The {what} must lie within the model's range, {_show_ft(H_MIN)} to {_show_ft(H_MAX)} "
                   "(geopotential).")
        if np.size(bad) > 1:
            message += f" Offending indices: {first_indices(bad)}."
        raise invalid({f"/{field}": message})


def refuse_where(bad, field: str, message: str) -> None:
    """422 naming ``field`` (with the first offending indices of an array) where ``bad``."""
    if any_true(bad):
        if np.size(bad) > 1:
            message += f" Offending indices: {first_indices(bad)}."
        raise invalid({f"/{field}": message})


def check_isa_deviation(dT, field: str) -> None:
    """One validity range whatever the input form: an ISA deviation (given, or from a temperature) within
    +-ISA_DEVIATION_LIMIT; else a 422 naming ``field``."""
    refuse_where(~(np.abs(dT) <= ISA_DEVIATION_LIMIT), field,
                 f"The temperature is more than {ISA_DEVIATION_LIMIT:g} K from the standard temperature at the "
                 f"pressure altitude; the model takes ISA deviations within +-{ISA_DEVIATION_LIMIT:g} K, whatever "
                 "form the temperature is given in.")


def pressure_altitude(inputs: Inputs, field: str = "altitude"):
    """The pressure altitude [m] from ``field``, ``altitude_kind`` and ``qnh``, range-checked.

    A geometric height is the exact inverse of the geometric-altitude output on the request's day (its ISA
    deviation, or its temperature taken as the deviation at the point)."""
    H = inputs.si(field)
    qnh = inputs.get(QNH_FIELD)
    if inputs.get(KIND_FIELD) == "geometric":
        if "temperature" in inputs:
            H = atm.pressure_altitude_at_height(H, T=inputs.si("temperature"))
        else:
            H = atm.pressure_altitude_at_height(H, inputs.si("isa_deviation", 0.0))
        refuse_where(np.isnan(H), field, "On this day the geometric height lies outside the model's range of "
                     f"pressure altitudes, {_show_ft(H_MIN)} to {_show_ft(H_MAX)} (geopotential).")
        return H
    if qnh is not None:
        H = H + atm.qnh_offset(qnh.si)
        check_altitude_range(H, field, "pressure altitude (indicated altitude corrected for QNH)")
        return H
    # The field checked the range in the caller's unit (Altitude); the conversion to metres can
    # put a value at an end of the range an ulp beyond it.
    return np.minimum(np.maximum(H, H_MIN), H_MAX)  # ufuncs: np.clip's wrapper costs more for one point


def air(inputs: Inputs, field: str = "altitude") -> Air:
    """The Air at each point of the request (ISA deviation or temperature, default standard day)."""
    return air_at(inputs, pressure_altitude(inputs, field))


def air_at(inputs: Inputs, H) -> Air:
    """The Air at pressure altitudes ``H`` with the request's temperature (in any form), humidity and QNH,
    checked (a total air temperature is checked once the speed has given the static temperature)."""
    rh = inputs.si("relative_humidity")
    state = Air(H, dT=inputs.si("isa_deviation"), T=inputs.si("temperature"), dew_point=inputs.si("dew_point"),
                relative_humidity=None if rh is None else rh / 100.0,
                datum=inputs.si(QNH_FIELD), tat=inputs.si("total_air_temperature"),
                recovery_factor=inputs.si("recovery_factor"))
    if state.tat is None:
        state.check("temperature" if "temperature" in inputs else None)
    return state
