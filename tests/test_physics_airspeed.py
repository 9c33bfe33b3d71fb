"""Tests of service.physics.airspeed against outside references, and its invariants.

Outside references
------------------
- aerocalc3 0.10 (PyPI, K. Horton), used in tests only. Its constants differ from ours by about
  1e-6: it converts inHg with 3386.38 Pa, so its sea-level pressure 29.9213 inHg is 101 324.89 Pa
  (-1.07e-6); it integrates the hydrostatic equation with R = 287.05307 J/(kg K) (+7.0e-7, its
  pressure ratio at FL500 is 1.5e-6 higher than ours); its TAS uses p / rho with rho0 = 1.225 exactly,
  an effective R of 287.05257 (-1.05e-6); its supersonic CAS branch uses a0 = 340.2941 m/s
  (+3.3e-7). Hence AEROCALC_RTOL = 5e-6 where aerocalc3 uses closed forms; the largest difference
  measured is 8.3e-7 (TAS -> CAS near FL500), the sum of these. Above CAS = a0 and Mach 1 it solves
  the Rayleigh pitot relation by bisection to 1e-5 relative in the impact pressure
  (AEROCALC_BISECTION_RTOL; measured 4.1e-6 in Mach). Its dp2tas/tas2dp refuse a TAS above
  661.48 kt even below Mach 1, so the random cases keep TAS below 650 kt.
- NACA Report 1135 (1953), tables I (isentropic) and II (normal shock): values from memory.
- ICAO Doc 7488/3 (1993): the tabulated sea-level speed of sound, 340.294 m/s.
"""

import math
from decimal import Decimal

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics import airspeed as asp
from service.physics.atmosphere import density, standard_pressure, standard_temperature
from tests import reference as ref

# Typed from the standard and the unit definitions (tests/reference.py), never imported from the code under test.
FT, KT = 0.3048, 1852.0 / 3600.0  # international foot, knot (exact)
GAMMA, P0, R_AIR, T0 = ref.KAPPA, ref.P0, ref.R, ref.T0  # ICAO Doc 7488/3
A0, RHO0 = ref.A0, ref.RHO0  # sqrt(1.4 R T0) = 340.294 m/s, p0 / (R T0) = 1.225 kg/m3

SHAPES = ("scalar", "1d", "2d")
AEROCALC_RTOL = 5e-6
AEROCALC_BISECTION_RTOL = 2e-5
FL510 = 51_000 * FT
HYPOTHESIS = settings(max_examples=60, deadline=None)


def run(func, shape, *columns):
    """Evaluate ``func`` on equal-length columns as scalars (row by row), 1-D or 2-D arrays; return 1-D.

    The 2-D run stacks each column with its reverse and checks that the second row is the
    first reversed, so each point is computed independently of its neighbours.
    """
    cols = [np.asarray(c, dtype=float) for c in columns]
    if shape == "scalar":
        rows = [func(*(float(c[i]) for c in cols)) for i in range(cols[0].size)]
        assert all(np.ndim(r) == 0 and not isinstance(r, np.ndarray) for r in rows)
        return np.array(rows, dtype=float)
    if shape == "1d":
        out = func(*cols)
        assert isinstance(out, np.ndarray) and out.shape == cols[0].shape
        return out
    out = func(*(np.stack([c, c[::-1]]) for c in cols))
    assert out.shape == (2, cols[0].size)
    np.testing.assert_allclose(out[1], out[0][::-1], rtol=1e-15, atol=0)
    return out[0]


def half_unit(text):
    """Half a unit in the last digit of a tabulated value written as ``text``."""
    return 0.5 * 10.0 ** Decimal(text).as_tuple().exponent


# --------------------------------------------------------------------------------------------
# Published facts
# --------------------------------------------------------------------------------------------


