"""The closed table of units: dimension, factor and offset to SI, vectorised conversions.

A value ``x`` in unit ``u`` is ``x * u.factor + u.offset`` in SI. The set is closed:
GET /v1/units lists it, and anything else is refused with the allowed units named and, where one
is close, a suggestion ("did you mean kt?", :func:`suggest`).
Factors are exact definitions wherever one exists (see service.physics.constants).

Each unit has one symbol that answers use (``Unit.name``) and, where the standards give a unit more
than one symbol in use, the others as ``aliases``, accepted in requests and read as the same unit:

- ``kn`` for the knot (``kt`` in ICAO Annex 5 and in aviation, ``kn`` in ISO 80000-3 and the SI
  Brochure's table of non-SI units);
- ``mi/h`` for the mile per hour (the form NIST SP 811 writes; ``mph`` is the common one);
- ``°C`` and ``°F`` for the degrees Celsius and Fahrenheit, ``°`` for the degree of angle (the SI
  Brochure's symbols; ``degC``, ``degF`` and ``deg`` are their ASCII spellings).

Nothing else: spelled-out names, plurals and other case ("feet", "knots", "kts", "hpa", "C") are
not symbols, and get a "did you mean" instead of being guessed silently.
"""

from __future__ import annotations

import difflib
import math
import operator
from typing import NamedTuple

import numpy as np

from service.physics.constants import FT, G0, INHG, KT, LB, LBF, MILE, PSI, SLUG


class Unit(NamedTuple):
    """One unit of a dimension: SI value = value * factor + offset."""

    name: str
    factor: float
    offset: float = 0.0
    description: str = ""
    aliases: tuple[str, ...] = ()


class Dimension(NamedTuple):
    """A physical dimension: its SI unit, the default unit of the API, the allowed units."""

    name: str
    si: str
    default: str
    units: dict[str, Unit]
    description: str
    output: bool = True
    #: every symbol accepted in requests (names and aliases) -> the unit's name
    symbols: dict[str, str] = {}


def _dim(name, si, default, description, units, output=True):
    symbols = {symbol: u.name for u in units for symbol in (u.name, *u.aliases)}
    return Dimension(name, si, default, {u.name: u for u in units}, description, output, symbols)


_MASS_UNITS = (
    Unit("kg", 1.0, description="kilogram"),
    Unit("t", 1000.0, description="tonne (1000 kg)"),
    Unit("lb", LB, description="pound mass (0.45359237 kg, exact)"),
)
_METRE = Unit("m", 1.0, description="metre")
_FOOT = Unit("ft", FT, description="international foot (0.3048 m, exact)")
_KILOMETRE = Unit("km", 1000.0, description="kilometre")
_DEGC = ("°C",)  # the SI Brochure's symbol of the degree Celsius
_DEGF = ("°F",)
_FORCE_UNITS = (
    Unit("N", 1.0, description="newton"),
    Unit("kN", 1000.0, description="kilonewton"),
    Unit("lbf", LBF, description="pound force (lb x g0)"),
)

