"""POST /v1/drag and /v1/drag/speeds: the parabolic drag polar at a point, and the characteristic speeds.

The physics is in service.physics.drag; the air and the speed conversions are the lift endpoints' own.
"""

from __future__ import annotations

import marshmallow as ma

from service.api import air, air_fields, examples
from service.api.base import Blueprint
from service.api.fields import Number, Quantity
from service.api.inputs import ComputeSchema
from service.api.lift.common import (
    BANK_ANGLE,
    LOAD_FACTOR,
    LOAD_FACTOR_OR_BANK,
    load_factor,
    weight_field,
    wing_area_field,
)
from service.api.masks import any_true
from service.api.outputs import Leaf, Result
from service.api.rules import ExactlyOne, Needs, NoneOf
from service.api.schemas import quantity_out, ratio_out, response_schema
from service.api.speeds import (
    CALIBRATION_NEEDS_IAS,
    IAS_NEEDS_CALIBRATION,
    KINDS,
    SPEED_OUTPUTS,
    Speeds,
    calibration_field,
    given_speed,
    speed_fields,
)
from service.physics import drag as dp
from service.physics import lift as lf

blp = Blueprint("drag", __name__, url_prefix="/v1", description=(
    "Drag from a parabolic polar CD = CD0 + k CL^2 (k = 1 / (pi A e)) with the lift equation n W = q S CL: the drag, "
    "thrust and power required at a flight condition, and the characteristic speeds of minimum drag, minimum power "
    "and best glide. No compressibility drag is modelled: above the polar's Mach limit (the type's drag-rise Mach, "
    f"default {dp.POLAR_MACH_LIMIT}) the answers carry a warning and underestimate the drag."))

_POLAR_NOTE = "Give `induced_drag_factor`, or `aspect_ratio` with `oswald_efficiency`."
#: Upper bound of a glide's height to lose [ft]: the model's top, rounded.
HEIGHT_MAX_FT = 280_000.0
_BEYOND_POLAR = ("Mach number above `mach_limit`: the parabolic polar has no compressibility (wave) drag, so the "
                 "drag there is underestimated.")


# --- The polar: fields shared by both endpoints -----------------------------------------------------------


#: The polar's induced drag: k, or the aspect ratio with the Oswald efficiency.
POLAR_RULES = (
    ExactlyOne("induced_drag_factor", "aspect_ratio", missing="Missing the polar's induced drag: give "
               "`induced_drag_factor`, or `aspect_ratio` with `oswald_efficiency`.",
               message="Give either induced_drag_factor or aspect_ratio (with oswald_efficiency), not both."),
    Needs("aspect_ratio", "oswald_efficiency", messages={"aspect_ratio": "Needs `oswald_efficiency`: "
                                                                         "k = 1 / (pi A e)."}),
    Needs("oswald_efficiency", "aspect_ratio", messages={"oswald_efficiency": "Goes with `aspect_ratio`: "
                                                                             "k = 1 / (pi A e)."}),
)


class _PolarInputs(ma.Schema):
    """The drag polar: CD0 and k, or CD0 with the aspect ratio and Oswald efficiency; the Mach limit."""

    cd0 = Number(required=True, minimum=0.0, exclusive_minimum=True, maximum=1.0, metadata={
        "description": "Zero-lift (parasite) drag coefficient CD0 of the configuration [-].", "example": 0.024})
    induced_drag_factor = Number(minimum=0.0, exclusive_minimum=True, maximum=1.0, metadata={
        "description": "Induced drag factor k of the polar CD = CD0 + k CL^2 [-]. Not with `aspect_ratio`. "
                       + _POLAR_NOTE, "example": 0.0371})
    aspect_ratio = Number(minimum=0.0, exclusive_minimum=True, maximum=100.0, metadata={
        "description": "Wing aspect ratio A = span^2 / area [-], with `oswald_efficiency`: k = 1 / (pi A e). Not "
                       "with `induced_drag_factor`.", "example": 11})
    oswald_efficiency = Number(minimum=0.0, exclusive_minimum=True, maximum=1.0, metadata={
        "description": "Oswald span efficiency e [-], 0 < e <= 1, with `aspect_ratio`.", "example": 0.78})
    mach_limit = Number(minimum=0.0, exclusive_minimum=True, maximum=1.0, allow_array=False, metadata={
        "description": "Highest Mach number at which the polar holds, the type's drag-rise Mach [-]; default "
                       f"{dp.POLAR_MACH_LIMIT} (common practice for a subsonic transport, no source). Above it a "
                       "warning says the drag is underestimated (no compressibility drag is modelled).",
        "example": 0.65})


