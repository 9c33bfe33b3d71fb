"""The unit table: exact definitions, round trips, the closed set."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from service import units

# Exact definitions (NIST SP 811 appendix B; the 1959 international yard and pound agreement).
EXACT = [
    ("altitude", "ft", 1.0, 0.3048),
    ("altitude", "FL", 350.0, 35000 * 0.3048),
    ("altitude", "km", 1.0, 1000.0),
    ("speed", "kt", 1.0, 1852 / 3600),
    ("speed", "km/h", 36.0, 10.0),
    ("speed", "mph", 1.0, 1609.344 / 3600),
    ("speed", "ft/s", 1.0, 0.3048),
    ("temperature", "degC", 15.0, 288.15),
    ("temperature", "degF", 59.0, 288.15),
    ("temperature", "degF", -40.0, 233.15),
    ("temperature_difference", "degF", 9.0, 5.0),
    ("temperature_difference", "degC", 10.0, 10.0),
    ("pressure", "hPa", 1013.25, 101325.0),
    ("pressure", "mbar", 1.0, 100.0),
    ("pressure", "inHg", 29.92, 29.92 * 3386.389),  # NIST SP 811: 1 inHg (0 degC) = 3.386389e3 Pa
    # psi = lbf / in2 = 0.45359237 * 9.80665 / 0.0254**2 Pa (exact; NIST SP 811 B.8 gives 6.894 757 E+03)
    ("pressure", "psi", 1.0, 6894.757293168361),
    # slug = lbf s2 / ft = 0.45359237 * 9.80665 / 0.3048 kg; / ft3 (exact; NIST SP 811 B.8 gives 5.153 788 E+02)
    ("density", "slug/ft3", 1.0, 515.3788183931962),
    ("density", "slug/ft3", 0.0023769, 1.225),  # sea-level density in slug/ft3 (U.S. Std Atm 1976), from memory
    ("mass", "lb", 1.0, 0.45359237),
    ("mass", "t", 1.0, 1000.0),
    ("force", "lbf", 1.0, 0.45359237 * 9.80665),
    ("force", "kN", 1.0, 1000.0),
    ("weight", "kg", 1.0, 9.80665),
    ("weight", "N", 1.0, 1.0),
    ("area", "ft2", 1.0, 0.09290304),
    ("angle", "deg", 180.0, math.pi),
    ("lift_slope", "1/deg", 0.1, 0.1 * 180 / math.pi),
    ("wing_loading", "kg/m2", 1.0, 9.80665),
    ("wing_loading", "lb/ft2", 1.0, 0.45359237 * 9.80665 / 0.09290304),
    ("distance", "NM", 1.0, 1852.0),
    ("distance", "mi", 1.0, 1609.344),
    ("vertical_speed", "ft/min", 1000.0, 5.08),
    ("power", "hp", 1.0, 745.69987158227022),  # NIST SP 811: horsepower (550 ft lbf/s) = 7.456999e2 W
    ("power", "kW", 1.0, 1000.0),
    ("time", "min", 2.0, 120.0),
    ("angular_rate", "deg/s", 3.0, math.pi / 60),
    ("angular_rate", "standard_rate", 1.0, math.pi / 60),  # ICAO Doc 8168: the standard rate of turn, 3 deg/s
]


@pytest.mark.parametrize(("dimension", "unit", "value", "si"), EXACT)
def test_exact_definitions(dimension, unit, value, si):
    rel = 1e-5 if (unit, value) == ("slug/ft3", 0.0023769) else 1e-13  # the printed value has 5 digits
    assert units.to_si(value, dimension, unit) == pytest.approx(si, rel=rel)
    assert units.from_si(si, dimension, unit) == pytest.approx(value, rel=rel)


@pytest.mark.parametrize(("dimension", "unit", "value", "si"), EXACT)
def test_arrays_convert_like_scalars(dimension, unit, value, si):
    arr = np.full((3, 2), value)
    np.testing.assert_allclose(units.to_si(arr, dimension, unit), np.full((3, 2), si), rtol=1e-5)


@given(dimension=st.sampled_from(list(units.DIMENSIONS)), data=st.data(),
       x=st.floats(-1e6, 1e6, allow_nan=False))
def test_round_trip(dimension, data, x):
    unit = data.draw(st.sampled_from(list(units.DIMENSIONS[dimension].units)))
    back = units.from_si(units.to_si(x, dimension, unit), dimension, unit)
    assert back == pytest.approx(x, rel=1e-12, abs=1e-9)


def test_unknown_unit_names_the_allowed_ones():
    with pytest.raises(units.UnitError, match="allowed: m, ft, km, FL"):
        units.to_si(1.0, "altitude", "yd")
    with pytest.raises(units.UnitError) as err:
        units.from_si(1.0, "speed", "knots")
    assert str(err.value) == ("Unknown unit 'knots' for speed (did you mean 'kt'?); allowed: kt (or kn), m/s, "
                              "km/h, mph (or mi/h), ft/s.")


def test_every_default_unit_is_in_its_dimension():
    for dim in units.DIMENSIONS.values():
        assert dim.default in dim.units
        assert dim.units[dim.si].factor == 1.0 if dim.si in dim.units else True


def test_catalogue_lists_every_dimension():
    names = [d["dimension"] for d in units.catalogue()["dimensions"]]
    assert names == list(units.DIMENSIONS)
    assert set(units.OUTPUT_DIMENSIONS) == set(names) - {"weight"}


# --- Symbols people type: aliases are the standards' other symbols; anything else gets a suggestion ---

# The other symbols in use, with where they are written that way: ISO 80000-3 and the SI Brochure (9th ed.,
# table 8) write the knot "kn"; NIST SP 811 writes the mile per hour "mi/h"; the SI Brochure writes "°C", and "°"
# for the degree of angle; "°F" is the usual symbol of the degree Fahrenheit (NIST SP 811).
ALIASES = [
    ("speed", "kn", "kt"),
    ("speed", "mi/h", "mph"),
    ("temperature", "°C", "degC"),
    ("temperature", "°F", "degF"),
    ("temperature_difference", "°C", "degC"),
    ("temperature_difference", "°F", "degF"),
    ("angle", "°", "deg"),
]


@pytest.mark.parametrize(("dimension", "alias", "name"), ALIASES)
def test_an_alias_is_the_same_unit(dimension, alias, name):
    assert units.canonical(dimension, alias) == name
    assert units.to_si(12.5, dimension, alias) == units.to_si(12.5, dimension, name)


def test_aliases_are_only_the_deliberate_ones():
    found = sorted((d.name, alias, u.name) for d in units.DIMENSIONS.values() if d.name != "weight"
                   for u in d.units.values() for alias in u.aliases)
    assert found == sorted(ALIASES)
    for dim in units.DIMENSIONS.values():  # no symbol means two units of one dimension
        assert len(dim.symbols) == sum(1 + len(u.aliases) for u in dim.units.values())


def test_catalogue_lists_the_aliases():
    speed = next(d for d in units.catalogue()["dimensions"] if d["dimension"] == "speed")
    assert {u["unit"]: u["aliases"] for u in speed["units"]}["kt"] == ["kn"]


# What people type instead of a symbol, and the symbol they mean (common practice, no source).
TYPED = [
    ("speed", "kts", "kt"), ("speed", "knots", "kt"), ("speed", "KT", "kt"), ("speed", "kph", "km/h"),
    ("speed", "m/sec", "m/s"), ("speed", "fps", "ft/s"), ("speed", "Knots", "kt"),
    ("pressure", "hpa", "hPa"), ("pressure", "HPA", "hPa"), ("pressure", "mb", "mbar"), ("pressure", "in hg", "inHg"),
    ("pressure", "pascal", "Pa"),
    ("altitude", "feet", "ft"), ("altitude", "foot", "ft"), ("altitude", "meters", "m"), ("altitude", "metres", "m"),
    ("altitude", "fl", "FL"), ("altitude", "Ft", "ft"),
    ("temperature", "C", "degC"), ("temperature", "F", "degF"), ("temperature", "celsius", "degC"),
    ("temperature", "k", "K"), ("temperature_difference", "C", "degC"),
    ("mass", "lbs", "lb"), ("mass", "kgs", "kg"), ("mass", "tonnes", "t"), ("weight", "lbs", "lb"),
    ("area", "m²", "m2"), ("area", "sq ft", "ft2"), ("angle", "degrees", "deg"), ("angle", "radians", "rad"),
]


@pytest.mark.parametrize(("dimension", "typed", "meant"), TYPED)
def test_a_misspelt_unit_gets_a_suggestion(dimension, typed, meant):
    with pytest.raises(units.UnitError) as caught:
        units.canonical(dimension, typed)
    assert caught.value.suggestion == meant
    assert f"(did you mean {meant!r}?)" in str(caught.value)
    assert str(caught.value).endswith(f"allowed: {units.allowed(dimension)}.")


@pytest.mark.parametrize(("dimension", "typed"), [
    ("altitude", "kg"), ("speed", "hPa"), ("temperature", "banana"), ("speed", ""), ("speed", None), ("speed", {}),
    ("speed", "k" * 10_000),
])
def test_no_suggestion_for_what_is_not_close(dimension, typed):
    with pytest.raises(units.UnitError) as caught:
        units.canonical(dimension, typed)
    assert caught.value.suggestion is None
    assert "did you mean" not in str(caught.value)
    assert len(str(caught.value)) < 200  # a long string is not echoed whole


@given(dimension=st.sampled_from(list(units.DIMENSIONS)), text=st.text(max_size=60))
def test_a_suggestion_is_always_a_unit_of_the_dimension(dimension, text):
    suggestion = units.suggest(dimension, text)
    assert suggestion is None or suggestion in units.DIMENSIONS[dimension].units


# --- Range ends in every unit: the end in the unit admits exactly the values whose SI value is in range ---

@given(dimension=st.sampled_from([d for d in units.DIMENSIONS if d != "weight"]), data=st.data(),
       si=st.floats(-1e6, 1e6, allow_nan=False), upper=st.booleans(), exclusive=st.booleans())
def test_a_range_end_in_any_unit_is_exact(dimension, data, si, upper, exclusive):
    unit = data.draw(st.sampled_from(list(units.DIMENSIONS[dimension].units)))
    end = units.bound_in(dimension, unit, si, upper=upper, exclusive=exclusive)
    inside, outside = (math.nextafter(end, -math.inf), math.nextafter(end, math.inf)) if upper else \
        (math.nextafter(end, math.inf), math.nextafter(end, -math.inf))

    def admitted_in_si(x):
        y = float(units.to_si(np.float64(x), dimension, unit))
        if exclusive:
            return y < si if upper else y > si
        return y <= si if upper else y >= si

    # inclusive: the end is admitted and the next float past it is not; exclusive: the end is the first refused
    assert admitted_in_si(inside)
    if exclusive:
        assert not admitted_in_si(end)
    else:
        assert admitted_in_si(end)
        assert not admitted_in_si(outside)


def test_the_top_of_the_atmosphere_in_feet_and_flight_levels():
    # 84 852 m / 0.3048 m/ft = 278 385.826 771 653 5... ft (exact definition of the foot, NIST SP 811)
    assert units.bound_in("altitude", "ft", 84852.0, upper=True) == pytest.approx(278385.8267716535, rel=1e-15)
    assert units.bound_in("altitude", "FL", 84852.0, upper=True) == pytest.approx(2783.858267716535, rel=1e-15)
    # An end is inclusive unless asked (the default, exclusive=False). 100 degC = 373.15 K is the SI value of
    # several floats in degF (212 - 6e-14 to 212 + 3e-14), so there the two kinds of end differ.
    for upper in (True, False):
        inclusive = units.bound_in("temperature", "degF", 373.15, upper=upper)
        assert inclusive == units.bound_in("temperature", "degF", 373.15, upper=upper, exclusive=False)
        assert inclusive != units.bound_in("temperature", "degF", 373.15, upper=upper, exclusive=True)


def test_bound_in_stops_when_a_conversion_and_its_inverse_disagree(monkeypatch):
    """bound_in steps an ulp at a time from the converted end; a to_si that its from_si does not invert (a defect)
    stops it with an error naming the unit instead of stepping for hours."""
    exact = units.bound_in("temperature", "degF", 373.15, upper=True)  # 100 degC: 273.15 K + 100 (SI definition)
    assert units.to_si(exact, "temperature", "degF") <= 373.15  # the real conversions agree: a few steps at most
    real = units.to_si
    monkeypatch.setattr(units, "to_si", lambda values, dimension, unit: real(values, dimension, unit) * (1 + 1e-6))
    with pytest.raises(RuntimeError, match="temperature in degF disagree"):
        units.bound_in("temperature", "degF", 373.15, upper=True)
