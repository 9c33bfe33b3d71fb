"""POST /v1/lift/solve: the lift equation n W = q S CL solved for any one unknown, with every related quantity.

The solve is a sequence of steps (:class:`Solution`): the inputs given, the dynamic pressure, air and speeds,
then the unknown; each output is then one function of the solution (``_OUTPUTS``), run only when asked for.
"""

from __future__ import annotations

from functools import partial

import marshmallow as ma
import numpy as np

from service.api import air, air_fields, examples
from service.api.examples import TQ62_WING
from service.api.fields import Number
from service.api.inputs import ComputeSchema, Inputs
from service.api.lift.common import (
    AIRFOIL_EFFICIENCY,
    AIRFOIL_LIFT_SLOPE,
    ASPECT_RATIO,
    BANK_ANGLE,
    BEYOND_RIGHT_ANGLE,
    CL_MAX,
    DATCOM_MACH_WARNING,
    LOAD_FACTOR,
    LOAD_FACTOR_OR_BANK,
    ONE_AIRFOIL_INPUT,
    RIGHT_ANGLE,
    SUPERSONIC,
    SWEEP,
    TRANSONIC,
    ZERO_LIFT_ANGLE,
    block,
    blp,
    kappa,
    load_factor,
    output_needs,
    secondary,
    weight_field,
    wing_area_field,
)
from service.api.masks import any_true
from service.api.outputs import Result
from service.api.rule_schema import Jointly, RuleSchema
from service.api.rules import Cases, Given, Never, NoneOf
from service.api.schemas import FlagOut, LabelOut, response_schema
from service.api.speeds import (
    CALIBRATION_NEEDS_IAS,
    IAS_NEEDS_CALIBRATION,
    KINDS,
    SPEED_OUTPUTS,
    Speeds,
    calibration_field,
    given_speed,
    one_speed,
    speed_fields,
)
from service.api.values import require
from service.physics import atmosphere as atm
from service.physics import lift as lf
from service.physics import total_temperature as tt
from service.physics import wing
from service.physics.constants import H_MAX, H_MIN
from service.units import from_si

#: What /v1/lift/solve can solve for.
UNKNOWNS = ("cl", "speed", "weight", "wing_area", "load_factor", "altitude")
_MODEL_RANGE = (f"the model's range ({from_si(H_MIN, 'altitude', 'ft'):.0f} ft to "
                f"{from_si(H_MAX, 'altitude', 'ft'):.0f} ft pressure altitude)")

SOLVE_OUTPUTS = {
    "lift": ("force", "Lift L = n W [N]."),
    "weight": ("weight", "Weight, as a force [N], or as a mass (weight / g0) when output_units names `mass`."),
    "load_factor": (None, "Load factor n [-]."),
    "bank_angle": ("angle", "Bank angle of the level, coordinated turn with this load factor [deg]; null (with a "
                            "warning) where n < 1."),
    "cl": (None, "Lift coefficient CL [-]."),
    "wing_area": ("area", "Wing reference area [m2]."),
    "wing_loading": ("wing_loading", "Wing loading W / S [N/m2] (kg/m2 and lb/ft2 through output_units)."),
    "dynamic_pressure": ("pressure", "Dynamic pressure q = 1/2 rho TAS^2 = (gamma/2) p M^2 [hPa]."),
    **SPEED_OUTPUTS,
    "pressure_altitude": ("altitude", "Pressure altitude [ft]."),
    "density_altitude": ("altitude", "Density altitude [ft]; null (with a warning) outside the model's range."),
    "density": ("density", "Air density (at the virtual temperature with `dew_point` or `relative_humidity`) [kg/m3]."),
    "total_air_temperature": ("temperature", "Total air temperature a probe of recovery factor r reads at this "
                                             "speed, T (1 + r (gamma-1)/2 M^2) [degC]."),
    "ram_rise": ("temperature_difference", "Ram rise: the total air temperature minus the static temperature [K]."),
    "angle_of_attack": ("angle", "With `wing`: the angle of attack that gives this CL on the linear lift curve "
                                 "[deg]; null (with a warning) at Mach 1 or above."),
    "beyond_stall": (None, "With `wing.cl_max`: true where CL is above CLmax (the wing would be stalled)."),
}

#: What the lift equation needs besides a speed; each unknown is one of them, or the speed, or n.
LIFT_INPUTS = ("weight", "wing_area", "cl", "altitude")
#: Unknown -> the inputs that give it (left out when solving for it).
GIVEN_BY = {"cl": ("cl",), "weight": ("weight",), "wing_area": ("wing_area",),
            "load_factor": ("load_factor", "bank_angle"), "speed": KINDS, "altitude": ("altitude",)}