DIMENSIONS: dict[str, Dimension] = {
    d.name: d
    for d in (
        _dim("altitude", "m", "ft", "Altitude or height", (
            _METRE, _FOOT, _KILOMETRE,
            Unit("FL", 100.0 * FT, description="flight level: hundreds of feet of pressure altitude"),
        )),
        _dim("speed", "m/s", "kt", "Speed", (
            Unit("kt", KT, description="knot (1852 m per hour, exact)", aliases=("kn",)),
            Unit("m/s", 1.0, description="metre per second"),
            Unit("km/h", 1000.0 / 3600.0, description="kilometre per hour"),
            Unit("mph", MILE / 3600.0, description="statute mile per hour", aliases=("mi/h",)),
            Unit("ft/s", FT, description="foot per second"),
        )),
        _dim("temperature", "K", "degC", "Absolute temperature", (
            Unit("K", 1.0, description="kelvin"),
            Unit("degC", 1.0, 273.15, description="degree Celsius", aliases=_DEGC),
            Unit("degF", 5.0 / 9.0, 273.15 - 32.0 * 5.0 / 9.0, description="degree Fahrenheit",
                 aliases=_DEGF),
        )),
        _dim("temperature_difference", "K", "K", "Temperature difference (ISA deviation)", (
            Unit("K", 1.0, description="kelvin"),
            Unit("degC", 1.0, description="degree Celsius (as a difference, equal to K)", aliases=_DEGC),
            Unit("degF", 5.0 / 9.0, description="degree Fahrenheit (as a difference)", aliases=_DEGF),
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
             tuple(Unit(u.name, u.factor * G0, description=u.description + ", times g0", aliases=u.aliases)
                   for u in _MASS_UNITS)
             + _FORCE_UNITS, output=False),
        _dim("area", "m2", "m2", "Area", (
            Unit("m2", 1.0, description="square metre"),
            Unit("ft2", FT**2, description="square foot"),
        )),
        _dim("angle", "rad", "deg", "Angle", (
            Unit("deg", math.pi / 180.0, description="degree", aliases=("°",)),
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
            _KILOMETRE, _METRE, _FOOT,
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
        _dim("length", "m", "m", "Length (mean free path, scale height)", (_METRE, _FOOT, _KILOMETRE)),
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


#: What people type for a unit that is not one of its symbols: spelled-out names, plurals and the
#: usual non-standard abbreviations, in the normal form of :func:`_normal`. Only for suggestions:
#: none of these is accepted as a unit.
_SPELLED: dict[str, tuple[str, ...]] = {
    "m": ("metre", "metres", "meter", "meters", "mtr"),
    "ft": ("foot", "feet", "fts", "feets"),
    "km": ("kilometre", "kilometres", "kilometer", "kilometers", "kms"),
    "FL": ("flightlevel", "flightlevels"),
    "kt": ("knot", "knots", "kts", "kns", "knts", "kias", "kcas", "ktas"),
    "m/s": ("mps", "ms", "ms1", "meterpersecond", "meterspersecond", "metrepersecond", "metrespersecond"),
    "km/h": ("kph", "kmh", "kmph", "kilometreperhour", "kilometresperhour", "kilometerperhour",
             "kilometersperhour"),
    "mph": ("mileperhour", "milesperhour"),
    "ft/s": ("fps", "footpersecond", "feetpersecond"),
    "K": ("kelvin", "kelvins", "degk"),
    "degC": ("c", "celsius", "centigrade", "degreecelsius", "degreescelsius", "degreec", "degreesc"),
    "degF": ("f", "fahrenheit", "degreefahrenheit", "degreesfahrenheit", "degreef", "degreesf"),
    "Pa": ("pascal", "pascals"),
    "hPa": ("hectopascal", "hectopascals", "hpas"),
    "mbar": ("mb", "millibar", "millibars", "mbars"),
    "inHg": ("inchofmercury", "inchesofmercury", "inchhg", "incheshg", "inhgs", "\"hg"),
    "psi": ("poundpersquareinch", "poundspersquareinch", "lbf/in2", "lb/in2", "lbfin2"),
    "kg/m3": ("kilogrampercubicmetre", "kilogramspercubicmetre", "kilogrampercubicmeter",
              "kilogramspercubicmeter", "kgm3"),
    "slug/ft3": ("slugpercubicfoot", "slugspercubicfoot", "slugs/ft3"),
    "kg": ("kilogram", "kilograms", "kilo", "kilos", "kgs"),
    "t": ("tonne", "tonnes", "metricton", "metrictons"),
    "lb": ("pound", "pounds", "lbs", "lbm"),
    "N": ("newton", "newtons"),
    "kN": ("kilonewton", "kilonewtons"),
    "lbf": ("poundforce", "poundsforce", "lbsf"),
    "m2": ("squaremetre", "squaremetres", "squaremeter", "squaremeters", "sqm", "m^2"),
    "ft2": ("squarefoot", "squarefeet", "sqft", "ft^2"),
    "deg": ("degree", "degrees", "degs"),
    "rad": ("radian", "radians", "rads"),
    "1/rad": ("perradian", "/rad", "rad1"),
    "1/deg": ("perdegree", "/deg", "deg1"),
    "N/m2": ("newtonpersquaremetre", "newtonspersquaremetre", "newtonpersquaremeter", "pa"),
    "kg/m2": ("kilogrampersquaremetre", "kilogramspersquaremetre", "kilogrampersquaremeter"),
    "lb/ft2": ("poundpersquarefoot", "poundspersquarefoot", "psf"),
}

#: How close a misspelling must be (difflib's ratio) to be suggested.
_CLOSE = 0.7
#: Longer strings get no suggestion (and are shortened in the message): the error stays small.
_LONGEST = 40


def _normal(text: str) -> str:
    """The form compared for suggestions: lower case, no spaces, dots, dashes, carets or
    superscripts (``"Sq. Ft"`` -> ``"sqft"``, ``"m²"`` -> ``"m2"``, ``"°C"`` -> ``"degc"``)."""
    text = text.strip().lower().replace("°", "deg").replace("²", "2").replace("³", "3").replace("·", "*")
    return "".join(c for c in text if c not in " ._-^")


def suggest(dimension: str, text: object) -> str | None:
    """The unit of ``dimension`` that ``text`` most likely means, or None.

    In order: the same symbol in other case or spacing (``hpa`` -> ``hPa``), a spelled-out name or a
    usual abbreviation (``feet`` -> ``ft``, ``C`` -> ``degC``, ``knots`` -> ``kt``), then the closest
    symbol or name by difflib (``kts`` -> ``kt``). Only units of ``dimension`` are suggested.

    Examples
    --------
    >>> suggest("speed", "kts"), suggest("pressure", "hpa"), suggest("altitude", "feet")
    ('kt', 'hPa', 'ft')
    >>> suggest("temperature", "C"), suggest("altitude", "kg") is None
    ('degC', True)
    """
    if type(text) is not str or not text.strip() or len(text) > _LONGEST:
        return None
    dim = DIMENSIONS[dimension]
    known: dict[str, str] = {}
    for symbol, name in dim.symbols.items():
        known.setdefault(_normal(symbol), name)
    for name in dim.units:
        for spelled in _SPELLED.get(name, ()):
            known.setdefault(_normal(spelled), name)
    wanted = _normal(text)
    if wanted in known:
        return known[wanted]
    close = difflib.get_close_matches(wanted, list(known), n=1, cutoff=_CLOSE)
    return known[close[0]] if close else None


def allowed(dimension: str) -> str:
    """The accepted symbols of ``dimension`` for messages: ``"kt (or kn), m/s, ..."``."""
    return ", ".join(f"{u.name} (or {', '.join(u.aliases)})" if u.aliases else u.name
                     for u in DIMENSIONS[dimension].units.values())


class UnitError(ValueError):
    """A unit name that the dimension does not allow; ``suggestion`` is the unit it most likely means."""

    def __init__(self, dimension: str, unit: object):
        self.dimension = dimension
        self.suggestion = suggest(dimension, unit)
        shown = repr(unit) if len(repr(unit)) <= _LONGEST else repr(unit)[:_LONGEST] + "..."
        hint = f" (did you mean {self.suggestion!r}?)" if self.suggestion else ""
        super().__init__(f"Unknown unit {shown} for {dimension}{hint}; allowed: {allowed(dimension)}.")


def canonical(dimension: str, unit: object) -> str:
    """The name of the unit ``unit`` (a name or an alias) of ``dimension``; UnitError if there is none.

    Examples
    --------
    >>> canonical("speed", "kn"), canonical("temperature", "°C"), canonical("speed", "kt")
    ('kt', 'degC', 'kt')
    """
    name = DIMENSIONS[dimension].symbols.get(unit) if type(unit) is str else None
    if name is None:
        raise UnitError(dimension, unit)
    return name


def lookup(dimension: str, unit: str) -> Unit:
    """The Unit called ``unit`` (a name or an alias) in ``dimension``; UnitError if there is none."""
    return DIMENSIONS[dimension].units[canonical(dimension, unit)]


def to_si(values, dimension: str, unit: str):
    """Convert ``values`` (number or array) in ``unit`` to the SI unit of ``dimension``."""
    u = lookup(dimension, unit)
    if u.factor == 1.0 and u.offset == 0.0:
        return values
    if type(values) is np.float64:  # one number: the same arithmetic, without a ufunc call's overhead
        return values * u.factor + u.offset if u.offset else values * u.factor
    out = np.multiply(values, u.factor)
    if u.offset:
        out += u.offset
    return out


def from_si(values, dimension: str, unit: str):
    """Convert SI ``values`` (number or array) to ``unit`` of ``dimension``."""
    u = lookup(dimension, unit)
    if u.factor == 1.0 and u.offset == 0.0:
        return values
    with np.errstate(over="ignore"):  # beyond the float range: infinity, which the answer's writer refuses (422)
        if u.offset:
            return np.subtract(values, u.offset) / u.factor
        return np.divide(values, u.factor)


def bound_in(dimension: str, unit: str, si: float, *, upper: bool, exclusive: bool = False) -> float:
    """A range end ``si`` [SI] in ``unit``, exact: the check in ``unit`` and in SI admit the same numbers.

    An inclusive upper end is the largest float ``x`` whose SI value ``to_si(x)`` is at most ``si``; an
    inclusive lower end the smallest one at least ``si``. An exclusive end is the first float past them
    (the least ``x`` with ``to_si(x) >= si`` for an upper end), so that ``x < end`` holds exactly when
    ``to_si(x) < si``. The conversion is monotonic (positive factors), so a value given in ``unit`` is
    within the published end exactly when its SI value is within ``si``: no value at the end is refused
    for a rounding of the conversion, and none past it converts to a value beyond the model's range.

    Examples
    --------
    The top of the standard atmosphere, 84 852 m, in feet and flight levels:

    >>> bound_in("altitude", "ft", 84852.0, upper=True)
    278385.82677165355
    >>> bound_in("altitude", "FL", 84852.0, upper=True)
    2783.8582677165355
    >>> bool(to_si(2783.8582677165355, "altitude", "FL") <= 84852.0 < to_si(2783.858267716536, "altitude", "FL"))
    True
    """
    def si_of(x: float) -> float:
        return float(to_si(np.float64(x), dimension, unit))

    # the largest x with si_of(x) <= si (stepping down while beyond it), or the smallest with si_of(x) >= si
    beyond, within, inward = ((operator.gt, operator.le, -math.inf) if upper != exclusive
                              else (operator.lt, operator.ge, math.inf))
    x = float(from_si(np.float64(si), dimension, unit))
    steps = 0
    while beyond(si_of(x), si):
        x, steps = math.nextafter(x, inward), _step(steps, dimension, unit)
    while within(si_of(math.nextafter(x, -inward)), si):
        x, steps = math.nextafter(x, -inward), _step(steps, dimension, unit)
    return x


#: How many units in the last place bound_in may step from the converted end. A conversion and its inverse
#: agree to a few, or to about 1 / factor near zero (the subnormal floats are evenly spaced there); far more
#: means the two disagree (a defect), which must stop the start with an error, not loop for hours.
_MAX_ULP_STEPS = 1_000_000


def _step(steps: int, dimension: str, unit: str) -> int:
    if steps >= _MAX_ULP_STEPS:
        raise RuntimeError(f"to_si and from_si of {dimension} in {unit} disagree by more than {_MAX_ULP_STEPS} ulps")
    return steps + 1


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
                    {"unit": u.name, "aliases": list(u.aliases), "description": u.description,
                     "factor": u.factor, "offset": u.offset}
                    for u in d.units.values()
                ],
            }
            for d in DIMENSIONS.values()
        ]
    }
