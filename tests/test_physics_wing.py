"""Wing lift-curve slope (DATCOM) and CL <-> angle of attack: book examples, limits, invariants."""

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from service.physics import wing

SHAPES = [(), (3,), (2, 3)]

aspect_ratios = st.floats(0.1, 40.0)
sweeps = st.floats(0.0, math.radians(60.0))
machs = st.floats(0.0, 0.95)
kappas = st.floats(0.8, 1.1)


# --- Book examples ---------------------------------------------------------------------------


@pytest.mark.parametrize("shape", SHAPES)
def test_anderson_helmbold_example(shape):
    # Anderson, "Aircraft Performance and Design" (1999), Example 2.8: Helmbold's equation for the
    # NACA 2412 wing of Example 2.5, a0 = 0.105 per degree = 6.02 per rad, AR = 6, low speed,
    # gives a = 4.4 per rad (printed to 2 digits; tolerance half a unit in the last digit).
    kappa = wing.kappa_from_section_slope(6.02)
    slope = wing.lift_slope(np.full(shape, 6.0) if shape else 6.0, 0.0, 0.0, kappa)
    assert np.shape(slope) == shape
    np.testing.assert_allclose(slope, 4.4, atol=0.05)


def test_anderson_finite_wing_lift_coefficient():
    # Anderson, "Aircraft Performance and Design" (1999), Example 2.5: slope a = 4.51 per rad
    # (0.079 per degree), alpha = 6 deg, alpha_L=0 = -2.2 deg gives CL = 0.648. The book works
    # with the slope rounded to 0.079 per degree (+-0.0005/deg, +-0.004 in CL): tolerance 0.005.
    cl = wing.cl_from_angle(math.radians(6.0), 4.51, math.radians(-2.2))
    assert cl == pytest.approx(0.648, abs=0.005)
    alpha = wing.angle_from_cl(0.648, 4.51, math.radians(-2.2))
    assert math.degrees(alpha) == pytest.approx(6.0, abs=0.07)


@settings(max_examples=50, deadline=None)
@given(aspect_ratios, kappas)
def test_low_speed_unswept_is_helmbold_equation(A, kappa):
    # Helmbold's equation as written in Anderson, "Aircraft Performance and Design", Eq. (2.18a):
    # a = a0 / (sqrt(1 + (a0 / (pi A))^2) + a0 / (pi A)); the DATCOM form at M = 0, no sweep, is
    # the same expression.
    a0 = 2.0 * math.pi * kappa
    x = a0 / (math.pi * A)
    assert wing.lift_slope(A, 0.0, 0.0, kappa) == pytest.approx(a0 / (math.sqrt(1.0 + x * x) + x), rel=1e-12)


@settings(max_examples=50, deadline=None)
@given(st.floats(8.0, 1_000.0), kappas)
def test_high_aspect_ratio_approaches_lifting_line(A, kappa):
    # Anderson, "Aircraft Performance and Design", Example 2.8: for large AR Helmbold's equation
    # reduces to the lifting-line slope a0 / (1 + a0 / (pi A)) (Eq. 2.15 with e = 1). The two
    # differ by a factor 1 + (sqrt(1 + x^2) - 1) / (1 + x) < 1 + x^2 / 2, x = a0 / (pi A).
    a0 = 2.0 * math.pi * kappa
    x = a0 / (math.pi * A)
    helmbold = wing.lift_slope(A, 0.0, 0.0, kappa)
    lifting_line = a0 / (1.0 + x)
    assert helmbold < lifting_line
    assert lifting_line / helmbold - 1.0 <= 0.5 * x * x * (1.0 + 1e-9)


# --- Limits of the formula (DATCOM / theory, common knowledge) -------------------------------


@settings(max_examples=50, deadline=None)
@given(sweeps, machs, kappas)
def test_infinite_aspect_ratio_limit(sweep, mach, kappa):
    # A -> infinity: 2 pi kappa / sqrt(beta^2 + tan^2 Lambda); unswept, the Prandtl-Glauert
    # section slope 2 pi kappa / beta (Glauert); at M = 0, 2 pi kappa cos Lambda (simple sweep theory).
    beta = math.sqrt(1.0 - mach * mach)
    limit = 2.0 * math.pi * kappa / math.hypot(beta, math.tan(sweep))
    assert wing.lift_slope(1e9, sweep, mach, kappa) == pytest.approx(limit, rel=1e-7)
    assert wing.lift_slope(1e9, 0.0, mach, kappa) == pytest.approx(2.0 * math.pi * kappa / beta, rel=1e-7)
    assert wing.lift_slope(1e9, sweep, 0.0, kappa) == pytest.approx(2.0 * math.pi * kappa * math.cos(sweep), rel=1e-7)


