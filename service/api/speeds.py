"""One speed of any kind (IAS, CAS, EAS, TAS, Mach) turned into every other kind at the air of a point.

Shared by the airspeed and lift endpoints: the request fields, the calibration table, and the
conversions (compressible, from service.physics.airspeed), each computed on first use only.
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api.air import Air, refuse_where
from service.api.examples import TQ62_CALIBRATION
from service.api.fields import Number, Quantity, ref
from service.api.inputs import Inputs
from service.api.lazy import lazy
from service.api.masks import any_true, at_points
from service.api.numbers import table_columns
from service.api.problems import invalid
from service.api.rules import ExactlyOne, Needs, NotTogether
from service.api.values import require
from service.physics import airspeed as spd
from service.physics import humidity as hum
from service.physics import total_temperature as tt
from service.physics.constants import GAMMA, RHO0
from service.units import from_si, to_si

#: The speed inputs, in the order a request is checked for them.
KINDS = ("ias", "cas", "eas", "tas", "mach")
#: Upper bound of the speed inputs [kt]: Mach 4.5 at sea level; the pitot relations hold far beyond.
SPEED_MAX_KT = 3000.0
#: Upper bound of Mach inputs [-]: the Rayleigh pitot relation is solved and tested up to Mach 5.
MACH_MAX = 5.0
#: Fixed-point steps for the static temperature from a TAT with an EAS and a relative humidity.
EAS_HUMIDITY_STEPS = 6

_NAMES = {
    "ias": "Indicated airspeed (needs `calibration`)",
    "cas": "Calibrated airspeed",
    "eas": "Equivalent airspeed",
    "tas": "True airspeed",
}
#: The outputs of every speed kind, as in an endpoint's OUTPUTS ({**SPEED_OUTPUTS, ...}), in the answer's order.
SPEED_OUTPUTS = {
    "cas": ("speed", "Calibrated airspeed [kt]."),
    "eas": ("speed", "Equivalent airspeed [kt]."),
    "tas": ("speed", "True airspeed [kt]."),
    "mach": (None, "Mach number [-]."),
}
#: The spec's example of each speed input: our demo type TQ-62 climbing through FL240 on an ISA+10 day
#: (the TAS and EAS belong to that CAS).
_EXAMPLES = {"ias": 250, "cas": {"value": 250, "unit": "kt"}, "eas": 241, "tas": [350, 380, 410]}


def speed_field(kind: str, note: str = "", required: bool = False) -> Quantity:
    return Quantity("speed", required=required, minimum=0.0, exclusive_minimum=True, maximum=SPEED_MAX_KT, metadata={
        "description": f"{_NAMES[kind]} [kt].{(' ' + note) if note else ''}", "example": _EXAMPLES[kind]})


def mach_field(note: str = "", required: bool = False) -> Number:
    return Number(required=required, minimum=0.0, exclusive_minimum=True, maximum=MACH_MAX, metadata={
        "description": f"Mach number [-], a bare number or array.{(' ' + note) if note else ''}", "example": 0.76})


def speed_fields(note: str, speed_note: str = "") -> tuple[Quantity, Quantity, Quantity, Quantity, Number]:
    """The five speed fields in a request's order, each with ``note`` (the four speeds ``speed_note`` after it):
    ``ias, cas, eas, tas, mach = speed_fields(...)`` in a schema's body."""
    return (*(speed_field(kind, note + speed_note) for kind in KINDS[:4]), mach_field(note))


class CalibrationField(ma.fields.Field):
    """``calibration``: {"ias": [...], "cas": [...], "unit": "kt"}, both columns strictly increasing."""

    def _deserialize(self, value, attr, data, **kwargs):
        columns, unit = table_columns(value, ("ias", "cas"), "speeds", unit=("speed", "kt"))
        try:  # in the given unit (a positive factor keeps the checks), so messages quote the request's numbers
            spd.check_calibration(columns["ias"], columns["cas"])
        except ValueError as err:
            key = "cas" if "table_cas" in str(err) and "same length" not in str(err) else "ias"
            message = str(err).replace("table_ias and table_cas", "ias and cas columns")
            message = message.replace("table_ias", "ias column").replace("table_cas", "cas column")
            raise ma.ValidationError({key: [f"The {message}."]}) from None
        return tuple(to_si(columns[k], "speed", unit) for k in ("ias", "cas"))

    def openapi(self):
        return ref("Calibration")  # one named type (api.fields.named_schemas), whichever request has it


def calibration_field() -> CalibrationField:
    return CalibrationField(metadata={
        "description": "The airspeed system's calibration from the flight manual: IAS -> CAS by linear "
                       "interpolation between rows [kt by default]. An IAS input outside the table is refused "
                       "(nothing is extrapolated); an IAS output whose CAS lies outside it is null with a warning.",
        "example": TQ62_CALIBRATION})


def _several(given: list[str]) -> str:
    return f"Give exactly one speed of {', '.join(KINDS)}; this request gives {', '.join(given)}."


#: The speed rules (api.rules) of the endpoints that take one speed.
AT_MOST_ONE_SPEED = NotTogether(*KINDS, message=_several)
IAS_NEEDS_CALIBRATION = Needs("ias", "calibration", messages={
    "calibration": "An IAS needs the airspeed calibration table (`calibration`) to give a CAS.",
    "ias": "Needs `calibration`."})
