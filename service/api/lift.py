"""POST /v1/lift/solve, /v1/lift/stall and /v1/lift/curve: the lift equation n W = q S CL solved for any
unknown, stall speeds under load with their multiples and margins, and the wing's lift curve.

The schemas are in service.api.lift_schemas; the physics in service.physics.lift and service.physics.wing.
"""

from __future__ import annotations

from functools import cached_property, partial

import numpy as np

from service.api import air, examples
from service.api.air import Air
from service.api.base import COMPUTE_PROBLEMS, Blueprint
from service.api.inputs import Inputs
from service.api.lift_schemas import (
    CURVE_OUTPUTS,
    DATCOM_MACH_WARNING,
    SOLVE_OUTPUTS,
    CurveResponse,
    LiftCurveRequest,
    LiftSolveRequest,
    LiftStallRequest,
    SolveResponse,
    StallResponse,
)
from service.api.masks import any_true
from service.api.outputs import Leaf, Result, require
from service.api.problems import invalid
from service.api.speeds import Speeds, given_speed
from service.physics import atmosphere as atm
from service.physics import lift as lf
from service.physics import wing
from service.physics.constants import H_MAX, H_MIN
from service.units import from_si

blp = Blueprint("lift", __name__, url_prefix="/v1", description=(
    "The lift equation L = n W = q S CL with q = 1/2 rho TAS^2 = 1/2 rho0 EAS^2 = (gamma/2) p M^2: solve it for any "
    "unknown (CL, speed, weight, wing area, load factor, altitude), stall speeds under load factor with multiples "
    "and margins, and the wing's lift-curve slope (DATCOM, Helmbold-Diederich-Polhamus)."))

_RIGHT_ANGLE = 0.5 * np.pi
_MODEL_RANGE = (f"the model's range ({from_si(H_MIN, 'altitude', 'ft'):.0f} ft to "
                f"{from_si(H_MAX, 'altitude', 'ft'):.0f} ft pressure altitude)")
_SUPERSONIC = "No lift-curve slope at Mach 1 or above: the DATCOM formula is for subsonic flow."
_TRANSONIC = (f"Above Mach {DATCOM_MACH_WARNING} the DATCOM lift-curve slope loses accuracy as the flow "
              "approaches transonic; treat the value as an estimate.")
_BEYOND_RIGHT_ANGLE = "The linear lift curve reaches this CL only beyond +/-90 deg angle of attack."


def _secondary(result: Result, name: str, values, message: str):
    """``values`` with null (and a warning) where they are not finite."""
    return result.null_where(name, values, message, ~np.isfinite(values))


def _block(inputs: Inputs, block: str, name: str, default=None):
    """SI values of ``name`` in the nested ``block``: one value, or one per point of the request."""
    value = (inputs.get(block) or {}).get(name)
    if value is None:
        return default
    if not value.is_array:
        return value.si
    if value.size == 1:
        return value.si.reshape(())
    points = int(np.prod(inputs.shape))
    if value.size != points:
        raise invalid({f"/{block}/{name}": f"Array of length {value.size}, but the request has {points} point(s): "
                                           "give one value, or one per point."})
    return value.si


def _load_factor(inputs: Inputs):
    """n from `load_factor`, or from `bank_angle` (level turn), default 1."""
    if "bank_angle" in inputs:
        return lf.load_factor_from_bank(inputs.si("bank_angle"))
    return inputs.si("load_factor", 1.0)


def _kappa(efficiency, section_slope):
    """Airfoil efficiency kappa from itself or from the section's lift slope, default 1."""
    if section_slope is not None:
        return wing.kappa_from_section_slope(section_slope)
    return 1.0 if efficiency is None else efficiency


# --- POST /v1/lift/solve -----------------------------------------------------------------------------


