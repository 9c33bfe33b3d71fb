"""POST /v1/airspeed, /v1/airspeed/crossover, /v1/airspeed/schedule: compressible airspeed conversions."""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service import units
from service.api import air, air_fields, examples
from service.api import speed_limit as limits
from service.api.base import Blueprint
from service.api.inputs import ComputeSchema
from service.api.masks import any_true, at_points
from service.api.outputs import Leaf, Result
from service.api.rules import Given, OutputNeeds
from service.api.schemas import LabelOut, quantity_out, response_schema
from service.api.speeds import (
    IAS_NEEDS_CALIBRATION,
    KINDS,
    Speeds,
    calibration_field,
    given_speed,
    mach_field,
    one_speed,
    speed_field,
    speed_fields,
)
from service.api.values import no_solution, unit_for
from service.physics import airspeed as spd
from service.physics import atmosphere as atm
from service.physics.constants import FT, H_MAX, H_MIN, P0

blp = Blueprint("airspeed", __name__, url_prefix="/v1", description=(
    "Compressible airspeed conversions between IAS (through a calibration table), CAS, EAS, TAS and Mach, with "
    "impact and dynamic pressure; the crossover altitude of a CAS and a Mach number; climb and descent speed "
    "schedules. Isentropic pitot relation below Mach 1 and the Rayleigh pitot relation above (NACA Report 1135), "
    "at the pressure altitude of the ICAO Standard Atmosphere."))

_ALTITUDE = ("Pressure altitude [ft] (FL allowed): the standard altitude with the static pressure at the point. "
             "Arrays allowed.")

# --- POST /v1/airspeed ---------------------------------------------------------------------------

#: Output name -> (dimension or None, description). Order is the answer's order.
OUTPUTS = {
    "cas": ("speed", "Calibrated airspeed [kt]."),
    "eas": ("speed", "Equivalent airspeed: the speed at sea-level standard density with the same dynamic "
                     "pressure [kt]."),
    "tas": ("speed", "True airspeed [kt]."),
    "mach": (None, "Mach number [-]."),
    "ias": ("speed", "Indicated airspeed through `calibration` [kt]; only when a calibration is given, and null "
                     "(with a warning) where the CAS lies outside the table."),
    "impact_pressure": ("pressure", "Impact pressure qc: pitot minus static pressure, what the airspeed indicator "
                                    "measures [hPa]."),
    "dynamic_pressure": ("pressure", "Dynamic pressure q = 1/2 rho V^2 = (gamma/2) p M^2 [hPa]; below qc as soon as "
                                     "compressibility matters."),
    "total_air_temperature": ("temperature", "Total air temperature a probe of recovery factor r reads at this "
                                             "speed, T (1 + r (gamma-1)/2 M^2) [degC] (r = `recovery_factor`, "
                                             "default 1); the input itself when `total_air_temperature` is given."),
    "ram_rise": ("temperature_difference", "Ram rise: the total air temperature minus the static temperature, "
                                           "r TAS^2 / (2 cp) [K]."),
    "atmosphere": (None, "The air at the point: static pressure, temperature, density, speed of sound."),
}
#: The converted speeds: primary results (a point where one does not exist is a 422).
PRIMARY = ("cas", "eas", "tas", "mach")
#: Output name -> the Speeds attribute that holds it (the primary ones by their own name).
_SOURCE = {"ias": "ias", "impact_pressure": "qc", "dynamic_pressure": "q"}
#: Nested ``atmosphere`` outputs: name -> (dimension, description, Air attribute).
ATMOSPHERE = {
    "pressure": ("pressure", "Static pressure [hPa].", "p"),
    "temperature": ("temperature", "Outside (static) air temperature [degC].", "T"),
    "density": ("density", "Air density from the gas law [kg/m3].", "rho"),
    "speed_of_sound": ("speed", "Speed of sound at the outside air temperature [kt].", "a"),
}

_ONE_OF = "Give exactly one of `ias`, `cas`, `eas`, `tas`, `mach`."


class AirspeedRequest(ComputeSchema):
    OUTPUTS = OUTPUTS
    RULES = (one_speed(f"Give one speed: {', '.join(KINDS)}."), IAS_NEEDS_CALIBRATION,
             OutputNeeds("ias", Given("calibration"),
                         "The output ias needs `calibration` (the airspeed system's IAS -> CAS table)."))

    ias, cas, eas, tas, mach = speed_fields(_ONE_OF, " Arrays allowed.")
    altitude = air_fields.altitude_field(_ALTITUDE)
    isa_deviation = air_fields.isa_deviation_field()
    temperature = air_fields.temperature_field()
    total_air_temperature, recovery_factor, dew_point, relative_humidity = air_fields.probe_and_humidity_fields()
    calibration = calibration_field()


