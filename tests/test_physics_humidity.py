"""Tests for service.physics.humidity.

Outside references: the IAPWS saturation curve of water (the PyPI library ``iapws``, and IAPWS-95
values quoted from memory), Murphy & Koop (2005) typed from memory, MetPy (a general-purpose meteorology
library, test-only: its saturation vapour pressure is Ambaum 2020's, its virtual temperature
and density Wallace & Hobbs's), the Magnus formula of WMO-No. 8 annex 4.B typed from memory,
a worked example, and invariants checked with hypothesis.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from iapws.iapws95 import IAPWS95
from metpy import calc as mpcalc
from metpy.units import units

from service.physics import humidity as hum

SETTINGS = settings(max_examples=60, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}


def shaped(value, shape):
    return float(value) if shape == () else np.full(shape, value, dtype=float)


# (temperature [degC], saturation vapour pressure over water [Pa], relative tolerance)
IAPWS_PUBLISHED = [
    (0.01, 611.657, 1e-5),  # IAPWS: the triple-point pressure, 611.657 Pa (from memory)
    (20.0, 2339.2, 5e-5),  # IAPWS-95 saturation table, 2.3392 kPa (from memory)
    (50.0, 12_352.0, 1e-4),  # IAPWS-95 saturation table, 12.352 kPa (from memory)
    (100.0, 101_418.0, 1e-5),  # IAPWS-95 saturation table, 101.418 kPa (from memory)
]


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
@pytest.mark.parametrize(("t_c", "expected", "rtol"), IAPWS_PUBLISHED)
def test_saturation_vapour_pressure_matches_published_iapws_values(t_c, expected, rtol, shape):
    es = hum.saturation_vapour_pressure(shaped(t_c + 273.15, shape))
    np.testing.assert_allclose(es, expected, rtol=rtol)
    assert np.shape(es) == shape


def test_saturation_vapour_pressure_matches_iapws_above_freezing():
    # iapws (PyPI): the IAPWS saturation-pressure equation of Wagner & Pruss (IAPWS-95's
    # auxiliary equation, 0.01 to 100 degC). Hardy's formula claims agreement with the IAPWS
    # curve to a few parts in 1e5; largest seen: 3.0e-5.
    T = np.linspace(273.16, 373.15, 201)
    reference = np.array([IAPWS95._Vapor_Pressure(t) * 1e6 for t in T])  # MPa -> Pa
    np.testing.assert_allclose(hum.saturation_vapour_pressure(T), reference, rtol=4e-5)


def murphy_koop_liquid(T):
    """Murphy & Koop (2005), Q. J. R. Meteorol. Soc. 131, eq. 10: vapour pressure over
    supercooled and liquid water [Pa], 123 to 332 K (typed from memory)."""
    return np.exp(54.842763 - 6763.22 / T - 4.210 * np.log(T) + 0.000367 * T
                  + np.tanh(0.0415 * (T - 218.8)) * (53.878 - 1331.22 / T - 9.44523 * np.log(T) + 0.014025 * T))


# (lowest, highest temperature [degC], relative tolerance): the largest relative difference seen
# is given beside each band. Below -40 degC both formulations extrapolate sparse supercooled-water
# data; Hardy's (Wexler's) runs higher.
MURPHY_KOOP_BANDS = [
    (0.0, 58.0, 3e-4),  # largest seen 2.3e-4
    (-20.0, 0.0, 1e-3),  # 6.2e-4
    (-40.0, -20.0, 7e-3),  # 6.3e-3
    (-70.0, -40.0, 9e-2),  # 8.2e-2
    (-100.0, -70.0, 0.2),  # 0.185
]


@pytest.mark.parametrize(("lo", "hi", "rtol"), MURPHY_KOOP_BANDS)
def test_saturation_vapour_pressure_against_murphy_koop(lo, hi, rtol):
    T = np.linspace(lo, hi, 81) + 273.15
    np.testing.assert_allclose(hum.saturation_vapour_pressure(T), murphy_koop_liquid(T), rtol=rtol)


# MetPy 1.7 saturation_vapor_pressure(phase="liquid") implements Ambaum (2020), an approximation
# with a temperature-dependent latent heat; (band [degC], relative tolerance, largest seen).
METPY_BANDS = [
    (-40.0, 30.0, 3.5e-3),  # 2.9e-3
    (30.0, 50.0, 7e-3),  # 5.8e-3
    (50.0, 100.0, 2.5e-2),  # 2.1e-2
    (-100.0, -40.0, 5e-2),  # 4.3e-2
]


@pytest.mark.parametrize(("lo", "hi", "rtol"), METPY_BANDS)
def test_saturation_vapour_pressure_against_metpy_over_the_whole_range(lo, hi, rtol):
    t = np.linspace(lo, hi, 71)
    reference = mpcalc.saturation_vapor_pressure(t * units.degC).to("Pa").magnitude
    np.testing.assert_allclose(hum.saturation_vapour_pressure(t + 273.15), reference, rtol=rtol)


def test_saturation_vapour_pressure_matches_wmo_magnus_within_its_range():
    # WMO-No. 8 (2018), annex 4.B: e_w = 6.112 exp(17.62 t / (243.12 + t)) hPa over water,
    # -45 to 60 degC (typed from memory). A Magnus fit; largest difference seen 0.39 %.
    t = np.linspace(-45.0, 60.0, 106)
    magnus = 611.2 * np.exp(17.62 * t / (243.12 + t))
    np.testing.assert_allclose(hum.saturation_vapour_pressure(t + 273.15), magnus, rtol=4e-3)


def test_vapour_pressure_from_dew_point_matches_metpy():
    # MetPy vapor_pressure from a dew point is its saturation pressure at the dew point (as here).
    td = np.array([-30.0, -10.0, 0.0, 10.0, 20.0, 28.0])
    reference = mpcalc.saturation_vapor_pressure(td * units.degC).to("Pa").magnitude
    np.testing.assert_allclose(hum.vapour_pressure_from_dew_point(td + 273.15), reference, rtol=3.5e-3)


def test_relative_humidity_and_dew_point_agree_with_metpy():
    # MetPy relative_humidity_from_dewpoint gives U = es(Td) / es(T) on its own curve; with that
    # U our vapour pressure from RH must equal ours from the dew point, within the difference of
    # the two curves' shapes between Td and T (largest seen 4.5e-3 at 30 / 28 degC).
    T = np.array([-20.0, 0.0, 15.0, 30.0])
    td = np.array([-22.0, -8.0, 0.0, 28.0])
    U = mpcalc.relative_humidity_from_dewpoint(T * units.degC, td * units.degC).to("dimensionless").magnitude
    np.testing.assert_allclose(hum.vapour_pressure_from_relative_humidity(T + 273.15, U),
                               hum.vapour_pressure_from_dew_point(td + 273.15), rtol=6e-3)


@pytest.mark.parametrize(("p_hpa", "t_c", "td_c"), [(1000.0, 30.0, 25.0), (1013.25, 15.0, 10.0),
                                                  (850.0, 5.0, -5.0), (700.0, -10.0, -25.0)])
def test_virtual_temperature_matches_metpy_given_the_same_vapour_pressure(p_hpa, t_c, td_c):
    # MetPy virtual_temperature(T, mixing ratio) with the mixing ratio of our vapour pressure:
    # the same relation (Wallace & Hobbs 2006 p. 80) in another form; epsilon 0.62196 there,
    # 0.62198 here. Largest difference seen: 3e-8 relative.
    e = hum.vapour_pressure_from_dew_point(td_c + 273.15)
    w = mpcalc.mixing_ratio(e * units.Pa, p_hpa * units.hPa)
    reference = mpcalc.virtual_temperature((t_c + 273.15) * units.K, w).to("K").magnitude
    assert hum.virtual_temperature(t_c + 273.15, e, p_hpa * 100.0) == pytest.approx(reference, rel=1e-6)
    # End to end against MetPy's own saturation curve: within the curves' spread (largest seen 2.8e-5).
    end_to_end = mpcalc.virtual_temperature_from_dewpoint(p_hpa * units.hPa, t_c * units.degC,
                                                         td_c * units.degC).to("K").magnitude
    assert hum.virtual_temperature(t_c + 273.15, e, p_hpa * 100.0) == pytest.approx(end_to_end, rel=5e-5)


def test_moist_air_density_matches_metpy():
    # MetPy density(p, T, mixing ratio): p / (Rd Tv), Rd = 287.047 there, 287.05287 here (2e-5).
    p, T, e = 95_000.0, 298.15, 2_500.0
    w = mpcalc.mixing_ratio(e * units.Pa, p * units.Pa)
    reference = mpcalc.density(p * units.Pa, T * units.K, w).to("kg/m^3").magnitude
    assert hum.moist_air_density(p, T, e) == pytest.approx(reference, rel=5e-5)


def test_worked_example_humid_sea_level_day():
    # Worked example, by hand with the textbook relations (Wallace & Hobbs 2006 eqs. 3.15, 3.16)
    # and the IAPWS saturation pressure at 25 degC, 3169.9 Pa (from memory): 30 degC, dew point
    # 25 degC, 1013.25 hPa. Tv = 303.15 / (1 - 0.031285 * 0.37802) = 306.78 K; the density falls
    # from 1.1644 (dry) to 1.1506 kg/m3 (-1.2 %).
    e = hum.vapour_pressure_from_dew_point(298.15)
    assert e == pytest.approx(3169.9, abs=0.5)
    assert hum.virtual_temperature(303.15, e, 101_325.0) == pytest.approx(306.78, abs=0.01)
    assert hum.moist_air_density(101_325.0, 303.15, e) == pytest.approx(1.1506, abs=1e-4)


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
def test_shapes_broadcast(shape):
    T = shaped(290.0, shape)
    assert np.shape(hum.vapour_pressure_from_relative_humidity(T, 0.5)) == shape
    assert np.shape(hum.virtual_temperature(T, 1000.0, 90_000.0)) == shape
    if shape == ():
        assert type(hum.saturation_vapour_pressure(T)) is np.float64
    assert hum.virtual_temperature(np.full((2, 1), 290.0), np.array([0.0, 500.0, 1000.0]), 90_000.0).shape == (2, 3)


@SETTINGS
@given(st.floats(min_value=173.15, max_value=373.14), st.floats(min_value=1e-3, max_value=1.0))
def test_saturation_pressure_increases_with_temperature(T, dT):
    assert hum.saturation_vapour_pressure(T + dT) > hum.saturation_vapour_pressure(T)


@SETTINGS
@given(st.floats(min_value=173.15, max_value=330.0), st.floats(min_value=0.0, max_value=1.0),
       st.floats(min_value=20_000.0, max_value=110_000.0))
def test_humid_air_is_lighter_and_dry_air_unchanged(T, U, p):
    e = hum.vapour_pressure_from_relative_humidity(T, U)
    Tv = hum.virtual_temperature(T, e, p)
    assert Tv >= T
    assert hum.virtual_temperature(T, 0.0, p) == T
    dry = p / (287.05287 * T)  # gas law of dry air, ICAO Doc 7488/3 R
    assert hum.moist_air_density(p, T, e) <= dry * (1 + 1e-15)


def test_validity_range_is_named():
    # Hardy 1998: -100 to +100 degC.
    assert (hum.T_SAT_MIN, hum.T_SAT_MAX) == (173.15, 373.15)
    assert math.isclose(hum.EPSILON, 0.62198, rel_tol=1e-5)  # Mw / Md = 18.01528 / 28.9644
