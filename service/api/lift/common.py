"""What the lift endpoints share: the blueprint, the fields of the lift equation and of the wing, their
rules, and the helpers that read them (load factor, airfoil efficiency, nested blocks)."""

from __future__ import annotations

import numpy as np

from service.api.base import Blueprint
from service.api.fields import Number, Quantity
from service.api.inputs import Inputs
from service.api.outputs import Result
from service.api.problems import invalid
from service.api.rules import Given, NotTogether, OutputNeeds
from service.physics import lift as lf
from service.physics import wing

blp = Blueprint("lift", __name__, url_prefix="/v1", description=(
    "The lift equation L = n W = q S CL with q = 1/2 rho TAS^2 = 1/2 rho0 EAS^2 = (gamma/2) p M^2: solve it for any "
    "unknown (CL, speed, weight, wing area, load factor, altitude), stall speeds under load factor with multiples "
    "and margins, and the wing's lift-curve slope (DATCOM, Helmbold-Diederich-Polhamus)."))

#: Above this Mach number the DATCOM lift-curve slope is flagged with a warning [-].
DATCOM_MACH_WARNING = 0.7
RIGHT_ANGLE = 0.5 * np.pi
SUPERSONIC = "No lift-curve slope at Mach 1 or above: the DATCOM formula is for subsonic flow."
TRANSONIC = (f"Above Mach {DATCOM_MACH_WARNING} the DATCOM lift-curve slope loses accuracy as the flow "
             "approaches transonic; treat the value as an estimate.")
BEYOND_RIGHT_ANGLE = "The linear lift curve reaches this CL only beyond +/-90 deg angle of attack."

# --- fields --------------------------------------------------------------------------------------------


def weight_field(description: str, required: bool = False, example=21000) -> Quantity:
    return Quantity("weight", required=required, minimum=0.0, exclusive_minimum=True, metadata={
        "description": f"{description} [kg]: a mass (kg, t, lb; times g0 = 9.80665 m/s2) or a force (N, kN, "
                       "lbf), told apart by the unit.", "example": example})


def wing_area_field(description: str = "Wing reference area [m2].", required: bool = False) -> Quantity:
    return Quantity("area", required=required, minimum=0.0, exclusive_minimum=True,
                    metadata={"description": description, "example": 61})


# A field object may be declared by several schemas: each schema instance works on its own copy.
LOAD_FACTOR = Number(minimum=0.0, exclusive_minimum=True, metadata={
    "description": "Load factor n = lift / weight [-]. Not with `bank_angle`; default 1 when neither is given.",
    "example": 1.5})
BANK_ANGLE = Quantity("angle", minimum=0.0, maximum=90.0, exclusive_maximum=True, metadata={
    "description": "Bank angle of a level, coordinated turn [deg], 0 <= bank < 90; sets the load factor "
                   "n = 1 / cos(bank). Not with `load_factor`.", "example": [30, 45]})
CL_MAX = Number(minimum=0.0, exclusive_minimum=True, metadata={
    "description": "Maximum lift coefficient CLmax of the configuration [-].", "example": 1.6})
ASPECT_RATIO = Number(required=True, minimum=0.0, exclusive_minimum=True, metadata={
    "description": "Wing aspect ratio A = span^2 / area [-].", "example": 11})
SWEEP = Quantity("angle", required=True, minimum=-90.0, maximum=90.0, exclusive_minimum=True, exclusive_maximum=True,
                 metadata={"description": "Sweep of the wing's half-chord line [deg], between -90 and 90.",
                           "example": 0})
AIRFOIL_EFFICIENCY = Number(minimum=0.0, exclusive_minimum=True, metadata={
    "description": "Airfoil efficiency kappa: the section's lift-curve slope divided by 2 pi per rad [-]. "
                   "Default 1 (thin-airfoil theory). Not with `airfoil_lift_slope`.", "example": 0.95})
AIRFOIL_LIFT_SLOPE = Quantity("lift_slope", minimum=0.0, exclusive_minimum=True, metadata={
    "description": "The section's (two-dimensional) low-speed lift-curve slope [1/rad]; kappa = slope / 2 pi. "
                   "Not with `airfoil_efficiency`.", "example": {"value": 0.105, "unit": "1/deg"}})
ZERO_LIFT_ANGLE = Quantity("angle", minimum=-90.0, maximum=90.0, exclusive_minimum=True, exclusive_maximum=True,
                           metadata={"description": "Angle of attack of zero lift [deg], negative for a cambered "
                                                    "section; default 0. CL = lift slope x (angle of attack - "
                                                    "zero-lift angle).", "example": -2.5})

# --- rules ---------------------------------------------------------------------------------------------

#: n from the load factor or from the bank angle of a level turn, not both.
LOAD_FACTOR_OR_BANK = NotTogether("load_factor", "bank_angle")
#: The section's efficiency or its lift slope, not both.
ONE_AIRFOIL_INPUT = NotTogether("airfoil_efficiency", "airfoil_lift_slope", why="kappa = airfoil_lift_slope / 2 pi.")


def output_needs(output: str, then: Given, what: str) -> OutputNeeds:
    """The output ``output`` needs what ``then`` says (``what``, in words)."""
    return OutputNeeds(output, then, f"{output!r} needs {what}.")


# --- reading the inputs --------------------------------------------------------------------------------


def secondary(result: Result, name: str, values, message: str):
    """``values`` with null (and a warning) where they are not finite."""
    return result.null_where(name, values, message, ~np.isfinite(values))


def block(inputs: Inputs, block: str, name: str, default=None):
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


def load_factor(inputs: Inputs):
    """n from `load_factor`, or from `bank_angle` (level turn), default 1."""
    if "bank_angle" in inputs:
        return lf.load_factor_from_bank(inputs.si("bank_angle"))
    return inputs.si("load_factor", 1.0)


def kappa(efficiency, section_slope):
    """Airfoil efficiency kappa from itself or from the section's lift slope, default 1."""
    if section_slope is not None:
        return wing.kappa_from_section_slope(section_slope)
    return 1.0 if efficiency is None else efficiency
