"""POST /v1/lift/curve: the wing's lift-curve slope (DATCOM), and CL <-> angle of attack."""

from __future__ import annotations

import numpy as np

from service.api import examples
from service.api.fields import Number, Quantity
from service.api.inputs import ComputeSchema
from service.api.lift.common import (
    AIRFOIL_EFFICIENCY,
    AIRFOIL_LIFT_SLOPE,
    ASPECT_RATIO,
    BEYOND_RIGHT_ANGLE,
    CL_MAX,
    DATCOM_MACH_WARNING,
    ONE_AIRFOIL_INPUT,
    RIGHT_ANGLE,
    SWEEP,
    TRANSONIC,
    ZERO_LIFT_ANGLE,
    blp,
    kappa,
    output_needs,
)
from service.api.masks import any_true
from service.api.outputs import Result
from service.api.rules import Given, NotTogether
from service.api.schemas import FlagOut, response_schema
from service.api.values import require
from service.physics import wing

CURVE_OUTPUTS = {
    "lift_slope": ("lift_slope", "Lift-curve slope of the wing, dCL/dalpha [1/rad] (1/deg through output_units)."),
    "cl": (None, "Lift coefficient at `angle_of_attack` (or the `cl` given) [-]."),
    "angle_of_attack": ("angle", "Angle of attack for `cl` (or the `angle_of_attack` given) [deg]."),
    "beyond_stall": (None, "With `cl_max`: true where CL is above CLmax (beyond the linear lift curve)."),
}


class SubsonicMach(Number):
    """A Mach number for the subsonic lift-curve slope: 0 <= M < 1, with the reason in the message."""

    def range_message(self, unit_text="") -> str:
        return ("Must be at least 0 and below 1: the DATCOM lift-curve slope is for subsonic flow only "
                "(its validity fades above Mach 0.7).")


_POINT = ("angle_of_attack", "cl")
_POINT_TEXT = "`angle_of_attack` or `cl`"


class LiftCurveRequest(ComputeSchema):
    OUTPUTS = CURVE_OUTPUTS
    RULES = (
        ONE_AIRFOIL_INPUT, NotTogether(*_POINT),
        output_needs("cl", Given(any_of=_POINT), _POINT_TEXT),
        output_needs("angle_of_attack", Given(any_of=_POINT), _POINT_TEXT),
        output_needs("beyond_stall", Given("cl_max", any_of=_POINT), f"`cl_max` and {_POINT_TEXT}"),
    )

    aspect_ratio = ASPECT_RATIO
    sweep_half_chord = SWEEP
    mach = SubsonicMach(required=True, minimum=0.0, maximum=1.0, exclusive_maximum=True, metadata={
        "description": "Free-stream Mach number [-], 0 <= M < 1 (subsonic; a warning above 0.7).", "example": 0.3})
    airfoil_efficiency = AIRFOIL_EFFICIENCY
    airfoil_lift_slope = AIRFOIL_LIFT_SLOPE
    zero_lift_angle = ZERO_LIFT_ANGLE
    angle_of_attack = Quantity("angle", minimum=-90.0, maximum=90.0, exclusive_minimum=True, exclusive_maximum=True,
                               metadata={"description": "Angle of attack [deg] -> `cl`. Not with `cl`.",
                                         "example": [0, 4, 8]})
    cl = Number(metadata={"description": "Lift coefficient [-] -> `angle_of_attack`. Not with `angle_of_attack`.",
                          "example": 0.9})
    cl_max = CL_MAX


CurveResponse = response_schema(LiftCurveRequest, fields={
    "beyond_stall": FlagOut(metadata={"description": CURVE_OUTPUTS["beyond_stall"][1]})})


@blp.compute("/lift/curve", LiftCurveRequest, examples.LIFT_CURVE, CurveResponse, operation_id="computeLiftCurve")
def curve(inputs):
    """The wing's lift-curve slope, and CL <-> angle of attack

    The subsonic lift-curve slope of a finite wing by the DATCOM (Helmbold-Diederich-Polhamus) formula
    CLa = 2 pi A / (2 + sqrt(4 + (A beta / kappa)^2 (1 + tan^2(sweep) / beta^2))), beta = sqrt(1 - M^2), and on the
    linear lift curve CL = CLa (alpha - alpha0) the CL at an angle of attack or the angle of attack for a CL. A CL
    above `cl_max` is flagged in `beyond_stall`. Mach 1 and above is refused; above Mach 0.7 a warning says the
    formula's validity fades. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    mach = inputs.si("mach")
    slope = wing.lift_slope(inputs.si("aspect_ratio"), inputs.si("sweep_half_chord"), mach,
                            kappa(inputs.si("airfoil_efficiency"), inputs.si("airfoil_lift_slope")))
    if any_true(mach > DATCOM_MACH_WARNING):
        result.warn("lift_slope", TRANSONIC, mach > DATCOM_MACH_WARNING)
    alpha0 = inputs.si("zero_lift_angle", 0.0)
    values = {"lift_slope": slope}
    if "angle_of_attack" in inputs:
        values["angle_of_attack"] = inputs.si("angle_of_attack")
        if inputs.wants("cl") or inputs.wants("beyond_stall"):
            values["cl"] = wing.cl_from_angle(values["angle_of_attack"], slope, alpha0)
    elif "cl" in inputs:
        values["cl"] = inputs.si("cl")
        if inputs.wants("angle_of_attack"):
            alpha = wing.angle_from_cl(values["cl"], slope, alpha0)
            values["angle_of_attack"] = require("angle_of_attack", np.where(np.abs(alpha) < RIGHT_ANGLE, alpha,
                                                                             np.nan), BEYOND_RIGHT_ANGLE)
    if "cl" in values and "cl_max" in inputs:
        values["beyond_stall"] = values["cl"] > inputs.si("cl_max")
    for name in inputs.outputs:
        if name in values:
            result.add(name, values[name])
    return result.response()
