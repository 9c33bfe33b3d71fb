"""The air at a point through the API: humidity, total air temperature, the U.S. 1976 property set, geometric
heights on off-standard days and above a QNH datum, and one validity range whatever the input form.

Outside references: MetPy (moist-air density at the virtual temperature; test-only), the IAPWS saturation
pressure (iapws), aerocalc3 (static temperature from an indicated temperature and a recovery factor), ambiance
(the property set, ICAO Doc 7488/3 constants), the hypsometric relation integrated in tests/reference.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from ambiance import Atmosphere
from iapws.iapws95 import IAPWS95
from metpy import calc as mpcalc
from metpy.units import units

from tests import reference as ref
from tests.helpers import assert_problem, post

ATM, AIRSPEED, SOLVE = "/v1/atmosphere", "/v1/airspeed", "/v1/lift/solve"
FT, KT = 0.3048, 1852.0 / 3600.0


def value(doc, name):
    return doc[name]["value"]


# --- humidity ------------------------------------------------------------------------------------------

@pytest.mark.parametrize(("altitude_ft", "t_c", "td_c"), [(0, 30.0, 25.0), (7200, 32.0, 12.0), (3000, 5.0, -5.0)])
def test_moist_density_matches_metpy(client, altitude_ft, t_c, td_c):
    # MetPy density(p, T, mixing ratio) = p / (Rd Tv) with its Rd 287.047 (ours 287.05287) and its saturation
    # curve (Ambaum 2020; ours Hardy 1998): largest difference seen 3e-5 relative.
    doc = post(client, ATM, {"altitude": altitude_ft, "temperature": t_c, "dew_point": td_c}).json
    p = value(doc, "pressure") * units.hPa
    w = mpcalc.mixing_ratio_from_relative_humidity(
        p, t_c * units.degC, mpcalc.relative_humidity_from_dewpoint(t_c * units.degC, td_c * units.degC))
    rho = mpcalc.density(p, t_c * units.degC, w).to("kg/m^3").magnitude
    assert value(doc, "density") == pytest.approx(rho, rel=1e-4)
    assert value(doc, "virtual_temperature") > t_c
    assert value(doc, "density_altitude") > post(client, ATM, {"altitude": altitude_ft, "temperature": t_c}).json[
        "density_altitude"]["value"]  # humid air is lighter: a higher density altitude


def test_vapour_pressure_at_the_dew_point_is_the_iapws_saturation_pressure(client):
    # iapws: the IAPWS saturation pressure of water at 20 degC (2339.2 Pa); Hardy's formula to 3e-5.
    doc = post(client, ATM, {"altitude": 0, "temperature": 25, "dew_point": 20, "outputs": ["vapour_pressure"]}).json
    assert value(doc, "vapour_pressure") * 100 == pytest.approx(IAPWS95._Vapor_Pressure(293.15) * 1e6, rel=5e-5)


def test_relative_humidity_and_dew_point_give_the_same_air(client):
    rh = 100 * ref_es(288.15) / ref_es(303.15)  # 15 degC dew point at 30 degC, by the IAPWS curve
    a = post(client, ATM, {"altitude": 1000, "temperature": 30, "relative_humidity": rh}).json
    b = post(client, ATM, {"altitude": 1000, "temperature": 30, "dew_point": 15}).json
    assert value(a, "density") == pytest.approx(value(b, "density"), rel=1e-6)


def ref_es(T):
    return IAPWS95._Vapor_Pressure(T) * 1e6


def test_dry_air_is_unchanged(client):
    dry = post(client, ATM, {"altitude": 5000, "temperature": 10}).json
    assert value(dry, "vapour_pressure") == 0.0
    assert value(dry, "virtual_temperature") == pytest.approx(10.0)


@pytest.mark.parametrize(("body", "pointer"), [
    ({"altitude": 0, "temperature": 20, "dew_point": 21}, "/dew_point"),
    ({"altitude": 0, "temperature": 20, "dew_point": 5, "relative_humidity": 50}, "/dew_point"),
    ({"altitude": 0, "temperature": 20, "relative_humidity": 101}, "/relative_humidity"),
    ({"altitude": 0, "dew_point": -101}, "/dew_point"),
    ({"altitude": 270000, "isa_deviation": 100, "relative_humidity": 100}, "/relative_humidity"),
])
def test_bad_humidity(client, body, pointer):
    assert_problem(post(client, ATM, body), 422, pointer)


# --- total air temperature -----------------------------------------------------------------------------

@pytest.mark.parametrize(("kind", "speed"), [("cas", 250), ("mach", 0.6), ("tas", 380), ("eas", 240)])
def test_static_temperature_from_tat_matches_aerocalc3(client, kind, speed):
    # aerocalc3 mach2temp(M, indicated, r): T = T_ind / (1 + 0.2 r M^2), at the Mach number the service found.
    doc = post(client, AIRSPEED, {kind: speed, "altitude": {"value": 240, "unit": "FL"}, "total_air_temperature": -12,
                                  "recovery_factor": 0.95}).json
    mach = doc["mach"]
    assert value(doc["atmosphere"], "temperature") == pytest.approx(ac.mach2temp(mach, -12, 0.95), abs=1e-9)
    assert value(doc, "total_air_temperature") == pytest.approx(-12.0, abs=1e-9)
    assert value(doc, "ram_rise") == pytest.approx(-12.0 - value(doc["atmosphere"], "temperature"), abs=1e-9)
    # the same air as from the outside air temperature found
    oat = post(client, AIRSPEED, {kind: speed, "altitude": {"value": 240, "unit": "FL"},
                                  "temperature": value(doc["atmosphere"], "temperature")}).json
    assert oat["mach"] == pytest.approx(mach, rel=1e-12)


def test_ram_rise_from_tas_matches_aerocalc3(client):
    # aerocalc3 tas2temp: T = T_ind - r TAS^2 / 7592.473 (kt); our cp 1004.685 gives 7592.468 (7e-7 apart).
    doc = post(client, AIRSPEED, {"tas": 450, "altitude": 30000, "total_air_temperature": -20,
                                  "recovery_factor": 0.9}).json
    assert value(doc["atmosphere"], "temperature") == pytest.approx(ac.tas2temp(450, -20, 0.9), abs=1e-4)


def test_every_airspeed_answer_reports_tat_and_ram_rise(client):
    # NACA Report 1135 eq. 43 at M 0.78, FL350, ISA (216.65 K), r = 1: TAT = 216.65 (1 + 0.2 x 0.6084) = 243.012 K.
    doc = post(client, AIRSPEED, {"mach": 0.78, "altitude": {"value": 36089, "unit": "ft"}}).json
    assert value(doc, "total_air_temperature") == pytest.approx(243.012 - 273.15, abs=2e-3)
    assert value(doc, "ram_rise") == pytest.approx(26.362, abs=2e-3)


@pytest.mark.parametrize(("path", "body", "pointer"), [
    (AIRSPEED, {"cas": 250, "altitude": 10000, "recovery_factor": 0.9}, "/recovery_factor"),
    (AIRSPEED, {"cas": 250, "altitude": 10000, "total_air_temperature": 5, "temperature": 0}, "/total_air_temperature"),
    (AIRSPEED, {"cas": 250, "altitude": 10000, "total_air_temperature": 5, "recovery_factor": 0.3},
     "/recovery_factor"),
    (AIRSPEED, {"tas": 2500, "altitude": 10000, "total_air_temperature": -100}, "/total_air_temperature"),
])
def test_bad_tat(client, path, body, pointer):
    assert_problem(post(client, path, body), 422, pointer)


# --- the U.S. Standard Atmosphere 1976 property set ------------------------------------------------------

# ambiance attribute -> (our output, unit asked for, relative tolerance: the constants of ICAO Doc 7488/3 that
# ambiance uses differ from the 1976 standard's, see tests/test_physics_properties.py)
PROPERTIES = {
    "grav_accel": ("gravity", "m/s2", 1e-12),
    "number_density": ("number_density", "1/m3", 8e-5),
    "mean_free_path": ("mean_free_path", "m", 8e-5),
    "collision_frequency": ("collision_frequency", "1/s", 8e-5),
    "mean_particle_speed": ("mean_particle_speed", "m/s", 2e-6),
    "pressure_scale_height": ("pressure_scale_height", "m", 2e-6),
    "thermal_conductivity": ("thermal_conductivity", "W/(m*K)", 8e-4),
}


def test_property_set_matches_ambiance_over_its_range(client):
    h = np.linspace(-4996.0, 81020.0, 60)  # ambiance to 81.02 km; the model from -4 996 m (-5 km geopotential)
    doc = post(client, ATM, {"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric",
                             "outputs": [name for name, _, _ in PROPERTIES.values()],
                             "output_units": {"speed": "m/s"}}).json
    reference = Atmosphere(h)
    for attribute, (name, unit, rtol) in PROPERTIES.items():
        assert doc[name]["unit"] == unit
        np.testing.assert_allclose(doc[name]["value"], getattr(reference, attribute), rtol=rtol, err_msg=name)


def test_unrequested_properties_are_not_computed(client, monkeypatch):
    from service.physics import properties

    def boom(*args):
        raise AssertionError("computed although not asked for")

    for name in ("thermal_conductivity", "mean_free_path", "number_density", "collision_frequency",
                 "mean_particle_speed", "pressure_scale_height", "gravity"):
        monkeypatch.setattr(properties, name, boom)
    doc = post(client, ATM, {"altitude": 1000, "outputs": ["density", "density_altitude"]}).json
    assert set(doc) == {"density", "density_altitude", "warnings"}


# --- geometric heights ---------------------------------------------------------------------------------

@pytest.mark.parametrize(("h", "day"), [(10_000.0, {"isa_deviation": 20}), (3_000.0, {"isa_deviation": -30}),
                                        (12_000.0, {"temperature": {"value": 210, "unit": "K"}}),
                                        (500.0, {})])
def test_geometric_height_round_trip_through_the_api(client, h, day):
    # The example: 10 000 m on an ISA+20 day is the pressure level 9 263.07 m, and the geometric
    # altitude output returns 10 000 m (the standard-day relation gave 10 788 m and a density 9 % off).
    doc = post(client, ATM, {"altitude": {"value": h, "unit": "m"}, "altitude_kind": "geometric", **day,
                             "output_units": {"altitude": "m"}}).json
    assert value(doc, "geometric_altitude") == pytest.approx(h, rel=1e-9)
    dT = value(doc, "isa_deviation")
    H = ref.pressure_altitude_of_height(h, dT=day["isa_deviation"]) if "isa_deviation" in day else \
        ref.pressure_altitude_of_height(h, T=day["temperature"]["value"]) if day else ref.geopotential(h)
    assert value(doc, "pressure_altitude") == pytest.approx(H, rel=1e-9, abs=1e-6)
    assert dT == pytest.approx(day.get("isa_deviation", dT))
    if h == 10_000.0:
        assert value(doc, "pressure_altitude") == pytest.approx(9263.07, abs=0.01)


def test_qnh_gives_the_true_altitude_above_mean_sea_level(client):
    # On a day of standard temperature an altimeter set to QNH reads the height above mean sea level: the
    # geometric altitude is the indicated altitude (geopotential to geometric), whatever the QNH.
    for qnh in (980, 1013.25, 1035):
        doc = post(client, ATM, {"altitude": 5000, "qnh": qnh, "output_units": {"altitude": "m"}}).json
        assert value(doc, "geometric_altitude") == pytest.approx(ref.geometric(5000 * FT), rel=1e-12)
    # a cold day: lower than indicated (the hypsometric integral from the QNH level)
    doc = post(client, ATM, {"altitude": 5000, "qnh": 1000, "isa_deviation": -20,
                             "output_units": {"altitude": "m"}}).json
    H_datum = ref.pressure_altitude(100_000.0)
    assert value(doc, "geometric_altitude") == pytest.approx(
        ref.level_height(value(doc, "pressure_altitude"), -20.0, H_datum), rel=1e-9)


# --- one validity range whatever the input form ----------------------------------------------------------

@pytest.mark.parametrize(("path", "body", "pointer"), [
    (ATM, {"altitude": 0, "temperature": -90}, "/temperature"),  # ISA-105
    (ATM, {"altitude": {"value": 250, "unit": "FL"}, "temperature": 70}, "/temperature"),  # ISA+104.5
    (AIRSPEED, {"cas": 250, "altitude": 30000, "temperature": -150}, "/temperature"),
    (AIRSPEED, {"cas": 2900, "altitude": 270000}, "/cas"),  # Mach 148 before
    (AIRSPEED, {"tas": [300, 2990], "altitude": 60000}, "/tas"),
    (AIRSPEED, {"eas": 2000, "altitude": 50000}, "/eas"),
    (SOLVE, {"solve_for": "cl", "weight": 21000, "wing_area": 61, "cas": 2900, "altitude": 270000}, "/cas"),
])
def test_one_validity_range(client, path, body, pointer):
    doc = assert_problem(post(client, path, body), 422, pointer)
    assert any(word in doc["detail"] for word in ("100 K", "Mach 5"))


def test_mach_limit_names_the_indices(client):
    doc = assert_problem(post(client, AIRSPEED, {"tas": [300, 2990, 400], "altitude": 60000}), 422, "/tas")
    assert "[1]" in doc["detail"]


def test_schedule_takes_the_humidity_as_the_airspeed_endpoint_does(client):
    body = {"altitude": 2000, "temperature": 28, "dew_point": 20, "outputs": ["tas", "eas"]}
    schedule = post(client, "/v1/airspeed/schedule", {"cas": 250, "mach": 0.76, **body}).json
    single = post(client, AIRSPEED, {"cas": 250, **body}).json
    assert value(schedule, "eas") == pytest.approx(value(single, "eas"), rel=1e-12)
    assert value(schedule, "tas") == pytest.approx(value(single, "tas"), rel=1e-12)
    dry = post(client, AIRSPEED, {"cas": 250, "altitude": 2000, "temperature": 28, "outputs": ["eas"]}).json
    assert value(single, "eas") < value(dry, "eas")  # lighter air: a lower EAS for the same CAS
