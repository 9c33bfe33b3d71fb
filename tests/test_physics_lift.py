"""The lift equation: textbook examples, facts of the trade, reference libraries, round trips."""

import math

import fluids
import numpy as np
import pytest
from aerocalc3 import airspeed as aerocalc_airspeed
from aerocalc3 import std_atm as aerocalc_std_atm
from ambiance import Atmosphere
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics import lift
from service.physics.airspeed import cas_from_mach, dynamic_pressure, mach_from_cas, tas_from_eas, tas_from_mach
from service.physics.atmosphere import density, pressure_altitude, standard_pressure, standard_state
from tests import reference as ref

# Typed from the unit definitions and the standard (tests/reference.py), never imported from the code under test.
FT, KT = 0.3048, 1852.0 / 3600.0  # international foot, knot (exact)
LBF = 4.4482216152605  # 0.45359237 kg x 9.80665 m/s2 (exact)
SLUG = 14.593902937206364  # lbf s2 / ft (NIST SP 811: 1.459 390 E+01 kg)
H_MIN, H_MAX, RHO0 = ref.H_LOW, ref.H_TOP, ref.RHO0

SHAPES = [(), (3,), (2, 3)]


def _filled(value, shape):
    """``value`` as a scalar for shape (), else an array of that shape."""
    return value if shape == () else np.full(shape, value)


# --- Textbook worked example ---------------------------------------------------------------


@pytest.mark.parametrize("shape", SHAPES)
def test_anderson_cp1_lift_coefficient(shape):
    # Anderson, "Introduction to Flight", the thrust-required example for the CP-1
    # (Example 6.1 in the editions I remember), from memory: W = 2950 lb, S = 174 ft^2,
    # sea level rho = 0.002377 slug/ft^3, V = 500 ft/s gives CL = 0.057 (as I recall it printed;
    # tolerance half a unit in the last digit).
    weight = _filled(2950.0 * LBF, shape)
    area = 174.0 * FT**2
    rho = 0.002377 * SLUG / FT**3
    q = 0.5 * rho * (500.0 * FT) ** 2
    cl = lift.lift_coefficient(weight, 1.0, q, area)
    assert np.shape(cl) == shape
    np.testing.assert_allclose(cl, 0.057, atol=5e-4)


# --- Load factor and bank angle --------------------------------------------------------------


@pytest.mark.parametrize(
    ("bank_deg", "n"),
    [
        (0.0, 1.0),  # wings level
        (60.0, 2.0),  # the 2 g turn, common practice, no source
        (45.0, math.sqrt(2.0)),  # 1/cos 45 deg
        (math.degrees(math.acos(0.25)), 4.0),  # the 4 g turn
    ],
)
def test_load_factor_and_bank(bank_deg, n):
    np.testing.assert_allclose(lift.load_factor_from_bank(np.radians(bank_deg)), n, rtol=1e-12)
    np.testing.assert_allclose(np.degrees(lift.bank_from_load_factor(n)), bank_deg, atol=1e-9)


def test_load_factor_outside_domain_is_nan():
    n = lift.load_factor_from_bank(np.radians([-10.0, 90.0, 120.0, np.nan]))
    assert np.isnan(n).all()
    phi = lift.bank_from_load_factor([0.99, 0.0, -2.0, np.nan])
    assert np.isnan(phi).all()


# --- Facts of the trade (common practice, no source) -----------------------------------------


def test_doubling_speed_quarters_cl():
    # Common practice, no source: at constant lift CL varies as 1/EAS^2.
    weight, area = 50_000.0, 30.0
    eas = np.array([60.0, 120.0, 240.0])
    cl = lift.lift_coefficient(weight, 1.0, lift.dynamic_pressure_from_eas(eas), area)
    np.testing.assert_allclose(cl[1:] / cl[:-1], 0.25, rtol=1e-12)


def test_cl_at_1_3_stall_speed():
    # Common practice, no source: at 1.3 Vs the wing works at 1/1.69 = 59 % of CLmax.
    assert lift.cl_fraction(1.3) == pytest.approx(1.0 / 1.69, rel=1e-12)
    assert round(float(lift.cl_fraction(1.3)), 2) == 0.59
    weight, area, cl_max = 60_000.0, 25.0, 1.8
    vs = lift.stall_eas(weight, area, cl_max)
    cl = lift.lift_coefficient(weight, 1.0, lift.dynamic_pressure_from_eas(1.3 * vs), area)
    assert cl == pytest.approx(cl_max / 1.69, rel=1e-12)