class _Solve:
    """n W = q S CL at each point, solved for the request's unknown; every other quantity on first use [SI]."""

    def __init__(self, inputs: Inputs, result: Result):
        self.inputs = inputs
        self.result = result
        self.unknown = inputs.get("solve_for")
        self.kind = given_speed(inputs)  # None when solving for speed
        # The solved-for value first: where it does not exist the request is a 422.
        getattr(self, {"speed": "speeds", "altitude": "air"}.get(self.unknown, self.unknown))

    def _given(self, name: str):
        return self.inputs.si(name)

    @cached_property
    def weight(self):
        if self.unknown != "weight":
            return self._given("weight")
        return require("weight", lf.weight_supported(self.q, self.wing_area, self.cl, self.load_factor),
                        "the lift equation has no finite weight here.")

    @cached_property
    def wing_area(self):
        if self.unknown != "wing_area":
            return self._given("wing_area")
        return require("wing_area", lf.wing_area_required(self.weight, self.load_factor, self.q, self.cl),
                        "the lift equation has no finite wing area here.")

    @cached_property
    def cl(self):
        if self.unknown != "cl":
            return self._given("cl")
        return require("cl", lf.lift_coefficient(self.weight, self.load_factor, self.q, self.wing_area),
                        "the lift equation has no finite CL here.")

    @cached_property
    def load_factor(self):
        if self.unknown != "load_factor":
            return _load_factor(self.inputs)
        return require("load_factor", lf.load_factor_supported(self.q, self.wing_area, self.cl, self.weight),
                        "the lift equation has no finite load factor here.")

    @cached_property
    def q(self):
        """Dynamic pressure: from the lift when the speed or altitude is unknown, else from the speed."""
        if self.unknown in ("speed", "altitude"):
            return lf.required_dynamic_pressure(self.weight, self.load_factor, self.wing_area, self.cl)
        if self.kind in ("eas", "tas"):  # 1/2 rho0 EAS^2: no Mach number needed
            return lf.dynamic_pressure_from_eas(self.speeds.eas)
        return self.speeds.q

    @cached_property
    def speeds(self) -> Speeds:
        if self.unknown == "altitude":
            return self._altitude_solve()[1]
        if self.unknown == "speed":
            eas = require("eas", lf.eas_from_dynamic_pressure(self.q), "the lift equation has no finite speed here.")
            return Speeds(self.air, "eas", eas)
        return Speeds(self.air, self.kind, self._given(self.kind), self.inputs.get("calibration"))

    @cached_property
    def air(self) -> Air:
        if self.unknown == "altitude":
            return self._altitude_solve()[0]
        return air.air(self.inputs)

    def _altitude_solve(self) -> tuple[Air, Speeds]:
        """The pressure altitude where the given speed gives the q the lift needs (Mach, TAS, CAS or IAS)."""
        kind, value = self.kind, self._given(self.kind)
        speeds = Speeds(None, kind, value, self.inputs.get("calibration"))  # the Air follows below
        if kind == "mach":
            H = atm.pressure_altitude(lf.pressure_for_mach(self.q, value))
            reason = (f"the static pressure at which this Mach number gives the q the lift needs lies outside "
                      f"{_MODEL_RANGE}.")
        elif kind == "tas":
            rho = lf.density_for_tas(self.q, value)
            if "temperature" in self.inputs:  # the gas law gives the pressure at once
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
        self.__dict__["air"], self.__dict__["speeds"] = speeds.air, speeds
        return speeds.air, speeds

    def speed(self, name: str):
        values = getattr(self.speeds, name)
        if self.unknown == "speed":
            return require(name, values, f"the {name} for this q does not exist here.")
        return _secondary(self.result, name, values, f"No {name} for the given speed here.")

    def angle_of_attack(self):
        block = partial(_block, self.inputs, "wing")
        slope = wing.lift_slope(block("aspect_ratio"), block("sweep_half_chord"), self.speeds.mach,
                                _kappa(block("airfoil_efficiency"), block("airfoil_lift_slope")))
        alpha = wing.angle_from_cl(self.cl, slope, block("zero_lift_angle", 0.0))
        alpha = _secondary(self.result, "angle_of_attack", alpha, _SUPERSONIC)
        with np.errstate(invalid="ignore"):
            beyond = np.abs(alpha) >= _RIGHT_ANGLE
            transonic = self.speeds.mach > DATCOM_MACH_WARNING
        if any_true(beyond):
            alpha = self.result.null_where("angle_of_attack", alpha, _BEYOND_RIGHT_ANGLE, beyond)
        if any_true(transonic & np.isfinite(alpha)):
            self.result.warn("angle_of_attack", _TRANSONIC, transonic & np.isfinite(alpha))
        return alpha

    def output(self, name: str):
        """SI values of output ``name``."""
        if name == "lift":
            return self.load_factor * self.weight
        if name in ("weight", "wing_area", "cl", "load_factor"):
            return getattr(self, name)
        if name == "bank_angle":
            return self.result.null_where("bank_angle", lf.bank_from_load_factor(self.load_factor),
                                          "No level turn has a load factor below 1.")
        if name == "wing_loading":
            return self.weight / self.wing_area
        if name == "dynamic_pressure":
            return self.q
        if name in ("cas", "eas", "tas", "mach"):
            return self.speed(name)
        if name == "pressure_altitude":
            return self.air.H
        if name == "density_altitude":
            return _secondary(self.result, name, self.air.density_altitude,
                              "The density altitude lies outside the model's range.")
        if name == "density":
            return self.air.rho
        if name == "angle_of_attack":
            return self.angle_of_attack()
        return self.cl > _block(self.inputs, "wing", "cl_max")  # beyond_stall


