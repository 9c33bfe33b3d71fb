"""The air at each point of a request, shared by every endpoint that needs density or pressure.

Reads ``altitude`` (with ``altitude_kind`` and ``qnh`` where the endpoint allows them) and
``isa_deviation`` or ``temperature``, checks them against the model, and evaluates the
standard atmosphere once; every further property is computed on first use only.
"""

from __future__ import annotations

import numpy as np

from service.api.air_fields import HUMIDITY_FIELDS, ISA_DEVIATION_LIMIT, KIND_FIELD, QNH_FIELD
from service.api.inputs import Inputs
from service.api.lazy import lazy
from service.api.masks import any_true, first_indices
from service.api.problems import invalid
from service.physics import atmosphere as atm
from service.physics import humidity as hum
from service.physics import properties as props
from service.physics import total_temperature as tt
from service.physics.constants import H_MAX, H_MIN
from service.units import from_si


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
        return atm.kinematic_viscosity(self.T, self.rho, self.mu)  # mu once, for both viscosities

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

    @lazy
    def number_density(self):
        return props.number_density(self.p, self.T)

    @lazy
    def mean_particle_speed(self):
        return props.mean_particle_speed(self.T)

    @lazy
    def mean_free_path(self):
        return props.mean_free_path(self.p, self.T, self.number_density)  # each evaluated once, reused

    @property
    def collision_frequency(self):
        return props.collision_frequency(self.p, self.T, self.mean_particle_speed, self.mean_free_path)

    @property
    def pressure_scale_height(self):
        return props.pressure_scale_height(self.T, self.gravity)


def check_altitude_range(H, field: str, what: str = "pressure altitude") -> None:
    """422 naming ``field`` where H is outside the model's range."""
    bad = (H < H_MIN) | (H > H_MAX)
    if any_true(bad):  # the message made only for a refusal
        refuse_where(bad, field, f"The {what} must lie within the model's range, {_show_ft(H_MIN)} to "
                                 f"{_show_ft(H_MAX)} (geopotential).")


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
    if type(H) is np.float64:  # one point: the same clip without two ufunc calls
        return np.float64(H_MIN) if H < H_MIN else np.float64(H_MAX) if H > H_MAX else H
    return np.minimum(np.maximum(H, H_MIN), H_MAX)  # ufuncs: np.clip's wrapper costs more


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