def _dry_for_altitude(name: str) -> str:
    """Why an altitude solve from a TAS takes no humidity (the message on ``name``, the field given)."""
    return ("Solving for altitude from a TAS takes dry air: the pressure altitude follows from the density the lift "
            "needs through the dry-air gas law, which is not inverted for moist air at an altitude still unknown. "
            f"Leave out {name}, or give a Mach number or CAS (the altitude then follows from the pressure alone).")


def _solve_case(unknown: str):
    """(inputs needed, message when missing, rules) of solving for ``unknown``."""
    rules = [NoneOf(*GIVEN_BY[unknown], message=lambda name: f"{name} is given, but solve_for is {unknown!r}: "
                                                             "leave out the unknown.")]
    if unknown != "speed":
        rules.append(one_speed(f"Missing: one speed of {', '.join(KINDS)}, needed to solve for {unknown}."))
    if unknown == "altitude":  # a pressure altitude from a speed that fixes it
        rules += [NoneOf("qnh", "eas", message={
            "qnh": "QNH corrects a given altitude; solving for altitude gives a pressure altitude. Leave qnh out.",
            "eas": "At a given EAS the dynamic pressure is 1/2 rho0 EAS^2 at every altitude, so the lift equation "
                   "does not fix the altitude. Give a Mach number, TAS or CAS instead."}),
                  Never(Given("altitude_kind", value={"altitude_kind": "geometric"}), "altitude_kind",
                        "Solving for altitude gives a pressure altitude; leave out altitude_kind."),
                  Jointly(*(Never(Given("tas", name), name, _dry_for_altitude(name))
                            for name in air_fields.HUMIDITY_FIELDS))]
    needed = tuple(name for name in LIFT_INPUTS if name != unknown)
    return needed, f"Missing: needed to solve for {unknown}.", tuple(rules)


class LiftWingSchema(RuleSchema):
    """The wing block of /v1/lift/solve: what is needed for the angle of attack."""

    RULES = (ONE_AIRFOIL_INPUT,)

    aspect_ratio = ASPECT_RATIO
    sweep_half_chord = SWEEP
    airfoil_efficiency = AIRFOIL_EFFICIENCY
    airfoil_lift_slope = AIRFOIL_LIFT_SLOPE
    zero_lift_angle = ZERO_LIFT_ANGLE
    cl_max = CL_MAX


_SPEED_NOTE = "One speed of ias, cas, eas, tas, mach (none when solving for speed)."


class LiftSolveRequest(ComputeSchema):
    OUTPUTS = SOLVE_OUTPUTS
    RULES = (LOAD_FACTOR_OR_BANK, CALIBRATION_NEEDS_IAS, IAS_NEEDS_CALIBRATION,
             output_needs("angle_of_attack", Given("wing"), "the `wing` block"),
             output_needs("beyond_stall", Given("wing", inside={"wing": Given("cl_max")}), "`wing.cl_max`"),
             Cases("solve_for", {unknown: _solve_case(unknown) for unknown in UNKNOWNS}))

    solve_for = ma.fields.String(required=True, validate=ma.validate.OneOf(UNKNOWNS), error_messages={
        "required": "Missing: name the unknown, one of " + ", ".join(UNKNOWNS) + "."}, metadata={
        "description": "The unknown: one of " + ", ".join(UNKNOWNS) + ". Give every other input and leave this "
                       "one out. `speed` gives every speed kind; `altitude` needs a Mach, TAS or CAS/IAS (at a "
                       "given EAS the lift does not depend on altitude).", "example": "cl"})
    weight = weight_field("Weight")
    wing_area = wing_area_field()
    cl = Number(minimum=0.0, exclusive_minimum=True, metadata={"description": "Lift coefficient CL [-].",
                                                                "example": 0.6})
    ias, cas, eas, tas, mach = speed_fields(_SPEED_NOTE)
    calibration = calibration_field()
    (altitude, isa_deviation, temperature, qnh, altitude_kind, total_air_temperature, recovery_factor, dew_point,
     relative_humidity) = air_fields.every_air_field("Required unless solving for altitude.", required=False)
    load_factor = LOAD_FACTOR
    bank_angle = BANK_ANGLE
    wing = ma.fields.Nested(LiftWingSchema, metadata={
        "description": "Optional: the wing's lift-curve inputs (as for POST /v1/lift/curve, with the Mach number "
                       "of the flight condition); the answer then adds `angle_of_attack`, and `beyond_stall` with "
                       "`cl_max`. Arrays here broadcast against the points (length 1 or the number of points).",
        "example": TQ62_WING})