def _solve_outputs(inputs: Inputs) -> list[str]:
    """The outputs to write: the selection, without the wing's outputs when the inputs do not give them."""
    wing_block = inputs.get("wing") or {}
    skip = {"angle_of_attack"} if "wing" not in inputs else set()
    if "cl_max" not in wing_block:
        skip.add("beyond_stall")
    return [name for name in inputs.outputs if name not in skip]


@blp.route("/lift/solve", methods=["POST"])
@blp.arguments(LiftSolveRequest, examples=examples.LIFT_SOLVE)
@blp.response(200, SolveResponse)
@blp.problems(*COMPUTE_PROBLEMS)
def solve(inputs):
    """Solve the lift equation for one unknown

    n W = q S CL, solved for `solve_for` (cl, speed, weight, wing_area, load_factor or altitude) from the other
    inputs, with every related quantity filled in: lift, weight, load factor and level-turn bank angle, CL, wing
    area and loading, dynamic pressure, CAS, EAS, TAS, Mach, pressure and density altitude, density, and with a
    `wing` block the angle of attack. Solving for altitude: with a Mach number the pressure altitude follows from
    p = n W / ((gamma/2) M^2 S CL); with a TAS from the density (and the ISA deviation); with a CAS or IAS by a
    root find (sensitive to the inputs, with a warning); with an EAS it has no answer, since q = 1/2 rho0 EAS^2 at
    every altitude. The solved-for value must exist at every point (else a 422); other values that do not exist
    are null with a warning. Arrays broadcast; `grid: true` takes their outer product.
    """
    result = Result(inputs)
    solution = _Solve(inputs, result)
    result.add_tree("solved_for", solution.unknown)
    for name in _solve_outputs(inputs):
        result.add(name, solution.output(name), SOLVE_OUTPUTS[name][0])
    return result.response()


# --- POST /v1/lift/stall -----------------------------------------------------------------------------


def _stall_eas(inputs: Inputs, state: Air, n):
    """Stall speeds (EAS) at 1 g and at load factor n [m/s]."""
    W = inputs.si("weight")
    if "reference" not in inputs:
        S, cl_max = inputs.si("wing_area"), inputs.si("cl_max")
        return lf.stall_eas(W, S, cl_max), lf.stall_eas(W, S, cl_max, n)
    H_ref = _block(inputs, "reference", "altitude")
    if H_ref is None:
        H_ref = state.H
    else:
        air.check_altitude_range(H_ref, "reference/altitude")
    # CAS -> EAS depends on the static pressure only, so the standard day at the reference altitude serves.
    ref_eas = Speeds(Air(H_ref), "cas", _block(inputs, "reference", "stall_speed")).eas
    ref_eas = require("stall", ref_eas, "the reference stall speed has no EAS at its altitude.")
    W_ref = _block(inputs, "reference", "weight")
    return lf.scale_stall_eas(ref_eas, W, W_ref), lf.scale_stall_eas(ref_eas, W, W_ref, n)


