"""Request and response schemas of the lift endpoints (/v1/lift/solve, /v1/lift/stall, /v1/lift/curve).

The wing's lift-curve inputs are written once, as field factories, and used both at the top level of
/v1/lift/curve (where they are grid axes) and in the ``wing`` block of /v1/lift/solve. Checks that
concern several fields at once (one of two alternatives, what a solve needs) live here too, as schema
validators, so that they run with the other input checks and point at the fields concerned.
"""

from __future__ import annotations

import marshmallow as ma

from service.api import air
from service.api.examples import TQ62_WING
from service.api.fields import Number, Quantity, any_true, parse_numbers, what_to_give
from service.api.inputs import ComputeSchema, exactly_one, needs, none_of, not_together, output_needs, outputs_field
from service.api.schemas import FlagOut, LabelOut, quantity_out, ratio_out, response_schema
from service.api.speeds import KINDS, SPEED_MAX_KT, calibration_field, mach_field, speed_field

#: What /v1/lift/solve can solve for.
UNKNOWNS = ("cl", "speed", "weight", "wing_area", "load_factor", "altitude")
#: The most speed factors one stall request may ask for (each multiplies the size of the answer).
MAX_SPEED_FACTORS = 20
#: Above this Mach number the DATCOM lift-curve slope is flagged with a warning [-].
DATCOM_MACH_WARNING = 0.7

# --- Field factories ---------------------------------------------------------------------------------


def weight_field(description: str, required: bool = False, example=21000) -> Quantity:
    return Quantity("weight", required=required, minimum=0.0, exclusive_minimum=True, metadata={
        "description": f"{description} [kg]: a mass (kg, t, lb; times g0 = 9.80665 m/s2) or a force (N, kN, "
                       "lbf), told apart by the unit.", "example": example})


def wing_area_field(description: str = "Wing reference area [m2].") -> Quantity:
    return Quantity("area", minimum=0.0, exclusive_minimum=True, metadata={"description": description, "example": 61})


def load_factor_field() -> Number:
    return Number(minimum=0.0, exclusive_minimum=True, metadata={
        "description": "Load factor n = lift / weight [-]. Not with `bank_angle`; default 1 when neither is given.",
        "example": 1.5})


def bank_angle_field() -> Quantity:
    return Quantity("angle", minimum=0.0, maximum=90.0, exclusive_maximum=True, metadata={
        "description": "Bank angle of a level, coordinated turn [deg], 0 <= bank < 90; sets the load factor "
                       "n = 1 / cos(bank). Not with `load_factor`.", "example": [30, 45]})


def cl_max_field() -> Number:
    return Number(minimum=0.0, exclusive_minimum=True, metadata={
        "description": "Maximum lift coefficient CLmax of the configuration [-].", "example": 1.6})


def aspect_ratio_field() -> Number:
    return Number(required=True, minimum=0.0, exclusive_minimum=True, metadata={
        "description": "Wing aspect ratio A = span^2 / area [-].", "example": 11})


def sweep_field() -> Quantity:
    return Quantity("angle", required=True, minimum=-90.0, maximum=90.0, exclusive_minimum=True,
                    exclusive_maximum=True, metadata={
                        "description": "Sweep of the wing's half-chord line [deg], between -90 and 90.",
                        "example": 0})


def airfoil_efficiency_field() -> Number:
    return Number(minimum=0.0, exclusive_minimum=True, metadata={
        "description": "Airfoil efficiency kappa: the section's lift-curve slope divided by 2 pi per rad [-]. "
                       "Default 1 (thin-airfoil theory). Not with `airfoil_lift_slope`.", "example": 0.95})


def airfoil_lift_slope_field() -> Quantity:
    return Quantity("lift_slope", minimum=0.0, exclusive_minimum=True, metadata={
        "description": "The section's (two-dimensional) low-speed lift-curve slope [1/rad]; kappa = slope / 2 pi. "
                       "Not with `airfoil_efficiency`.", "example": {"value": 0.105, "unit": "1/deg"}})