def test_60_degree_turn_stall_speed_is_sqrt2_times_1g():
    # Common practice, no source: in a 60 deg level turn (2 g) the stall EAS is sqrt(2) Vs1g.
    weight, area, cl_max = 12_000.0, 16.0, 1.6
    n = lift.load_factor_from_bank(np.radians(60.0))
    vs1 = lift.stall_eas(weight, area, cl_max)
    vs60 = lift.stall_eas(weight, area, cl_max, load_factor=n)
    assert vs60 / vs1 == pytest.approx(math.sqrt(2.0), rel=1e-12)
    assert lift.scale_stall_eas(vs1, weight, weight, n) == pytest.approx(vs60, rel=1e-12)
    assert lift.stall_load_factor(vs60, vs1) == pytest.approx(2.0, rel=1e-12)


def test_stall_speed_scales_with_root_weight():
    # Common practice, no source: Vs goes as sqrt(W); 81 % of the weight gives 90 % of Vs.
    vs = lift.scale_stall_eas(np.array([50.0, 60.0]), 0.81, 1.0)
    np.testing.assert_allclose(vs, [45.0, 54.0], rtol=1e-12)
    ref = lift.stall_eas(100_000.0, 40.0, 2.0)
    assert lift.stall_eas(81_000.0, 40.0, 2.0) == pytest.approx(0.9 * ref, rel=1e-12)


def test_quarter_density_doubles_tas_near_40000_ft():
    # Common practice, no source: where the density is a quarter of sea level (near 40 000 ft)
    # the TAS for the same EAS is twice as high.
    eas = 120.0
    assert tas_from_eas(eas, RHO0 / 4.0) == pytest.approx(2.0 * eas, rel=1e-12)
    q = lift.dynamic_pressure_from_eas(eas)
    assert lift.density_for_tas(q, 2.0 * eas) == pytest.approx(RHO0 / 4.0, rel=1e-12)
    H = lift.pressure_altitude_for_density(RHO0 / 4.0, 0.0)
    assert abs(H / FT - 40_000.0) < 1_000.0


def test_eas_and_dynamic_pressure():
    # q = 1/2 rho0 EAS^2 with rho0 = 1.225 kg/m^3 (ICAO Doc 7488/3): 100 m/s gives 6125 Pa.
    assert lift.dynamic_pressure_from_eas(100.0) == pytest.approx(6125.0, rel=1e-5)
    assert lift.eas_from_dynamic_pressure(6125.0) == pytest.approx(100.0, rel=1e-5)
    assert np.isnan(lift.eas_from_dynamic_pressure(-1.0))


def test_pressure_for_mach():
    # q = (gamma/2) p M^2 (NACA Report 1135): Mach 0.5 at 101 325 Pa gives 17 731.875 Pa.
    assert lift.pressure_for_mach(17_731.875, 0.5) == pytest.approx(101_325.0, rel=1e-14)


# --- Reference libraries -------------------------------------------------------------------


@pytest.mark.parametrize("isa_deviation", [-30.0, 0.0, 25.0])
@pytest.mark.parametrize("geometric", [-400.0, 0.0, 3_000.0, 11_000.0, 15_000.0, 30_000.0, 60_000.0, 80_000.0])
def test_density_altitude_against_fluids(geometric, isa_deviation):
    # fluids.ATMOSPHERE_1976 (U.S. Standard Atmosphere 1976) keeps the standard pressure and adds
    # dT to the temperature, as we do. Its gas constant (8314.32 / 28.9644) differs from ICAO's
    # 287.05287 by 1e-6, a few centimetres of altitude: tolerance 0.1 m (measured: <= 0.05 m).
    ref = fluids.ATMOSPHERE_1976(geometric, dT=isa_deviation)
    H = lift.pressure_altitude_for_density(ref.rho, isa_deviation)
    assert H == pytest.approx(ref.H, abs=0.1)


