"""POST /v1/lift/buffet: margins to buffet onset from the type's buffet boundary, W/delta, and the maximum
altitude and weight for a required margin."""

from __future__ import annotations

import marshmallow as ma

from service.api import air, air_fields, examples
from service.api.fields import Number
from service.api.inputs import ComputeSchema
from service.api.lift.common import blp, output_needs, weight_field, wing_area_field
from service.api.masks import any_true, at_points
from service.api.numbers import table_columns
from service.api.outputs import Result
from service.api.problems import invalid
from service.api.rules import Given
from service.api.schemas import response_schema
from service.api.speeds import Speeds, mach_field
from service.physics.buffet import buffet_margins, check_buffet_table
from service.physics.constants import G0


class BuffetTableField(ma.fields.Field):
    """``buffet``: {"mach": [...], "cl": [...]}, the type's 1 g buffet-onset CL against Mach."""

    def _deserialize(self, value, attr, data, **kwargs):
        columns, _ = table_columns(value, ("mach", "cl"), "numbers")
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
#: The outputs a required margin gives.
WITH_MARGIN = ("maximum_weight_over_delta", "maximum_altitude", "maximum_weight")


class BuffetRequest(ComputeSchema):
    OUTPUTS = BUFFET_OUTPUTS
    RULES = tuple(output_needs(name, Given("margin"), "`margin`") for name in WITH_MARGIN)

    weight = weight_field("Weight", required=True)
    wing_area = wing_area_field(required=True)
    mach = mach_field("Inside the `buffet` table's Mach range (nothing is extrapolated).", required=True)
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field()
    buffet = BuffetTableField(required=True, metadata={
        "description": "The type's 1 g buffet-onset boundary from its flight manual: CL against Mach, linear "
                       "between rows. A Mach number outside the table is refused (nothing is extrapolated).",
        "example": examples.TQ62_BUFFET})
    margin = Number(minimum=1.0, metadata={
        "description": "Required margin to buffet onset as a load factor [-], for example 1.3 (about 40 deg of "
                       "bank); gives the maximum altitude, weight and W/delta.", "example": 1.3})


BuffetResponse = response_schema(BuffetRequest)


@blp.compute("/lift/buffet", BuffetRequest, examples.BUFFET, BuffetResponse)
def buffet(inputs):
    """Margins to buffet onset, W/delta, maximum altitude and weight

    At a weight, Mach number and altitude, against the type's buffet boundary (CL against Mach): the CL in 1 g
    flight, the buffet-onset CL, the load factor and level-turn bank angle to buffet onset, and W/delta; with a
    required `margin` (a load factor, e.g. 1.3) the highest altitude at this weight and the highest weight at this
    altitude that keep it. At a fixed Mach number CL depends on the static pressure only, so the margins and limits
    depend neither on the temperature nor on the humidity (accepted, as everywhere the air is computed; the TAS
    depends on the static temperature, which a total air temperature gives with the Mach number). Arrays broadcast;
    `grid: true` takes their outer product.
    """
    result = Result(inputs)
    mach, (table_mach, table_cl) = inputs.si("mach"), inputs.get("buffet")
    outside = (mach < table_mach[0]) | (mach > table_mach[-1])
    if any_true(outside):
        raise invalid({"/mach": f"Mach number outside the buffet table's range, {table_mach[0]:g} to "
                                f"{table_mach[-1]:g}{at_points(outside)}; nothing is extrapolated."})
    state = air.air(inputs)
    speeds = Speeds(state, "mach", mach)  # with a total air temperature, the static temperature from the Mach number
    margin = inputs.si("margin")
    b = buffet_margins(inputs.si("weight"), inputs.si("wing_area"), mach, state.p, table_mach, table_cl, margin)
    for name in inputs.outputs:
        if name in WITH_MARGIN and margin is None:
            continue
        value = speeds.require(name) if name in ("cas", "tas") else getattr(b, name)
        if name == "bank_to_buffet":
            value = result.null_where(name, value, "Beyond buffet onset already in 1 g flight (load factor to "
                                                   "buffet below 1): no level turn reaches it.")
        elif name == "maximum_altitude":
            value = result.null_where(name, value, "The altitude that keeps the margin lies outside the model's "
                                                   "range of pressure altitudes.")
        elif name == "load_factor_to_buffet" and margin is not None and any_true(value < margin):
            result.warn(name, "Below the required margin.", value < margin)
        if BUFFET_OUTPUTS[name][0] == "mass":
            value = value / G0  # a weight as a mass, the trade's way of quoting W/delta
        result.add(name, value)
    return result.response()