AirspeedAtmosphere = type("AirspeedAtmosphere", (ma.Schema,), {
    name: quantity_out(desc, dim) for name, (dim, desc, _) in ATMOSPHERE.items()})

AirspeedResponse = response_schema(AirspeedRequest, fields={
    "atmosphere": ma.fields.Nested(AirspeedAtmosphere, metadata={"description": OUTPUTS["atmosphere"][1]})})



@blp.compute("/airspeed", AirspeedRequest, examples.AIRSPEED, AirspeedResponse, operation_id="convertAirspeed")
def airspeed(inputs):
    """Convert one airspeed to every other kind

    From exactly one of IAS (with the airspeed system's calibration table), CAS, EAS, TAS or Mach at a pressure
    altitude on a standard or off-standard day: CAS, EAS, TAS, Mach, IAS (when a calibration is given), impact and
    dynamic pressure, the total air temperature and ram rise, and the air at the point. The static temperature
    comes from an ISA deviation, an outside air temperature, or a total air temperature with the probe's recovery
    factor (closed form from the speed given); a dew point or relative humidity makes the air moist (the density,
    so the EAS-TAS relation, at the virtual temperature). Compressible throughout: the isentropic pitot relation
    below Mach 1, the Rayleigh pitot relation above. Arrays broadcast; `grid: true` takes their outer product.
    The example is our demo type TQ-62 at 250 kt IAS at FL330 on an ISA+15 day.
    """
    kind = given_speed(inputs)
    result = Result(inputs)
    speeds = Speeds(air.air(inputs), kind, inputs.si(kind),
                    inputs.get("calibration"))
    for name in inputs.outputs:
        if name in PRIMARY:
            result.add(name, speeds.require(name))
        elif name == "atmosphere":
            result.add_tree(name, {key: Leaf(getattr(speeds.air, attr), dim)
                                   for key, (dim, _, attr) in ATMOSPHERE.items()})
        elif name == "ias":
            if speeds.calibration is not None:
                result.add(name, result.null_where(name, speeds.ias, _outside_table(inputs)))
        elif name in ("total_air_temperature", "ram_rise"):
            result.add(name, speeds.tat if name == "total_air_temperature" else speeds.tat - speeds.air.T)
        else:
            result.add(name, getattr(speeds, _SOURCE[name]))
    return result.response()


def _outside_table(inputs) -> str:
    unit = unit_for("speed", inputs.output_units)
    lo, hi = (units.from_si(inputs.get("calibration")[1][i], "speed", unit) for i in (0, -1))
    return (f"The CAS lies outside the calibration table's CAS column, {lo:g} to {hi:g} {unit}; nothing is "
            "extrapolated.")


# --- POST /v1/airspeed/crossover -----------------------------------------------------------------

_CROSSOVER_WHY = (
    "It does not depend on the temperature: the CAS fixes the impact pressure qc (CAS is defined at sea-level "
    "standard conditions), and the ratio qc/p depends on the Mach number only, so the CAS and the Mach number are "
    "the same speed at one static pressure, p = qc(CAS) / (qc/p)(Mach), whatever the temperature. Below it the CAS "
    "is the lower speed, above it the Mach number.")

CROSSOVER_OUTPUTS = {
    "crossover_altitude": ("altitude", "Crossover altitude: the pressure altitude at which `cas` and `mach` are the "
                                       f"same speed [ft]. {_CROSSOVER_WHY}"),
    "pressure": ("pressure", "Static pressure at the crossover altitude [hPa]."),
}


class CrossoverRequest(ComputeSchema):
    OUTPUTS = CROSSOVER_OUTPUTS

    cas = speed_field("cas", "The CAS of the pair. Arrays allowed.", required=True)
    mach = mach_field("The Mach number of the pair.", required=True)


CrossoverResponse = response_schema(CrossoverRequest)


_RANGE = (f"the model's range of pressure altitudes, {H_MIN:.0f} m ({H_MIN / FT:.0f} ft) to {H_MAX:.0f} m "
          f"({H_MAX / FT:.0f} ft)")


def _beyond_model(cas, mach, missing, indices: bool = True) -> str:
    """Where the crossovers marked ``missing`` lie, below the model's range or above it, and what that means."""
    below = spd.crossover_pressure(cas, mach) > P0  # among the missing: a pressure above the model's highest
    parts = []
    for mask, where, lower in ((missing & below, "below it", "the Mach number"),
                               (missing & ~below, "above it", "the CAS")):
        if any_true(mask):
            at = at_points(mask) if indices else ""
            parts.append(f"{where}{at}, so {lower} is the lower speed at every altitude")
    return f"outside {_RANGE}: " + "; ".join(parts)


@blp.compute("/airspeed/crossover", CrossoverRequest, examples.CROSSOVER,
             CrossoverResponse, operation_id="findCrossoverAltitude")
