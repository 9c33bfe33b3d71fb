"""Tests for service.physics.properties (the U.S. Standard Atmosphere 1976 property set).

Outside references: the PyPI library ``ambiance`` (ICAO Doc 7488/3, 1993, whose constants
differ slightly from the 1976 standard's: Avogadro 6.02257e23 against 6.022169e23 /mol, the
thermal-conductivity coefficient 2.648151e-3 against 2.64638e-3) over its whole range,
-5.004 to 81.02 km geometric; the U.S. Standard Atmosphere 1976 sea-level values (table I,
from memory); the 1976 standard's formulas typed out here; invariants checked with hypothesis.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from ambiance import Atmosphere
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics import atmosphere as atm
from service.physics import properties as props

SETTINGS = settings(max_examples=60, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}

#: ambiance's whole range of geometric heights [m].
AMBIANCE_H = np.linspace(-5_004.0, 81_020.0, 1_001)


def ours(h):
    """Every property at geometric heights ``h`` on a standard day."""
    T, p = atm.standard_state(atm.geopotential_altitude(h))
    g = props.gravity(h)
    return {
        "grav_accel": g,
        "number_density": props.number_density(p, T),
        "mean_particle_speed": props.mean_particle_speed(T),
        "mean_free_path": props.mean_free_path(p, T),
        "collision_frequency": props.collision_frequency(p, T),
        "pressure_scale_height": props.pressure_scale_height(T, g),
        "thermal_conductivity": props.thermal_conductivity(T),
    }


# ambiance attribute -> relative tolerance (largest difference seen over the range, and why).
AMBIANCE_TOLERANCES = {
    "grav_accel": 1e-14,  # 2.2e-16: the same law and radius
    "number_density": 8e-5,  # 6.9e-5: ICAO's Avogadro constant
    "mean_free_path": 8e-5,  # 6.9e-5: through the number density
    "collision_frequency": 8e-5,  # 6.8e-5
    "mean_particle_speed": 2e-6,  # 3.5e-7: ICAO's M0 = 28.96442 against 28.9644
    "pressure_scale_height": 2e-6,  # 7.0e-7: ICAO's R = 287.05287 against R*/M0 = 287.0531
    "thermal_conductivity": 8e-4,  # 6.7e-4: the two standards' coefficients
}


@pytest.mark.parametrize("name", AMBIANCE_TOLERANCES)
def test_matches_ambiance_over_its_whole_range(name):
    reference = getattr(Atmosphere(AMBIANCE_H), name)
    np.testing.assert_allclose(ours(AMBIANCE_H)[name], reference, rtol=AMBIANCE_TOLERANCES[name])


# U.S. Standard Atmosphere 1976, table I, sea level (from memory): (name, value, tolerance =
# half a unit in the last tabulated digit).
USSA76_SEA_LEVEL = [
    ("grav_accel", 9.80665, 5e-6),
    ("number_density", 2.5470e25, 5e20),
    ("mean_particle_speed", 458.94, 0.005),
    ("mean_free_path", 6.6332e-8, 5e-13),
    ("collision_frequency", 6.9189e9, 5e4),
    ("pressure_scale_height", 8434.5, 0.05),
    ("thermal_conductivity", 2.5326e-2, 5e-7),
]


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
@pytest.mark.parametrize(("name", "expected", "tol"), USSA76_SEA_LEVEL)
def test_sea_level_matches_ussa76_table(name, expected, tol, shape):
    value = ours(np.zeros(shape) if shape else 0.0)[name]
    assert np.shape(value) == shape
    np.testing.assert_allclose(value, expected, rtol=0.0, atol=tol)


def test_formulas_typed_from_the_1976_standard_up_to_86_km():
    # U.S. Standard Atmosphere 1976 eqs. 17, 52-56 with its table 2 constants typed here:
    # N_A = 6.022169e26 /kmol, R* = 8.31432e3 J/(kmol K), M0 = 28.9644 kg/kmol, sigma = 3.65e-10 m,
    # r0 = 6.356766e6 m; k = 2.64638e-3 T^1.5 / (T + 245.4 * 10^(-12/T)).
    h = np.array([0.0, 11_019.0, 47_350.0, 80_000.0, 86_000.0])
    T, p = atm.standard_state(atm.geopotential_altitude(h))
    g = 9.80665 * (6.356766e6 / (6.356766e6 + h)) ** 2
    n = 6.022169e26 * p / (8.31432e3 * T)
    V = np.sqrt(8.0 * 8.31432e3 * T / (math.pi * 28.9644))
    L = 1.0 / (math.sqrt(2.0) * math.pi * (3.65e-10) ** 2 * n)
    got = ours(h)
    np.testing.assert_allclose(got["grav_accel"], g, rtol=1e-14)
    np.testing.assert_allclose(got["number_density"], n, rtol=1e-13)
    np.testing.assert_allclose(got["mean_particle_speed"], V, rtol=1e-13)
    np.testing.assert_allclose(got["mean_free_path"], L, rtol=1e-13)
    np.testing.assert_allclose(got["collision_frequency"], V / L, rtol=1e-13)
    np.testing.assert_allclose(got["pressure_scale_height"], 8.31432e3 * T / (28.9644 * g), rtol=1e-13)
    np.testing.assert_allclose(got["thermal_conductivity"],
                               2.64638e-3 * T**1.5 / (T + 245.4 * 10.0 ** (-12.0 / T)), rtol=1e-13)


def test_top_of_the_model_86_km():
    # U.S. Standard Atmosphere 1976 at 86 km (from memory): g = 9.5466 m/s2, mean free path
    # 1.14e-2 m to 1.17e-2 m (the standard's kinetic temperature there, 186.87 K, is 0.04 % below
    # the molecular-scale 186.946 K this model uses, and its M is 0.04 % lower).
    got = ours(np.array(86_000.0))
    assert got["grav_accel"] == pytest.approx(9.5466, abs=5e-5)
    assert 1.14e-2 < got["mean_free_path"] < 1.18e-2


@SETTINGS
@given(st.floats(min_value=-5_004.0, max_value=86_000.0))
def test_gravity_falls_with_height_and_collisions_are_speed_over_path(h):
    assert props.gravity(h) > props.gravity(h + 1.0)
    T, p = atm.standard_state(atm.geopotential_altitude(h))
    assert props.collision_frequency(p, T) == pytest.approx(
        props.mean_particle_speed(T) / props.mean_free_path(p, T), rel=1e-14)
    # The scale height is the e-folding height of pressure: p(h + Hp) ~ p/e only in an
    # isothermal layer, so check the defining ratio R T / (M g) through the gas law instead.
    rho = atm.density(p, T)
    assert props.pressure_scale_height(T, props.gravity(h)) == pytest.approx(p / (rho * props.gravity(h)),
                                                                             rel=2e-6)