def test_sea_level_speed_of_sound_is_icao_value():
    # ICAO Doc 7488/3 table: a0 = 340.294 m/s; 661.48 kt is the same value in knots.
    assert A0 == pytest.approx(340.294, abs=half_unit("340.294"))
    assert A0 / KT == pytest.approx(661.48, abs=half_unit("661.48"))


@pytest.mark.parametrize("shape", SHAPES)
def test_sea_level_isa_cas_equals_eas_equals_tas(shape):
    # Definition of CAS and EAS (ICAO Doc 7488/3 sea-level values): at p0, T0 all three agree,
    # below and above CAS = a0.
    speeds = np.array([1.0, 50.0, 154.0, 250.0, A0, 400.0, 700.0, 1500.0])
    p, T = standard_pressure(0.0), standard_temperature(0.0)
    tas = run(lambda v: asp.tas_from_mach(asp.mach_from_cas(v, p), T), shape, speeds)
    eas = run(lambda v: asp.eas_from_tas(v, density(p, T)), shape, tas)
    np.testing.assert_allclose(tas, speeds, rtol=1e-12)
    np.testing.assert_allclose(eas, speeds, rtol=1e-12)


# NACA Report 1135, table I (isentropic flow), p/pt against M, gamma = 1.4 (from memory).
NACA_ISENTROPIC = [(0.3, "0.9395"), (0.5, "0.8430"), (0.8, "0.6560"), (1.0, "0.5283")]
# NACA Report 1135, table II (normal shock), p1/pt2 (static ahead over pitot behind) against
# M1 (from memory); p02/p1 = 5.640 at M 2.0 is the brief's value, 1 / 0.1773.
NACA_PITOT = [(1.5, "0.2930"), (2.0, "0.1773"), (2.5, "0.1173"), (3.0, "0.08291"), (5.0, "0.03062")]


@pytest.mark.parametrize("shape", SHAPES)
@pytest.mark.parametrize("table", [NACA_ISENTROPIC, NACA_PITOT], ids=["isentropic", "pitot"])
def test_pressure_ratios_match_naca_1135_tables(table, shape):
    mach = np.array([m for m, _ in table])
    expected = np.array([float(v) for _, v in table])
    tolerance = np.array([half_unit(v) for _, v in table])
    p_over_pt = run(lambda m: 1.0 / (1.0 + asp.impact_pressure_from_mach(m, 1.0)), shape, mach)
    assert np.all(np.abs(p_over_pt - expected) <= tolerance), p_over_pt


def test_pitot_ratio_at_mach_2():
    # NACA Report 1135 table II (from memory): pt2/p1 = 5.640 at M1 = 2.
    assert asp.impact_pressure_from_mach(2.0, 1.0) + 1.0 == pytest.approx(5.640, abs=half_unit("5.640"))


@pytest.mark.parametrize("mach", [1.0, 1.2, 2.0, 3.0, 5.0, 10.0])
def test_rayleigh_branch_is_the_textbook_closed_form(mach):
    # The gamma = 1.4 closed form qc/p = 166.9216 M^7 / (7 M^2 - 1)^2.5 - 1 (NACA Report 1135;
    # Anderson, Fundamentals of Aerodynamics, from memory); 166.9216 is rounded to 7 digits.
    closed = 166.9216 * mach**7 / (7 * mach**2 - 1) ** 2.5 - 1.0
    assert asp.impact_pressure_from_mach(mach, 1.0) == pytest.approx(closed, rel=1e-6)
    assert asp.impact_pressure_from_cas(mach * A0) == pytest.approx(closed * P0, rel=1e-6)


@pytest.mark.parametrize("mach", [0.05, 0.1, 0.2, 0.3])
def test_impact_over_dynamic_pressure_follows_the_compressibility_series(mach):
    # Low-Mach expansion qc = q (1 + M^2/4 + M^4/40 + M^6/1600 + ...) for gamma = 1.4
    # (NACA Report 1135; standard textbook series, from memory).
    ratio = asp.impact_pressure_from_mach(mach, 1.0) / asp.dynamic_pressure(mach, 1.0)
    assert ratio == pytest.approx(1 + mach**2 / 4 + mach**4 / 40 + mach**6 / 1600, rel=1e-6)


