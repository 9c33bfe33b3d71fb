"""Tests for service.physics.atmosphere.

Outside references: the ICAO Standard Atmosphere tables (ICAO Doc 7488/3, 1993) and the
U.S. Standard Atmosphere 1976 tables (NOAA-S/T 76-1562), quoted from memory where marked;
the PyPI libraries ``ambiance`` (ICAO 1993) and ``fluids`` (U.S. Standard Atmosphere 1976);
the textbook per-layer formulas of those standards, written out here independently of the
module's single-formula implementation; and invariants checked with hypothesis.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from ambiance import Atmosphere
from fluids.atmosphere import ATMOSPHERE_1976
from hypothesis import given, settings
from hypothesis import strategies as st

from bench.atmosphere_physics import ours  # the six properties, as the benchmark computes them
from service.physics import atmosphere as atm
from service.physics import constants
from tests import reference as ref

# The standard's constants typed from its text (tests/reference.py, ICAO Doc 7488/3), never imported from the code
# under test: a wrong constant in service.physics.constants then fails here instead of passing unseen.
EARTH_RADIUS, G0, P0, R_AIR, T0 = ref.R_EARTH, ref.G0, ref.P0, ref.R, ref.T0
H_MIN, H_MAX = ref.H_LOW, ref.H_TOP
LAYER_BASES = tuple(base for base, _ in ref.LAYERS)
LAYER_LAPSE_RATES = tuple(lapse for _, lapse in ref.LAYERS)

SETTINGS = settings(max_examples=60, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}
H_86KM = EARTH_RADIUS * 86_000.0 / (EARTH_RADIUS + 86_000.0)  # U.S. Std Atm 1976 eq. 18
altitudes = st.floats(min_value=H_MIN, max_value=H_MAX, allow_nan=False)


def test_constants_are_the_standards():
    # ICAO Doc 7488/3 table A and table D; NIST SP 811 for the units (typed in tests/reference.py).
    assert (constants.G0, constants.R_AIR, constants.GAMMA, constants.T0, constants.P0) == (
        9.80665, 287.05287, 1.4, 288.15, 101325.0)
    assert constants.EARTH_RADIUS == 6_356_766.0
    assert (constants.SUTHERLAND_BETA, constants.SUTHERLAND_S) == (1.458e-6, 110.4)
    assert constants.LAYER_BASES == LAYER_BASES and constants.LAYER_LAPSE_RATES == LAYER_LAPSE_RATES
    assert (constants.H_MIN, constants.H_MAX) == (-5000.0, 84852.0)
    assert constants.RHO0 == pytest.approx(1.225, abs=1e-6) and constants.A0 == pytest.approx(340.294, abs=1e-3)
    assert (constants.FT, constants.KT, constants.LB, constants.INHG) == (0.3048, 1852 / 3600, 0.45359237, 3386.389)
    assert constants.LBF == pytest.approx(4.4482216152605, rel=1e-15)
    assert constants.PSI == pytest.approx(6894.757293168361, rel=1e-15)
    assert constants.SLUG == pytest.approx(14.593902937206364, rel=1e-15)
    assert constants.MILE == pytest.approx(1609.344, rel=1e-15)


def shaped(value, shape):
    """``value`` as a Python float (scalar shape) or an array of ``shape`` filled with it."""
    return float(value) if shape == () else np.full(shape, value, dtype=float)


def assert_kind(result, shape):
    """Scalars in give np.float64 out; arrays in give arrays of the same shape out."""
    if shape == ():
        assert type(result) is np.float64
    else:
        assert isinstance(result, np.ndarray) and result.shape == shape


# --------------------------------------------------------------------------------------------
# Textbook per-layer formulas (ICAO Doc 7488/3; U.S. Std Atm 1976 eqs. 23, 33a, 33b), point by
# point in plain Python: the independent reference for the vectorised single formula.
# --------------------------------------------------------------------------------------------

def _textbook_bases():
    temps, pressures = [T0], [P0]
    for i, lapse in enumerate(LAYER_LAPSE_RATES[:-1]):
        dH = LAYER_BASES[i + 1] - LAYER_BASES[i]
        temps.append(temps[i] + lapse * dH)
        if lapse == 0.0:
            pressures.append(pressures[i] * math.exp(-G0 * dH / (R_AIR * temps[i])))
        else:
            pressures.append(pressures[i] * (temps[i + 1] / temps[i]) ** (-G0 / (R_AIR * lapse)))
    return temps, pressures


TEXTBOOK_TB, TEXTBOOK_PB = _textbook_bases()


def textbook_layer(H):
    """Index of the layer holding H: the last base <= H; the first layer extends down."""
    return max([i for i, base in enumerate(LAYER_BASES) if base <= H], default=0)


def textbook_state(H):
    i = textbook_layer(H)
    Hb, Tb, pb, lapse = LAYER_BASES[i], TEXTBOOK_TB[i], TEXTBOOK_PB[i], LAYER_LAPSE_RATES[i]
    T = Tb + lapse * (H - Hb)
    if lapse == 0.0:
        return T, pb * math.exp(-G0 * (H - Hb) / (R_AIR * Tb))
    return T, pb * (T / Tb) ** (-G0 / (R_AIR * lapse))


def textbook_pressure_altitude(p):
    i = max([j for j, pb in enumerate(TEXTBOOK_PB) if pb >= p], default=0)
    Hb, Tb, pb, lapse = LAYER_BASES[i], TEXTBOOK_TB[i], TEXTBOOK_PB[i], LAYER_LAPSE_RATES[i]
    if lapse == 0.0:
        return Hb - R_AIR * Tb / G0 * math.log(p / pb)
    return Hb + Tb / lapse * ((p / pb) ** (-R_AIR * lapse / G0) - 1.0)


# --------------------------------------------------------------------------------------------
# Published table values, run as scalar, 1-D and 2-D input
# --------------------------------------------------------------------------------------------

def _property(name, H):
    T, p = atm.standard_state(H)
    rho = atm.density(p, T)
    return {
        "T": T,
        "p": p,
        "rho": rho,
        "a": atm.speed_of_sound(T),
        "mu": atm.dynamic_viscosity(T),
        "nu": atm.kinematic_viscosity(T, rho),
        "T_only": atm.standard_temperature(H),
        "p_only": atm.standard_pressure(H),
        "rho_only": atm.standard_density(H),
    }[name]


# (geopotential altitude [m], quantity, tabulated value, tolerance = half a unit in the last
# tabulated digit). All values are from memory of the printed tables.
PUBLISHED = [
    # ICAO Doc 7488/3 sea-level values (from memory).
    (0.0, "T", 288.15, 0.005),
    (0.0, "p", 101_325.0, 0.0),  # the defining value: exact
    (0.0, "rho", 1.2250, 5e-5),
    (0.0, "a", 340.294, 5e-4),
    (0.0, "mu", 1.7894e-5, 5e-10),
    (0.0, "nu", 1.4607e-5, 5e-10),
    # ICAO Doc 7488/3 table at -5000 m (from memory).
    (-5_000.0, "T", 320.65, 0.005),
    (-5_000.0, "p", 1.77687e5, 0.5),
    (-5_000.0, "rho", 1.9305, 5e-5),
    # ICAO Doc 7488/3 troposphere (from memory, hPa as tabulated: 898.746, 701.085, 540.199).
    (1_000.0, "T", 281.65, 0.005),
    (1_000.0, "p", 89_874.6, 0.05),
    (3_000.0, "p", 70_108.5, 0.05),
    (5_000.0, "T", 255.65, 0.005),
    (5_000.0, "p", 54_019.9, 0.05),
    (10_000.0, "p", 26_436.0, 0.5),
    # Tropopause, ICAO Doc 7488/3 (from memory). The ICAO table's 2.26320E+4 Pa fits our
    # 22 632.04; the U.S. 1976 table's 22 632.06 comes from its slightly different gas constant
    # (R*/M0 with M0 = 28.9644 instead of ICAO's 28.964420).
    (11_000.0, "T", 216.65, 0.005),
    (11_000.0, "p", 22_632.0, 0.05),
    (11_000.0, "rho", 0.36392, 5e-6),
    (11_000.0, "a", 295.069, 5e-4),
    (11_000.0, "mu", 1.4216e-5, 5e-10),
    # Layer bases, U.S. Standard Atmosphere 1976 table 4 / ICAO Doc 7488/3 (from memory).
    (20_000.0, "T", 216.65, 0.005),
    (20_000.0, "p", 5_474.9, 0.05),
    (20_000.0, "rho", 0.088035, 5e-7),
    (32_000.0, "T", 228.65, 0.005),
    (32_000.0, "p", 868.02, 0.005),
    (32_000.0, "rho", 0.013225, 5e-7),
    (47_000.0, "T", 270.65, 0.005),
    (47_000.0, "p", 110.91, 0.005),
    (47_000.0, "rho", 1.4275e-3, 5e-8),
    (51_000.0, "T", 270.65, 0.005),
    (51_000.0, "p", 66.939, 5e-4),
    (51_000.0, "rho", 8.6160e-4, 5e-9),
    (71_000.0, "T", 214.65, 0.005),
    (71_000.0, "p", 3.9564, 5e-5),
    (71_000.0, "rho", 6.4211e-5, 5e-10),
    # Top of the model, 86 km geometric, U.S. Standard Atmosphere 1976 table I (from memory).
    # T here is the 1976 standard's molecular-scale temperature T_M,7 = 186.946 K (its kinetic
    # temperature 186.87 K differs above 80 km by the molecular-weight ratio); p, rho and a
    # in that standard follow from T_M, so they match ours.
    (H_86KM, "T", 186.946, 5e-4),
    (H_86KM, "p", 0.37338, 5e-6),
    (H_86KM, "rho", 6.958e-6, 5e-10),
    (H_86KM, "a", 274.10, 5e-3),
    # The single-quantity conveniences agree with the same tables.
    (11_000.0, "T_only", 216.65, 0.005),
    (11_000.0, "p_only", 22_632.0, 0.05),
    (11_000.0, "rho_only", 0.36392, 5e-6),
]


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES.keys())
@pytest.mark.parametrize(("H", "name", "expected", "tol"), PUBLISHED)
def test_published_tables(H, name, expected, tol, shape):
    result = _property(name, shaped(H, shape))
    assert_kind(result, shape)
    np.testing.assert_allclose(result, expected, rtol=0.0, atol=tol)


# Derived layer-base values against U.S. Standard Atmosphere 1976 table 4 (from memory):
# temperatures exact; pressures 101 325, 22 632.06, 5474.889, 868.0187, 110.9063, 66.93887,
# 3.956420 Pa, which carry that standard's gas constant (see above): the relative difference
# grows with ln(P0 / p) * 7.0e-7 to 7.1e-6 at 71 km.
US76_BASE_PRESSURES = [101_325.0, 22_632.06, 5_474.889, 868.0187, 110.9063, 66.93887, 3.956420]
US76_BASE_TEMPERATURES = [288.15, 216.65, 216.65, 228.65, 270.65, 270.65, 214.65]


def test_layer_bases_are_derived_and_match_the_1976_table():
    np.testing.assert_allclose(atm.LAYER_BASE_TEMPERATURES, US76_BASE_TEMPERATURES, rtol=1e-12)
    np.testing.assert_allclose(atm.LAYER_BASE_PRESSURES, US76_BASE_PRESSURES, rtol=8e-6)
    np.testing.assert_allclose(atm.LAYER_BASE_PRESSURES, TEXTBOOK_PB, rtol=1e-15)
    with pytest.raises(ValueError):
        atm.LAYER_BASE_PRESSURES[0] = 1.0  # read-only module data


# ICAO Doc 7488/3 ratios at 11 km (from memory): delta 0.22336, theta 0.75187, sigma 0.29708.
@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES.keys())
@pytest.mark.parametrize(
    ("H", "expected"), [(0.0, (1.0, 1.0, 1.0)), (11_000.0, (0.22336, 0.75187, 0.29708))]
)
def test_ratios(H, expected, shape):
    T, p = atm.standard_state(shaped(H, shape))
    result = atm.ratios(p, T, atm.density(p, T))
    for value, reference in zip(result, expected, strict=True):
        assert_kind(value, shape)
        np.testing.assert_allclose(value, reference, rtol=0.0, atol=5e-6)


# --------------------------------------------------------------------------------------------
# The single vectorised formula against the textbook per-layer formulas
# --------------------------------------------------------------------------------------------

def _near_bases():
    offsets = np.array([-1.0, -1e-3, -1e-9, 0.0, 1e-9, 1e-3, 1.0])
    return np.concatenate([base + offsets for base in LAYER_BASES])


def test_single_formula_matches_textbook_per_layer_formulas():
    rng = np.random.default_rng(1)
    H = np.concatenate([rng.uniform(H_MIN, H_MAX, 3000), _near_bases(), [H_MIN, H_MAX]])
    T, p = atm.standard_state(H)
    reference = np.array([textbook_state(x) for x in H])
    np.testing.assert_allclose(T, reference[:, 0], rtol=1e-15, atol=0.0)
    np.testing.assert_allclose(p, reference[:, 1], rtol=2e-14, atol=0.0)
    # Exactly the base values at the bases: no rounding from the exponent.
    np.testing.assert_array_equal(atm.standard_pressure(np.array(LAYER_BASES)), TEXTBOOK_PB)


def test_pressure_altitude_matches_textbook_inverse():
    p = np.geomspace(atm.P_MIN, atm.P_MAX, 2000)
    expected = [textbook_pressure_altitude(x) for x in p]
    np.testing.assert_allclose(atm.pressure_altitude(p), expected, rtol=1e-12, atol=1e-9)


# --------------------------------------------------------------------------------------------
# Reference libraries over thousands of random altitudes
# --------------------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def heights():
    """Random geometric altitudes over the whole model [m] (86 km is the top)."""
    top = float(atm.geometric_altitude(H_MAX))
    return np.random.default_rng(2026).uniform(-5_000.0, top, 3000)


# ambiance types its base pressures to six figures (22 632.0, 5474.87, ...), so pressure,
# density and kinematic viscosity differ by up to 2.05e-6 above 11 km (measured); between 0 and
# 11 km, where it starts from P0 itself, they agree to 1.4e-15 (measured), below 0 to 2.6e-7
# (its -5 km base typed as 177 687 Pa). Temperature, speed of sound and viscosity use the same
# constants: 1e-12.
AMBIANCE_RTOL = {
    "pressure": 3e-6,
    "temperature": 1e-12,
    "density": 3e-6,
    "speed_of_sound": 1e-12,
    "dynamic_viscosity": 1e-12,
    "kinematic_viscosity": 3e-6,
}


@pytest.mark.parametrize("name", AMBIANCE_RTOL)
def test_against_ambiance(heights, name):
    # check_bounds=False: ambiance stops at 81 020 m geometric and otherwise extends its last
    # layer (-2 K/km from 71 km), which is the 1976 standard's layer up to 86 km.
    theirs = getattr(Atmosphere(heights, check_bounds=False), name)
    mine = ours(heights)[name]
    np.testing.assert_allclose(mine, theirs, rtol=AMBIANCE_RTOL[name], atol=0.0)
    troposphere = (heights >= 0.0) & (heights < 11_000.0)
    np.testing.assert_allclose(mine[troposphere], theirs[troposphere], rtol=1e-13, atol=0.0)


# fluids implements the U.S. Standard Atmosphere 1976 with R = 8314.32 / 28.9644, 7.0e-7 above
# ICAO's 287.05287, so the pressure exponent differs by that fraction: the pressure difference
# grows as 7.0e-7 * ln(P0 / p), to 8.8e-6 at 86 km (measured), density to 8.1e-6, speed of
# sound 3.5e-7 (half of 7.0e-7). Temperature and Sutherland viscosity agree to rounding.
FLUIDS = {
    "pressure": ("P", 1e-5),
    "temperature": ("T", 1e-12),
    "density": ("rho", 1e-5),
    "speed_of_sound": ("v_sonic", 5e-7),
    "dynamic_viscosity": ("mu", 1e-12),
}


@pytest.fixture(scope="module")
def fluids_states(heights):
    return [ATMOSPHERE_1976(float(z)) for z in heights]


@pytest.mark.parametrize("name", FLUIDS)
def test_against_fluids(heights, fluids_states, name):
    attribute, rtol = FLUIDS[name]
    theirs = np.array([getattr(state, attribute) for state in fluids_states])
    np.testing.assert_allclose(ours(heights)[name], theirs, rtol=rtol, atol=0.0)


def test_inverses_against_ambiance_newton_solutions():
    # ambiance solves for geometric altitude by Newton iteration on its own tables (typed base
    # pressures, relative 2e-6): a height difference up to ~2e-6 of a scale height; measured
    # largest 1.6 cm for both inverses.
    rng = np.random.default_rng(3)
    p = np.exp(rng.uniform(np.log(1.0), np.log(170_000.0), 200))
    rho = np.exp(rng.uniform(np.log(2e-5), np.log(1.9), 200))
    h_p = Atmosphere.from_pressure(p).h
    h_rho = Atmosphere.from_density(rho).h
    np.testing.assert_allclose(atm.pressure_altitude(p), atm.geopotential_altitude(h_p), atol=0.05)
    np.testing.assert_allclose(atm.density_altitude(rho), atm.geopotential_altitude(h_rho), atol=0.05)


# --------------------------------------------------------------------------------------------
# Shapes, broadcasting, range handling
# --------------------------------------------------------------------------------------------

@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES.keys())
@pytest.mark.parametrize(
    "func",
    [
        atm.geopotential_altitude,
        atm.geometric_altitude,
        atm.standard_temperature,
        atm.standard_pressure,
        atm.standard_density,
        atm.speed_of_sound,
        atm.dynamic_viscosity,
        lambda x: atm.pressure_altitude(x * 10.0),
        lambda x: atm.density_altitude(x / 1000.0),
        lambda x: atm.qnh_offset(x * 330.0),
        lambda x: atm.density(x * 300.0, x),
        lambda x: atm.kinematic_viscosity(x, 1.0),
        lambda x: atm.temperature_from_deviation(x, 5.0),
        lambda x: atm.pressure_level_height(x, -5.0),
    ],
)
def test_scalar_in_scalar_out_array_in_array_out(func, shape):
    result = func(shaped(300.0, shape))
    assert_kind(result, shape)
    np.testing.assert_array_equal(result, func(300.0))  # same numbers whatever the shape


def test_two_argument_functions_broadcast():
    H = np.array([0.0, 1_000.0, 5_000.0])
    dT = np.array([[-10.0], [0.0], [20.0]])
    assert atm.pressure_level_height(H, dT).shape == (3, 3)
    assert atm.pressure_level_height(2_000.0, dT).shape == (3, 1)
    np.testing.assert_array_equal(
        atm.temperature_from_deviation(H, dT), atm.standard_temperature(H) + dT
    )
    T, p = atm.standard_state(H)
    np.testing.assert_array_equal(atm.density(p, 250.0), p / (R_AIR * 250.0))


def test_non_contiguous_and_list_input():
    H = np.linspace(0.0, 20_000.0, 20).reshape(4, 5).T  # Fortran-ordered view
    T, p = atm.standard_state(H)
    assert T.shape == p.shape == (5, 4)
    np.testing.assert_array_equal(p, atm.standard_pressure(np.ascontiguousarray(H)))
    np.testing.assert_array_equal(atm.standard_pressure([0, 11_000]), [P0, TEXTBOOK_PB[1]])


@pytest.mark.parametrize(
    ("func", "lowest", "highest"),
    [
        (atm.pressure_altitude, atm.P_MIN, atm.P_MAX),
        (atm.density_altitude, atm.RHO_MIN, atm.RHO_MAX),
    ],
)
def test_inverses_return_nan_outside_the_model(func, lowest, highest):
    outside = np.array([highest * (1 + 1e-9), lowest * (1 - 1e-9), 0.0, -1.0, np.nan, np.inf])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert np.isnan(func(outside)).all()
        assert np.isnan(func(float(highest * 2)))
        ends = func(np.array([highest, lowest]))
    np.testing.assert_allclose(ends, [H_MIN, H_MAX], rtol=0.0, atol=1e-6)
    assert H_MIN <= ends[0] and ends[1] <= H_MAX


def test_forward_functions_pass_nan_through_quietly():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        T, p = atm.standard_state(np.array([np.nan, 0.0]))
        h = atm.pressure_level_height(np.nan, 10.0)
    assert np.isnan(T[0]) and np.isnan(p[0]) and np.isnan(h)
    assert p[1] == P0


# --------------------------------------------------------------------------------------------
# QNH
# --------------------------------------------------------------------------------------------

def test_qnh_offset():
    assert atm.qnh_offset(101_325.0) == 0.0  # 1013.25 hPa is the standard datum, exactly
    # 1000 hPa is at about 111 m in the standard atmosphere (ICAO Doc 7488/3, from memory).
    assert atm.qnh_offset(100_000.0) == pytest.approx(111.0, abs=0.5)
    # Near sea level 1 hPa is 27-30 ft (common practice, no source): low QNH, positive offset.
    per_hpa = atm.qnh_offset(np.array([100_300.0, 102_300.0])) / np.array([10.25, -9.75])
    assert ((per_hpa > 27 * 0.3048) & (per_hpa < 30 * 0.3048)).all()


def test_density_altitude_rule_of_thumb():
    # About 120 ft per kelvin of ISA deviation near sea level (common practice, no source).
    rho = atm.density(P0, T0 + 15.0)
    assert atm.density_altitude(rho) == pytest.approx(15 * 120 * 0.3048, rel=0.1)
    assert atm.density_altitude(atm.standard_density(0.0)) == 0.0


# --------------------------------------------------------------------------------------------
# Off-standard days: height of a pressure level
# --------------------------------------------------------------------------------------------

@pytest.mark.parametrize("H", [-5_000.0, -1_200.0, 1_500.0, 11_000.0, 27_000.0, 60_000.0, H_MAX])
@pytest.mark.parametrize("dT", [-30.0, 15.0, 40.0])
def test_pressure_level_height_matches_numerical_hypsometric_integral(H, dT):
    # Z = integral_0^H (T_std + dT) / T_std dH' by the trapezoid rule on a fine grid, then the
    # geopotential-to-geometric conversion (U.S. Std Atm 1976 eq. 19). Largest difference
    # measured 2.2e-8 m (the grid's error); a wrong layer or sign would be metres.
    grid = np.linspace(0.0, H, 400_001)
    T_std = atm.standard_temperature(grid)
    Z = np.trapezoid((T_std + dT) / T_std, grid)
    expected = EARTH_RADIUS * Z / (EARTH_RADIUS - Z)
    np.testing.assert_allclose(atm.pressure_level_height(H, dT), expected, rtol=0.0, atol=1e-6)


def test_pressure_level_height_worked_example():
    # Hand calculation with the hypsometric relation (no source): on an ISA+15 day the column
    # from the datum to the 3000 m pressure level (288.15 K -> 268.65 K) has the log-mean
    # temperature 19.5 / ln(288.15 / 268.65) = 278.28 K, so it is 15 * 3000 / 278.28 = 161.71 m
    # (geopotential) thicker: Z = 3161.71 m, h = r Z / (r - Z) = 3163.28 m, against 3001.42 m
    # on a standard day.
    assert atm.pressure_level_height(3_000.0, 15.0) == pytest.approx(3163.28, abs=0.01)
    assert atm.pressure_level_height(3_000.0, 0.0) == pytest.approx(3001.42, abs=0.01)


# --------------------------------------------------------------------------------------------
# Invariants (hypothesis)
# --------------------------------------------------------------------------------------------

@SETTINGS
@given(altitudes)
def test_pressure_altitude_round_trip(H):
    # largest error measured over 20 000 points: 4e-11 m
    assert atm.pressure_altitude(atm.standard_pressure(H)) == pytest.approx(H, abs=1e-9)


@SETTINGS
@given(altitudes)
def test_density_altitude_round_trip(H):
    assert atm.density_altitude(atm.standard_density(H)) == pytest.approx(H, abs=1e-9)


@SETTINGS
@given(st.floats(min_value=-10_000.0, max_value=100_000.0, allow_nan=False))
def test_geometric_geopotential_round_trip(h):
    back = atm.geometric_altitude(atm.geopotential_altitude(h))
    assert back == pytest.approx(h, rel=1e-14, abs=1e-9)


@SETTINGS
@given(altitudes, st.floats(min_value=1e-3, max_value=20_000.0))
def test_pressure_and_density_strictly_decrease(H, step):
    upper = min(H + step, H_MAX)
    if upper > H:
        assert atm.standard_pressure(H) > atm.standard_pressure(upper)
        assert atm.standard_density(H) > atm.standard_density(upper)


def test_pressure_strictly_decreases_on_a_fine_grid():
    p = atm.standard_pressure(np.linspace(H_MIN, H_MAX, 200_001))
    assert (np.diff(p) < 0.0).all()


@SETTINGS
@given(
    st.sampled_from(LAYER_BASES[1:]),
    st.floats(min_value=1e-10, max_value=1e-3),
)
def test_continuity_at_layer_bases(base, eps):
    T, p = atm.standard_state(np.array([base - eps, base, base + eps]))
    # Within eps the profile moves at most |L| eps in T and (g0 / (R T)) eps relatively in p.
    assert abs(T[2] - T[0]) <= 2 * eps * 0.0065 + 1e-12
    assert abs(p[2] / p[0] - 1.0) <= 2 * eps * G0 / (R_AIR * T[1]) * (1 + 1e-6) + 1e-14
    assert T[1] == pytest.approx(TEXTBOOK_TB[LAYER_BASES.index(base)], rel=1e-15)


@SETTINGS
@given(altitudes)
def test_single_formula_matches_textbook_everywhere(H):
    T_ref, p_ref = textbook_state(H)
    T, p = atm.standard_state(H)
    assert T == pytest.approx(T_ref, rel=1e-15)
    assert p == pytest.approx(p_ref, rel=2e-14)


@SETTINGS
@given(st.floats(min_value=H_MIN, max_value=H_MAX, allow_nan=False))
def test_pressure_level_height_on_a_standard_day_is_geometric_altitude(H):
    assert atm.pressure_level_height(H, 0.0) == atm.geometric_altitude(H)


@SETTINGS
@given(
    st.floats(min_value=1.0, max_value=H_MAX),
    st.floats(min_value=-80.0, max_value=80.0),
    st.floats(min_value=1e-3, max_value=50.0),
)
def test_pressure_level_height_increases_with_deviation_above_the_datum(H, dT, step):
    assert atm.pressure_level_height(H, dT) < atm.pressure_level_height(H, dT + step)
    # and below the datum a warmer column puts the level further down
    assert atm.pressure_level_height(-H / 20.0, dT) > atm.pressure_level_height(-H / 20.0, dT + step)


@pytest.mark.parametrize("dT", [-30.0, 0.0, 25.0])
def test_pressure_level_height_with_the_pressure_given(dT):
    """Passing the standard pressure the caller already has gives the same height."""
    H = np.linspace(-5_000.0, H_MAX, 101)
    np.testing.assert_allclose(atm.pressure_level_height(H, dT, atm.standard_pressure(H)),
                               atm.pressure_level_height(H, dT), rtol=1e-12, atol=1e-9)
