"""Buffet margins: ICAO standard pressures, aerocalc3's pressure ratio, closed forms, round trips.

Unit constants and standard values are typed here, not imported from the service. The boundary tables are
arbitrary test data (no type's data).
"""

import math

import numpy as np
import pytest
from aerocalc3 import std_atm as aerocalc_std_atm

from service.physics.buffet import buffet_cl, buffet_margins, check_buffet_table

FT = 0.3048  # m, exact
G = 9.80665  # m/s^2, exact
P_SEA_LEVEL = 101_325.0  # Pa, ICAO Doc 7488/3

TABLE_MACH = [0.40, 0.60, 0.70, 0.76, 0.80]
TABLE_CL = [1.00, 0.84, 0.74, 0.64, 0.52]

SHAPES = [(), (3,), (2, 3)]


def _filled(value, shape):
    """``value`` as a scalar for shape (), else an array of that shape."""
    return value if shape == () else np.full(shape, value)


# Standard heights of isobaric surfaces, ICAO Doc 7488/3 (from memory), geopotential metres, and two flight levels
# of its table in feet (from memory): (pressure [hPa], pressure altitude [m]).
ICAO_PRESSURE_ALTITUDES = [(500.0, 5574.0), (300.0, 9164.0), (250.0, 10_363.0), (200.0, 11_784.0),
                           (238.42, 350 * 100 * FT), (178.75, 410 * 100 * FT)]


@pytest.mark.parametrize(("p_hpa", "altitude"), ICAO_PRESSURE_ALTITUDES)
def test_maximum_altitude_at_icao_standard_pressures(p_hpa, altitude):
    # Choose the weight that, with a 1.3 g margin at Mach 0.74 (CL_buffet 0.673333), puts the limit exactly at the
    # tabulated pressure: W = 0.7 p M^2 S CL_b / 1.3. The maximum altitude must be that altitude (tolerance 1 m:
    # the tables' rounding, 0.5 m or 0.005 hPa, about 0.5 m at FL410).
    mach, s, margin = 0.74, 61.0, 1.3
    cl_b = 0.74 + (0.64 - 0.74) * (0.74 - 0.70) / (0.76 - 0.70)
    weight = 0.7 * p_hpa * 100.0 * mach**2 * s * cl_b / margin
    b = buffet_margins(weight, s, mach, 30_000.0, TABLE_MACH, TABLE_CL, margin=margin)
    np.testing.assert_allclose(b.maximum_altitude, altitude, atol=1.0)
    np.testing.assert_allclose(b.buffet_cl, cl_b, rtol=1e-13)


@pytest.mark.parametrize("fl", [250, 310, 350, 390, 450])
def test_weight_over_delta_matches_aerocalc3(fl):
    # aerocalc3 0.10 std_atm.alt2press_ratio (test-only reference library): delta = p / p0 at the pressure altitude.
    delta = aerocalc_std_atm.alt2press_ratio(fl * 100.0, alt_units="ft")
    weight = 22_000.0 * G
    b = buffet_margins(weight, 61.0, 0.74, delta * P_SEA_LEVEL, TABLE_MACH, TABLE_CL)
    np.testing.assert_allclose(b.weight_over_delta, weight / delta, rtol=1e-12)


def test_closed_forms_at_one_point():
    # Hand computation, 22 t at Mach 0.74 and 23 842 Pa on 61 m2, boundary 0.74 - 0.10 * 4/6 = 0.673333:
    # q = 0.7 * 23 842 * 0.5476 = 9139.115 Pa; CL = 215 746.3 / (9139.115 * 61) = 0.386999;
    # n = 0.673333 / 0.386999 = 1.73989; bank = acos(1 / n) = 54.92 deg.
    b = buffet_margins(22_000.0 * G, 61.0, 0.74, 23_842.0, TABLE_MACH, TABLE_CL, margin=1.3)
    np.testing.assert_allclose(b.cl, 0.386999, rtol=2e-6)
    np.testing.assert_allclose(b.buffet_cl, 0.673333, rtol=1e-6)
    np.testing.assert_allclose(b.load_factor_to_buffet, 1.73989, rtol=5e-6)
    np.testing.assert_allclose(np.degrees(b.bank_to_buffet), 54.92, atol=0.005)
    # The maximum weight at this pressure keeps exactly the 1.3 g margin: W_max = 0.7 p M^2 S CL_b / 1.3.
    np.testing.assert_allclose(b.maximum_weight, 9139.115 * 61.0 * 0.673333 / 1.3, rtol=1e-6)
    np.testing.assert_allclose(b.maximum_weight_over_delta, b.maximum_weight * P_SEA_LEVEL / 23_842.0, rtol=1e-12)