SolveResponse = response_schema(LiftSolveRequest, fields={
    "solved_for": LabelOut(UNKNOWNS, metadata={"description": "The unknown that was solved for (always present)."}),
    "beyond_stall": FlagOut(metadata={"description": SOLVE_OUTPUTS["beyond_stall"][1]})})


class Solution:
    """n W = q S CL at each point, solved for the request's unknown, step by step [SI].

    After ``__init__``: ``n``, ``W``, ``S``, ``cl``, ``q``, ``air`` (api.air.Air) and ``speeds``
    (api.speeds.Speeds), each property of the air and each speed computed on first use. Where the unknown
    does not exist the request is a 422.
    """

    def __init__(self, inputs: Inputs, result: Result):
        self.inputs, self.result = inputs, result
        unknown = self.unknown = inputs.get("solve_for")
        kind = given_speed(inputs)  # None when solving for speed
        # 1. The inputs given (the unknown is None until step 3).
        self.W, self.S, self.cl = inputs.si("weight"), inputs.si("wing_area"), inputs.si("cl")
        self.n = None if unknown == "load_factor" else load_factor(inputs)
        # 2. The dynamic pressure, the air and the speeds.
        if unknown == "altitude":
            self.q = lf.required_dynamic_pressure(self.W, self.n, self.S, self.cl)
            self.air, self.speeds = self._altitude(kind, inputs.si(kind))
        elif unknown == "speed":
            self.q = lf.required_dynamic_pressure(self.W, self.n, self.S, self.cl)
            eas = require("eas", lf.eas_from_dynamic_pressure(self.q), "the lift equation has no finite speed here.")
            self.air = air.air(inputs)
            self.speeds = Speeds(self.air, "eas", eas, given=False)
        else:
            self.air = air.air(inputs)
            self.speeds = Speeds(self.air, kind, inputs.si(kind), inputs.get("calibration"))
            # 1/2 rho0 EAS^2 needs no Mach number
            self.q = lf.dynamic_pressure_from_eas(self.speeds.eas) if kind in ("eas", "tas") else self.speeds.q
        # 3. The unknown of the lift equation.
        if unknown == "cl":
            self.cl = require("cl", lf.lift_coefficient(self.W, self.n, self.q, self.S),
                              "the lift equation has no finite CL here.")
        elif unknown == "weight":
            self.W = require("weight", lf.weight_supported(self.q, self.S, self.cl, self.n),
                             "the lift equation has no finite weight here.")
        elif unknown == "wing_area":
            self.S = require("wing_area", lf.wing_area_required(self.W, self.n, self.q, self.cl),
                             "the lift equation has no finite wing area here.")
        elif unknown == "load_factor":
            self.n = require("load_factor", lf.load_factor_supported(self.q, self.S, self.cl, self.W),
                             "the lift equation has no finite load factor here.")

    def _altitude(self, kind: str, value):
        """The air and speeds at the pressure altitude where the given speed (Mach, TAS, CAS or IAS) gives
        the q the lift needs."""
        speeds = Speeds(None, kind, value, self.inputs.get("calibration"))  # the Air follows below
        if kind == "mach":
            H = atm.pressure_altitude(lf.pressure_for_mach(self.q, value))
            reason = (f"the static pressure at which this Mach number gives the q the lift needs lies outside "
                      f"{_MODEL_RANGE}.")
        elif kind == "tas":
            rho = lf.density_for_tas(self.q, value)
            if "total_air_temperature" in self.inputs:  # the static temperature from the TAT and the TAS, closed form
                T = tt.static_temperature_from_tas(self.inputs.si("total_air_temperature"), value,
                                                   self.inputs.si("recovery_factor", 1.0))
                H = atm.pressure_altitude(lf.pressure_for_density(rho, T))
            elif "temperature" in self.inputs:  # the gas law gives the pressure at once
                H = atm.pressure_altitude(lf.pressure_for_density(rho, self.inputs.si("temperature")))
            else:
                H = lf.pressure_altitude_for_density(rho, self.inputs.si("isa_deviation", 0.0))
            reason = f"the density at which this TAS gives the q the lift needs lies outside {_MODEL_RANGE}."
        else:
            H = lf.pressure_altitude_for_cas(self.q, speeds.cas)
            reason = (f"no altitude within {_MODEL_RANGE} gives, at this CAS, the dynamic pressure the lift needs: "
                      "at a given CAS q stays close to 1/2 rho0 CAS^2 at every altitude, so the CAS nearly fixes the "
                      "lift by itself.")
            self.result.warn("pressure_altitude", "At a given CAS the dynamic pressure falls only slowly with "
                             "altitude, so this altitude is very sensitive to the inputs: 1 % in weight, CL or speed "
                             "can move it by thousands of feet. Prefer a Mach number or TAS where one is known.")
        speeds.air = air.air_at(self.inputs, require("pressure_altitude", H, reason))
        speeds.check(speeds.air)  # the static temperature from a TAT; the given speed within the range of `mach`
        return speeds.air, speeds

    def speed(self, name: str):
        values = getattr(self.speeds, name)
        if self.unknown == "speed":
            return require(name, values, f"the {name} for this q does not exist here.")
        return secondary(self.result, name, values, f"No {name} for the given speed here.")

    def angle_of_attack(self):
        wing_input = partial(block, self.inputs, "wing")
        slope = wing.lift_slope(wing_input("aspect_ratio"), wing_input("sweep_half_chord"), self.speeds.mach,
                                kappa(wing_input("airfoil_efficiency"), wing_input("airfoil_lift_slope")))
        alpha = wing.angle_from_cl(self.cl, slope, wing_input("zero_lift_angle", 0.0))
        alpha = secondary(self.result, "angle_of_attack", alpha, SUPERSONIC)
        with np.errstate(invalid="ignore"):
            beyond = np.abs(alpha) >= RIGHT_ANGLE
            transonic = self.speeds.mach > DATCOM_MACH_WARNING
        if any_true(beyond):
            alpha = self.result.null_where("angle_of_attack", alpha, BEYOND_RIGHT_ANGLE, beyond)
        if any_true(transonic & np.isfinite(alpha)):
            self.result.warn("angle_of_attack", TRANSONIC, transonic & np.isfinite(alpha))
        return alpha