def test_density_altitude_against_ambiance():
    # ambiance (ICAO standard atmosphere) Atmosphere.from_density on a standard day;
    # tolerance 0.05 m (measured: <= 0.014 m).
    ref = Atmosphere.from_density(np.array([1.2, 1.0, 0.5, 0.1, 0.01, 1e-4]))
    H = lift.pressure_altitude_for_density(ref.density, 0.0)
    np.testing.assert_allclose(H, ref.H, atol=0.05)


@pytest.mark.parametrize(("cas_kt", "mach"), [(120.0, 0.3), (150.0, 0.5), (250.0, 0.6), (300.0, 0.78), (280.0, 0.82)])
def test_altitude_for_cas_against_aerocalc(cas_kt, mach):
    # aerocalc3: the altitude where a CAS has a given Mach (cas_mach2alt) and its standard
    # pressure there; q = (gamma/2) p M^2 must give that altitude back. Tolerance 0.05 m
    # (measured: <= 0.008 m).
    H_ref = aerocalc_airspeed.cas_mach2alt(cas_kt, mach, speed_units="kt", alt_units="m")
    p_ref = aerocalc_std_atm.alt2press(H_ref, alt_units="m", press_units="pa")
    q = 0.7 * p_ref * mach**2
    assert lift.pressure_altitude_for_cas(q, cas_kt * KT) == pytest.approx(H_ref, abs=0.05)


# --- Range: no answer is NaN -----------------------------------------------------------------


def test_altitude_solves_outside_range_are_nan():
    T_lo, p_lo = standard_state(H_MIN)
    T_hi, p_hi = standard_state(H_MAX)
    rho_lo, rho_hi = density(p_lo, T_lo), density(p_hi, T_hi)
    H = lift.pressure_altitude_for_density([1.001 * rho_lo, 0.999 * rho_hi, 0.0, -1.0, np.nan], 0.0)
    assert np.isnan(H).all()
    # The ends of the range themselves are inside.
    np.testing.assert_allclose(lift.pressure_altitude_for_density([rho_lo, rho_hi], 0.0), [H_MIN, H_MAX], atol=1e-5)
    # A deviation so cold that the density no longer falls with height (-175.4 K: at 11 km,
    # T_s + dT = R |L| T_s / g0) or the temperature is non-positive has no answer; just above
    # that bound the solve still returns the altitude.
    assert np.isnan(lift.pressure_altitude_for_density(0.5, [-176.0, -200.0])).all()
    for H in (0.0, 11_000.0, 80_000.0):
        T, p = standard_state(H)
        rho = density(p, T - 175.0)
        assert lift.pressure_altitude_for_density(rho, -175.0) == pytest.approx(H, abs=1e-4)
    # q above its value at H_MIN at that CAS: no altitude.
    q_lo = dynamic_pressure(mach_from_cas(100.0, p_lo), p_lo)
    assert np.isnan(lift.pressure_altitude_for_cas(1.001 * q_lo, 100.0))
    assert lift.pressure_altitude_for_cas(q_lo, 100.0) == pytest.approx(H_MIN, abs=1e-5)


def test_altitude_solves_keep_shape():
    rho = np.array([[1.0, 0.5, 0.1], [0.9, 0.4, 0.05]])
    H = lift.pressure_altitude_for_density(rho, np.array([[0.0], [10.0]]))
    assert H.shape == (2, 3)
    np.testing.assert_allclose(H[1, 0], lift.pressure_altitude_for_density(0.9, 10.0))
    assert isinstance(lift.pressure_altitude_for_density(1.0, 0.0), np.floating)
    assert lift.pressure_altitude_for_cas(np.full((2, 2), 5_000.0), 100.0).shape == (2, 2)


# --- Round trips (hypothesis) -----------------------------------------------------------------

weights = st.floats(1.0e3, 5.0e6)
load_factors = st.floats(0.5, 6.0)
areas = st.floats(5.0, 900.0)
altitudes = st.floats(H_MIN + 1.0, H_MAX - 1.0)
machs = st.floats(0.1, 3.0)
deviations = st.floats(-60.0, 40.0)


