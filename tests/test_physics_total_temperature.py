"""Tests for service.physics.total_temperature.

Outside references: the PyPI library ``aerocalc3`` (``mach2temp``, ``tas2temp``: static
temperature from an indicated temperature with a probe recovery factor), NACA Report 1135's
stagnation-temperature ratio typed out here, worked examples, and invariants with hypothesis.
"""

from __future__ import annotations

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics import total_temperature as tt

SETTINGS = settings(max_examples=60, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}
KT = 1852.0 / 3600.0  # m/s per knot, exact


@pytest.mark.parametrize(("mach", "indicated_c", "r"), [
    (0.6, -20.0, 0.8),  # aerocalc3's own docstring example: -33.787 degC
    (0.3, 23.0, 0.9),
    (0.78, -25.0, 1.0),
    (0.85, -10.0, 0.95),
    (2.0, 100.0, 1.0),
])
def test_static_from_mach_matches_aerocalc3(mach, indicated_c, r):
    # aerocalc3 mach2temp: T = T_ind / (1 + 0.2 r M^2), degC in and out. Largest seen: 1e-13 K.
    expected = ac.mach2temp(mach, indicated_c, r, temp_units="C") + 273.15
    assert tt.static_temperature_from_mach(indicated_c + 273.15, mach, r) == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize(("tas_kt", "indicated_c", "r"), [(250.0, -5.0, 0.9), (480.0, -20.0, 1.0),
                                                          (120.0, 30.0, 0.8)])
def test_static_from_tas_matches_aerocalc3(tas_kt, indicated_c, r):
    # aerocalc3 tas2temp: T = T_ind - r TAS^2 / 7592.473 (kt, its constant fitted to mach2temp);
    # our cp = 1004.685 J/(kg K) gives 2 cp / kt^2 = 7592.468 (7e-7 apart; aerocalc3 fitted its
    # constant with its own gas constant). Largest seen: 2.1e-5 K at 480 kt.
    expected = ac.tas2temp(tas_kt, indicated_c, r, speed_units="kt", temp_units="C") + 273.15
    assert tt.static_temperature_from_tas(indicated_c + 273.15, tas_kt * KT, r) == pytest.approx(expected, abs=5e-5)


def test_default_recovery_factor_is_one():
    # The docstrings' default r = 1 (a probe that recovers the whole rise), against aerocalc3 with r = 1:
    # mach2temp and tas2temp as above.
    assert tt.static_temperature_from_mach(250.0, 0.8) == pytest.approx(
        ac.mach2temp(0.8, 250.0 - 273.15, 1.0, temp_units="C") + 273.15, abs=1e-9)
    assert tt.static_temperature_from_tas(250.0, 250.0) == pytest.approx(
        ac.tas2temp(250.0 / KT, 250.0 - 273.15, 1.0, speed_units="kt", temp_units="C") + 273.15, abs=5e-5)
    # NACA Report 1135, eq. 43 with r = 1: TAT = T (1 + 0.2 M^2); V^2 / (2 cp) with cp = 1004.685 J/(kg K)
    assert tt.total_air_temperature(216.65, 0.8) == pytest.approx(216.65 * (1.0 + 0.2 * 0.64), rel=1e-15)
    assert tt.ram_rise(250.0) == pytest.approx(250.0**2 / (2.0 * 1004.685), rel=1e-6)


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
def test_stagnation_ratio_naca_1135(shape):
    # NACA Report 1135, eq. 43: T0 / T = 1 + (gamma - 1)/2 M^2; its table I at M = 0.8 gives
    # T/T0 = 0.88652 (from memory), at M = 2.0 0.55556.
    T = np.full(shape, 216.65) if shape else 216.65
    assert np.shape(tt.total_air_temperature(T, 0.8)) == shape
    np.testing.assert_allclose(T / tt.total_air_temperature(T, 0.8), 0.88652, atol=5e-6)
    np.testing.assert_allclose(T / tt.total_air_temperature(T, 2.0), 0.55556, atol=5e-6)


def test_worked_example_cruise():
    # Worked example by hand: ISA at FL350 (216.65 K), M 0.78, probe r = 1:
    # TAT = 216.65 (1 + 0.2 * 0.6084) = 243.012 K (-30.1 degC); the TAS is 0.78 * 295.07 m/s =
    # 230.15 m/s and V^2 / (2 cp) = 26.36 K (cp = 1004.685 J/(kg K)), the same ram rise.
    assert tt.total_air_temperature(216.65, 0.78) == pytest.approx(243.012, abs=1e-3)
    assert tt.ram_rise(0.78 * 295.070) == pytest.approx(243.012 - 216.65, abs=2e-3)


@SETTINGS
@given(st.floats(min_value=150.0, max_value=350.0), st.floats(min_value=0.0, max_value=5.0),
       st.floats(min_value=0.5, max_value=1.0))
def test_round_trips_and_the_two_forms_agree(T, M, r):
    TAT = tt.total_air_temperature(T, M, r)
    assert tt.static_temperature_from_mach(TAT, M, r) == pytest.approx(T, rel=1e-13)
    V = M * np.sqrt(1.4 * 287.05287 * T)  # speed of sound of ICAO Doc 7488/3
    assert tt.static_temperature_from_tas(TAT, V, r) == pytest.approx(T, rel=1e-12)
    assert TAT >= T