# --------------------------------------------------------------------------------------------
# aerocalc3 (test-only reference library), random subsonic cases, sea level to FL510, ISA +-30
# --------------------------------------------------------------------------------------------


def aerocalc_cases(n=300, seed=20240601):
    """Seeded random subsonic cases and aerocalc3's answers (speeds in kt, altitudes in ft)."""
    rng = np.random.default_rng(seed)
    size = 3 * n
    H = rng.uniform(0.0, FL510, size)
    dT = rng.uniform(-30.0, 30.0, size)
    cas = rng.uniform(40.0, 450.0, size) * KT
    p = standard_pressure(H)
    T = standard_temperature(H) + dT
    mach = asp.mach_from_cas(cas, p)
    tas = asp.tas_from_mach(mach, T)
    keep = np.flatnonzero((mach < 0.98) & (tas < 650.0 * KT))[:n]
    assert keep.size == n
    c = {"H": H[keep], "dT": dT[keep], "cas": cas[keep], "p": p[keep], "T": T[keep], "tas": tas[keep]}
    rows = list(zip(c["cas"] / KT, c["tas"] / KT, c["H"] / FT, c["T"] - 273.15, strict=True))
    units = {"speed_units": "kt", "alt_units": "ft"}
    c["ref"] = {
        "cas->tas": [ac.cas2tas(v, h, t, temp_units="C", **units) for v, _, h, t in rows],
        "cas->mach": [ac.cas_alt2mach(v, h, **units) for v, _, h, _ in rows],
        "tas->cas": [ac.tas2cas(v, h, t, temp_units="C", **units) for _, v, h, t in rows],
        "cas->eas": [ac.cas2eas(v, h, **units) for v, _, h, _ in rows],
        "tas->eas": [ac.tas2eas(v, h, t, temp_units="C", **units) for _, v, h, t in rows],
        "tas->mach": [ac.tas2mach(v, t, temp_units="C", speed_units="kt") for _, v, _, t in rows],
    }
    return c


# Our side of each check, from (cas, tas, p, T) in SI; speeds out in kt.
AEROCALC_CHECKS = {
    "cas->tas": lambda cas, tas, p, T: asp.tas_from_mach(asp.mach_from_cas(cas, p), T) / KT,
    "cas->mach": lambda cas, tas, p, T: asp.mach_from_cas(cas, p) + 0.0 * T,
    "tas->cas": lambda cas, tas, p, T: asp.cas_from_mach(asp.mach_from_tas(tas, T), p) / KT,
    "cas->eas": lambda cas, tas, p, T: asp.eas_from_tas(
        asp.tas_from_mach(asp.mach_from_cas(cas, p), T), density(p, T)) / KT,
    "tas->eas": lambda cas, tas, p, T: asp.eas_from_tas(tas, density(p, T)) / KT,
    "tas->mach": lambda cas, tas, p, T: asp.mach_from_tas(tas, T) + 0.0 * p,
}


@pytest.fixture(scope="module")
def cases():
    """300 seeded random subsonic cases with aerocalc3's answers."""
    return aerocalc_cases()


@pytest.mark.parametrize("shape", SHAPES)
@pytest.mark.parametrize("check", sorted(AEROCALC_CHECKS))
def test_subsonic_conversions_match_aerocalc3(cases, check, shape):
    # aerocalc3 0.10 airspeed.cas2tas, cas_alt2mach, tas2cas, cas2eas, tas2eas, tas2mach.
    ours = run(AEROCALC_CHECKS[check], shape, cases["cas"], cases["tas"], cases["p"], cases["T"])
    np.testing.assert_allclose(ours, cases["ref"][check], rtol=AEROCALC_RTOL)