CALIBRATION_NEEDS_IAS = Needs("calibration", "ias", messages={
    "calibration": "The calibration converts an ias, and this request gives none: leave it out."})


def one_speed(missing: str) -> ExactlyOne:
    """Exactly one speed; ``missing``: the message when the request gives none."""
    return ExactlyOne(*KINDS, missing=missing, message=_several)


def given_speed(inputs: Inputs) -> str | None:
    """The speed kind the request gives (the rules above let it give one at most), or None."""
    given = inputs.given(*KINDS)
    return given[0] if given else None


class Speeds:
    """Every speed kind at each point, from one given speed and the Air there [SI].

    ``kind`` is the given kind, ``value`` its SI values (``given``: an input of the request, checked against
    the range of `mach`; else a speed the endpoint found). Attributes are computed on first use.
    """

    def __init__(self, air: Air, kind: str, value, calibration=None, given: bool = True):
        self.air = air
        self.kind = kind
        self.calibration = calibration
        self.__dict__[kind] = value
        if kind == "ias":
            cas = spd.ias_to_cas(value, *calibration)
            outside = np.isnan(cas)
            if any_true(outside):
                lo, hi = from_si(calibration[0][[0, -1]], "speed", "kt")
                raise invalid({"/ias": f"IAS outside the calibration table's IAS column, {lo:g} to {hi:g} kt"
                                       f"{at_points(outside)}; nothing is extrapolated."})
            self.__dict__["cas"] = cas
        self.given = given
        if air is not None:
            self.check(air)

    def check(self, air: Air):
        """With a total air temperature, the static temperature from it and the speed (closed form; then the
        Air's checks); and one validity range whatever the speed's form: the Mach number of a CAS, EAS or TAS
        within the range accepted for `mach`."""
        if air.needs_temperature:  # the first speed at this air: later ones (found from it) take its temperature
            air.set_temperature(self._static_temperature(air))
        if self.given and self.kind != "mach":
            mach = self.mach
            refuse_where(mach > MACH_MAX, self.kind,
                         f"This {self.kind} is beyond Mach {MACH_MAX:g} here, the range accepted for `mach`.")

    def _static_temperature(self, air: Air):
        """The static temperature from the total air temperature and the given speed [K]."""
        r = air.recovery_factor
        if self.kind == "tas":
            return tt.static_temperature_from_tas(air.tat, self.tas, r)
        if self.kind != "eas":  # the Mach number of a CAS or IAS needs the static pressure only
            return tt.static_temperature_from_mach(air.tat, self.mach, r)
        # EAS = M sqrt(gamma p T / (rho0 Tv)): the Mach number needs T / Tv, fixed by a dew point; with a
        # relative humidity the vapour pressure follows the temperature (a few fixed-point steps, each
        # shrinking the error some twenty-fold: the humidity moves the Mach number by 1 % at most).
        dry_mach = self.eas / np.sqrt(GAMMA * air.p / RHO0)
        if not air.humid:
            return tt.static_temperature_from_mach(air.tat, dry_mach, r)
        T = tt.static_temperature_from_mach(air.tat, dry_mach, r)
        for _ in range(1 if air.dew_point is not None else EAS_HUMIDITY_STEPS):
            e = (hum.vapour_pressure_from_dew_point(air.dew_point) if air.dew_point is not None
                 else hum.vapour_pressure_from_relative_humidity(T, air.relative_humidity))
            T = tt.static_temperature_from_mach(air.tat, dry_mach * np.sqrt(hum.virtual_temperature(1.0, e, air.p)), r)
        return T

    @lazy
    def qc(self):
        """Impact pressure [Pa]."""
        if self.kind in ("cas", "ias"):
            return spd.impact_pressure_from_cas(self.cas)
        return spd.impact_pressure_from_mach(self.mach, self.air.p)

    @lazy
    def mach(self):
        if self.kind in ("cas", "ias"):
            return spd.mach_from_impact_pressure(self.qc, self.air.p)
        return spd.mach_from_tas(self.tas, self.air.T)

    @lazy
    def tas(self):
        if self.kind == "eas":
            return spd.tas_from_eas(self.eas, self.air.rho)
        return spd.tas_from_mach(self.mach, self.air.T)

    @lazy
    def eas(self):
        return spd.eas_from_tas(self.tas, self.air.rho)

    @lazy
    def cas(self):
        return spd.cas_from_impact_pressure(self.qc)

    @lazy
    def ias(self):
        """IAS through the calibration table; NaN where the CAS lies outside it."""
        return spd.cas_to_ias(self.cas, *self.calibration)

    @lazy
    def q(self):
        """Dynamic pressure 1/2 rho V^2 [Pa]: (gamma/2) p M^2 in dry air; in moist air 1/2 rho V^2 with the moist
        density (the Mach number is that of dry air's speed of sound, so the dry form would not hold)."""
        if self.air.humid:
            return 0.5 * self.air.rho * self.tas**2
        return spd.dynamic_pressure(self.mach, self.air.p)

    @lazy
    def tat(self):
        """The total air temperature the probe reads [K] (the recovery factor applied)."""
        return self.air.total_air_temperature(self.require("mach"))

    def require(self, name: str):
        """Output ``name``; a 422 when a primary speed does not exist at some point."""
        return require(name, getattr(self, name), f"the {self.kind} given has no {name} here "
                                                  "(beyond the range of the airspeed relations).")
