"""Tests for service.physics.altimetry.

Outside references: ICAO Doc 7488/3 table values (from memory); the classic closed-form
altimeter-setting equation of the troposphere (Smithsonian Meteorological Tables, as in the
U.S. Federal Meteorological Handbook No. 1) typed out here; MetPy's
``altimeter_to_station_pressure`` (test-only); the ICAO PANS-OPS (Doc 8168) temperature
correction equation typed out here and its published correction table (from memory); the
approximate PANS-OPS formula behind that table (from memory); invariants with hypothesis.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from metpy import calc as mpcalc
from metpy.units import units

from service.physics import altimetry as alt
from service.physics import atmosphere as atm

SETTINGS = settings(max_examples=60, deadline=None)
SHAPES = {"scalar": (), "1-D": (3,), "2-D": (2, 3)}
FT = 0.3048


# ---------------------------------------------------------------------------------------------
# Pressure settings
# ---------------------------------------------------------------------------------------------

# (elevation [ft], QNH [hPa], QFE [hPa], tolerance [hPa]): with QNH 1013.25 hPa the QFE is the
# standard pressure at the elevation, as ICAO Doc 7488/3 tabulates it (from memory).
ICAO_TABLE = [
    (0.0, 1013.25, 1013.25, 0.0),
    (1_000.0, 1013.25, 977.17, 0.005),
    (2_000.0, 1013.25, 942.13, 0.005),
    (5_000.0, 1013.25, 843.07, 0.005),
    (10_000.0, 1013.25, 696.82, 0.005),
]


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
@pytest.mark.parametrize(("elev_ft", "qnh", "qfe", "tol"), ICAO_TABLE)
def test_qfe_on_a_standard_pressure_day_is_the_icao_table_pressure(elev_ft, qnh, qfe, tol, shape):
    elevation = np.full(shape, elev_ft * FT) if shape else elev_ft * FT
    got = alt.qfe_from_qnh(elevation, qnh * 100.0)
    assert np.shape(got) == shape
    np.testing.assert_allclose(got / 100.0, qfe, rtol=0.0, atol=tol)
    np.testing.assert_allclose(alt.qnh_from_qfe(elevation, qfe * 100.0) / 100.0, qnh, atol=0.02)


def classic_qfe(elevation_m, qnh_hpa):
    """Altimeter-setting equation of the troposphere (Smithsonian Meteorological Tables; FMH-1),
    typed here: QFE = (QNH^n - P0^n |L| h / T0)^(1/n), n = R |L| / g0 = 0.190263 with the ICAO
    R = 287.05287, |L| = 0.0065 K/m, T0 = 288.15 K, P0 = 1013.25 hPa."""
    n = 287.05287 * 0.0065 / 9.80665
    return (qnh_hpa**n - 1013.25**n * 0.0065 * elevation_m / 288.15) ** (1.0 / n)


def test_qfe_matches_the_classic_altimeter_setting_equation():
    # Largest difference seen: 1e-10 hPa (the same relation, written differently).
    elevation = np.array([[0.0], [150.0], [800.0], [1_700.0], [3_500.0]])
    qnh = np.array([950.0, 990.0, 1013.25, 1030.0, 1050.0])
    np.testing.assert_allclose(alt.qfe_from_qnh(elevation, qnh * 100.0) / 100.0, classic_qfe(elevation, qnh),
                               rtol=0.0, atol=1e-8)


def test_qfe_matches_metpy_station_pressure():
    # MetPy altimeter_to_station_pressure (Smithsonian 1951 p. 269, the NWS form): it adds 0.3 hPa
    # (the U.S. convention that the sensor sits 10 ft above the elevation) and takes T0 = 288 K.
    # Without the 0.3 hPa the two agree within 0.15 hPa up to 2 000 m; largest seen 0.11 hPa (2 000 m).
    elevation = np.array([0.0, 100.0, 500.0, 1_000.0, 2_000.0])
    for qnh in (980.0, 1013.25, 1040.0):
        metpy = mpcalc.altimeter_to_station_pressure(qnh * units.hPa, elevation * units.m).to("hPa").magnitude
        np.testing.assert_allclose(alt.qfe_from_qnh(elevation, qnh * 100.0) / 100.0, metpy - 0.3, atol=0.15)


def test_hectopascal_is_about_27_to_30_ft_near_sea_level():
    # Common practice, no source: 1 hPa of QNH is about 27 to 30 ft of altitude near sea level.
    dH = alt.pressure_altitude_of_aerodrome(0.0, qnh=101_225.0) - alt.pressure_altitude_of_aerodrome(0.0, qnh=101_325.0)
    assert 27.0 < dH / FT < 30.0


def test_pressure_altitude_of_aerodrome_agrees_both_ways():
    elevation, qnh = 1_234.0, 99_100.0
    qfe = alt.qfe_from_qnh(elevation, qnh)
    assert alt.pressure_altitude_of_aerodrome(elevation, qnh=qnh) == pytest.approx(
        alt.pressure_altitude_of_aerodrome(elevation, qfe=qfe), abs=1e-8)
    for neither_or_both in ({}, {"qnh": qnh, "qfe": qfe}):
        with pytest.raises(ValueError, match="^give exactly one of qnh and qfe$"):
            alt.pressure_altitude_of_aerodrome(elevation, **neither_or_both)


@SETTINGS
@given(st.floats(min_value=-400.0, max_value=5_000.0), st.floats(min_value=80_000.0, max_value=110_000.0))
def test_qnh_qfe_round_trip(elevation, qnh):
    qfe = alt.qfe_from_qnh(elevation, qnh)
    assert alt.qnh_from_qfe(elevation, qfe) == pytest.approx(qnh, rel=1e-12)
    if abs(elevation) > 1.0:
        assert (qfe < qnh) == (elevation > 0.0)


# ---------------------------------------------------------------------------------------------
# Temperature correction (PANS-OPS)
# ---------------------------------------------------------------------------------------------

# ICAO Doc 8168, Vol. I, Part III, Section 1, Chapter 4, Table III-1-4-1 "Values to be added by
# the pilot to minimum promulgated heights/altitudes (ft)", sea-level aerodrome (from memory):
# height above the altimeter setting source [ft] across, aerodrome temperature [degC] down.
TABLE_HEIGHTS_FT = (200, 300, 400, 500, 600, 700, 800, 900, 1000, 1500, 2000, 3000, 4000, 5000)
TABLE = {
    0: (20, 20, 30, 30, 40, 40, 50, 50, 60, 90, 120, 170, 230, 280),
    -10: (20, 30, 40, 50, 60, 70, 80, 90, 100, 150, 200, 290, 390, 490),
    -20: (30, 50, 60, 70, 90, 100, 120, 130, 140, 210, 280, 420, 570, 710),
    -30: (40, 60, 80, 100, 120, 140, 150, 170, 190, 280, 380, 570, 760, 950),
    -40: (50, 80, 100, 120, 150, 170, 190, 220, 240, 360, 480, 720, 970, 1210),
    -50: (60, 90, 120, 150, 180, 210, 240, 270, 300, 450, 590, 890, 1190, 1500),
}


@pytest.mark.parametrize("t_c", TABLE)
def test_correction_matches_the_pans_ops_table(t_c):
    # The table rounds the approximate formula's values up to the next 10 ft (checked first: all
    # 84 entries as typed from memory); the equation's values lie within that 10 ft step.
    # Largest differences seen: 10.0 ft under (-30 degC, 700 ft: the approximate formula gives
    # 130.0 ft, the table 140), 2.8 ft over (-50 degC, 4000 ft).
    heights = np.array(TABLE_HEIGHTS_FT) * FT
    table = np.array(TABLE[t_c], dtype=float)
    approximate = approximate_correction(heights, t_c) / FT
    np.testing.assert_array_equal(np.ceil(approximate / 10.0 - 1e-6) * 10.0, table)
    got = alt.temperature_correction(heights, 0.0, t_c + 273.15) / FT
    np.testing.assert_allclose(got, table, rtol=0.0, atol=10.05)


def approximate_correction(H, t0, H_ss=0.0):
    """PANS-OPS's approximate formula (Doc 8168, from memory): dH = H (15 - t0) /
    (273 + t0 - 0.5 L0 (H + H_ss)), L0 = 0.0065 degC/m, t0 the aerodrome temperature [degC]."""
    return H * (15.0 - t0) / (273.0 + t0 - 0.5 * 0.0065 * (H + H_ss))


def test_correction_agrees_with_the_approximate_formula_at_a_sea_level_aerodrome():
    # Doc 8168 says the approximate formula is within 5 % of the accurate correction (from
    # memory); at a sea-level aerodrome over the table's range the largest difference seen is 0.6 %.
    H = np.array(TABLE_HEIGHTS_FT, dtype=float)[:, None] * FT
    t0 = np.array([10.0, 0.0, -10.0, -20.0, -30.0, -40.0, -50.0])
    np.testing.assert_allclose(alt.temperature_correction(H, 0.0, t0 + 273.15), approximate_correction(H, t0),
                               rtol=1e-2)


@pytest.mark.parametrize("shape", SHAPES.values(), ids=SHAPES)
@pytest.mark.parametrize(("height", "elevation", "t_c"), [
    (300.0, 0.0, -15.0), (1_000.0, 500.0, -30.0), (1_500.0, 2_000.0, -25.0), (600.0, 1_200.0, 0.0),
    (3_000.0, 3_000.0, -45.0), (450.0, -100.0, 35.0),
])
def test_correction_solves_the_doc_8168_equation(height, elevation, t_c, shape):
    # Doc 8168's equation, typed here: dH = (-dT / L0) ln[1 + L0 h_PAA / (T0 + L0 h_aero)] with
    # h_PAA = height + dH, dT = t - (15 - 0.0065 h_aero), L0 = -0.0065 K/m, T0 = 288.15 K.
    # Largest residual seen: 2e-13 m.
    h = np.full(shape, height) if shape else height
    dH = alt.temperature_correction(h, elevation, t_c + 273.15)
    assert np.shape(dH) == shape
    dT = t_c - (15.0 - 0.0065 * elevation)
    expected = (-dT / -0.0065) * np.log(1.0 + (-0.0065 * (h + dH)) / (288.15 - 0.0065 * elevation))
    np.testing.assert_allclose(dH, expected, rtol=0.0, atol=1e-9)


@pytest.mark.parametrize("t_k", [0.5, 100.0, 223.15, 323.15])
def test_no_height_needs_no_correction_at_any_temperature(t_k):
    # Doc 8168's equation at h = 0: dH = (-dT / L0) ln(1 + L0 dH / T_std) has the root dH = 0 whatever the
    # deviation, down to the coldest temperature above 0 K (the equation's domain).
    assert alt.temperature_correction(0.0, 500.0, t_k) == 0.0
    np.testing.assert_array_equal(alt.temperature_correction(np.zeros(2), 500.0, t_k), [0.0, 0.0])


def test_warm_day_gives_a_negative_correction_and_standard_day_none():
    assert alt.temperature_correction(600.0, 0.0, 303.15) < 0.0
    assert alt.temperature_correction(600.0, 1_000.0, 288.15 - 6.5) == pytest.approx(0.0, abs=1e-12)


@SETTINGS
@given(st.floats(min_value=0.0, max_value=5_000.0), st.floats(min_value=-400.0, max_value=4_500.0),
       st.floats(min_value=-70.0, max_value=50.0))
def test_corrected_level_is_at_the_minimum_true_height(height, elevation, t_c):
    # The hypsometric relation of service.physics.atmosphere with a constant deviation from the
    # aerodrome's level: the geopotential thickness between the aerodrome and the corrected
    # pressure level equals the minimum height (first layer, so the same gradient as PANS-OPS).
    dH = alt.temperature_correction(height, elevation, t_c + 273.15)
    dT = float(alt.aerodrome_isa_deviation(elevation, t_c + 273.15))
    datum = atm.standard_pressure(elevation)
    thickness = atm.geopotential_altitude(atm.pressure_level_height(elevation + height + dH, dT, datum=datum))
    assert thickness == pytest.approx(height, rel=1e-9, abs=1e-7)
    if height > 1.0 and abs(dT) > 1e-3:
        assert (dH > 0) == (dT < 0)