def test_crossover_matches_aerocalc3():
    # aerocalc3 0.10 airspeed.cas_mach2alt over random CAS 150-400 kt and Mach 0.5-0.95 whose
    # crossover lies between sea level and FL510. 0.1 ft is about 3e-6 of the pressure.
    rng = np.random.default_rng(7)
    cas = rng.uniform(150.0, 400.0, 400) * KT
    mach = rng.uniform(0.5, 0.95, 400)
    H = asp.crossover_altitude(cas, mach)
    inside = (H >= 0.0) & (H <= FL510)
    assert inside.sum() >= 200
    ref_ft = [ac.cas_mach2alt(c, m, speed_units="kt", alt_units="ft") for c, m in zip(cas[inside] / KT, mach[inside],
                                                                                    strict=True)]
    np.testing.assert_allclose(H[inside] / FT, ref_ft, rtol=0, atol=0.1)
    np.testing.assert_allclose(
        asp.crossover_pressure(cas[inside], mach[inside]), standard_pressure(np.array(ref_ft) * FT),
        rtol=AEROCALC_RTOL)


def test_crossover_300_kt_mach_078_is_near_fl290_to_fl300():
    # Common practice, no source: 300 kt / M 0.78 cross over a little below FL300.
    H = asp.crossover_altitude(300 * KT, 0.78)
    assert 29_000 * FT <= H <= 30_000 * FT
    # aerocalc3 0.10 airspeed.cas_mach2alt: 29 314.09 ft.
    assert H / FT == pytest.approx(ac.cas_mach2alt(300, 0.78, speed_units="kt", alt_units="ft"), abs=0.1)


@pytest.mark.parametrize("shape", SHAPES)
def test_supersonic_cas_impact_pressure_matches_aerocalc3(shape):
    # aerocalc3 0.10 airspeed.cas2dp (closed Rayleigh form above 661.48 kt) and dp2cas (bisection).
    kt = np.linspace(662.0, 2000.0, 25)
    qc = run(asp.impact_pressure_from_cas, shape, kt * KT)
    np.testing.assert_allclose(qc, [ac.cas2dp(v, speed_units="kt", press_units="pa") for v in kt],
                               rtol=AEROCALC_RTOL)
    back = run(asp.cas_from_impact_pressure, shape, qc) / KT
    np.testing.assert_allclose(back, [ac.dp2cas(q, press_units="pa", speed_units="kt") for q in qc],
                               rtol=AEROCALC_BISECTION_RTOL)


@pytest.mark.parametrize("shape", SHAPES)
def test_supersonic_mach_ratio_matches_aerocalc3(shape):
    # aerocalc3 0.10 airspeed.mach2dp_over_p (the same closed forms) and dp_over_p2mach (bisection).
    mach = np.linspace(1.001, 5.0, 25)
    ratio = run(lambda m: asp.impact_pressure_from_mach(m, 1.0), shape, mach)
    np.testing.assert_allclose(ratio, [ac.mach2dp_over_p(m) for m in mach], rtol=1e-12)
    np.testing.assert_allclose([ac.dp_over_p2mach(r) for r in ratio],
                               run(lambda r: asp.mach_from_impact_pressure(r, 1.0), shape, ratio),
                               rtol=AEROCALC_BISECTION_RTOL)


# --------------------------------------------------------------------------------------------
# Invariants: round trips, continuity, monotonicity, the Newton iteration
# --------------------------------------------------------------------------------------------

speeds = st.floats(0.0, 5.0 * A0)
machs = st.floats(0.0, 6.0)
pressures = st.floats(500.0, 110_000.0)
densities = st.floats(0.01, 1.5)


@HYPOTHESIS
@given(cas=speeds)
def test_cas_impact_pressure_round_trip(cas):
    assert asp.cas_from_impact_pressure(asp.impact_pressure_from_cas(cas)) == pytest.approx(cas, rel=1e-12, abs=1e-12)