def crossover(inputs):
    """Crossover altitude of a CAS and a Mach number

    The pressure altitude at which a calibrated airspeed and a Mach number are the same speed, where a climb at
    constant CAS reaches its Mach limit (and a descent at constant Mach reaches its CAS), and the static pressure
    there. It does not depend on the temperature. A pair that does not cross inside the model's range is a 422.
    The example is the TQ-62's climb CAS options against its cruise Mach.
    """
    result = Result(inputs)
    cas, mach = inputs.si("cas"), inputs.si("mach")
    p = spd.crossover_pressure(cas, mach)
    H = atm.pressure_altitude(p)  # what spd.crossover_altitude does, keeping p for the answer
    missing = np.isnan(H)
    if any_true(missing):
        raise no_solution("crossover_altitude", missing, "the CAS and the Mach number given are the same speed "
                                                         f"only {_beyond_model(cas, mach, missing)}.")
    if inputs.wants("crossover_altitude"):
        result.add("crossover_altitude", H)
    if inputs.wants("pressure"):
        result.add("pressure", p)
    return result.response()


# --- POST /v1/airspeed/schedule ------------------------------------------------------------------

SCHEDULE_OUTPUTS = {
    "governing": (None, limits.GOVERNING_DESCRIPTION),
    "cas": ("speed", "Calibrated airspeed flown [kt]."),
    "mach": (None, "Mach number flown [-]."),
    "tas": ("speed", "True airspeed flown [kt]."),
    "eas": ("speed", "Equivalent airspeed flown [kt]."),
    "crossover_altitude": ("altitude", "Crossover altitude of `cas` and `mach` [ft], the same at every point of one "
                                       "CAS/Mach pair; it does not depend on the temperature. Null (with a warning) "
                                       "where it lies outside the model's range: the schedule then holds the Mach "
                                       "number (crossover below the range) or the CAS (above it) at every altitude."),
}
_SCHEDULE_SPEEDS = ("governing", "cas", "mach", "tas", "eas")


class ScheduleRequest(ComputeSchema):
    OUTPUTS = SCHEDULE_OUTPUTS

    cas = speed_field("cas", "The schedule's CAS, flown below the crossover altitude. Arrays allowed.", required=True)
    mach = mach_field("The schedule's Mach number, flown above the crossover altitude.", required=True)
    altitude = air_fields.altitude_field(_ALTITUDE)
    isa_deviation = air_fields.isa_deviation_field()
    temperature = air_fields.temperature_field()
    speed_limit = limits.speed_limit_field()
    dew_point = air_fields.dew_point_field()
    relative_humidity = air_fields.relative_humidity_field()


ScheduleResponse = response_schema(ScheduleRequest, fields={
    "governing": LabelOut(limits.GOVERNING_LABELS, metadata={"description": SCHEDULE_OUTPUTS["governing"][1]})})


@blp.compute("/airspeed/schedule", ScheduleRequest, examples.SCHEDULE,
             ScheduleResponse, operation_id="computeSpeedSchedule")
def schedule(inputs):
    """Climb or descent speed schedule

    The speeds of a schedule "fly `cas` until it reaches `mach`, then hold `mach`" (a climb; a descent flies it the
    other way round) at each altitude: which of the two governs, the CAS, Mach, TAS and EAS flown, and the crossover
    altitude. With `speed_limit` the CAS flown below its altitude is at most its CAS (the common 250 kt below
    10,000 ft), and `governing` reads "limit" there. The example is the TQ-62's 290 kt / M0.76 climb on an ISA+10
    day.
    """
    result = Result(inputs)
    state = air.air(inputs)
    cas, mach = inputs.si("cas"), inputs.si("mach")
    if any(map(inputs.wants, _SCHEDULE_SPEEDS)):
        governing, flown = limits.flown(inputs, cas, mach, state)
        missing = np.isnan(flown.mach)
        if any_true(missing):
            raise no_solution("mach", missing, "the CAS given has no Mach number here (beyond the range of the "
                                               "airspeed relations).")
        for name in _SCHEDULE_SPEEDS:
            if inputs.wants(name):
                values = governing if name == "governing" else getattr(flown, name)
                if name == "eas" and state.humid:  # EAS = TAS sqrt(rho / rho0), rho of the moist air: p / (R Tv)
                    values = values * np.sqrt(state.T / state.Tv)
                result.add(name, values)
    if inputs.wants("crossover_altitude"):
        H = spd.crossover_altitude(cas, mach)
        missing = np.isnan(H)
        if any_true(missing):
            where = _beyond_model(cas, mach, missing, indices=False)
            H = result.null_where("crossover_altitude", H, f"The CAS and the Mach number given cross only {where}. "
                                                           "The schedule holds that lower speed throughout.")
        result.add("crossover_altitude", H)
    return result.response()
