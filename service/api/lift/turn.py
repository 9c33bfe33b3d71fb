"""POST /v1/lift/turn: the level coordinated turn from a speed and one of bank angle, load factor or rate of turn."""

from __future__ import annotations

from service.api import air, air_fields, examples
from service.api.fields import Number, Quantity
from service.api.inputs import ComputeSchema
from service.api.lift.common import BANK_ANGLE, blp
from service.api.outputs import Result
from service.api.rules import ExactlyOne
from service.api.schemas import response_schema
from service.api.speeds import (
    CALIBRATION_NEEDS_IAS,
    IAS_NEEDS_CALIBRATION,
    Speeds,
    calibration_field,
    given_speed,
    one_speed,
    speed_fields,
)
from service.physics.turn import level_turn

#: Upper bound of a rate of turn input [deg/s]: far beyond any aircraft's (the bank then nears 90 deg).
TURN_RATE_MAX_DEG_S = 100.0
#: What fixes the turn.
TURN_INPUTS = ("bank_angle", "load_factor", "turn_rate")

TURN_OUTPUTS = {
    "radius": ("distance", "Radius of the turn, TAS^2 / (g tan(bank)) [NM]; null (with a warning) with wings "
                           "level."),
    "turn_rate": ("angular_rate", "Rate of turn, g tan(bank) / TAS [deg/s]."),
    "time_for_360": ("time", "Time for a full (360 deg) turn, 2 pi / rate [s]; null (with a warning) with wings "
                             "level."),
    "load_factor": (None, "Load factor n = 1 / cos(bank) [-]."),
    "bank_angle": ("angle", "Bank angle [deg]."),
    "tas": ("speed", "True airspeed [kt]."),
}
_ONE_SPEED = "One speed of ias, cas, eas, tas, mach."
_ONE_TURN = "One of bank_angle, load_factor, turn_rate."
class TurnRequest(ComputeSchema):
    OUTPUTS = TURN_OUTPUTS
    RULES = (one_speed("Missing the speed: give one of ias, cas, eas, tas, mach."), IAS_NEEDS_CALIBRATION,
             CALIBRATION_NEEDS_IAS,
             ExactlyOne(*TURN_INPUTS, missing="Missing the turn: give one of bank_angle, load_factor, turn_rate.",
                        message=lambda given: f"Give one of bank_angle, load_factor, turn_rate; this request gives "
                                              f"{', '.join(given)}."))

    ias, cas, eas, tas, mach = speed_fields(_ONE_SPEED)
    calibration = calibration_field()
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field()
    bank_angle = BANK_ANGLE
    load_factor = Number(minimum=1.0, metadata={
        "description": "Load factor n of the level turn [-], at least 1. " + _ONE_TURN, "example": 1.5})
    turn_rate = Quantity("angular_rate", minimum=0.0, maximum=TURN_RATE_MAX_DEG_S, metadata={
        "description": "Rate of turn [deg/s]: 3 is the standard rate (rate one, 360 deg in 2 minutes); the unit "
                       "`standard_rate` counts in multiples of it. " + _ONE_TURN, "example": 3})


TurnResponse = response_schema(TurnRequest)


@blp.compute("/lift/turn", TurnRequest, examples.TURN, TurnResponse)
def turn(inputs):
    """Level coordinated turn: radius, rate, time for 360, load factor, bank

    At a speed of any kind (turned into TAS at the altitude and air) and one of the bank angle, the load factor or
    the rate of turn (3 deg/s is the standard rate): tan(bank) = sqrt(n^2 - 1) = rate x TAS / g, the radius TAS^2 /
    (g tan(bank)) and the time for a full turn 2 pi / rate. Level, coordinated and steady; g is the standard 9.80665
    m/s2. The static temperature from an ISA deviation, an outside air temperature or a total air temperature (with
    the speed given); a dew point or relative humidity makes the air moist (the TAS of an EAS at the virtual
    temperature). Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    kind = given_speed(inputs)
    tas = Speeds(air.air(inputs), kind, inputs.si(kind), inputs.get("calibration")).require("tas")
    given = next(name for name in TURN_INPUTS if name in inputs)
    values = level_turn(tas, **{given: inputs.si(given)})._asdict() | {"tas": tas}
    for name in inputs.outputs:
        value = values[name]
        if name in ("radius", "time_for_360"):
            value = result.null_where(name, value, "Wings level (bank 0, load factor 1, rate 0): no turn.")
        result.add(name, value)
    return result.response()