#: Output name -> its SI values from the Solution, computed only when the output is asked for.
_OUTPUTS = {
    "lift": lambda s: s.n * s.W,
    "weight": lambda s: s.W,
    "load_factor": lambda s: s.n,
    "bank_angle": lambda s: s.result.null_where("bank_angle", lf.bank_from_load_factor(s.n),
                                                "No level turn has a load factor below 1."),
    "cl": lambda s: s.cl,
    "wing_area": lambda s: s.S,
    "wing_loading": lambda s: s.W / s.S,
    "dynamic_pressure": lambda s: s.q,
    **{kind: partial(Solution.speed, name=kind) for kind in SPEED_OUTPUTS},
    "pressure_altitude": lambda s: s.air.H,
    "density_altitude": lambda s: secondary(s.result, "density_altitude", s.air.density_altitude,
                                            "The density altitude lies outside the model's range."),
    "density": lambda s: s.air.rho,
    "angle_of_attack": Solution.angle_of_attack,
    "beyond_stall": lambda s: s.cl > block(s.inputs, "wing", "cl_max"),
    "total_air_temperature": lambda s: s.air.total_air_temperature(s.speeds.mach),
    "ram_rise": lambda s: s.air.total_air_temperature(s.speeds.mach) - s.air.T,
}


def _solve_outputs(inputs: Inputs) -> list[str]:
    """The outputs to write: the selection, without the wing's outputs when the inputs do not give them."""
    wing_block = inputs.get("wing") or {}
    skip = {"angle_of_attack"} if "wing" not in inputs else set()
    if "cl_max" not in wing_block:
        skip.add("beyond_stall")
    return [name for name in inputs.outputs if name not in skip]


@blp.compute("/lift/solve", LiftSolveRequest, examples.LIFT_SOLVE, SolveResponse, operation_id="solveLift")
def solve(inputs):
    """Solve the lift equation for one unknown

    n W = q S CL, solved for `solve_for` (cl, speed, weight, wing_area, load_factor or altitude) from the other
    inputs, with every related quantity filled in: lift, weight, load factor and level-turn bank angle, CL, wing
    area and loading, dynamic pressure, CAS, EAS, TAS, Mach, pressure and density altitude, density, and with a
    `wing` block the angle of attack. Solving for altitude: with a Mach number the pressure altitude follows from
    p = n W / ((gamma/2) M^2 S CL); with a TAS from the density (and the ISA deviation, the temperature or the
    TAT; dry air); with a CAS or IAS by a root find (sensitive to the inputs, with a warning); with an EAS it has
    no answer, since q = 1/2 rho0 EAS^2 at every altitude. A dew point or relative humidity makes the air moist
    (the density at the virtual temperature); a total air temperature gives the static temperature from the speed
    given or found (closed form). The solved-for value must exist at every point (else a 422); other values that
    do not exist are null with a warning. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    solution = Solution(inputs, result)
    result.add_tree("solved_for", solution.unknown)
    for name in _solve_outputs(inputs):
        result.add(name, _OUTPUTS[name](solution))
    return result.response()