def test_infinite_aspect_ratio_limit_is_approached_as_one_over_a():
    # The gap to the limit shrinks like 1/A (first-order term 2 / (A c), c = beta / kappa).
    kappa, mach = 0.95, 0.6
    limit = 2.0 * math.pi * kappa / math.sqrt(1.0 - mach**2)
    gaps = limit - wing.lift_slope(np.array([1e2, 1e3, 1e4]), 0.0, mach, kappa)
    assert (gaps > 0).all()
    np.testing.assert_allclose(gaps[:-1] / gaps[1:], 10.0, rtol=0.02)


@settings(max_examples=50, deadline=None)
@given(sweeps, machs, kappas)
def test_slender_wing_limit(sweep, mach, kappa):
    # A -> 0: pi A / 2 whatever the Mach number and sweep (R. T. Jones, NACA Report 835).
    A = 1e-6
    assert wing.lift_slope(A, sweep, mach, kappa) == pytest.approx(math.pi * A / 2.0, rel=1e-9)


def test_outside_domain_is_nan():
    slope = wing.lift_slope(6.0, 0.0, [1.0, 1.2, -0.1, np.nan])
    assert np.isnan(slope).all()
    assert np.isnan(wing.lift_slope(-1.0, 0.0, 0.5))
    assert np.isnan(wing.lift_slope(6.0, math.pi / 2, 0.5))
    assert np.isnan(wing.lift_slope(6.0, 0.0, 0.5, kappa=0.0))
    assert wing.lift_slope(0.0, 0.0, 0.5) == 0.0


def test_shapes_broadcast():
    A = np.array([[4.0], [8.0]])
    M = np.array([0.2, 0.5, 0.8])
    slope = wing.lift_slope(A, 0.3, M)
    assert slope.shape == (2, 3)
    assert slope[1, 2] == wing.lift_slope(8.0, 0.3, 0.8)
    assert isinstance(wing.lift_slope(8.0, 0.3, 0.8), np.floating)


# --- Monotonicity (hypothesis) -----------------------------------------------------------------


@settings(max_examples=60, deadline=None)
@given(aspect_ratios, aspect_ratios, sweeps, machs, kappas)
def test_increasing_in_aspect_ratio(A1, A2, sweep, mach, kappa):
    assume(A2 > A1 * (1.0 + 1e-9))
    assert wing.lift_slope(A2, sweep, mach, kappa) > wing.lift_slope(A1, sweep, mach, kappa)


@settings(max_examples=60, deadline=None)
@given(aspect_ratios, sweeps, sweeps, machs, kappas)
def test_decreasing_in_sweep(A, s1, s2, mach, kappa):
    assume(s2 > s1 + 0.01)
    assert wing.lift_slope(A, s2, mach, kappa) < wing.lift_slope(A, s1, mach, kappa)
    # Sweep forward or back: the same slope.
    assert wing.lift_slope(A, -s2, mach, kappa) == wing.lift_slope(A, s2, mach, kappa)


@settings(max_examples=60, deadline=None)
@given(aspect_ratios, sweeps, machs, machs, kappas)
def test_increasing_in_mach(A, sweep, m1, m2, kappa):
    assume(m2 > m1 + 0.01)
    assert wing.lift_slope(A, sweep, m2, kappa) > wing.lift_slope(A, sweep, m1, kappa)


# --- CL <-> angle of attack ------------------------------------------------------------------


@settings(max_examples=60, deadline=None)
@given(
    st.floats(math.radians(-10.0), math.radians(20.0)),
    st.floats(1.0, 7.0),
    st.floats(math.radians(-5.0), math.radians(2.0)),
)
def test_angle_cl_round_trip(alpha, slope, alpha0):
    cl = wing.cl_from_angle(alpha, slope, alpha0)
    assert wing.angle_from_cl(cl, slope, alpha0) == pytest.approx(alpha, abs=1e-12)
    assert wing.cl_from_angle(alpha0, slope, alpha0) == 0.0


def test_thin_airfoil_kappa():
    # Thin-airfoil theory: 2 pi per rad is kappa = 1 (common knowledge); 0.1 per degree is 0.912.
    assert wing.kappa_from_section_slope(2.0 * math.pi) == pytest.approx(1.0, rel=1e-15)
    assert wing.kappa_from_section_slope(np.degrees(0.1)) == pytest.approx(0.912, abs=5e-4)
    np.testing.assert_allclose(wing.kappa_from_section_slope(np.full((2, 2), math.pi)), 0.5)