@HYPOTHESIS
@given(cas=speeds, p=pressures)
def test_cas_mach_round_trip(cas, p):
    assert asp.cas_from_mach(asp.mach_from_cas(cas, p), p) == pytest.approx(cas, rel=1e-11, abs=1e-12)


@HYPOTHESIS
@given(mach=machs, p=pressures)
def test_mach_impact_pressure_round_trip(mach, p):
    qc = asp.impact_pressure_from_mach(mach, p)
    assert asp.mach_from_impact_pressure(qc, p) == pytest.approx(mach, rel=1e-12, abs=1e-12)


@HYPOTHESIS
@given(tas=speeds, rho=densities)
def test_tas_eas_round_trip(tas, rho):
    assert asp.tas_from_eas(asp.eas_from_tas(tas, rho), rho) == pytest.approx(tas, rel=1e-14, abs=1e-14)


@HYPOTHESIS
@given(mach=machs, H=st.floats(-5_000.0, 80_000.0), dT=st.floats(-30.0, 30.0))
def test_dynamic_pressure_is_half_rho_v_squared(mach, H, dT):
    # Identity gamma/2 p M^2 = 1/2 rho V^2 (perfect gas, a^2 = gamma p / rho).
    p, T = standard_pressure(H), standard_temperature(H) + dT
    V = asp.tas_from_mach(mach, T)
    assert asp.dynamic_pressure(mach, p) == pytest.approx(0.5 * density(p, T) * V**2, rel=1e-12, abs=1e-300)


@HYPOTHESIS
@given(a=speeds, b=speeds)
def test_impact_pressure_increases_with_speed(a, b):
    # Never decreasing; strictly increasing once the speeds differ by more than rounding
    # (below about 1e-150 m/s the square of the speed underflows to zero).
    lo, hi = sorted((a, b))
    pairs = [(asp.impact_pressure_from_cas(lo), asp.impact_pressure_from_cas(hi)),
             (asp.impact_pressure_from_mach(lo / A0, 1e4), asp.impact_pressure_from_mach(hi / A0, 1e4))]
    for q_lo, q_hi in pairs:
        assert q_lo <= q_hi
        if hi - lo > 1e-9 * hi and hi > 1e-100:
            assert q_lo < q_hi


def test_impact_pressure_strictly_increasing_on_a_dense_grid():
    cas = np.linspace(0.0, 5.0 * A0, 200_001)
    assert np.all(np.diff(asp.impact_pressure_from_cas(cas)) > 0)
    assert np.all(np.diff(asp.cas_from_impact_pressure(asp.impact_pressure_from_cas(cas))) > 0)


@pytest.mark.parametrize(("forward", "at"), [
    (lambda m: asp.impact_pressure_from_mach(m, 1.0), 1.0),
    (asp.impact_pressure_from_cas, A0),
])
def test_value_and_slope_continuous_across_the_sonic_point(forward, at):
    # The isentropic and Rayleigh pitot relations meet at M = 1 with the same value and the
    # same slope (both d ln(pt/p)/dM = 7/6 there for gamma = 1.4).
    eps = 1e-7 * at
    below, sonic, above = forward(at - eps), forward(at), forward(at + eps)
    assert above == pytest.approx(below, rel=1e-6)
    slope_below = (sonic - forward(at - 2 * eps)) / (2 * eps)
    slope_above = (forward(at + 2 * eps) - sonic) / (2 * eps)
    assert slope_above == pytest.approx(slope_below, rel=1e-5)
    inverse = asp.mach_from_impact_pressure if at == 1.0 else asp.cas_from_impact_pressure
    args = (1.0,) if at == 1.0 else ()
    assert inverse(below, *args) < inverse(sonic, *args) < inverse(above, *args)
    assert inverse(above, *args) == pytest.approx(at + eps, rel=1e-12)