def zero_lift_angle_field() -> Quantity:
    return Quantity("angle", minimum=-90.0, maximum=90.0, exclusive_minimum=True, exclusive_maximum=True,
                    metadata={"description": "Angle of attack of zero lift [deg], negative for a cambered section; "
                                             "default 0. CL = lift slope x (angle of attack - zero-lift angle).",
                              "example": -2.5})


class SubsonicMach(Number):
    """A Mach number for the subsonic lift-curve slope: 0 <= M < 1, with the reason in the message."""

    def range_message(self, unit_text="") -> str:
        return ("Must be at least 0 and below 1: the DATCOM lift-curve slope is for subsonic flow only "
                "(its validity fades above Mach 0.7).")


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
            raise ma.ValidationError({int(i): ["Must be above 0."] for i in bad.nonzero()[0][:10]})
        return factors

    def openapi(self):
        return {"type": "array", "items": {"type": "number", "exclusiveMinimum": 0}, "minItems": 1,
                "maxItems": MAX_SPEED_FACTORS}


# --- Cross-field checks ------------------------------------------------------------------------------


def _not_both(data: dict, first: str, second: str, why: str = "") -> None:
    if first in data and second in data:
        message = f"Give either {first} or {second}, not both.{(' ' + why) if why else ''}"
        raise ma.ValidationError({first: [message], second: [message]})


def _selected_needs(data: dict, needs: dict[str, tuple[bool, str]]) -> None:
    """422 on ``outputs`` entries whose inputs are missing: needs = {output: (available, what it needs)}."""
    wanted = data.get("outputs") or ()
    errors = {i: [f"{name!r} needs {needs[name][1]}."] for i, name in enumerate(wanted)
              if name in needs and not needs[name][0]}
    if errors:
        raise ma.ValidationError({"outputs": errors})


class _WingInputs(ma.Schema):
    """Shared check of the lift-curve inputs: one of airfoil_efficiency and airfoil_lift_slope."""

    SPEC_RULES = (not_together("airfoil_efficiency", "airfoil_lift_slope"),)

    @ma.validates_schema
    def _one_airfoil_input(self, data, **kwargs):
        _not_both(data, "airfoil_efficiency", "airfoil_lift_slope", "kappa = airfoil_lift_slope / 2 pi.")


class LiftWingSchema(_WingInputs):
    """The wing block of /v1/lift/solve: what is needed for the angle of attack."""

    class Meta:
        unknown = ma.RAISE
        ordered = True

    aspect_ratio = aspect_ratio_field()
    sweep_half_chord = sweep_field()
    airfoil_efficiency = airfoil_efficiency_field()
    airfoil_lift_slope = airfoil_lift_slope_field()
    zero_lift_angle = zero_lift_angle_field()
    cl_max = cl_max_field()


class StallReferenceSchema(ma.Schema):
    """A stall speed from the flight manual, to scale by weight."""

    class Meta:
        unknown = ma.RAISE
        ordered = True

    stall_speed = Quantity("speed", required=True, minimum=0.0, exclusive_minimum=True, maximum=SPEED_MAX_KT, metadata={
        "description": "The 1 g stall speed as a calibrated airspeed (CAS), as the flight manual gives it [kt].",
        "example": 108})
    weight = weight_field("The weight at which `stall_speed` holds", required=True, example=22000)
    altitude = air.altitude_field("Pressure altitude at which `stall_speed` holds [ft] (FL allowed); default the "
                                  "request's pressure altitude.", required=False, example=0)


# --- POST /v1/lift/solve -----------------------------------------------------------------------------

