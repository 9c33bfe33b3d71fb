"""POST /v1/lift/turn and /v1/lift/buffet: the manoeuvre side of the lift equation.

The level coordinated turn from a speed and one of bank angle, load factor or rate of turn, and the margins to buffet
onset from a type's buffet boundary (CL against Mach). The physics is in service.physics.turn and
service.physics.buffet.
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api import air, examples
from service.api.base import COMPUTE_PROBLEMS, Blueprint
from service.api.fields import Number, Quantity, parse_numbers
from service.api.inputs import ComputeSchema, exactly_one, first_indices, needs, output_needs, outputs_field
from service.api.lift_schemas import bank_angle_field, weight_field, wing_area_field
from service.api.outputs import Result
from service.api.problems import invalid
from service.api.schemas import quantity_out, ratio_out, response_schema
from service.api.speeds import KINDS, Speeds, calibration_field, given_speed, mach_field, speed_field
from service.physics.buffet import buffet_margins, check_buffet_table
from service.physics.constants import G0
from service.physics.turn import level_turn

blp = Blueprint("manoeuvre", __name__, url_prefix="/v1", description=(
    "The manoeuvre side of the lift equation: level coordinated turns (radius, rate, time for a full turn, load "
    "factor, bank angle; the standard rate is 3 deg/s) and margins to buffet onset from the type's buffet boundary "
    "(CL against Mach), with W/delta and the maximum altitude and weight for a required margin."))

_ALTITUDE = ("Altitude [ft]: a pressure altitude (FL allowed), or the indicated altitude with `qnh`, or a geometric "
             "height with `altitude_kind: geometric`.")
#: Upper bound of a rate of turn input [deg/s]: far beyond any aircraft's (the bank then nears 90 deg).
TURN_RATE_MAX_DEG_S = 100.0


# --- POST /v1/lift/turn -------------------------------------------------------------------------------------

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
    OUTPUTS = tuple(TURN_OUTPUTS)
    SPEC_RULES = (exactly_one(*KINDS), needs("ias", "calibration"), needs("calibration", "ias"),
                  exactly_one("bank_angle", "load_factor", "turn_rate"))

    ias = speed_field("ias", _ONE_SPEED)
    cas = speed_field("cas", _ONE_SPEED)
    eas = speed_field("eas", _ONE_SPEED)
    tas = speed_field("tas", _ONE_SPEED)
    mach = mach_field(_ONE_SPEED)
    calibration = calibration_field()
    altitude = air.altitude_field(_ALTITUDE)
    isa_deviation = air.isa_deviation_field()
    temperature = air.temperature_field()
    qnh = air.qnh_field()
    altitude_kind = air.altitude_kind_field()
    bank_angle = bank_angle_field()
    load_factor = Number(minimum=1.0, metadata={
        "description": "Load factor n of the level turn [-], at least 1. " + _ONE_TURN, "example": 1.5})
    turn_rate = Quantity("angular_rate", minimum=0.0, maximum=TURN_RATE_MAX_DEG_S, metadata={
        "description": "Rate of turn [deg/s]: 3 is the standard rate (rate one, 360 deg in 2 minutes); the unit "
                       "`standard_rate` counts in multiples of it. " + _ONE_TURN, "example": 3})
    outputs = outputs_field(tuple(TURN_OUTPUTS))

    @ma.validates_schema
    def _one_turn(self, data, **kwargs):
        given = [name for name in ("bank_angle", "load_factor", "turn_rate") if name in data]
        if not given:
            raise ma.ValidationError("Missing the turn: " + _ONE_TURN)
        if len(given) > 1:
            raise ma.ValidationError({name: [f"Give one of bank_angle, load_factor, turn_rate; this request gives "
                                             f"{', '.join(given)}."] for name in given})
        if "calibration" in data and "ias" not in data:
            raise ma.ValidationError({"calibration": [
                "The calibration converts an ias, and this request gives none: leave it out."]})


TurnResponse = response_schema("TurnResponse", {
    name: quantity_out(desc) if dim else ratio_out(desc) for name, (dim, desc) in TURN_OUTPUTS.items()},
    inputs=TurnRequest)


@blp.route("/lift/turn", methods=["POST"])
@blp.arguments(TurnRequest, examples=examples.TURN)
@blp.response(200, TurnResponse)
@blp.problems(*COMPUTE_PROBLEMS)
def turn(inputs):
    """Level coordinated turn: radius, rate, time for 360, load factor, bank

    At a speed of any kind (turned into TAS at the altitude and air) and one of the bank angle, the load factor or
    the rate of turn (3 deg/s is the standard rate): tan(bank) = sqrt(n^2 - 1) = rate x TAS / g, the radius TAS^2 /
    (g tan(bank)) and the time for a full turn 2 pi / rate. Level, coordinated and steady; g is the standard 9.80665
    m/s2. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    kind = given_speed(inputs)
    tas = Speeds(air.air(inputs), kind, inputs.si(kind), inputs.get("calibration")).require("tas")
    given = next(name for name in ("bank_angle", "load_factor", "turn_rate") if name in inputs)
    t = level_turn(tas, **{given: inputs.si(given)})
    values = t._asdict() | {"tas": tas}
    for name in inputs.outputs:
        value = values[name]
        if name in ("radius", "time_for_360"):
            value = result.null_where(name, value, "Wings level (bank 0, load factor 1, rate 0): no turn.")
        result.add(name, value, TURN_OUTPUTS[name][0])
    return result.response()


