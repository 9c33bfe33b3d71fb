"""POST /v1/lift/stall: stall speeds under load, their multiples, and the margins at a speed."""

from __future__ import annotations

import marshmallow as ma

from service.api import air, air_fields, examples, ranges
from service.api.air import Air
from service.api.fields import Number, Quantity, parse_numbers
from service.api.inputs import ComputeSchema, Inputs
from service.api.lift.common import (
    BANK_ANGLE,
    LOAD_FACTOR,
    LOAD_FACTOR_OR_BANK,
    block,
    blp,
    load_factor,
    output_needs,
    weight_field,
    wing_area_field,
)
from service.api.masks import any_true, first_indices
from service.api.outputs import Leaf, Result
from service.api.rule_schema import StrictSchema
from service.api.rules import Either, Given, NeedsAny
from service.api.schemas import quantity_out, ratio_out, response_schema
from service.api.speeds import (
    AT_MOST_ONE_SPEED,
    CALIBRATION_NEEDS_IAS,
    IAS_NEEDS_CALIBRATION,
    KINDS,
    SPEED_MAX_KT,
    Speeds,
    calibration_field,
    given_speed,
    mach_field,
    speed_field,
)
from service.api.values import require
from service.physics import lift as lf

#: The most speed factors one stall request may ask for (each multiplies the size of the answer).
MAX_SPEED_FACTORS = 20


class SpeedFactors(ma.fields.Field):
    """``speed_factors``: a list of multiples of the stall speed (not a grid axis)."""

    def _deserialize(self, value, attr, data, **kwargs):
        factors, is_array = parse_numbers(value)
        if not is_array:
            raise ma.ValidationError("Give a list of factors, e.g. [1.13, 1.23, 1.3].")
        if factors.size > MAX_SPEED_FACTORS:
            raise ma.ValidationError(f"At most {MAX_SPEED_FACTORS} factors per request.")
        bad = factors <= 0.0
        if any_true(bad):
            raise ma.ValidationError({i: ["Must be above 0."] for i in first_indices(bad)})
        return factors

    def openapi(self):
        return {"type": "array", "items": {"type": "number", "exclusiveMinimum": 0}, "minItems": 1,
                "maxItems": MAX_SPEED_FACTORS}


class StallReferenceSchema(StrictSchema):
    """A stall speed from the flight manual, to scale by weight."""

    stall_speed = Quantity("speed", required=True, minimum=0.0, exclusive_minimum=True, maximum=SPEED_MAX_KT, metadata={
        "description": "The 1 g stall speed as a calibrated airspeed (CAS), as the flight manual gives it [kt].",
        "example": 108})
    weight = weight_field("The weight at which `stall_speed` holds", required=True, example=22000)
    altitude = air_fields.altitude_field("Pressure altitude at which `stall_speed` holds [ft] (FL allowed); default "
                                         "the request's pressure altitude.", required=False, example=0)


STALL_OUTPUTS = ("stall", "multiples", "margin")