SOLVE_OUTPUTS = {
    "lift": ("force", "Lift L = n W [N]."),
    "weight": ("force", "Weight, as a force [N]."),
    "load_factor": (None, "Load factor n [-]."),
    "bank_angle": ("angle", "Bank angle of the level, coordinated turn with this load factor [deg]; null (with a "
                            "warning) where n < 1."),
    "cl": (None, "Lift coefficient CL [-]."),
    "wing_area": ("area", "Wing reference area [m2]."),
    "wing_loading": ("wing_loading", "Wing loading W / S [N/m2] (kg/m2 and lb/ft2 through output_units)."),
    "dynamic_pressure": ("pressure", "Dynamic pressure q = 1/2 rho TAS^2 = (gamma/2) p M^2 [hPa]."),
    "cas": ("speed", "Calibrated airspeed [kt]."),
    "eas": ("speed", "Equivalent airspeed [kt]."),
    "tas": ("speed", "True airspeed [kt]."),
    "mach": (None, "Mach number [-]."),
    "pressure_altitude": ("altitude", "Pressure altitude [ft]."),
    "density_altitude": ("altitude", "Density altitude [ft]; null (with a warning) outside the model's range."),
    "density": ("density", "Air density [kg/m3]."),
    "angle_of_attack": ("angle", "With `wing`: the angle of attack that gives this CL on the linear lift curve "
                                 "[deg]; null (with a warning) at Mach 1 or above."),
    "beyond_stall": (None, "With `wing.cl_max`: true where CL is above CLmax (the wing would be stalled)."),
}

_SPEED_NOTE = "One speed of ias, cas, eas, tas, mach (none when solving for speed)."


def _solve_rules() -> tuple[dict, ...]:
    """The checks of LiftSolveRequest._check_solve (and of the speed given), as JSON Schema for the spec."""
    unknown_inputs = {"cl": ("cl",), "weight": ("weight",), "wing_area": ("wing_area",),
                      "load_factor": ("load_factor", "bank_angle"), "speed": KINDS, "altitude": ("altitude",)}
    branches = []
    for unknown in UNKNOWNS:  # one branch per unknown: what it needs, what it leaves out
        branch = {"properties": {"solve_for": {"const": unknown}},
                  "required": ["solve_for", *(n for n in ("weight", "wing_area", "cl", "altitude") if n != unknown)],
                  "allOf": [none_of(*unknown_inputs[unknown])]}
        if unknown != "speed":
            branch["allOf"].append(exactly_one(*KINDS))
        if unknown == "altitude":  # a pressure altitude from a speed that fixes it
            branch["allOf"] += [none_of("qnh", "eas"), {"not": {"required": ["altitude_kind"], "properties": {
                "altitude_kind": {"const": "geometric"}}}}]
        branches.append(branch)
    return (not_together("load_factor", "bank_angle"), needs("calibration", "ias"), needs("ias", "calibration"),
            output_needs("angle_of_attack", {"required": ["wing"]}),
            output_needs("beyond_stall", {"required": ["wing"], "properties": {"wing": {"required": ["cl_max"]}}}),
            {"oneOf": branches})