def _speed_values(speeds: Speeds, output: str) -> dict:
    """EAS, CAS, TAS and Mach of a stall speed (or a multiple): SI values and dimension."""
    def kind(name):
        return require(output, getattr(speeds, name), f"no {name} for this speed here.")
    return {"eas": (kind("eas"), "speed"), "cas": (kind("cas"), "speed"), "tas": (kind("tas"), "speed"),
            "mach": (kind("mach"), None)}


@blp.route("/lift/stall", methods=["POST"])
@blp.arguments(LiftStallRequest, examples=examples.LIFT_STALL)
@blp.response(200, StallResponse)
@blp.problems(*COMPUTE_PROBLEMS)
def stall(inputs):
    """Stall speeds under load, their multiples, and the margins at a speed

    The stall speed at the load factor (or level-turn bank angle), Vs1g x sqrt(n), as EAS, CAS, TAS and Mach at
    the altitude and temperature: from the weight, wing area and CLmax, or from a flight-manual reference stall
    speed (CAS at a weight and altitude) scaled by sqrt(W / W_ref). `speed_factors` give multiples of it (applied
    to the EAS, with CL/CLmax = 1/k^2). With a speed of any kind, `margin` gives the load factor at which that
    speed is the stall speed, the steepest level turn there, and CL/CLmax. Arrays broadcast; `grid: true` takes
    their outer product.
    """
    result = Result(inputs)
    state = air.air(inputs)
    n = _load_factor(inputs)
    vs_1g, vs_n = _stall_eas(inputs, state, n)
    if inputs.wants("stall"):
        values = _speed_values(Speeds(state, "eas", vs_n), "stall")
        result.add_tree("stall", {key: Leaf(*value) for key, value in values.items()})
    factors = inputs.get("speed_factors")
    if factors is not None and inputs.wants("multiples"):
        k = factors.reshape((-1,) + (1,) * len(result.shape))
        values = _speed_values(Speeds(state, "eas", k * vs_n), "multiples")  # one row per factor
        fractions = lf.cl_fraction(factors)
        result.add_tree("multiples", [
            {"factor": Leaf(factors[i]), **{key: Leaf(rows[i], dim) for key, (rows, dim) in values.items()},
             "cl_fraction": Leaf(fractions[i])}
            for i in range(factors.size)])
        if any_true(factors < 1.0):
            result.warn("multiples", "A speed factor below 1 is below the stall speed: CL/CLmax is above 1 there.")
    kind = given_speed(inputs)
    if kind is not None and inputs.wants("margin"):
        eas = Speeds(state, kind, inputs.si(kind), inputs.get("calibration")).eas
        eas = require("margin", eas, f"the {kind} given has no EAS here.")
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


# --- POST /v1/lift/curve -----------------------------------------------------------------------------


@blp.route("/lift/curve", methods=["POST"])
@blp.arguments(LiftCurveRequest, examples=examples.LIFT_CURVE)
@blp.response(200, CurveResponse)
@blp.problems(*COMPUTE_PROBLEMS)
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
    kappa = _kappa(inputs.si("airfoil_efficiency"), inputs.si("airfoil_lift_slope"))
    slope = wing.lift_slope(inputs.si("aspect_ratio"), inputs.si("sweep_half_chord"), mach, kappa)
    if any_true(mach > DATCOM_MACH_WARNING):
        result.warn("lift_slope", _TRANSONIC, mach > DATCOM_MACH_WARNING)
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
            values["angle_of_attack"] = require("angle_of_attack", np.where(np.abs(alpha) < _RIGHT_ANGLE, alpha,
                                                                             np.nan), _BEYOND_RIGHT_ANGLE)
    if "cl" in values and "cl_max" in inputs:
        values["beyond_stall"] = values["cl"] > inputs.si("cl_max")
    for name in inputs.outputs:
        if name in values:
            result.add(name, values[name], CURVE_OUTPUTS[name][0])
    return result.response()