class LiftStallRequest(ComputeSchema):
    OUTPUTS = STALL_OUTPUTS
    RULES = (
        LOAD_FACTOR_OR_BANK,
        Either(("wing_area", "cl_max"), ("reference",),
               both="Give either wing_area and cl_max, or reference, not both.",
               missing="Missing: give wing_area and cl_max, or a reference stall speed (reference)."),
        AT_MOST_ONE_SPEED, CALIBRATION_NEEDS_IAS, IAS_NEEDS_CALIBRATION,
        output_needs("multiples", Given("speed_factors"), "`speed_factors`"),
        output_needs("margin", Given(any_of=KINDS), "a speed (ias, cas, eas, tas or mach)"),
        NeedsAny("total_air_temperature", KINDS, message="A total air temperature gives the static temperature "
                 "through the speed it was read at: give that speed (one of ias, cas, eas, tas, mach)."),
    )

    weight = weight_field("Weight", required=True)
    wing_area = wing_area_field("Wing reference area [m2]. With `cl_max`; not with `reference`.")
    cl_max = Number(minimum=0.0, exclusive_minimum=True, metadata={
        "description": "Maximum lift coefficient CLmax of the configuration [-]. With `wing_area`; not with "
                       "`reference`.", "example": 1.6})
    reference = ma.fields.Nested(StallReferenceSchema, metadata={
        "description": "Instead of `wing_area` and `cl_max`: a stall speed from the flight manual, turned into EAS "
                       "at its altitude, scaled by sqrt(weight / reference weight). Arrays here broadcast against "
                       "the points (length 1 or the number of points).",
        "example": {"stall_speed": 108, "weight": 22000, "altitude": 0}})
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field()
    load_factor = LOAD_FACTOR
    bank_angle = BANK_ANGLE
    speed_factors = SpeedFactors(metadata={
        "description": "Multiples of the stall speed at this load factor, e.g. [1.13, 1.23, 1.3] (not a grid axis; "
                       f"at most {MAX_SPEED_FACTORS}); each gives an entry of `multiples`. Each factor adds a row "
                       "per point to the answer, so the point limit (QBAR_MAX_POINTS) counts points x (1 + the "
                       "number of factors).", "example": [1.13, 1.3]})
    ias = speed_field("ias", "Optional, for `margin`: one speed of ias, cas, eas, tas, mach.")
    cas = speed_field("cas", "Optional, for `margin`.")
    eas = speed_field("eas", "Optional, for `margin`.")
    tas = speed_field("tas", "Optional, for `margin`.")
    mach = mach_field("Optional, for `margin`.")
    calibration = calibration_field()

    def points_worth(self, data: dict, points: int) -> tuple[int, str]:
        """Each speed factor adds a row per point to the answer (an entry of `multiples`): the point limit
        counts points x (1 + the number of speed factors), from the raw list's length, before anything is read."""
        factors = ranges.length(data["speed_factors"]) if "speed_factors" in data else 0
        if not factors:
            return points, ""
        return points * (1 + factors), f"{points} points x (1 + {factors} speed factors)"


class LiftStallSpeedsOut(ma.Schema):
    eas = quantity_out("Stall speed at this load factor, Vs1g x sqrt(n), as an equivalent airspeed [kt].", "speed")
    cas = quantity_out("The same stall speed as a calibrated airspeed [kt].", "speed")
    tas = quantity_out("The same stall speed as a true airspeed [kt].", "speed")
    mach = ratio_out("The same stall speed as a Mach number [-].")


class LiftMultipleOut(ma.Schema):
    factor = ratio_out("The speed factor k [-].")
    eas = quantity_out("k times the stall speed (EAS) [kt].", "speed")
    cas = quantity_out("The same speed as a calibrated airspeed [kt].", "speed")
    tas = quantity_out("The same speed as a true airspeed [kt].", "speed")
    mach = ratio_out("The same speed as a Mach number [-].")
    cl_fraction = ratio_out("CL / CLmax at that speed and load factor, 1 / k^2 [-].")


class LiftMarginOut(ma.Schema):
    stall_load_factor = ratio_out("The load factor at which the given speed is the stall speed, (V / Vs1g)^2 "
                                  "(speeds as EAS) [-].")
    max_bank_angle = quantity_out("The steepest level, coordinated turn at the given speed before the stall "
                                  "[deg]; null (with a warning) where the speed is below the 1 g stall speed.", "angle")
    cl_fraction = ratio_out("CL / CLmax at the given speed and the requested load factor [-].")


StallResponse = response_schema(LiftStallRequest, fields={
    "stall": ma.fields.Nested(LiftStallSpeedsOut, metadata={"description": "The stall speed at the load factor."}),
    "multiples": ma.fields.List(ma.fields.Nested(LiftMultipleOut), metadata={
        "description": "One entry per speed factor, in the order given (with `speed_factors`)."}),
    "margin": ma.fields.Nested(LiftMarginOut, metadata={"description": "With a speed: the margins at that speed."})})