class LiftSolveRequest(ComputeSchema):
    OUTPUTS = tuple(SOLVE_OUTPUTS)
    SPEC_RULES = _solve_rules()

    solve_for = ma.fields.String(required=True, validate=ma.validate.OneOf(UNKNOWNS), error_messages={
        "required": "Missing: name the unknown, one of " + ", ".join(UNKNOWNS) + "."}, metadata={
        "description": "The unknown: one of " + ", ".join(UNKNOWNS) + ". Give every other input and leave this "
                       "one out. `speed` gives every speed kind; `altitude` needs a Mach, TAS or CAS/IAS (at a "
                       "given EAS the lift does not depend on altitude).", "example": "cl"})
    weight = weight_field("Weight")
    wing_area = wing_area_field()
    cl = Number(minimum=0.0, exclusive_minimum=True, metadata={"description": "Lift coefficient CL [-].",
                                                                "example": 0.6})
    ias = speed_field("ias", _SPEED_NOTE)
    cas = speed_field("cas", _SPEED_NOTE)
    eas = speed_field("eas", _SPEED_NOTE)
    tas = speed_field("tas", _SPEED_NOTE)
    mach = mach_field(_SPEED_NOTE)
    calibration = calibration_field()
    altitude = air.altitude_field(
        "Altitude [ft]: a pressure altitude (FL allowed), or the indicated altitude with `qnh`, or a geometric height "
        "with `altitude_kind: geometric`. Required unless solving for altitude.", required=False)
    isa_deviation = air.isa_deviation_field()
    temperature = air.temperature_field()
    qnh = air.qnh_field()
    altitude_kind = air.altitude_kind_field()
    load_factor = load_factor_field()
    bank_angle = bank_angle_field()
    wing = ma.fields.Nested(LiftWingSchema, metadata={
        "description": "Optional: the wing's lift-curve inputs (as for POST /v1/lift/curve, with the Mach number "
                       "of the flight condition); the answer then adds `angle_of_attack`, and `beyond_stall` with "
                       "`cl_max`. Arrays here broadcast against the points (length 1 or the number of points).",
        "example": TQ62_WING})
    outputs = outputs_field(tuple(SOLVE_OUTPUTS))

    @ma.validates_schema
    def _check_solve(self, data, **kwargs):
        unknown = data.get("solve_for")
        _not_both(data, "load_factor", "bank_angle")
        _not_both(data, "isa_deviation", "temperature")
        speeds = [k for k in KINDS if k in data]
        errors: dict = {}
        given = {"cl": ("cl",), "weight": ("weight",), "wing_area": ("wing_area",),
                 "load_factor": ("load_factor", "bank_angle"), "speed": KINDS, "altitude": ("altitude",)}[unknown]
        for name in given:
            if name in data:
                errors[name] = [f"{name} is given, but solve_for is {unknown!r}: leave out the unknown."]
        if unknown == "altitude":
            if "qnh" in data:
                errors["qnh"] = ["QNH corrects a given altitude; solving for altitude gives a pressure altitude. "
                                 "Leave qnh out."]
            if data.get("altitude_kind") == "geometric":
                errors["altitude_kind"] = ["Solving for altitude gives a pressure altitude; leave out altitude_kind."]
        needed = [n for n in ("weight", "wing_area", "cl", "altitude") if n != unknown and n not in data]
        for name in needed:
            errors[name] = [f"{what_to_give(self.fields[name], name)} Needed to solve for {unknown}."]
        if unknown != "speed" and not speeds:
            errors["_schema"] = [f"Missing: one speed of {', '.join(KINDS)}, needed to solve for {unknown}."]
        if "calibration" in data and "ias" not in data and "calibration" not in errors:
            errors["calibration"] = ["The calibration converts an ias, and this request gives none: leave it out."]
        if unknown == "altitude" and "eas" in data:
            errors["eas"] = ["At a given EAS the dynamic pressure is 1/2 rho0 EAS^2 at every altitude, so the lift "
                             "equation does not fix the altitude. Give a Mach number, TAS or CAS instead."]
        if errors:
            raise ma.ValidationError(errors)
        wing = data.get("wing") or {}
        _selected_needs(data, {"angle_of_attack": ("wing" in data, "the `wing` block"),
                               "beyond_stall": ("cl_max" in wing, "`wing.cl_max`")})


SolveResponse = response_schema("LiftSolveResponse", {
    "solved_for": LabelOut(UNKNOWNS, metadata={"description": "The unknown that was solved for (always present)."}),
    **{name: (quantity_out(desc) if dim else (FlagOut(metadata={"description": desc}) if name == "beyond_stall"
                                               else ratio_out(desc)))
       for name, (dim, desc) in SOLVE_OUTPUTS.items()},
}, inputs=LiftSolveRequest)


# --- POST /v1/lift/stall -----------------------------------------------------------------------------