@pytest.mark.parametrize("shape", SHAPES)  # one point runs the float path, several the array path
def test_newton_converges_to_its_tolerance_from_mach_1_to_5(shape):
    mach = np.linspace(1.0, 5.0, 4001 if shape != "scalar" else 401)
    for p in (P0, 1e3):
        qc = asp.impact_pressure_from_mach(mach, p)
        solved = run(lambda q, p=p: asp.mach_from_impact_pressure(q, p), shape, qc)
        assert np.all(np.abs(solved - mach) <= asp.NEWTON_RTOL * mach)


@pytest.mark.parametrize("shape", ["scalar", "1d"])
def test_newton_needs_at_most_five_steps_up_to_mach_50(monkeypatch, shape):
    # The module docstring's claim; a cap of 1 must leave points unconverged (NaN).
    mach = np.concatenate([1.0 + np.logspace(-12, 0, 50), np.linspace(1.0, 50.0, 500)])
    ratio = asp.impact_pressure_from_mach(mach, 1.0)

    def solve(r):
        return asp.mach_from_impact_pressure(r, 1.0)

    monkeypatch.setattr(asp, "NEWTON_MAX_ITER", 5)
    np.testing.assert_allclose(run(solve, shape, ratio), mach, rtol=asp.NEWTON_RTOL)
    monkeypatch.setattr(asp, "NEWTON_MAX_ITER", 1)
    assert np.all(np.isnan(run(solve, shape, ratio[mach > 1.01])))


@HYPOTHESIS
@given(cas=st.floats(30.0, 5.0 * A0), mach=st.floats(0.1, 5.0))
def test_crossover_pressure_makes_cas_and_mach_the_same_speed(cas, mach):
    p = asp.crossover_pressure(cas, mach)
    assert asp.mach_from_cas(cas, p) == pytest.approx(mach, rel=1e-11)
    assert asp.cas_from_mach(mach, p) == pytest.approx(cas, rel=1e-11)


# --------------------------------------------------------------------------------------------
# Non-physical inputs
# --------------------------------------------------------------------------------------------


@pytest.mark.filterwarnings("error")
@pytest.mark.parametrize(("func", "args"), [
    (asp.impact_pressure_from_cas, (-1.0,)),
    (asp.impact_pressure_from_mach, (-0.5, P0)),
    (asp.cas_from_impact_pressure, (-1.0,)),
    (asp.cas_from_impact_pressure, (np.inf,)),
    (asp.mach_from_impact_pressure, (-1.0, P0)),
    (asp.mach_from_impact_pressure, (100.0, 0.0)),
    (asp.mach_from_impact_pressure, (100.0, -5.0)),
    (asp.crossover_pressure, (150.0, 0.0)),
    (asp.crossover_altitude, (150.0, 0.0)),
    (asp.crossover_altitude, (0.1, 0.99)),  # below the model's lowest pressure (84 852 m)
    (asp.crossover_altitude, (300.0, 0.1)),  # above its highest pressure (-5 km)
])
def test_non_physical_inputs_give_nan_without_warnings(func, args):
    assert np.isnan(func(*args))


def test_nan_marks_only_the_bad_points():
    out = asp.cas_from_impact_pressure(np.array([[-1.0, 1e4], [1e6, np.nan]]))
    assert np.isnan(out).tolist() == [[True, False], [False, True]]


# --------------------------------------------------------------------------------------------
# Calibration tables (invented demo aircraft "Tavrenne TQ-41", kt)
# --------------------------------------------------------------------------------------------

TABLE_IAS = np.array([60.0, 80.0, 100.0, 120.0, 140.0, 160.0]) * KT
TABLE_CAS = np.array([63.0, 82.0, 101.0, 120.5, 140.0, 159.0]) * KT


