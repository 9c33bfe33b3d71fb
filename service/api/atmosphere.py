"""POST /v1/atmosphere: the ICAO standard atmosphere on standard and off-standard days."""

from __future__ import annotations

from service.api import air, air_fields, examples
from service.api.base import Blueprint
from service.api.inputs import ComputeSchema
from service.api.outputs import Result
from service.api.schemas import response_schema

blp = Blueprint("atmosphere", __name__, url_prefix="/v1", description=(
    "The ICAO Standard Atmosphere (Doc 7488/3, ISO 2533:1975; agreeing with the U.S. Standard Atmosphere 1976), "
    "geopotential altitude -5 km to 84.852 km, on standard and off-standard days, with QNH and density altitude."))

#: Output name -> (dimension or None, description). Order is the answer's order.
OUTPUTS = {
    "pressure_altitude": ("altitude", "Pressure altitude: the standard altitude with this static pressure [ft]."),
    "geometric_altitude": ("altitude", "Geometric height of this pressure level on this day, above mean sea level "
                                       "(the level where the pressure is the QNH) when `qnh` is given, else above the "
                                       "standard-pressure level (1013.25 hPa): the ISA deviation, taken as constant "
                                       "from that datum up, stretches or shrinks each layer (hypsometric relation, "
                                       "dry air) [ft]."),
    "temperature": ("temperature", "Outside (static) air temperature [degC]."),
    "isa_deviation": ("temperature_difference", "Temperature minus the standard temperature here [K]."),
    "pressure": ("pressure", "Static pressure [hPa]."),
    "density": ("density", "Air density from the gas law at the virtual temperature (dry air unless `dew_point` or "
                           "`relative_humidity` is given) [kg/m3]."),
    "speed_of_sound": ("speed", "Speed of sound [kt]."),
    "dynamic_viscosity": ("dynamic_viscosity", "Dynamic viscosity (Sutherland's law) [Pa*s]."),
    "kinematic_viscosity": ("kinematic_viscosity", "Kinematic viscosity [m2/s]."),
    "pressure_ratio": (None, "Pressure ratio delta = p / p0 [-]."),
    "temperature_ratio": (None, "Temperature ratio theta = T / T0 [-]."),
    "density_ratio": (None, "Density ratio sigma = rho / rho0 [-]."),
    "density_altitude": ("altitude", "Density altitude: the standard altitude with this density [ft]; null (with "
                                     "a warning) where it lies outside the model's range."),
    "vapour_pressure": ("pressure", "Partial pressure of the water vapour (Hardy's ITS-90 saturation formula over "
                                    "water at the dew point, or the relative humidity times it at the temperature) "
                                    "[hPa]; 0 for dry air."),
    "virtual_temperature": ("temperature", "Virtual temperature: the temperature at which dry air would have this "
                                           "density [degC]; the temperature itself for dry air."),
    "gravity": ("acceleration", "Acceleration of free fall at the geometric altitude (inverse-square law, U.S. "
                                "Standard Atmosphere 1976 eq. 17) [m/s2]."),
    "pressure_scale_height": ("length", "Pressure scale height R* T / (M0 g) at the local gravity [m]."),
    "number_density": ("number_density", "Molecules per unit volume, N_A p / (R* T) [1/m3]."),
    "mean_particle_speed": ("speed", "Mean speed of the air molecules, sqrt(8 R* T / (pi M0)) [kt]."),
    "mean_free_path": ("length", "Mean free path between collisions (collision diameter 3.65e-10 m) [m]."),
    "collision_frequency": ("frequency", "Collisions per second of one molecule: mean speed over mean free path "
                                         "[1/s]."),
    "thermal_conductivity": ("thermal_conductivity", "Thermal conductivity, 2.64638e-3 T^1.5 / (T + 245.4 x "
                                                     "10^(-12/T)) [W/(m*K)]."),
}

#: The further properties of the U.S. Standard Atmosphere 1976: answered only when ``outputs`` names them (for
#: kinetic-gas and heat-transfer work; an operational answer, and a bulk table, need none of them).
PROPERTY_SET = ("gravity", "pressure_scale_height", "number_density", "mean_particle_speed", "mean_free_path",
                "collision_frequency", "thermal_conductivity")

#: Output name -> the Air attribute that holds it.
_SOURCE = {
    "pressure_altitude": "H", "geometric_altitude": "geometric_altitude", "temperature": "T",
    "isa_deviation": "dT", "pressure": "p", "density": "rho", "speed_of_sound": "a",
    "dynamic_viscosity": "mu", "kinematic_viscosity": "nu", "pressure_ratio": "delta",
    "temperature_ratio": "theta", "density_ratio": "sigma", "density_altitude": "density_altitude",
    "vapour_pressure": "e", "virtual_temperature": "Tv",
    **{name: name for name in PROPERTY_SET},
}


class AtmosphereRequest(ComputeSchema):
    OUTPUTS = OUTPUTS
    ON_REQUEST = PROPERTY_SET

    altitude, isa_deviation, temperature, qnh, altitude_kind = air_fields.air_fields("Arrays allowed.")
    dew_point = air_fields.dew_point_field()
    relative_humidity = air_fields.relative_humidity_field()


AtmosphereResponse = response_schema(AtmosphereRequest)


@blp.compute("/atmosphere", AtmosphereRequest, examples.ATMOSPHERE,
             AtmosphereResponse, operation_id="computeAtmosphere")
def atmosphere(inputs):
    """Standard atmosphere at one point or many

    Pressure, temperature, density, speed of sound, viscosities, ratios, pressure, geometric and density
    altitude at each altitude, on a standard day or with an ISA deviation or outside air temperature, dry or
    with a dew point or relative humidity (the water vapour enters the density through the virtual temperature);
    and, when `outputs` names them, the further properties of the U.S. Standard Atmosphere 1976 (gravity, scale
    height, number density, mean particle speed, mean free path, collision frequency, thermal conductivity).
    Only the outputs asked for are computed. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    for name in inputs.outputs:
        values = getattr(state, _SOURCE[name])
        if name == "density_altitude":
            values = result.null_where(name, values, "The density altitude lies outside the model's range.")
        result.add(name, values)
    return result.response()