STALL_OUTPUTS = ("stall", "multiples", "margin")


class LiftStallRequest(ComputeSchema):
    OUTPUTS = STALL_OUTPUTS
    SPEC_RULES = (  # _check_stall and the speed for the margin, for the spec
        not_together("load_factor", "bank_angle"),
        {"oneOf": [{"required": ["wing_area", "cl_max"], "not": {"required": ["reference"]}},
                   {"required": ["reference"], **none_of("wing_area", "cl_max")}]},
        not_together(*KINDS), needs("calibration", "ias"), needs("ias", "calibration"),
        output_needs("multiples", {"required": ["speed_factors"]}),
        output_needs("margin", {"anyOf": [{"required": [kind]} for kind in KINDS]}),
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
    altitude = air.altitude_field(
        "Altitude [ft]: a pressure altitude (FL allowed), or the indicated altitude with `qnh`, or a geometric height "
        "with `altitude_kind: geometric`.")
    isa_deviation = air.isa_deviation_field()
    temperature = air.temperature_field()
    qnh = air.qnh_field()
    altitude_kind = air.altitude_kind_field()
    load_factor = load_factor_field()
    bank_angle = bank_angle_field()
    speed_factors = SpeedFactors(metadata={
        "description": "Multiples of the stall speed at this load factor, e.g. [1.13, 1.23, 1.3] (not a grid axis; "
                       f"at most {MAX_SPEED_FACTORS}); each gives an entry of `multiples`.", "example": [1.13, 1.3]})
    ias = speed_field("ias", "Optional, for `margin`: one speed of ias, cas, eas, tas, mach.")
    cas = speed_field("cas", "Optional, for `margin`.")
    eas = speed_field("eas", "Optional, for `margin`.")
    tas = speed_field("tas", "Optional, for `margin`.")
    mach = mach_field("Optional, for `margin`.")
    calibration = calibration_field()
    outputs = outputs_field(STALL_OUTPUTS)

    @ma.validates_schema
    def _check_stall(self, data, **kwargs):
        _not_both(data, "load_factor", "bank_angle")
        if "reference" in data:
            errors = {name: ["Give either wing_area and cl_max, or reference, not both."]
                      for name in ("wing_area", "cl_max") if name in data}
        else:
            errors = {name: ["Missing: give wing_area and cl_max, or a reference stall speed (reference)."]
                      for name in ("wing_area", "cl_max") if name not in data}
        if "calibration" in data and "ias" not in data:
            errors["calibration"] = ["The calibration converts an ias, and this request gives none: leave it out."]
        if errors:
            raise ma.ValidationError(errors)
        _selected_needs(data, {"multiples": ("speed_factors" in data, "`speed_factors`"),
                               "margin": (any(k in data for k in KINDS), "a speed (ias, cas, eas, tas or mach)")})


class LiftStallSpeedsOut(ma.Schema):
    eas = quantity_out("Stall speed at this load factor, Vs1g x sqrt(n), as an equivalent airspeed [kt].")
    cas = quantity_out("The same stall speed as a calibrated airspeed [kt].")
    tas = quantity_out("The same stall speed as a true airspeed [kt].")
    mach = ratio_out("The same stall speed as a Mach number [-].")


class LiftMultipleOut(ma.Schema):
    factor = ratio_out("The speed factor k [-].")
    eas = quantity_out("k times the stall speed (EAS) [kt].")
    cas = quantity_out("The same speed as a calibrated airspeed [kt].")
    tas = quantity_out("The same speed as a true airspeed [kt].")
    mach = ratio_out("The same speed as a Mach number [-].")
    cl_fraction = ratio_out("CL / CLmax at that speed and load factor, 1 / k^2 [-].")


class LiftMarginOut(ma.Schema):
    stall_load_factor = ratio_out("The load factor at which the given speed is the stall speed, (V / Vs1g)^2 "
                                  "(speeds as EAS) [-].")
    max_bank_angle = quantity_out("The steepest level, coordinated turn at the given speed before the stall "
                                  "[deg]; null (with a warning) where the speed is below the 1 g stall speed.")
    cl_fraction = ratio_out("CL / CLmax at the given speed and the requested load factor [-].")


StallResponse = response_schema("LiftStallResponse", {
    "stall": ma.fields.Nested(LiftStallSpeedsOut, metadata={"description": "The stall speed at the load factor."}),
    "multiples": ma.fields.List(ma.fields.Nested(LiftMultipleOut), metadata={
        "description": "One entry per speed factor, in the order given (with `speed_factors`)."}),
    "margin": ma.fields.Nested(LiftMarginOut, metadata={"description": "With a speed: the margins at that speed."}),
}, inputs=LiftStallRequest)


# --- POST /v1/lift/curve -----------------------------------------------------------------------------

CURVE_OUTPUTS = {
    "lift_slope": ("lift_slope", "Lift-curve slope of the wing, dCL/dalpha [1/rad] (1/deg through output_units)."),
    "cl": (None, "Lift coefficient at `angle_of_attack` (or the `cl` given) [-]."),
    "angle_of_attack": ("angle", "Angle of attack for `cl` (or the `angle_of_attack` given) [deg]."),
    "beyond_stall": (None, "With `cl_max`: true where CL is above CLmax (beyond the linear lift curve)."),
}


_POINT = {"anyOf": [{"required": ["angle_of_attack"]}, {"required": ["cl"]}]}


class LiftCurveRequest(_WingInputs, ComputeSchema):
    OUTPUTS = tuple(CURVE_OUTPUTS)
    SPEC_RULES = _WingInputs.SPEC_RULES + (  # _check_curve, for the spec
        not_together("angle_of_attack", "cl"), output_needs("cl", _POINT), output_needs("angle_of_attack", _POINT),
        output_needs("beyond_stall", {"required": ["cl_max"], **_POINT}),
    )

    aspect_ratio = aspect_ratio_field()
    sweep_half_chord = sweep_field()
    mach = SubsonicMach(required=True, minimum=0.0, maximum=1.0, exclusive_maximum=True, metadata={
        "description": "Free-stream Mach number [-], 0 <= M < 1 (subsonic; a warning above 0.7).", "example": 0.3})
    airfoil_efficiency = airfoil_efficiency_field()
    airfoil_lift_slope = airfoil_lift_slope_field()
    zero_lift_angle = zero_lift_angle_field()
    angle_of_attack = Quantity("angle", minimum=-90.0, maximum=90.0, exclusive_minimum=True, exclusive_maximum=True,
                               metadata={"description": "Angle of attack [deg] -> `cl`. Not with `cl`.",
                                         "example": [0, 4, 8]})
    cl = Number(metadata={"description": "Lift coefficient [-] -> `angle_of_attack`. Not with `angle_of_attack`.",
                          "example": 0.9})
    cl_max = cl_max_field()
    outputs = outputs_field(tuple(CURVE_OUTPUTS))

    @ma.validates_schema
    def _check_curve(self, data, **kwargs):
        _not_both(data, "angle_of_attack", "cl")
        point = "angle_of_attack" in data or "cl" in data
        _selected_needs(data, {
            "cl": (point, "`angle_of_attack` or `cl`"),
            "angle_of_attack": (point, "`angle_of_attack` or `cl`"),
            "beyond_stall": (point and "cl_max" in data, "`cl_max` and `angle_of_attack` or `cl`"),
        })


CurveResponse = response_schema("LiftCurveResponse", {
    name: (quantity_out(desc) if dim else (FlagOut(metadata={"description": desc}) if name == "beyond_stall"
                                           else ratio_out(desc)))
    for name, (dim, desc) in CURVE_OUTPUTS.items()
}, inputs=LiftCurveRequest)