@pytest.mark.parametrize("shape", SHAPES)
def test_ias_to_cas_interpolates_and_refuses_outside(shape):
    ias = np.array([59.9, 60.0, 70.0, 100.0, 150.0, 160.0, 160.1, np.nan]) * KT
    expected = np.array([np.nan, 63.0, 72.5, 101.0, 149.5, 159.0, np.nan, np.nan]) * KT
    out = run(lambda v: asp.ias_to_cas(v, TABLE_IAS, TABLE_CAS), shape, ias)
    np.testing.assert_allclose(out, expected, rtol=1e-14)  # NaN where expected is NaN
    back = run(lambda v: asp.cas_to_ias(v, TABLE_IAS, TABLE_CAS), shape, out)
    np.testing.assert_allclose(back, ias * np.where(np.isnan(expected), np.nan, 1.0), rtol=1e-14)


def test_cas_to_ias_refuses_outside_the_cas_column():
    out = asp.cas_to_ias(np.array([62.9, 63.0, 159.0, 159.1]) * KT, TABLE_IAS, TABLE_CAS)
    np.testing.assert_allclose(out / KT, [np.nan, 60.0, 160.0, np.nan], rtol=1e-14)


@pytest.mark.parametrize(("ias", "cas", "message"), [
    ([[60.0, 80.0]], [[63.0, 82.0]], "must be 1-D"),
    ([60.0], [63.0], "at least 2 rows"),
    ([60.0, 80.0, 100.0], [63.0, 82.0], "same length"),
    ([60.0, 60.0], [63.0, 82.0], "strictly increasing"),
    ([60.0, 80.0], [82.0, 63.0], "strictly increasing"),
    ([60.0, np.nan], [63.0, 82.0], "finite"),
    ([60.0, 80.0], [63.0, np.inf], "finite"),
    ([0.0, 80.0], [63.0, 82.0], "positive"),
    ([60.0, 80.0], [-3.0, 82.0], "positive"),
])
def test_check_calibration_refuses_bad_tables(ias, cas, message):
    with pytest.raises(ValueError, match=message):
        asp.check_calibration(ias, cas)
    with pytest.raises(ValueError, match=message):
        asp.ias_to_cas(70.0, ias, cas)


def test_check_calibration_returns_the_columns():
    ias, cas = asp.check_calibration([60, 80], (63.0, 82.0))
    assert ias.dtype == cas.dtype == np.float64 and ias.tolist() == [60.0, 80.0]


# --------------------------------------------------------------------------------------------
# Speed schedule
# --------------------------------------------------------------------------------------------

SCHEDULE_LEVELS_FT = np.array([0.0, 10_000.0, 25_000.0, 29_000.0, 29_700.0, 35_000.0, 39_000.0, 45_000.0])


@pytest.mark.parametrize("dT", [-20.0, 0.0, 15.0])
def test_speed_schedule_switches_at_the_crossover(dT):
    cas, mach = 300 * KT, 0.78
    H = SCHEDULE_LEVELS_FT * FT
    p, T = standard_pressure(H), standard_temperature(H) + dT
    s = asp.speed_schedule(cas, mach, p, T)
    # aerocalc3 0.10 airspeed.cas_mach2alt (29 314 ft), whatever the temperature.
    crossover_ft = ac.cas_mach2alt(300, 0.78, speed_units="kt", alt_units="ft")
    assert s.governing_mach.tolist() == (SCHEDULE_LEVELS_FT > crossover_ft).tolist()
    below, above = ~s.governing_mach, s.governing_mach
    assert np.all(s.cas[below] == cas) and np.all(s.mach[above] == mach)
    np.testing.assert_allclose(s.mach[below], asp.mach_from_cas(cas, p[below]), rtol=1e-15)
    np.testing.assert_allclose(s.cas[above], asp.cas_from_mach(mach, p[above]), rtol=1e-15)
    assert np.all(s.cas[above] < cas) and np.all(s.mach[below] < mach)
    # aerocalc3 0.10 airspeed.mach2tas for the TAS.
    ref_tas = [ac.mach2tas(m, t, temp_units="K", speed_units="kt") for m, t in zip(s.mach, T, strict=True)]
    np.testing.assert_allclose(s.tas / KT, ref_tas, rtol=AEROCALC_RTOL)
    # EAS = sqrt(2 q / rho0) = a0 M sqrt(p / p0), independent of the temperature.
    np.testing.assert_allclose(s.eas, A0 * s.mach * np.sqrt(p / P0), rtol=1e-12)