def _polar(inputs):
    """(CD0, k) of the request's polar."""
    k = inputs.si("induced_drag_factor")
    if k is None:
        k = dp.induced_drag_factor(inputs.si("aspect_ratio"), inputs.si("oswald_efficiency"))
    return inputs.si("cd0"), k


def _warn_beyond_polar(result: Result, inputs, field: str, mach) -> None:
    beyond = dp.beyond_polar_range(mach, inputs.si("mach_limit", dp.POLAR_MACH_LIMIT))
    if any_true(beyond):
        result.warn(field, _BEYOND_POLAR, beyond)


def _speed_leaves(speeds: Speeds) -> dict:
    """EAS, CAS, TAS and Mach of a speed (a 422 where one does not exist)."""
    return {"eas": Leaf(speeds.require("eas"), "speed"), "cas": Leaf(speeds.require("cas"), "speed"),
            "tas": Leaf(speeds.require("tas"), "speed"), "mach": Leaf(speeds.require("mach"))}


# --- POST /v1/drag ------------------------------------------------------------------------------------------

DRAG_OUTPUTS = {
    "cl": (None, "Lift coefficient CL = n W / (q S) [-]."),
    "cd": (None, "Drag coefficient CD = CD0 + k CL^2 [-]."),
    "drag": ("force", "Drag D = q S CD [N]."),
    "lift_to_drag": (None, "Lift-to-drag ratio CL / CD [-]."),
    "thrust_required": ("force", "Thrust required for steady level flight (or a steady level turn): equal to the "
                                 "drag [N]."),
    "power_required": ("power", "Power required, drag times TAS [kW]."),
    **SPEED_OUTPUTS,
    "dynamic_pressure": ("pressure", "Dynamic pressure q = 1/2 rho TAS^2 = (gamma/2) p M^2 [hPa]."),
    "pressure_altitude": ("altitude", "Pressure altitude [ft]."),
    "density_altitude": ("altitude", "Density altitude [ft]; null (with a warning) outside the model's range."),
    "density": ("density", "Air density [kg/m3]."),
}
_ONE_POINT = "One of ias, cas, eas, tas, mach or cl: the flight condition (with cl, the speed follows from the lift)."


#: One flight condition: a speed of any kind, or a CL.
ONE_FLIGHT_CONDITION = ExactlyOne(
    *KINDS, "cl", missing="Missing the flight condition: give one of ias, cas, eas, tas, mach or cl (with cl, the "
                          "speed follows from the lift).",
    message=lambda given: f"Give one of ias, cas, eas, tas, mach or cl; this request gives {', '.join(given)}.")


class DragRequest(_PolarInputs, ComputeSchema):
    OUTPUTS = DRAG_OUTPUTS
    RULES = (*POLAR_RULES, ONE_FLIGHT_CONDITION, IAS_NEEDS_CALIBRATION, CALIBRATION_NEEDS_IAS, LOAD_FACTOR_OR_BANK)

    weight = weight_field("Weight", required=True)
    wing_area = wing_area_field(required=True)
    ias, cas, eas, tas, mach = speed_fields(_ONE_POINT)
    cl = Number(minimum=0.0, exclusive_minimum=True, maximum=10.0, metadata={
        "description": "Lift coefficient CL [-]. " + _ONE_POINT, "example": [0.3, 0.5, 0.8]})
    calibration = calibration_field()
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field()
    load_factor = LOAD_FACTOR
    bank_angle = BANK_ANGLE


DragResponse = response_schema(DragRequest)


