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
    assert str(err.value) == "Unknown unit 'knots' for speed; allowed: kt, m/s, km/h, mph, ft/s."


def test_every_default_unit_is_in_its_dimension():
    for dim in units.DIMENSIONS.values():
        assert dim.default in dim.units
        assert dim.units[dim.si].factor == 1.0 if dim.si in dim.units else True


def test_catalogue_lists_every_dimension():
    names = [d["dimension"] for d in units.catalogue()["dimensions"]]
    assert names == list(units.DIMENSIONS)
    assert set(units.OUTPUT_DIMENSIONS) == set(names) - {"weight"}
