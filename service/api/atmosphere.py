"""POST /v1/atmosphere: the ICAO standard atmosphere on standard and off-standard days."""

from __future__ import annotations

from service.api import air, examples
from service.api.base import COMPUTE_PROBLEMS, Blueprint
from service.api.inputs import ComputeSchema, outputs_field
from service.api.outputs import Result
from service.api.schemas import response_schema

blp = Blueprint("atmosphere", __name__, url_prefix="/v1", description=(
    "The ICAO Standard Atmosphere (Doc 7488/3, ISO 2533:1975; agreeing with the U.S. Standard Atmosphere 1976), "
    "geopotential altitude -5 km to 84.852 km, on standard and off-standard days, with QNH and density altitude."))

#: Output name -> (dimension or None, description). Order is the answer's order.
OUTPUTS = {
    "pressure_altitude": ("altitude", "Pressure altitude: the standard altitude with this static pressure [ft]."),
    "geometric_altitude": ("altitude", "Geometric height of this pressure level above the standard-pressure datum "
                                       "(1013.25 hPa) on this day: the ISA deviation, taken as constant from the datum "
                                       "up, stretches or shrinks each layer (hypsometric relation) [ft]."),
    "temperature": ("temperature", "Outside (static) air temperature [degC]."),
    "isa_deviation": ("temperature_difference", "Temperature minus the standard temperature here [K]."),
    "pressure": ("pressure", "Static pressure [hPa]."),
    "density": ("density", "Air density from the gas law [kg/m3]."),
    "speed_of_sound": ("speed", "Speed of sound [kt]."),
    "dynamic_viscosity": ("dynamic_viscosity", "Dynamic viscosity (Sutherland's law) [Pa*s]."),
    "kinematic_viscosity": ("kinematic_viscosity", "Kinematic viscosity [m2/s]."),
    "pressure_ratio": (None, "Pressure ratio delta = p / p0 [-]."),
    "temperature_ratio": (None, "Temperature ratio theta = T / T0 [-]."),
    "density_ratio": (None, "Density ratio sigma = rho / rho0 [-]."),
    "density_altitude": ("altitude", "Density altitude: the standard altitude with this density [ft]; null (with "
                                     "a warning) where it lies outside the model's range."),
}

#: Output name -> the Air attribute that holds it.
_SOURCE = {
    "pressure_altitude": "H", "geometric_altitude": "geometric_altitude", "temperature": "T",
    "isa_deviation": "dT", "pressure": "p", "density": "rho", "speed_of_sound": "a",
    "dynamic_viscosity": "mu", "kinematic_viscosity": "nu", "pressure_ratio": "delta",
    "temperature_ratio": "theta", "density_ratio": "sigma", "density_altitude": "density_altitude",
}


class AtmosphereRequest(ComputeSchema):
    OUTPUTS = OUTPUTS

    altitude = air.altitude_field(
        "Altitude [ft]: a pressure altitude (FL allowed), or the indicated altitude with `qnh`, or a geometric "
        "height with `altitude_kind: geometric`. Arrays allowed.")
    isa_deviation = air.isa_deviation_field()
    temperature = air.temperature_field()
    qnh = air.qnh_field()
    altitude_kind = air.altitude_kind_field()
    outputs = outputs_field(OUTPUTS)


AtmosphereResponse = response_schema("AtmosphereResponse", OUTPUTS, inputs=AtmosphereRequest)


@blp.route("/atmosphere", methods=["POST"])
@blp.arguments(AtmosphereRequest, examples=examples.ATMOSPHERE)
@blp.response(200, AtmosphereResponse)
@blp.problems(*COMPUTE_PROBLEMS)
def atmosphere(inputs):
    """Standard atmosphere at one point or many

    Pressure, temperature, density, speed of sound, viscosities, ratios, pressure, geometric and density
    altitude at each altitude, on a standard day or with an ISA deviation or outside air temperature.
    Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    for name in inputs.outputs:
        values = getattr(state, _SOURCE[name])
        if name == "density_altitude":
            values = result.null_where(name, values, "The density altitude lies outside the model's range.")
        result.add(name, values)
    return result.response()