def test_speed_schedule_broadcasts_and_keeps_scalars():
    s = asp.speed_schedule(280 * KT, [0.74, 0.80], np.array([[70_000.0], [25_000.0], [18_000.0]]), 230.0)
    for field in s:
        assert np.shape(field) == (3, 2)
    assert s.governing_mach.dtype == bool
    one = asp.speed_schedule(280 * KT, 0.78, 25_000.0, 230.0)
    assert all(np.ndim(field) == 0 and not isinstance(field, np.ndarray) for field in one)
    assert one._fields == ("governing_mach", "cas", "mach", "tas", "eas")


# --------------------------------------------------------------------------------------------
# Simple relations, table-driven over shapes
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("shape", SHAPES)
def test_tas_mach_and_eas_relations(shape):
    mach = np.array([0.0, 0.3, 0.78, 1.0, 2.2])
    T = np.array([288.15, 250.0, 216.65, 300.0, 220.0])
    rho = np.array([1.225, 0.7, 0.3, 1.1, 0.05])
    tas = run(asp.tas_from_mach, shape, mach, T)
    # V = M sqrt(gamma R T) (ICAO Doc 7488/3 speed of sound).
    np.testing.assert_allclose(tas, mach * np.sqrt(GAMMA * R_AIR * T), rtol=1e-15)
    np.testing.assert_allclose(run(asp.mach_from_tas, shape, tas, T), mach, rtol=1e-15)
    eas = run(asp.eas_from_tas, shape, tas, rho)
    np.testing.assert_allclose(eas, tas * np.sqrt(rho / RHO0), rtol=1e-15)
    np.testing.assert_allclose(run(asp.tas_from_eas, shape, eas, rho), tas, rtol=1e-15)


def test_mach_from_cas_ignores_temperature_but_tas_does_not():
    # qc/p fixes Mach (NACA Report 1135): CAS -> Mach needs no temperature; TAS does.
    p = standard_pressure(30_000 * FT)
    assert asp.mach_from_cas(300 * KT, p) == pytest.approx(ac.cas_alt2mach(300, 30_000), rel=AEROCALC_RTOL)
    ratio = asp.tas_from_mach(0.8, T0 + 30) / asp.tas_from_mach(0.8, T0)
    assert ratio == pytest.approx(math.sqrt((T0 + 30) / T0), rel=1e-15)


# Zero speed and zero pressure difference: every relation gives exactly 0, never NaN (a pitot at rest reads 0;
# the closed forms at M = 0 by hand), on the single-point path (floats) and the array path.
@pytest.mark.parametrize(("fn", "args"), [
    (asp.cas_from_impact_pressure, (0.0,)), (asp.impact_pressure_from_cas, (0.0,)),
    (asp.mach_from_impact_pressure, (0.0, 101_325.0)), (asp.impact_pressure_from_mach, (0.0, 50_000.0)),
    (asp.mach_from_cas, (0.0, 50_000.0)), (asp.cas_from_mach, (0.0, 50_000.0)), (asp.tas_from_mach, (0.0, 250.0)),
    (asp.mach_from_tas, (0.0, 250.0)), (asp.eas_from_tas, (0.0, 0.5)), (asp.tas_from_eas, (0.0, 0.5)),
    (asp.dynamic_pressure, (0.0, 50_000.0)),
])
def test_zero_speed_gives_zero_not_nan(fn, args):
    assert fn(*args) == 0.0
    out = fn(*(np.array([x, x]) for x in args))
    np.testing.assert_array_equal(out, [0.0, 0.0])