def test_margin_of_1_3_g_is_about_40_deg_of_bank():
    # Common practice, no source: a 1.3 g margin to buffet is about 40 deg of bank (acos(1/1.3) = 39.7 deg).
    cl_b = 0.74 + (0.64 - 0.74) * (0.74 - 0.70) / (0.76 - 0.70)
    p = 25_000.0
    weight = 0.7 * p * 0.74**2 * 61.0 * cl_b / 1.3
    b = buffet_margins(weight, 61.0, 0.74, p, TABLE_MACH, TABLE_CL)
    np.testing.assert_allclose(b.load_factor_to_buffet, 1.3, rtol=1e-12)
    assert abs(math.degrees(b.bank_to_buffet) - 40.0) < 0.5


def test_round_trips_to_the_required_margin():
    # At the maximum weight, and at the pressure of the maximum altitude, the margin is the required one.
    weight = np.array([18_000.0, 22_000.0, 23_000.0]) * G
    mach = np.array([0.55, 0.70, 0.78])
    b = buffet_margins(weight, 61.0, mach, 26_000.0, TABLE_MACH, TABLE_CL, margin=1.3)
    at_max_weight = buffet_margins(b.maximum_weight, 61.0, mach, 26_000.0, TABLE_MACH, TABLE_CL)
    np.testing.assert_allclose(at_max_weight.load_factor_to_buffet, 1.3, rtol=1e-12)
    at_max_altitude = buffet_margins(weight, 61.0, mach, P_SEA_LEVEL / (b.maximum_weight_over_delta / weight),
                                     TABLE_MACH, TABLE_CL)
    np.testing.assert_allclose(at_max_altitude.load_factor_to_buffet, 1.3, rtol=1e-12)


def test_interpolation_never_extrapolates():
    # Linear between rows, exact at the rows, NaN outside the table's Mach range.
    np.testing.assert_allclose(buffet_cl([0.4, 0.5, 0.65, 0.8], TABLE_MACH, TABLE_CL), [1.0, 0.92, 0.79, 0.52],
                               rtol=1e-13)
    assert np.isnan(buffet_cl([0.39, 0.81], TABLE_MACH, TABLE_CL)).all()
    b = buffet_margins(200_000.0, 61.0, [0.3, 0.85], 30_000.0, TABLE_MACH, TABLE_CL, margin=1.3)
    for name in ("buffet_cl", "load_factor_to_buffet", "bank_to_buffet", "maximum_altitude", "maximum_weight"):
        assert np.isnan(getattr(b, name)).all(), name
    assert np.isfinite(b.cl).all() and np.isfinite(b.weight_over_delta).all()


def test_already_beyond_buffet_and_outside_the_atmosphere():
    # Load factor to buffet below 1: no bank reaches it (NaN). A limit pressure outside the model: NaN altitude.
    b = buffet_margins(60_000.0 * G, 61.0, 0.74, 15_000.0, TABLE_MACH, TABLE_CL, margin=1.3)
    assert b.load_factor_to_buffet < 1.0 and np.isnan(b.bank_to_buffet)
    heavy = buffet_margins(1e9, 61.0, 0.74, 15_000.0, TABLE_MACH, TABLE_CL, margin=1.3)
    assert np.isnan(heavy.maximum_altitude)
    no_margin = buffet_margins(200_000.0, 61.0, 0.74, 15_000.0, TABLE_MACH, TABLE_CL)
    assert np.isnan([no_margin.maximum_altitude, no_margin.maximum_weight, no_margin.maximum_weight_over_delta]).all()


@pytest.mark.parametrize(
    ("mach", "cl", "message"),
    [
        ([0.5], [0.9], "at least 2 rows"),
        ([0.5, 0.7], [0.9, 0.8, 0.7], "same length"),
        ([0.5, 0.5], [0.9, 0.8], "strictly increasing"),
        ([0.7, 0.5], [0.9, 0.8], "strictly increasing"),
        ([0.5, 0.7], [0.9, -0.1], "positive"),
        ([0.5, float("nan")], [0.9, 0.8], "finite"),
        ([[0.5, 0.7]], [0.9, 0.8], "^buffet table mach must be 1-D, got 2 dimensions$"),
        ([0.5, 0.7], [[0.9, 0.8]], "^buffet table cl must be 1-D, got 2 dimensions$"),
    ],
)
def test_table_checks(mach, cl, message):
    with pytest.raises(ValueError, match=message):
        check_buffet_table(mach, cl)


@pytest.mark.parametrize("shape", SHAPES)
def test_shapes(shape):
    b = buffet_margins(_filled(200_000.0, shape), 61.0, 0.72, 24_000.0, TABLE_MACH, TABLE_CL, margin=1.3)
    for value in b:
        assert np.shape(value) == shape
        assert np.isfinite(value).all()
