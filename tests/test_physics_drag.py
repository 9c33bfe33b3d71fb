"""The parabolic drag polar and its characteristic speeds: textbook examples, closed forms, brute force.

Unit constants are typed here (exact definitions, NIST SP 811), not imported from the service.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics import drag

# Exact unit definitions (NIST SP 811 appendix B), typed independently of service.physics.constants.
FT = 0.3048  # m
LBF = 0.45359237 * 9.80665  # N
SLUG = LBF / FT  # kg
RHO_SEA_LEVEL = 1.225  # kg/m3, ICAO Doc 7488/3 table (sea level)

SHAPES = [(), (3,), (2, 3)]


def _filled(value, shape):
    """``value`` as a scalar for shape (), else an array of that shape."""
    return value if shape == () else np.full(shape, value)


# --- Anderson, "Introduction to Flight", chapter 6: the CP-1 and the CJ-1 (from memory) ----------------------
# CP-1 (a light single): W = 2950 lb, S = 174 ft^2, b = 35.8 ft (A = 7.37), e = 0.8, CD0 = 0.025.
# CJ-1 (a light business jet): W = 19 815 lb, S = 318 ft^2, b = 53.3 ft (A = 8.93), e = 0.81, CD0 = 0.02.
CP1 = {"weight": 2950.0 * LBF, "wing_area": 174.0 * FT**2, "aspect_ratio": 7.37, "e": 0.8, "cd0": 0.025}
CJ1 = {"weight": 19_815.0 * LBF, "wing_area": 318.0 * FT**2, "aspect_ratio": 53.3**2 / 318.0, "e": 0.81,
       "cd0": 0.02}


@pytest.mark.parametrize("shape", SHAPES)
def test_anderson_cp1_thrust_required_at_500_ft_s(shape):
    # Anderson, "Introduction to Flight", the CP-1 thrust-required example (from memory): sea level
    # rho = 0.002377 slug/ft^3, V = 500 ft/s: CL = 0.057, CD = 0.0252, L/D = 2.26, TR = 1305 lb.
    # Tolerances: half a unit of the last printed digit for CL and CD; 0.5 % on L/D and TR, which the book
    # works out from the rounded CL and CD (0.057 / 0.0252 = 2.262; unrounded 2.266).
    k = drag.induced_drag_factor(CP1["aspect_ratio"], CP1["e"])
    v = 500.0 * FT
    q = 0.5 * (0.002377 * SLUG / FT**3) * v**2
    c = drag.flight_condition(_filled(CP1["weight"], shape), CP1["wing_area"], q, v, CP1["cd0"], k)
    assert np.shape(c.drag) == shape
    np.testing.assert_allclose(c.cl, 0.057, atol=5e-4)
    np.testing.assert_allclose(c.cd, 0.0252, atol=5e-5)
    np.testing.assert_allclose(c.lift_to_drag, 2.26, rtol=5e-3)
    np.testing.assert_allclose(c.drag / LBF, 1305.0, rtol=5e-3)
    np.testing.assert_allclose(c.power, c.drag * v, rtol=1e-14)
    # The polar's pieces give the same: CD = CD0 + k CL^2, D = q S CD.
    np.testing.assert_allclose(drag.aerodynamic_force(q, CP1["wing_area"], drag.drag_coefficient(c.cl, CP1["cd0"], k)),
                               c.drag, rtol=1e-14)
    np.testing.assert_allclose(drag.lift_to_drag(c.cl, CP1["cd0"], k), c.lift_to_drag, rtol=1e-14)


def test_flight_condition_and_level_condition_agree():
    # The same point from its CL and the density, or from its q and TAS.
    rho, w, s, cd0, k = 0.7, 200_000.0, 61.0, 0.022, 0.0362
    a = drag.level_condition(w, s, np.array([0.3, 0.6, 1.2]), cd0, k, rho, load_factor=1.2)
    b = drag.flight_condition(w, s, a.q, a.tas, cd0, k, load_factor=1.2)
    for x, y in zip(a, b, strict=True):
        np.testing.assert_allclose(x, y, rtol=1e-14)
    np.testing.assert_allclose(a.q, 0.5 * rho * a.tas**2, rtol=1e-14)


@pytest.mark.parametrize(("aircraft", "ld_max"), [(CP1, 13.6), (CJ1, 16.9)])
def test_anderson_max_lift_to_drag(aircraft, ld_max):
    # Anderson, "Introduction to Flight", chapter 6 (from memory): (L/D)max = 13.6 for the CP-1 and 16.9 for
    # the CJ-1; tolerance half a unit in the last digit.
    k = drag.induced_drag_factor(aircraft["aspect_ratio"], aircraft["e"])
    np.testing.assert_allclose(drag.max_lift_to_drag(aircraft["cd0"], k), ld_max, atol=0.05)
    cond = drag.minimum_drag(aircraft["weight"], aircraft["wing_area"], aircraft["cd0"], k, RHO_SEA_LEVEL)
    np.testing.assert_allclose(cond.lift_to_drag, ld_max, atol=0.05)


def test_anderson_cp1_glide_from_10000_ft():
    # Anderson, "Introduction to Flight", gliding flight, the CP-1 from 10 000 ft (from memory): minimum glide
    # angle 4.2 deg, maximum range 136 000 ft; tolerance half a unit in the last printed digit.
    k = drag.induced_drag_factor(CP1["aspect_ratio"], CP1["e"])
    rho_10000 = 0.0017556 * SLUG / FT**3  # U.S. Standard Atmosphere 1976 table, 10 000 ft (slug/ft^3)
    g = drag.best_glide(CP1["weight"], CP1["wing_area"], CP1["cd0"], k, rho_10000)
    np.testing.assert_allclose(np.degrees(g.glide_angle), 4.2, atol=0.05)
    distance = drag.glide_distance(10_000.0 * FT, g.glide_ratio)
    np.testing.assert_allclose(distance / FT, 136_000.0, atol=500.0)


# --- Closed forms (typed here in their own algebra) -------------------------------------------------------------


def test_minimum_drag_closed_forms():
    # Anderson, "Introduction to Flight", chapter 6: at (L/D)max CD = 2 CD0 (induced = parasite drag),
    # D = 2 W sqrt(CD0 k), V = sqrt(2 W / (rho S)) (k / CD0)^(1/4).
    w, s, cd0, k, rho = 200_000.0, 61.0, 0.022, 0.0362, 0.6
    c = drag.minimum_drag(w, s, cd0, k, rho)
    np.testing.assert_allclose(c.cd, 2 * cd0, rtol=1e-14)
    np.testing.assert_allclose(c.drag, 2 * w * math.sqrt(cd0 * k), rtol=1e-13)
    np.testing.assert_allclose(c.tas, math.sqrt(2 * w / (rho * s)) * (k / cd0) ** 0.25, rtol=1e-13)
    np.testing.assert_allclose(c.eas, c.tas * math.sqrt(rho / RHO_SEA_LEVEL), rtol=1e-5)
    np.testing.assert_allclose(c.power, c.drag * c.tas, rtol=1e-14)


def test_minimum_power_closed_forms():
    # Anderson, "Introduction to Flight", chapter 6: at minimum power CD = 4 CD0, V_mp = 3^(-1/4) V_md
    # = 0.7598 V_md, L/D = (sqrt 3 / 2)(L/D)max = 0.8660 (L/D)max, and
    # P_min = sqrt(2 W^3 / (rho S)) CD / CL^(3/2).
    w, s, cd0, k, rho = 200_000.0, 61.0, 0.022, 0.0362, 0.6
    md = drag.minimum_drag(w, s, cd0, k, rho)
    mp = drag.minimum_power(w, s, cd0, k, rho)
    np.testing.assert_allclose(mp.cd, 4 * cd0, rtol=1e-14)
    np.testing.assert_allclose(mp.tas / md.tas, 0.759836, rtol=1e-6)
    np.testing.assert_allclose(mp.lift_to_drag / md.lift_to_drag, 0.866025, rtol=1e-6)
    cl = math.sqrt(3 * cd0 / k)
    np.testing.assert_allclose(mp.power, math.sqrt(2 * w**3 / (rho * s)) * 4 * cd0 / cl**1.5, rtol=1e-13)


@settings(max_examples=40, deadline=None)
@given(cd0=st.floats(0.01, 0.06), aspect_ratio=st.floats(5.0, 14.0), e=st.floats(0.6, 0.95),
       rho=st.floats(0.2, 1.3))
def test_characteristic_conditions_are_the_minima(cd0, aspect_ratio, e, rho):
    # Brute force: along the level-flight line D(V) = q S (CD0 + k CL^2), CL = W / (q S), the minimum of D and of
    # D V over a dense speed grid falls at the closed-form speeds (to the grid's resolution).
    w, s = 200_000.0, 61.0
    k = 1.0 / (math.pi * aspect_ratio * e)
    v = np.linspace(20.0, 400.0, 200_001)
    q = 0.5 * rho * v**2
    d = q * s * (cd0 + k * (w / (q * s)) ** 2)
    md = drag.minimum_drag(w, s, cd0, k, rho)
    mp = drag.minimum_power(w, s, cd0, k, rho)
    np.testing.assert_allclose(md.tas, v[np.argmin(d)], atol=2e-3)
    np.testing.assert_allclose(md.drag, d.min(), rtol=1e-9)
    np.testing.assert_allclose(mp.tas, v[np.argmin(d * v)], atol=2e-3)
    np.testing.assert_allclose(mp.power, (d * v).min(), rtol=1e-9)


def test_best_glide_balance_of_forces():
    # Steady glide (Anderson, "Introduction to Flight", gliding flight): L = W cos(gamma), D = W sin(gamma),
    # tan(gamma) = 1 / (L/D)max, sink = V sin(gamma); distance from h = h (L/D).
    w, s, cd0, k, rho = 200_000.0, 61.0, 0.022, 0.0362, 0.9
    g = drag.best_glide(w, s, cd0, k, rho)
    cl = math.sqrt(cd0 / k)
    q = 0.5 * rho * g.tas**2
    np.testing.assert_allclose(q * s * cl, w * math.cos(g.glide_angle), rtol=1e-13)
    np.testing.assert_allclose(q * s * 2 * cd0, w * math.sin(g.glide_angle), rtol=1e-13)
    np.testing.assert_allclose(g.sink_rate, g.tas * math.sin(g.glide_angle), rtol=1e-14)
    np.testing.assert_allclose(math.tan(g.glide_angle), 2 * math.sqrt(cd0 * k), rtol=1e-14)
    np.testing.assert_allclose(drag.glide_distance(1000.0, g.glide_ratio), 1000.0 / math.tan(g.glide_angle),
                               rtol=1e-13)


def test_induced_drag_factor():
    # k = 1 / (pi A e) (Anderson, "Introduction to Flight", chapter 5); A = 11, e = 0.8: 1 / 27.64602 = 0.0361716.
    np.testing.assert_allclose(drag.induced_drag_factor(11.0, 0.8), 0.0361716, rtol=2e-6)


def test_rule_of_thumb_best_glide_is_faster_than_minimum_sink():
    # Common practice, no source: the minimum-sink speed is about three quarters of the best-glide speed.
    w, s, cd0, k = 200_000.0, 61.0, 0.022, 0.0362
    ratio = drag.minimum_power(w, s, cd0, k, 1.0).tas / drag.best_glide(w, s, cd0, k, 1.0).tas
    assert 0.7 < ratio < 0.8


def test_polar_range():
    # The polar's Mach bound (no compressibility drag): strictly above the limit is flagged.
    assert drag.beyond_polar_range([0.3, 0.6, 0.61]).tolist() == [False, False, True]
    assert drag.beyond_polar_range(0.7, 0.75) is np.False_


@pytest.mark.parametrize("shape", SHAPES)
def test_shapes(shape):
    # Scalars in give scalars out; arrays of any shape keep it; inputs broadcast.
    w = _filled(200_000.0, shape)
    for result in (drag.minimum_drag(w, 61.0, 0.022, 0.0362, 0.9), drag.minimum_power(w, 61.0, 0.022, 0.0362, 0.9),
                   drag.best_glide(w, 61.0, 0.022, 0.0362, 0.9)):
        for value in result:
            assert np.shape(value) == shape
            assert np.isfinite(value).all()
    c = drag.level_condition(200_000.0, 61.0, [[0.3], [0.6]], 0.022, 0.0362, [0.5, 0.9, 1.2])
    assert c.tas.shape == (2, 3)
    np.testing.assert_allclose(c.drag[1, 2], 200_000.0 * (0.022 + 0.0362 * 0.36) / 0.6, rtol=1e-14)
