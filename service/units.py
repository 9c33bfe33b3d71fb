"""The closed table of units: dimension, factor and offset to SI, vectorised conversions.

A value ``x`` in unit ``u`` is ``x * u.factor + u.offset`` in SI. The set is closed:
GET /v1/units lists it, and anything else is refused with the allowed units named.
Factors are exact definitions wherever one exists (see service.physics.constants).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from service.physics.constants import FT, G0, INHG, KT, LB, LBF, MILE, PSI, SLUG


class Unit(NamedTuple):
    """One unit of a dimension: SI value = value * factor + offset."""

    name: str
    factor: float
    offset: float = 0.0
    description: str = ""


class Dimension(NamedTuple):
    """A physical dimension: its SI unit, the default unit of the API, the allowed units."""

    name: str
    si: str
    default: str
    units: dict[str, Unit]
    description: str
    output: bool = True


def _dim(name, si, default, description, units, output=True):
    return Dimension(name, si, default, {u.name: u for u in units}, description, output)


_MASS_UNITS = (
    Unit("kg", 1.0, description="kilogram"),
    Unit("t", 1000.0, description="tonne (1000 kg)"),
    Unit("lb", LB, description="pound mass (0.45359237 kg, exact)"),
)
_FORCE_UNITS = (
    Unit("N", 1.0, description="newton"),
    Unit("kN", 1000.0, description="kilonewton"),
    Unit("lbf", LBF, description="pound force (lb x g0)"),
)

DIMENSIONS: dict[str, Dimension] = {
    d.name: d
    for d in (
        _dim("altitude", "m", "ft", "Altitude or height", (
            Unit("m", 1.0, description="metre"),
            Unit("ft", FT, description="international foot (0.3048 m, exact)"),
            Unit("km", 1000.0, description="kilometre"),
            Unit("FL", 100.0 * FT, description="flight level: hundreds of feet of pressure altitude"),
        )),
        _dim("speed", "m/s", "kt", "Speed", (
            Unit("kt", KT, description="knot (1852 m per hour, exact)"),
            Unit("m/s", 1.0, description="metre per second"),
            Unit("km/h", 1000.0 / 3600.0, description="kilometre per hour"),
            Unit("mph", MILE / 3600.0, description="statute mile per hour"),
            Unit("ft/s", FT, description="foot per second"),
        )),
        _dim("temperature", "K", "degC", "Absolute temperature", (
            Unit("K", 1.0, description="kelvin"),
            Unit("degC", 1.0, 273.15, description="degree Celsius"),
            Unit("degF", 5.0 / 9.0, 273.15 - 32.0 * 5.0 / 9.0, description="degree Fahrenheit"),
        )),
        _dim("temperature_difference", "K", "K", "Temperature difference (ISA deviation)", (
            Unit("K", 1.0, description="kelvin"),
            Unit("degC", 1.0, description="degree Celsius (as a difference, equal to K)"),
            Unit("degF", 5.0 / 9.0, description="degree Fahrenheit (as a difference)"),
        )),
        _dim("pressure", "Pa", "hPa", "Pressure", (
            Unit("Pa", 1.0, description="pascal"),
            Unit("hPa", 100.0, description="hectopascal"),
            Unit("mbar", 100.0, description="millibar (equal to hPa)"),
            Unit("inHg", INHG, description="inch of mercury (3386.389 Pa)"),
            Unit("psi", PSI, description="pound force per square inch"),
        )),
        _dim("density", "kg/m3", "kg/m3", "Air density", (
            Unit("kg/m3", 1.0, description="kilogram per cubic metre"),
            Unit("slug/ft3", SLUG / FT**3, description="slug per cubic foot"),
        )),
        _dim("mass", "kg", "kg", "Mass", _MASS_UNITS),
        _dim("force", "N", "N", "Force (lift, weight as a force)", _FORCE_UNITS),
        _dim("weight", "N", "kg", "Weight, given as a mass (times g0 = 9.80665 m/s2) or as a force",
             tuple(Unit(u.name, u.factor * G0, description=u.description + ", times g0") for u in _MASS_UNITS)
             + _FORCE_UNITS, output=False),
        _dim("area", "m2", "m2", "Area", (
            Unit("m2", 1.0, description="square metre"),
            Unit("ft2", FT**2, description="square foot"),
        )),
        _dim("angle", "rad", "deg", "Angle", (
            Unit("deg", math.pi / 180.0, description="degree"),
            Unit("rad", 1.0, description="radian"),
        )),
        _dim("dynamic_viscosity", "Pa*s", "Pa*s", "Dynamic viscosity", (
            Unit("Pa*s", 1.0, description="pascal second"),
        )),
        _dim("kinematic_viscosity", "m2/s", "m2/s", "Kinematic viscosity", (
            Unit("m2/s", 1.0, description="square metre per second"),
        )),
        _dim("lift_slope", "1/rad", "1/rad", "Lift-curve slope", (
            Unit("1/rad", 1.0, description="per radian"),
            Unit("1/deg", 180.0 / math.pi, description="per degree"),
        )),
        _dim("distance", "m", "NM", "Horizontal distance (turn radius, glide distance)", (
            Unit("NM", 1852.0, description="international nautical mile (1852 m, exact)"),
            Unit("km", 1000.0, description="kilometre"),
            Unit("m", 1.0, description="metre"),
            Unit("ft", FT, description="international foot (0.3048 m, exact)"),
            Unit("mi", MILE, description="statute mile (5280 ft, exact)"),
        )),
        _dim("vertical_speed", "m/s", "ft/min", "Vertical speed (rate of climb or sink)", (
            Unit("ft/min", FT / 60.0, description="foot per minute"),
            Unit("m/s", 1.0, description="metre per second"),
        )),
        _dim("power", "W", "kW", "Power", (
            Unit("kW", 1000.0, description="kilowatt"),
            Unit("W", 1.0, description="watt"),
            Unit("hp", 550.0 * FT * LBF, description="mechanical horsepower (550 ft lbf/s)"),
        )),
        _dim("time", "s", "s", "Time", (
            Unit("s", 1.0, description="second"),
            Unit("min", 60.0, description="minute"),
        )),
        _dim("angular_rate", "rad/s", "deg/s", "Rate of turn", (
            Unit("deg/s", math.pi / 180.0, description="degree per second"),
            Unit("rad/s", 1.0, description="radian per second"),
            Unit("standard_rate", math.pi / 60.0, description="multiples of the standard rate of turn, 3 deg/s "
                                                              "(rate one: 360 deg in 2 minutes)"),
        )),
        _dim("wing_loading", "N/m2", "N/m2", "Wing loading", (
            Unit("N/m2", 1.0, description="newton per square metre"),
            Unit("kg/m2", G0, description="kilogram per square metre (weight as mass, times g0)"),
            Unit("lb/ft2", G0 * LB / FT**2, description="pound per square foot (weight as mass, times g0)"),
        )),
        _dim("length", "m", "m", "Length (mean free path, scale height)", (
            Unit("m", 1.0, description="metre"),
            Unit("ft", FT, description="international foot (0.3048 m, exact)"),
            Unit("km", 1000.0, description="kilometre"),
        )),
        _dim("acceleration", "m/s2", "m/s2", "Acceleration (of free fall)", (
            Unit("m/s2", 1.0, description="metre per second squared"),
            Unit("ft/s2", FT, description="foot per second squared"),
        )),
        _dim("number_density", "1/m3", "1/m3", "Number density (molecules per volume)", (
            Unit("1/m3", 1.0, description="per cubic metre"),
            Unit("1/cm3", 1e6, description="per cubic centimetre"),
        )),
        _dim("frequency", "1/s", "1/s", "Frequency (collisions per time)", (
            Unit("1/s", 1.0, description="per second"),
        )),
        _dim("thermal_conductivity", "W/(m*K)", "W/(m*K)", "Thermal conductivity", (
            Unit("W/(m*K)", 1.0, description="watt per metre kelvin"),
        )),
    )
}

#: Dimensions whose units can be chosen for outputs (the keys of ``output_units``).
OUTPUT_DIMENSIONS = tuple(name for name, d in DIMENSIONS.items() if d.output)


class UnitError(ValueError):
    """A unit name that the dimension does not allow."""

    def __init__(self, dimension: str, unit: object):
        allowed = ", ".join(DIMENSIONS[dimension].units)
        super().__init__(f"Unknown unit {unit!r} for {dimension}; allowed: {allowed}.")


def lookup(dimension: str, unit: str) -> Unit:
    """The Unit called ``unit`` in ``dimension``; UnitError if there is none."""
    try:
        return DIMENSIONS[dimension].units[unit]
    except (KeyError, TypeError):
        raise UnitError(dimension, unit) from None


def to_si(values, dimension: str, unit: str):
    """Convert ``values`` (number or array) in ``unit`` to the SI unit of ``dimension``."""
    u = lookup(dimension, unit)
    if u.factor == 1.0 and u.offset == 0.0:
        return values
    out = np.multiply(values, u.factor)
    if u.offset:
        out += u.offset
    return out


def from_si(values, dimension: str, unit: str):
    """Convert SI ``values`` (number or array) to ``unit`` of ``dimension``."""
    u = lookup(dimension, unit)
    if u.factor == 1.0 and u.offset == 0.0:
        return values
    if u.offset:
        return np.subtract(values, u.offset) / u.factor
    return np.divide(values, u.factor)


def catalogue() -> dict:
    """The unit table as GET /v1/units publishes it."""
    return {
        "dimensions": [
            {
                "dimension": d.name,
                "description": d.description,
                "si_unit": d.si,
                "default_unit": d.default,
                "output": d.output,
                "units": [
                    {"unit": u.name, "description": u.description, "factor": u.factor, "offset": u.offset}
                    for u in d.units.values()
                ],
            }
            for d in DIMENSIONS.values()
        ]
    }
