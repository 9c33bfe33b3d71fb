"""The independent reference (tests/reference.py) against the reference libraries and published tables.

The endpoint reference tests compare the service with tests/reference.py at tight tolerances; this module makes
sure that reference is itself right, by checking it against ambiance, fluids and aerocalc3 (each with its own
constants and algorithms) and against values printed in the standards.
"""

import math

import pytest
from aerocalc3 import airspeed as ac
from ambiance import Atmosphere
from fluids.atmosphere import ATMOSPHERE_1976

from tests import reference as ref

ALTITUDES = [-5000.0, -1234.5, 0.0, 1500.0, 10999.0, 11000.0, 15000.0, 20000.0, 26000.0, 32000.0, 40000.0, 47000.0,
             49000.0, 51000.0, 60000.0, 71000.0, 79000.0]  # ambiance stops at 81 020 m geometric


@pytest.mark.parametrize("H", ALTITUDES)
def test_standard_state_against_ambiance(H):
    # ambiance implements ISO 2533 / USSA 1976 on its own; it takes geometric height and starts each layer from
    # the base pressure printed in ISO 2533 (rounded), hence 3e-6 on the pressure and density.
    a = Atmosphere(ref.geometric(H))
    T, p = ref.std_tp(H)
    assert T == pytest.approx(float(a.temperature[0]), rel=1e-12, abs=1e-9)
    assert p == pytest.approx(float(a.pressure[0]), rel=3e-6)
    assert ref.std_rho(H) == pytest.approx(float(a.density[0]), rel=3e-6)
    assert math.sqrt(ref.KAPPA * ref.R * T) == pytest.approx(float(a.speed_of_sound[0]), rel=1e-9)
    assert ref.sutherland(T) == pytest.approx(float(a.dynamic_viscosity[0]), rel=1e-9)
    assert float(a.H[0]) == pytest.approx(H, abs=1e-6)


@pytest.mark.parametrize("H", [-4000.0, 0.0, 5000.0, 11000.0, 20000.0, 30000.0])
def test_inverses_against_ambiance(H):
    # ambiance's own inverses (its own root finding; it does not converge everywhere above 50 km).
    T, p = ref.std_tp(H)
    rho = p / (ref.R * T)
    assert ref.pressure_altitude(p) == pytest.approx(float(Atmosphere.from_pressure(p).H[0]), abs=0.05)
    assert ref.density_altitude(rho) == pytest.approx(float(Atmosphere.from_density(rho).H[0]), abs=0.05)


@pytest.mark.parametrize("H", [0.0, 5000.0, 11000.0, 30000.0, 50000.0, 84852.0])
def test_standard_state_against_fluids(H):
    # fluids.atmosphere.ATMOSPHERE_1976 takes geometric height and has its own layer tables (the 1976 standard's
    # R* / M = 287.0531, hence up to 1e-5 on the pressure high up).
    f = ATMOSPHERE_1976(ref.geometric(H))
    T, p = ref.std_tp(H)
    assert T == pytest.approx(f.T, rel=1e-9)
    assert p == pytest.approx(f.P, rel=1e-5)
    assert ref.sutherland(T) == pytest.approx(ATMOSPHERE_1976.viscosity(T), rel=1e-9)


# U.S. Standard Atmosphere 1976, table 4 / ICAO Doc 7488/3 table D: base pressures of the layers [Pa]
# (values as printed, 6 or 7 significant digits; from memory of the table). The 1976 table is computed with
# R* / M = 287.0531 J/(kg K), ICAO's with 287.05287: they part by up to 1e-5 at 71 km.
@pytest.mark.parametrize(("H", "T_table", "p_table"), [
    (0.0, 288.15, 101325.0),
    (11000.0, 216.65, 22632.06),
    (20000.0, 216.65, 5474.889),
    (32000.0, 228.65, 868.0187),
    (47000.0, 270.65, 110.9063),
    (51000.0, 270.65, 66.93887),
    (71000.0, 214.65, 3.956420),
])
def test_layer_bases_against_the_printed_table(H, T_table, p_table):
    T, p = ref.std_tp(H)
    assert T == pytest.approx(T_table, abs=1e-9)
    assert p == pytest.approx(p_table, rel=1e-5)


def test_sea_level_values_against_the_printed_table():
    # ICAO Doc 7488/3 table A: rho0 1.225 kg/m3, a0 340.294 m/s, mu0 1.7894e-5 Pa s, nu0 1.4607e-5 m2/s.
    assert ref.RHO0 == pytest.approx(1.225, abs=5e-7)
    assert ref.A0 == pytest.approx(340.294, abs=5e-4)
    assert ref.sutherland(288.15) == pytest.approx(1.7894e-5, abs=5e-10)
    assert ref.sutherland(288.15) / ref.RHO0 == pytest.approx(1.4607e-5, abs=5e-10)