@blp.compute("/drag", DragRequest, examples.DRAG, DragResponse)
def drag(inputs):
    """Drag, thrust and power required at a flight condition

    The parabolic polar CD = CD0 + k CL^2 at the CL that carries n W (n from `load_factor` or a level turn's
    `bank_angle`, default 1) at the given speed, or at a given `cl` (the speed then follows from the lift equation):
    CL, CD, the drag D = q S CD, L/D, the thrust required (equal to the drag in steady flight), the power required
    D x TAS, and every speed kind. No compressibility drag is modelled: above `mach_limit` a warning says so. Arrays
    broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    weight, area = inputs.si("weight"), inputs.si("wing_area")
    n = load_factor(inputs)
    cd0, k = _polar(inputs)
    kind = given_speed(inputs)
    if kind is None:
        cl = inputs.si("cl")
        if state.needs_temperature:  # the static temperature from the TAT at the EAS the lift gives (no density)
            eas = lf.eas_from_dynamic_pressure(lf.required_dynamic_pressure(weight, n, area, cl))
            Speeds(state, "eas", eas, given=False)
        point = dp.level_condition(weight, area, cl, cd0, k, state.rho, n)
        speeds = Speeds(state, "eas", point.eas, given=False)
    else:
        speeds = Speeds(state, kind, inputs.si(kind), inputs.get("calibration"))
        q = lf.dynamic_pressure_from_eas(speeds.require("eas")) if kind in ("eas", "tas") else speeds.q
        point = dp.flight_condition(weight, area, q, speeds.require("tas"), cd0, k, n)
    values = {"cl": point.cl, "cd": point.cd, "drag": point.drag, "lift_to_drag": point.lift_to_drag,
              "thrust_required": point.drag, "power_required": point.power, "dynamic_pressure": point.q,
              "density": state.rho, "pressure_altitude": state.H}
    for name in inputs.outputs:
        if name == "density_altitude":
            value = result.null_where(name, state.density_altitude, "The density altitude lies outside the model's "
                                                                    "range.")
        else:
            value = speeds.require(name) if name in SPEED_OUTPUTS else values[name]
        result.add(name, value)
    _warn_beyond_polar(result, inputs, "cd", speeds.require("mach"))
    return result.response()


# --- POST /v1/drag/speeds -----------------------------------------------------------------------------------

SPEEDS_OUTPUTS = ("minimum_drag", "minimum_power", "best_glide")


#: Why /v1/drag/speeds takes no total air temperature (the message on the field given).
NO_TAT_FOR_FOUND_SPEEDS = (
    "A total air temperature gives the static temperature through the speed it was read at, and this endpoint finds "
    "its speeds (three conditions, each at its own speed, all at one air): give temperature or isa_deviation.")


class DragSpeedsRequest(_PolarInputs, ComputeSchema):
    OUTPUTS = SPEEDS_OUTPUTS
    RULES = (*POLAR_RULES, NoneOf("total_air_temperature", "recovery_factor", message=NO_TAT_FOR_FOUND_SPEEDS))

    weight = weight_field("Weight", required=True)
    wing_area = wing_area_field(required=True)
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field()
    height = Quantity("altitude", minimum=0.0, exclusive_minimum=True, maximum=HEIGHT_MAX_FT,
                      rules=(air_fields.not_flight_level("height", "height to lose"),), metadata={
        "description": "Optional: height to lose in a glide [ft] (not in FL); `best_glide` then gives the still-air "
                       "glide distance from it.", "example": 25000})


def _condition_schema(name: str, extra: dict) -> type[ma.Schema]:
    fields = {}
    for key in ("eas", "cas", "tas", "mach"):  # the order of _speed_leaves
        dim, desc = SPEED_OUTPUTS[key]
        fields[key] = quantity_out(desc, dim) if dim else ratio_out(desc)
    fields.update(extra)
    return type(name, (ma.Schema,), fields)


MinimumDragOut = _condition_schema("MinimumDragOut", {
    "cl": ratio_out("Lift coefficient of minimum drag, sqrt(CD0 / k) [-]."),
    "drag": quantity_out("The minimum drag (thrust required), 2 W sqrt(CD0 k) [N].", "force"),
    "lift_to_drag": ratio_out("The maximum lift-to-drag ratio, 1 / (2 sqrt(CD0 k)) [-]."),
})
MinimumPowerOut = _condition_schema("MinimumPowerOut", {
    "cl": ratio_out("Lift coefficient of minimum power, sqrt(3 CD0 / k) [-]."),
    "power": quantity_out("The minimum power required, drag times TAS [kW].", "power"),
    "drag": quantity_out("The drag there [N].", "force"),
})
BestGlideOut = _condition_schema("BestGlideOut", {
    "cl": ratio_out("Lift coefficient of the best glide, that of minimum drag [-]."),
    "glide_ratio": ratio_out("Glide ratio, distance per height lost in still air: the maximum L/D [-]."),
    "glide_angle": quantity_out("Glide path angle below the horizon, atan(1 / glide ratio) [deg].", "angle"),
    "sink_rate": quantity_out("Rate of descent, TAS x sin(glide angle) [ft/min].", "vertical_speed"),
    "glide_distance": quantity_out("With `height`: still-air distance over the ground, height x glide ratio [NM].",
                                   "distance"),
})

DragSpeedsResponse = response_schema(DragSpeedsRequest, fields={
    "minimum_drag": ma.fields.Nested(MinimumDragOut, metadata={
        "description": "Steady level flight at minimum drag, the least thrust required: the maximum L/D."}),
    "minimum_power": ma.fields.Nested(MinimumPowerOut, metadata={
        "description": "Steady level flight at minimum power required: a propeller aircraft's best endurance; in "
                       "a glide, the speed of minimum sink."}),
    "best_glide": ma.fields.Nested(BestGlideOut, metadata={
        "description": "The flattest steady glide in still air, power off: at the maximum L/D, with the speed "
                       "along the path from L = W cos(glide angle)."})})


@blp.compute("/drag/speeds", DragSpeedsRequest, examples.DRAG_SPEEDS, DragSpeedsResponse)
def speeds(inputs):
    """Characteristic speeds: minimum drag, minimum power, best glide

    From the weight, wing area and parabolic polar at the altitude and air: the minimum-drag condition (CL =
    sqrt(CD0 / k), the maximum L/D and the drag there), the minimum-power condition (CL = sqrt(3 CD0 / k), the power
    there) and the best glide in still air (glide ratio, angle, sink rate, and with `height` the distance), each
    speed as EAS, CAS, TAS and Mach. The EAS of each condition does not depend on the altitude; the TAS, the power
    and the sink rate do. No compressibility drag is modelled: where a speed's Mach number is above `mach_limit` a
    warning says so. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    weight, area = inputs.si("weight"), inputs.si("wing_area")
    cd0, k = _polar(inputs)
    if inputs.wants("minimum_drag"):
        md = dp.minimum_drag(weight, area, cd0, k, state.rho)
        leaves = _speed_leaves(Speeds(state, "eas", md.eas, given=False))
        result.add_tree("minimum_drag", {**leaves, "cl": Leaf(md.cl), "drag": Leaf(md.drag, "force"),
                                         "lift_to_drag": Leaf(md.lift_to_drag)})
        _warn_beyond_polar(result, inputs, "minimum_drag", leaves["mach"].si)
    if inputs.wants("minimum_power"):
        mp = dp.minimum_power(weight, area, cd0, k, state.rho)
        leaves = _speed_leaves(Speeds(state, "eas", mp.eas, given=False))
        result.add_tree("minimum_power", {**leaves, "cl": Leaf(mp.cl), "power": Leaf(mp.power, "power"),
                                          "drag": Leaf(mp.drag, "force")})
        _warn_beyond_polar(result, inputs, "minimum_power", leaves["mach"].si)
    if inputs.wants("best_glide"):
        bg = dp.best_glide(weight, area, cd0, k, state.rho)
        leaves = _speed_leaves(Speeds(state, "eas", bg.eas, given=False))
        tree = {**leaves, "cl": Leaf(bg.cl), "glide_ratio": Leaf(bg.glide_ratio),
                "glide_angle": Leaf(bg.glide_angle, "angle"), "sink_rate": Leaf(bg.sink_rate, "vertical_speed")}
        if "height" in inputs:
            tree["glide_distance"] = Leaf(dp.glide_distance(inputs.si("height"), bg.glide_ratio), "distance")
        result.add_tree("best_glide", tree)
        _warn_beyond_polar(result, inputs, "best_glide", leaves["mach"].si)
    return result.response()
