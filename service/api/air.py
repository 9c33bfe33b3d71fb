"""The air at each point of a request, shared by every endpoint that needs density or pressure.

Reads ``altitude`` (with ``altitude_kind`` and ``qnh`` where the endpoint allows them) and
``isa_deviation`` or ``temperature``, checks them against the model, and evaluates the
standard atmosphere once; every further property is computed on first use only.
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api.fields import Quantity, quantity_schema
from service.api.inputs import Inputs
from service.api.lazy import lazy
from service.api.masks import any_true, first_indices
from service.api.problems import invalid
from service.api.rules import Given, Never, NotTogether, Rule, Unit
from service.physics import atmosphere as atm
from service.physics.constants import H_MAX, H_MIN
from service.units import from_si

#: Bounds of the ISA deviation [K]: wider than any observed atmosphere, and narrow enough
#: that the temperature stays above 0 K everywhere in the model (its coldest point is 186.9 K).
ISA_DEVIATION_LIMIT = 100.0
#: Bounds of an outside air temperature [degC]: a plausible band that stays above 0 K.
TEMPERATURE_MIN_C, TEMPERATURE_MAX_C = -150.0, 100.0
#: Bounds of QNH [hPa]: beyond the lowest and highest sea-level pressures ever recorded.
QNH_MIN_HPA, QNH_MAX_HPA = 800.0, 1100.0


#: The model's range of geometric heights [m] (the range of pressure altitudes, H_MIN..H_MAX, converted).
GEOMETRIC_MIN, GEOMETRIC_MAX = float(atm.geometric_altitude(H_MIN)), float(atm.geometric_altitude(H_MAX))

KIND_FIELD, QNH_FIELD = "altitude_kind", "qnh"
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
            Never(Given(name, KIND_FIELD, value={name: fl, KIND_FIELD: "geometric"}), KIND_FIELD,
                  "A flight level is a pressure altitude, never a geometric height."),
            Never(Given(name, QNH_FIELD, value={name: fl}), QNH_FIELD,
                  "A flight level is a pressure altitude: it takes no QNH. Give the altitude in ft or m."),
            Never(Given(all_of=(_GEOMETRIC, Given(QNH_FIELD))), QNH_FIELD,
                  "QNH corrects an indicated altitude; it does not apply to a geometric height."),
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
    return Quantity("temperature", minimum=TEMPERATURE_MIN_C, maximum=TEMPERATURE_MAX_C, rules=(NotTogether(
        "temperature", "isa_deviation", message="Give either isa_deviation or temperature, not both."),), metadata={
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
                       "altitude). \"geometric\": `altitude` is a geometric height above mean sea level, converted "
                       "to geopotential and used as the pressure altitude (a standard-day relation).",
        "example": "pressure", "title": "AltitudeKind"})  # one enum type in generated clients


def air_fields(altitude_description: str, required: bool = True):
    """The five air fields in a request's order: ``altitude, isa_deviation, temperature, qnh, altitude_kind =
    air_fields(...)`` in a schema's body."""
    return (altitude_field(altitude_description, required=required), isa_deviation_field(), temperature_field(),
            qnh_field(), altitude_kind_field())


def _show_ft(metres: float) -> str:
    return f"{metres:.0f} m ({from_si(metres, 'altitude', 'ft'):.0f} ft)"


class Air:
    """The air at each point: pressure altitude and temperature, the rest on demand [SI]."""

    def __init__(self, H, dT=None, T=None):
        self.H = H
        if T is not None:
            self._T = T
        self._dT = dT

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
        return self.T_std if self._dT is None else atm.temperature_from_deviation(self.H, self._dT, self.T_std)

    @lazy
    def dT(self):
        if self._dT is not None:
            return self._dT
        if "_T" in self.__dict__:
            return self._T - self.T_std
        return np.zeros_like(self.T_std)

    @lazy
    def rho(self):
        return atm.density(self.p, self.T)

    @lazy
    def a(self):
        return atm.speed_of_sound(self.T)

    @lazy
    def mu(self):
        return atm.dynamic_viscosity(self.T)

    @lazy
    def nu(self):
        return atm.kinematic_viscosity(self.T, self.rho, self.mu)  # mu once, for both viscosities

    @lazy
    def density_altitude(self):
        return atm.density_altitude(self.rho)

    @lazy
    def geometric_altitude(self):
        return atm.pressure_level_height(self.H, self.dT, self.p)  # the standard state already evaluated

    @lazy
    def _ratios(self):
        return atm.ratios(self.p, self.T, self.rho)

    delta = property(lambda self: self._ratios[0], doc="Pressure ratio p / p0 [-].")
    theta = property(lambda self: self._ratios[1], doc="Temperature ratio T / T0 [-].")
    sigma = property(lambda self: self._ratios[2], doc="Density ratio rho / rho0 [-].")


def check_altitude_range(H, field: str, what: str = "pressure altitude") -> None:
    """422 naming ``field`` where H is outside the model's range."""
    bad = (H < H_MIN) | (H > H_MAX)
    if any_true(bad):
        message = (f"The {what} must lie within the model's range, {_show_ft(H_MIN)} to {_show_ft(H_MAX)} "
                   "(geopotential).")
        if np.size(bad) > 1:
            message += f" Offending indices: {first_indices(bad)}."
        raise invalid({f"/{field}": message})


def pressure_altitude(inputs: Inputs, field: str = "altitude"):
    """The pressure altitude [m] from ``field``, ``altitude_kind`` and ``qnh``, range-checked."""
    H = inputs.si(field)
    qnh = inputs.get(QNH_FIELD)
    if inputs.get(KIND_FIELD) == "geometric":
        H = atm.geopotential_altitude(H)
    elif qnh is not None:
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
    """The Air at pressure altitudes ``H`` with the request's ISA deviation or temperature."""
    if "temperature" in inputs:
        return Air(H, T=inputs.si("temperature"))
    return Air(H, dT=inputs.si("isa_deviation"))