@pytest.mark.parametrize("H", [-4000.0, 0.0, 8000.0, 11000.0, 25000.0, 50000.0, 80000.0])
def test_inverses_return_the_altitude(H):
    T, p = ref.std_tp(H)
    assert ref.pressure_altitude(p) == pytest.approx(H, abs=1e-6)
    assert ref.density_altitude(p / (ref.R * T)) == pytest.approx(H, abs=1e-6)
    assert ref.geopotential(ref.geometric(H)) == pytest.approx(H, abs=1e-8)


def test_level_height_standard_day_is_the_geometric_altitude_and_scales_with_the_temperature():
    for H in (-3000.0, 3000.0, 11000.0, 30000.0, 60000.0):
        assert ref.level_height(H, 0.0) == pytest.approx(ref.geometric(H), abs=1e-7)
    # In the isothermal layer 11-20 km (216.65 K) a +10 K day stretches 1 km to 1 km * 226.65 / 216.65.
    Z = lambda H, dT: ref.geopotential(ref.level_height(H, dT))  # noqa: E731
    assert Z(20000.0, 10.0) - Z(11000.0, 10.0) == pytest.approx(9000.0 * 226.65 / 216.65, rel=1e-12)


# aerocalc3 uses its own constants (a0 = 340.2941 m/s, p0 = 29.9213 inHg, R = 287.05307), so agreement is to
# about 1e-5; it covers CAS <-> impact pressure (both branches), CAS/Mach/TAS/EAS at altitude and the crossover.
# aerocalc3 refuses CAS above 661.48 kt: the supersonic branch is checked against the normal-shock table below.
@pytest.mark.parametrize(("cas_kt", "alt_ft"), [(60, 0), (250, 10000), (320, 24000), (280, 35000), (350, 30000),
                                                (600, 0)])
def test_airspeeds_against_aerocalc3(cas_kt, alt_ft):
    H = alt_ft * 0.3048
    T, p = ref.std_tp(H)
    got = ref.speeds("cas", cas_kt * 0.5144444444444445, p, T)
    kt = 0.5144444444444445
    assert got["tas"] / kt == pytest.approx(ac.cas2tas(cas_kt, alt_ft), rel=2e-5)
    assert got["mach"] == pytest.approx(ac.cas_alt2mach(cas_kt, alt_ft), rel=2e-5)
    assert got["eas"] / kt == pytest.approx(ac.cas2eas(cas_kt, alt_ft), rel=2e-5)
    assert got["impact_pressure"] / 3386.389 == pytest.approx(ac.cas2dp(cas_kt), rel=2e-5)
    assert ref.cas_of_qc(got["impact_pressure"]) == pytest.approx(cas_kt * kt, rel=1e-12)
    back = ref.speeds("mach", got["mach"], p, T)
    assert back["cas"] == pytest.approx(cas_kt * kt, rel=1e-10)


@pytest.mark.parametrize(("cas_kt", "mach"), [(250, 0.7), (290, 0.76), (320, 0.82), (350, 0.9)])
def test_crossover_against_aerocalc3(cas_kt, mach):
    _, H = ref.crossover(cas_kt * 0.5144444444444445, mach)
    assert H / 0.3048 == pytest.approx(ac.cas_mach2alt(cas_kt, mach), abs=2.0)


def test_pitot_relations_against_the_normal_shock_table():
    # NACA Report 1135 table II (normal shock), from memory: p_t2 / p_1 = 1.8929 at M = 1 (the isentropic value
    # 1.2^3.5), 3.4133 at M = 1.5, 5.6404 at M = 2, 12.061 at M = 3.
    assert ref.pitot_ratio(1.0) + 1.0 == pytest.approx(1.2**3.5, rel=1e-15)
    assert ref.pitot_ratio(1.0) + 1.0 == pytest.approx(1.8929, abs=5e-5)
    assert ref.pitot_ratio(1.5) + 1.0 == pytest.approx(3.4133, abs=5e-4)
    assert ref.pitot_ratio(2.0) + 1.0 == pytest.approx(5.6404, abs=5e-4)
    assert ref.pitot_ratio(3.0) + 1.0 == pytest.approx(12.061, abs=5e-3)
    for M in (0.3, 0.99, 1.0, 1.01, 2.5, 4.9):
        assert ref.mach_of_ratio(ref.pitot_ratio(M)) == pytest.approx(M, rel=1e-12)


def test_datcom_slope_limits():
    # Elliptic-wing limits of the Helmbold formula: A -> 0 gives pi A / 2 (slender wing), kappa = 1 and large A
    # tends to 2 pi (thin-airfoil theory). Anderson, Fundamentals of Aerodynamics (from memory).
    assert ref.datcom_slope(1e-4, 0.0, 0.0) == pytest.approx(math.pi * 1e-4 / 2, rel=1e-6)
    assert ref.datcom_slope(1e6, 0.0, 0.0) == pytest.approx(2 * math.pi, rel=1e-5)