def _stall_eas(inputs: Inputs, state: Air, n):
    """Stall speeds (EAS) at 1 g and at load factor n [m/s]."""
    W = inputs.si("weight")
    if "reference" not in inputs:
        S, cl_max = inputs.si("wing_area"), inputs.si("cl_max")
        return lf.stall_eas(W, S, cl_max), lf.stall_eas(W, S, cl_max, n)
    H_ref = block(inputs, "reference", "altitude")
    if H_ref is None:
        H_ref = state.H
    else:
        air.check_altitude_range(H_ref, "reference/altitude")
    # CAS -> EAS depends on the static pressure only, so the standard day at the reference altitude serves.
    ref_eas = Speeds(Air(H_ref), "cas", block(inputs, "reference", "stall_speed"), given=False).eas
    ref_eas = require("stall", ref_eas, "the reference stall speed has no EAS at its altitude.")
    W_ref = block(inputs, "reference", "weight")
    return lf.scale_stall_eas(ref_eas, W, W_ref), lf.scale_stall_eas(ref_eas, W, W_ref, n)


def _speed_values(speeds: Speeds, output: str) -> dict:
    """EAS, CAS, TAS and Mach of a stall speed (or a multiple): SI values and dimension."""
    def kind(name):
        return require(output, getattr(speeds, name), f"no {name} for this speed here.")
    return {"eas": (kind("eas"), "speed"), "cas": (kind("cas"), "speed"), "tas": (kind("tas"), "speed"),
            "mach": (kind("mach"), None)}


@blp.compute("/lift/stall", LiftStallRequest, examples.LIFT_STALL, StallResponse, operation_id="computeStallSpeeds")
def stall(inputs):
    """Stall speeds under load, their multiples, and the margins at a speed

    The stall speed at the load factor (or level-turn bank angle), Vs1g x sqrt(n), as EAS, CAS, TAS and Mach at
    the altitude and temperature: from the weight, wing area and CLmax, or from a flight-manual reference stall
    speed (CAS at a weight and altitude) scaled by sqrt(W / W_ref). `speed_factors` give multiples of it (applied
    to the EAS, with CL/CLmax = 1/k^2). With a speed of any kind, `margin` gives the load factor at which that
    speed is the stall speed, the steepest level turn there, and CL/CLmax. A dew point or relative humidity makes
    the air moist (the density, so the TAS of each EAS, at the virtual temperature); a total air temperature read
    at the given speed gives the static temperature. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    kind = given_speed(inputs)
    # the given speed first: with a total air temperature, the static temperature follows from it
    given = (Speeds(state, kind, inputs.si(kind), inputs.get("calibration"))
             if kind is not None and (inputs.wants("margin") or state.tat is not None) else None)
    n = load_factor(inputs)
    vs_1g, vs_n = _stall_eas(inputs, state, n)
    if inputs.wants("stall"):
        values = _speed_values(Speeds(state, "eas", vs_n, given=False), "stall")
        result.add_tree("stall", {key: Leaf(*value) for key, value in values.items()})
    factors = inputs.get("speed_factors")
    if factors is not None and inputs.wants("multiples"):
        k = factors.reshape((-1,) + (1,) * len(result.shape))
        values = _speed_values(Speeds(state, "eas", k * vs_n, given=False), "multiples")  # one row per factor
        fractions = lf.cl_fraction(factors)
        result.add_tree("multiples", [
            {"factor": Leaf(factors[i]), **{key: Leaf(rows[i], dim) for key, (rows, dim) in values.items()},
             "cl_fraction": Leaf(fractions[i])}
            for i in range(factors.size)])
        if any_true(factors < 1.0):
            result.warn("multiples", "A speed factor below 1 is below the stall speed: CL/CLmax is above 1 there.")
    if given is not None and inputs.wants("margin"):
        eas = require("margin", given.eas, f"the {kind} given has no EAS here.")
        stall_n = lf.stall_load_factor(eas, vs_1g)
        fraction = lf.cl_fraction(eas / vs_n)
        if any_true(fraction > 1.0):
            result.warn("margin.cl_fraction", "The speed is below the stall speed at this load factor: CL/CLmax "
                                              "is above 1.", fraction > 1.0)
        result.add_tree("margin", {
            "stall_load_factor": Leaf(stall_n, None),
            "max_bank_angle": Leaf(result.null_where("margin.max_bank_angle", lf.bank_from_load_factor(stall_n),
                                                     "The speed is below the 1 g stall speed: no level turn."),
                                   "angle"),
            "cl_fraction": Leaf(fraction, None),
        })
    return result.response()
