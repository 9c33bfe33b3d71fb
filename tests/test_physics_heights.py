"""Geometric heights on off-standard days and above a QNH datum (service.physics.atmosphere:
pressure_level_height with a datum, and its inverse pressure_altitude_at_height).

Outside references: the hypsometric equation integrated numerically here with the textbook
per-layer standard temperature (ICAO Doc 7488/3), a worked example, the altimetry rule of thumb
(common practice, no source); round trips and monotonicity with hypothesis.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from service.physics import atmosphere as atm
from service.physics.constants import H_MAX, H_MIN

SETTINGS = settings(max_examples=80, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}
FT = 0.3048
R_EARTH = 6_356_766.0  # U.S. Standard Atmosphere 1976, nominal Earth radius [m]

altitudes = st.floats(min_value=H_MIN, max_value=H_MAX, allow_nan=False)
deviations = st.floats(min_value=-100.0, max_value=100.0, allow_nan=False)
settings_pa = st.floats(min_value=80_000.0, max_value=110_000.0, allow_nan=False)


def close(a, b):
    """Equal to 1e-9 relative, or within a micrometre near the datum (where ln(p / p_d) rounds)."""
    return abs(a - b) <= max(1e-9 * abs(b), 1e-6)


def textbook_T(H):
    """Standard temperature of the troposphere and lower stratosphere (ICAO Doc 7488/3)."""
    return np.where(H < 11_000.0, 288.15 - 0.0065 * H, 216.65)


def hypsometric_height(H_top, dT, H_datum=0.0, n=200_001):
    """Geometric height of the pressure level H_top above the level H_datum with a constant
    deviation dT: Z = integral of (T_std + dT) / T_std dH (trapezoid), h = r Z / (r - Z)."""
    H = np.linspace(H_datum, H_top, n)
    Z = np.trapezoid((textbook_T(H) + dT) / textbook_T(H), H)
    return R_EARTH * Z / (R_EARTH - Z)


@pytest.mark.parametrize(("h", "dT"), [(10_000.0, 20.0), (3_000.0, -30.0), (15_000.0, 10.0), (500.0, -60.0)])
def test_inverse_matches_the_numerical_hypsometric_integral(h, dT):
    # Largest difference seen: 3e-7 m (the trapezoid's error).
    H = atm.pressure_altitude_at_height(h, dT)
    assert hypsometric_height(H, dT) == pytest.approx(h, abs=1e-5)


#: The seven layers of the standard atmosphere to 84 852 m: base [m], base temperature [K], lapse rate [K/m]
#: (the layer bases and gradients of ICAO Doc 7488/3 and the U.S. Standard Atmosphere 1976, typed here; each base
#: temperature follows from 288.15 K and the gradients below it).
LAYERS_7488 = ((0.0, 288.15, -0.0065), (11_000.0, 216.65, 0.0), (20_000.0, 216.65, 0.0010),
               (32_000.0, 228.65, 0.0028), (47_000.0, 270.65, 0.0), (51_000.0, 270.65, -0.0028),
               (71_000.0, 214.65, -0.0020))


def textbook_T_all_layers(H):
    """Standard temperature at any pressure altitude of the model, from LAYERS_7488."""
    bases = np.array([layer[0] for layer in LAYERS_7488])
    i = np.clip(np.searchsorted(bases, H, side="right") - 1, 0, len(bases) - 1)
    base, T_base, lapse = (np.array(column)[i] for column in zip(*LAYERS_7488, strict=True))
    return T_base + lapse * (H - base)


def height_of_level_at_temperature(H_top, T, n=400_001):
    """Geometric height of the pressure level H_top when the temperature there is T: the deviation
    T - T_std(H_top), constant down to the datum (sea-level standard pressure), integrated as above."""
    dT = T - float(textbook_T_all_layers(np.float64(H_top)))
    H = np.linspace(0.0, H_top, n)
    Z = np.trapezoid((textbook_T_all_layers(H) + dT) / textbook_T_all_layers(H), H)
    return R_EARTH * Z / (R_EARTH - Z)


# (pressure altitude [m], temperature there [K]): near the datum (where ln(p_d / p) vanishes), in the
# troposphere, and in the upper layers of the mesosphere (negative lapse rates).
LEVELS_AT_TEMPERATURE = [(-4.0, 277.0), (-0.5624, 323.86), (5.0, 250.0), (10_000.0, 250.0), (55_000.0, 240.0),
                         (60_000.0, 260.0), (65_000.0, 230.0), (70_000.0, 200.0)]


@pytest.mark.parametrize(("H", "T"), LEVELS_AT_TEMPERATURE)
def test_inverse_with_the_temperature_at_the_level_matches_the_integral(H, T):
    # Largest difference seen: 3.6e-13 relative (the trapezoid over all seven layers).
    h = height_of_level_at_temperature(H, T)
    assert close(atm.pressure_altitude_at_height(h, T=T), H)
    np.testing.assert_allclose(atm.pressure_altitude_at_height(np.array([h, h]), T=np.array([T, T])), [H, H],
                               rtol=1e-9, atol=1e-6)


def test_worked_example_from_the_issue():
    # 10 000 m geometric on an ISA+20 day: the pressure level is at 9 263.07 m pressure altitude
    # (by the integral above), where the standard-day relation gave 9 984.3 m; the density there
    # is 0.4153 kg/m3 (by hand: p = 29 557 Pa at 9 263 m, T = 227.94 + 20 K).
    H = atm.pressure_altitude_at_height(10_000.0, 20.0)
    assert H == pytest.approx(9_263.07, abs=0.01)
    T, p = atm.standard_state(H)
    assert atm.density(p, T + 20.0) == pytest.approx(0.4153, abs=1e-4)
    assert atm.pressure_level_height(H, 20.0) == pytest.approx(10_000.0, rel=1e-12)


def test_true_altitude_rule_of_thumb():
    # Common practice, no source: the altimeter is off by about 4 % of the height above the
    # setting's datum per 10 K of ISA deviation. 10 000 ft indicated with QNH 1013.25 on an
    # ISA-20 day: about 9 200 ft true; the hypsometric relation gives 9 287 ft.
    true_ft = atm.pressure_level_height(10_000.0 * FT, -20.0, datum=101_325.0) / FT
    assert true_ft == pytest.approx(9_200.0, rel=0.015)


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
def test_qnh_datum_on_a_standard_day_gives_the_indicated_altitude(shape):
    # With QNH set, an altimeter reads the true altitude above mean sea level on a day of
    # standard temperature (its scale is the standard atmosphere's): the height above the QNH
    # level is the indicated altitude (geopotential, converted to geometric).
    indicated = np.full(shape, 5_000.0 * FT) if shape else 5_000.0 * FT
    qnh = 99_500.0
    h = atm.pressure_level_height(indicated + atm.qnh_offset(qnh), 0.0, datum=qnh)
    assert np.shape(h) == shape
    np.testing.assert_allclose(h, atm.geometric_altitude(indicated), rtol=1e-12)
    # and from the numerical integral between the QNH level and the aircraft's level
    assert hypsometric_height(5_000.0 * FT + float(atm.qnh_offset(qnh)), 0.0,
                              float(atm.qnh_offset(qnh))) == pytest.approx(float(np.ravel(h)[0]), abs=1e-5)


def test_standard_day_without_datum_is_the_geopotential_conversion():
    h = np.linspace(float(atm.geometric_altitude(H_MIN)), float(atm.geometric_altitude(H_MAX)), 50)
    np.testing.assert_allclose(atm.pressure_altitude_at_height(h), atm.geopotential_altitude(h), rtol=1e-12,
                               atol=1e-9)


def test_outside_the_model_is_nan_and_shapes_broadcast():
    assert np.isnan(atm.pressure_altitude_at_height(90_000.0, 0.0))
    assert np.isnan(atm.pressure_altitude_at_height(-6_000.0, 30.0))
    assert np.isnan(atm.pressure_altitude_at_height(np.nan, 0.0))
    out = atm.pressure_altitude_at_height(np.array([[0.0], [1_000.0]]), np.array([-10.0, 0.0, 10.0]))
    assert out.shape == (2, 3)
    assert type(atm.pressure_altitude_at_height(1_000.0, 5.0)) is np.float64
    with pytest.raises(ValueError):
        atm.pressure_altitude_at_height(1.0, dT=1.0, T=288.0)


@SETTINGS
@given(altitudes, deviations)
def test_round_trip_from_pressure_altitude(H, dT):
    h = atm.pressure_level_height(H, dT)
    assume(np.isfinite(h))
    assert close(atm.pressure_altitude_at_height(h, dT), H)


@SETTINGS
@given(st.floats(min_value=-5_000.0, max_value=80_000.0), deviations)
def test_round_trip_from_geometric_height(h, dT):
    H = atm.pressure_altitude_at_height(h, dT)
    assume(np.isfinite(H))
    assert close(atm.pressure_level_height(H, dT), h)


@SETTINGS
@given(st.floats(min_value=-4_000.0, max_value=80_000.0), deviations, settings_pa)
def test_round_trip_above_a_qnh_datum(h, dT, qnh):
    H = atm.pressure_altitude_at_height(h, dT, datum=qnh)
    assume(np.isfinite(H))
    assert close(atm.pressure_level_height(H, dT, datum=qnh), h)


@SETTINGS
@given(st.floats(min_value=-4_000.0, max_value=80_000.0), deviations, st.one_of(st.none(), settings_pa))
def test_round_trip_with_the_temperature_at_the_level(h, dT_guess, qnh):
    # With a temperature T given, the deviation is T - T_std(H) at the level found: the forward
    # relation given that deviation returns the height.
    T = float(atm.standard_temperature(atm.geopotential_altitude(h))) + dT_guess
    H = atm.pressure_altitude_at_height(h, T=T, datum=qnh)
    assume(np.isfinite(H))
    dT = T - atm.standard_temperature(H)
    assume(abs(dT) <= 100.0)
    assert close(atm.pressure_level_height(H, dT, datum=qnh), h)


@SETTINGS
@given(altitudes, deviations, st.floats(min_value=1.0, max_value=1_000.0))
def test_height_increases_with_pressure_altitude(H, dT, step):
    assume(H + step <= H_MAX)
    assert atm.pressure_level_height(H + step, dT) > atm.pressure_level_height(H, dT)