# --- POST /v1/lift/buffet -----------------------------------------------------------------------------------


class BuffetTableField(ma.fields.Field):
    """``buffet``: {"mach": [...], "cl": [...]}, the type's 1 g buffet-onset CL against Mach."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not dict:
            raise ma.ValidationError("Give an object {\"mach\": [...], \"cl\": [...]}.")
        errors = {key: ["Unknown field."] for key in sorted(value.keys() - {"mach", "cl"})}
        columns = {}
        for key in ("mach", "cl"):
            if key not in value:
                errors[key] = ["Missing data for required field."]
                continue
            try:
                column, is_array = parse_numbers(value[key])
            except ma.ValidationError as err:
                errors[key] = err.messages
                continue
            if not is_array:
                errors[key] = ["Give an array of at least two numbers."]
                continue
            columns[key] = column
        if errors:
            raise ma.ValidationError(errors)
        try:
            return check_buffet_table(columns["mach"], columns["cl"])
        except ValueError as err:
            key = "cl" if "table cl" in str(err) else "mach"
            raise ma.ValidationError({key: [str(err)[0].upper() + str(err)[1:] + "."]}) from None

    def openapi(self):
        column = {"type": "array", "items": {"type": "number", "exclusiveMinimum": 0}, "minItems": 2}
        return {
            "type": "object",
            "properties": {
                "mach": column | {"description": "Mach numbers of the rows, strictly increasing [-]."},
                "cl": column | {"description": "Buffet-onset lift coefficient at each Mach number (1 g) [-]."},
            },
            "required": ["mach", "cl"],
            "additionalProperties": False,
        }


BUFFET_OUTPUTS = {
    "cl": (None, "Lift coefficient in 1 g flight, W / ((gamma/2) p M^2 S) [-]."),
    "buffet_cl": (None, "Buffet-onset CL at the Mach number, linear between the table's rows [-]."),
    "load_factor_to_buffet": (None, "Load factor at which buffet starts, buffet CL / CL [-]; a warning where it is "
                                    "below `margin`."),
    "bank_to_buffet": ("angle", "Bank angle of the level turn that reaches buffet onset, acos(1 / n) [deg]; null "
                                "(with a warning) where the aircraft is beyond buffet onset already in 1 g flight."),
    "weight_over_delta": ("mass", "W/delta, the weight over the pressure ratio p / p0, as a mass [kg]: the trade's "
                                  "cruise parameter (the same W/delta, the same CL at a Mach number)."),
    "maximum_weight_over_delta": ("mass", "With `margin`: the highest W/delta that keeps the margin at this Mach "
                                          "number, as a mass [kg]."),
    "maximum_altitude": ("altitude", "With `margin`: the highest pressure altitude that keeps the margin at this "
                                     "weight and Mach number [ft]; null (with a warning) outside the model's range."),
    "maximum_weight": ("mass", "With `margin`: the highest weight that keeps the margin at this altitude and Mach "
                               "number, as a mass [kg]."),
    "cas": ("speed", "Calibrated airspeed of the Mach number here [kt]."),
    "tas": ("speed", "True airspeed of the Mach number here [kt]."),
}
_WITH_MARGIN = ("maximum_weight_over_delta", "maximum_altitude", "maximum_weight")


class BuffetRequest(ComputeSchema):
    OUTPUTS = tuple(BUFFET_OUTPUTS)
    SPEC_RULES = tuple(output_needs(name, {"required": ["margin"]}) for name in _WITH_MARGIN)

    weight = weight_field("Weight", required=True)
    wing_area = wing_area_field()
    wing_area.required = True
    mach = mach_field("Inside the `buffet` table's Mach range (nothing is extrapolated).")
    mach.required = True
    altitude = air.altitude_field(_ALTITUDE)
    isa_deviation = air.isa_deviation_field()
    temperature = air.temperature_field()
    qnh = air.qnh_field()
    altitude_kind = air.altitude_kind_field()
    buffet = BuffetTableField(required=True, metadata={
        "description": "The type's 1 g buffet-onset boundary from its flight manual: CL against Mach, linear "
                       "between rows. A Mach number outside the table is refused (nothing is extrapolated).",
        "example": examples.NR200_BUFFET})
    margin = Number(minimum=1.0, metadata={
        "description": "Required margin to buffet onset as a load factor [-], for example 1.3 (about 40 deg of "
                       "bank); gives the maximum altitude, weight and W/delta.", "example": 1.3})
    outputs = outputs_field(tuple(BUFFET_OUTPUTS))

    @ma.validates_schema
    def _margin_outputs(self, data, **kwargs):
        wanted = data.get("outputs") or ()
        errors = {i: [f"{name!r} needs `margin`."] for i, name in enumerate(wanted)
                  if name in _WITH_MARGIN and "margin" not in data}
        if errors:
            raise ma.ValidationError({"outputs": errors})


BuffetResponse = response_schema("BuffetResponse", {
    name: quantity_out(desc) if dim else ratio_out(desc) for name, (dim, desc) in BUFFET_OUTPUTS.items()},
    inputs=BuffetRequest)


@blp.route("/lift/buffet", methods=["POST"])
@blp.arguments(BuffetRequest, examples=examples.BUFFET)
@blp.response(200, BuffetResponse)
@blp.problems(*COMPUTE_PROBLEMS)
def buffet(inputs):
    """Margins to buffet onset, W/delta, maximum altitude and weight

    At a weight, Mach number and altitude, against the type's buffet boundary (CL against Mach): the CL in 1 g
    flight, the buffet-onset CL, the load factor and level-turn bank angle to buffet onset, and W/delta; with a
    required `margin` (a load factor, e.g. 1.3) the highest altitude at this weight and the highest weight at this
    altitude that keep it. At a fixed Mach number CL depends on the static pressure only, so the margins and limits
    do not depend on the temperature. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    mach, (table_mach, table_cl) = inputs.si("mach"), inputs.get("buffet")
    outside = (mach < table_mach[0]) | (mach > table_mach[-1])
    if np.any(outside):
        at = f" at points {first_indices(outside)}" if np.ndim(outside) else ""
        raise invalid([{"pointer": "/mach", "message": f"Mach number outside the buffet table's range, "
                        f"{table_mach[0]:g} to {table_mach[-1]:g}{at}; nothing is extrapolated."}])
    state = air.air(inputs)
    b = buffet_margins(inputs.si("weight"), inputs.si("wing_area"), mach, state.p, table_mach, table_cl,
                       inputs.si("margin"))
    margin = inputs.si("margin")
    for name in inputs.outputs:
        if name in _WITH_MARGIN and margin is None:
            continue
        if name in ("cas", "tas"):
            value = Speeds(state, "mach", mach).require(name)
        else:
            value = getattr(b, name)
        if name == "bank_to_buffet":
            value = result.null_where(name, value, "Beyond buffet onset already in 1 g flight (load factor to "
                                                   "buffet below 1): no level turn reaches it.")
        elif name == "maximum_altitude":
            value = result.null_where(name, value, "The altitude that keeps the margin lies outside the model's "
                                                   "range of pressure altitudes.")
        elif name == "load_factor_to_buffet" and margin is not None and np.any(value < margin):
            result.warn(name, "Below the required margin.", value < margin)
        if BUFFET_OUTPUTS[name][0] == "mass":
            value = value / G0  # a weight as a mass, the trade's way of quoting W/delta
        result.add(name, value, BUFFET_OUTPUTS[name][0])
    return result.response()