@settings(max_examples=60, deadline=None)
@given(weights, load_factors, areas, altitudes, machs, deviations)
def test_each_variable_solves_back(weight, n, area, H, mach, dT):
    """Build a consistent point (W, n, S, H, dT, M -> q, CL, TAS, CAS); every solve returns its input."""
    T, p = standard_state(H)
    T = T + dT
    q = dynamic_pressure(mach, p)
    cl = lift.lift_coefficient(weight, n, q, area)
    tas = tas_from_mach(mach, T)
    # The same q as 1/2 rho V^2 (off-standard day) and as 1/2 rho0 EAS^2.
    assert 0.5 * density(p, T) * tas**2 == pytest.approx(q, rel=1e-12)
    assert lift.dynamic_pressure_from_eas(lift.eas_from_dynamic_pressure(q)) == pytest.approx(q, rel=1e-12)

    assert lift.required_dynamic_pressure(weight, n, area, cl) == pytest.approx(q, rel=1e-12)
    assert lift.weight_supported(q, area, cl, n) == pytest.approx(weight, rel=1e-12)
    assert lift.wing_area_required(weight, n, q, cl) == pytest.approx(area, rel=1e-12)
    assert lift.load_factor_supported(q, area, cl, weight) == pytest.approx(n, rel=1e-12)

    # Altitude via Mach, via TAS and the ISA deviation, via CAS.
    assert pressure_altitude(lift.pressure_for_mach(q, mach)) == pytest.approx(H, abs=1e-5)
    rho = lift.density_for_tas(q, tas)
    assert lift.pressure_altitude_for_density(rho, dT) == pytest.approx(H, abs=1e-4)
    cas = cas_from_mach(mach, p)
    assert lift.pressure_altitude_for_cas(q, cas) == pytest.approx(H, abs=1e-3)


def test_round_trips_on_arrays():
    """The same round trips on 2-D arrays in one call each (vectorised, shape kept)."""
    rng = np.random.default_rng(20240601)
    shape = (40, 25)
    H = rng.uniform(H_MIN + 1.0, H_MAX - 1.0, shape)
    mach = rng.uniform(0.1, 3.0, shape)
    dT = rng.uniform(-60.0, 40.0, shape)
    T, p = standard_state(H)
    q = dynamic_pressure(mach, p)
    tas = tas_from_mach(mach, T + dT)
    H_rho = lift.pressure_altitude_for_density(lift.density_for_tas(q, tas), dT)
    H_cas = lift.pressure_altitude_for_cas(q, cas_from_mach(mach, p))
    assert H_rho.shape == H_cas.shape == shape
    np.testing.assert_allclose(H_rho, H, atol=1e-4)
    np.testing.assert_allclose(H_cas, H, atol=1e-3)
    np.testing.assert_allclose(pressure_altitude(lift.pressure_for_mach(q, mach)), H, atol=1e-5)
    np.testing.assert_allclose(standard_pressure(H_cas), p, rtol=1e-9)


@settings(max_examples=60, deadline=None)
@given(st.floats(0.0, math.radians(85.0)), st.floats(1.0, 4.0))
def test_bank_and_stall_round_trips(phi, k):
    n = lift.load_factor_from_bank(phi)
    assert lift.bank_from_load_factor(n) == pytest.approx(phi, abs=1e-7)
    # At k times the stall speed the stall load factor is k^2 and the CL fraction 1/k^2.
    assert lift.stall_load_factor(k * 40.0, 40.0) == pytest.approx(k**2, rel=1e-12)
    assert lift.cl_fraction(k) * lift.stall_load_factor(k * 40.0, 40.0) == pytest.approx(1.0, rel=1e-12)


def test_zero_dynamic_pressure_gives_zero_speed_not_nan():
    # V_E = sqrt(2 q / rho0): 0 at q = 0 (by hand), scalar and array; q < 0 has no speed (NaN).
    assert lift.eas_from_dynamic_pressure(0.0) == 0.0
    np.testing.assert_array_equal(lift.eas_from_dynamic_pressure(np.array([0.0, 0.0])), [0.0, 0.0])
    assert lift.dynamic_pressure_from_eas(0.0) == 0.0
    assert math.isnan(lift.eas_from_dynamic_pressure(-1.0))
    # The level-turn edges: 0 deg bank is n = 1 exactly, n = 1 is 0 deg, n < 1 has no bank angle.
    assert lift.load_factor_from_bank(0.0) == 1.0 and lift.bank_from_load_factor(1.0) == 0.0
    assert math.isnan(lift.bank_from_load_factor(0.999))
    assert lift.cl_fraction(1.0) == 1.0 and lift.stall_load_factor(0.0, 50.0) == 0.0
