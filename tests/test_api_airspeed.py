"""POST /v1/airspeed, /v1/airspeed/crossover and /v1/airspeed/schedule through the Flask test client.

Outside references
------------------
- aerocalc3 0.10 (PyPI, K. Horton), test-only: cas2tas, cas_alt2mach, cas2eas, cas2dp, tas2cas, eas2tas,
  mach_alt2cas, mach2tas, cas_mach2alt, and std_atm.alt2temp / alt2press for its own standard atmosphere. Its
  constants differ from ours by about 1e-6 (tests/test_physics_airspeed.py explains each), so the API must agree
  within API_RTOL = 5e-6, a hundred times tighter than the 5e-4 the airspeed issue asks for.
- NACA Report 1135 (1953): the Rayleigh pitot formula for gamma = 1.4, qc/p = 166.9216 M^7 / (7 M^2 - 1)^2.5 - 1,
  and the subsonic isentropic relation (from memory, as in tests/test_physics_airspeed.py).
- ICAO Doc 7488/3 (1993): FL450 (13 716 m) 147.48 hPa and 216.65 K; p0, rho0, a0, R (from memory).
"""

import csv
import io
import json
import math

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from aerocalc3 import std_atm as ac_atm
from jsonschema import Draft202012Validator

from service import create_app
from service.physics import airspeed as spd
from service.physics import atmosphere as atm
from tests.helpers import assert_problem, post, spy

AIRSPEED, CROSSOVER, SCHEDULE = "/v1/airspeed", "/v1/airspeed/crossover", "/v1/airspeed/schedule"
API_RTOL = 5e-6
#: Our demo type TQ-62 (invented operator Tavrenne Regional): IAS -> CAS calibration [kt].
TQ62 = {"ias": [120, 160, 200, 240, 280, 320], "cas": [123, 162, 201, 240, 278.5, 317], "unit": "kt"}
KT = 1852 / 3600
FT = 0.3048


def isa_temp_c(feet):
    """Standard temperature [degC] at a pressure altitude [ft], from aerocalc3's own atmosphere."""
    return np.array([ac_atm.alt2temp(h, alt_units="ft", temp_units="C") for h in np.atleast_1d(feet)])


def values(doc, name):
    return np.asarray(doc[name]["value"], dtype=float)


# --------------------------------------------------------------------------------------------
# The "done when" checks
# --------------------------------------------------------------------------------------------


def test_cas_280_kt_at_fl330_isa_plus_15_matches_aerocalc3(client):
    r = post(client, AIRSPEED, {"cas": {"value": 280, "unit": "kt"}, "altitude": {"value": 330, "unit": "FL"},
                                "isa_deviation": 15})
    assert r.status_code == 200, r.json
    doc = r.json
    t = float(isa_temp_c(33000)[0]) + 15
    # aerocalc3 0.10 airspeed.cas2tas, cas_alt2mach, cas2eas, cas2dp
    assert doc["tas"] == {"value": pytest.approx(ac.cas2tas(280, 33000, t, speed_units="kt", alt_units="ft",
                                                            temp_units="C"), rel=API_RTOL), "unit": "kt"}
    assert doc["mach"] == pytest.approx(ac.cas_alt2mach(280, 33000, speed_units="kt", alt_units="ft"), rel=API_RTOL)
    assert doc["eas"]["value"] == pytest.approx(ac.cas2eas(280, 33000, speed_units="kt", alt_units="ft"),
                                                rel=API_RTOL)
    assert doc["impact_pressure"] == {"value": pytest.approx(ac.cas2dp(280, speed_units="kt", press_units="hpa"),
                                                             rel=API_RTOL), "unit": "hPa"}
    assert doc["cas"] == {"value": pytest.approx(280.0, rel=1e-12), "unit": "kt"}
    assert "ias" not in doc  # no calibration given
    assert doc["warnings"] == []
    # the air there: aerocalc3 std_atm.alt2press, and the temperature given
    assert doc["atmosphere"]["pressure"]["value"] == pytest.approx(
        ac_atm.alt2press(33000, alt_units="ft", press_units="hpa"), rel=API_RTOL)
    assert doc["atmosphere"]["temperature"] == {"value": pytest.approx(t, abs=1e-3), "unit": "degC"}
    # q = (gamma/2) p M^2 (NACA Report 1135); below qc at Mach 0.79
    p = doc["atmosphere"]["pressure"]["value"]
    assert doc["dynamic_pressure"]["value"] == pytest.approx(0.7 * p * doc["mach"] ** 2, rel=1e-12)
    assert doc["dynamic_pressure"]["value"] < doc["impact_pressure"]["value"]


def random_points(n=300, seed=11):
    """Seeded random subsonic points, sea level to FL510, ISA -30 to +30: CAS [kt], altitude [ft], ISA dev [K]."""
    rng = np.random.default_rng(seed)
    feet = rng.uniform(0, 51_000, 3 * n)
    dev = rng.uniform(-30, 30, 3 * n)
    cas = rng.uniform(60, 420, 3 * n)
    mach = spd.mach_from_cas(cas * KT, atm.standard_pressure(feet * FT))
    keep = np.flatnonzero(mach < 0.95)[:n]  # aerocalc3 is subsonic only
    return cas[keep], feet[keep], dev[keep]


def test_random_cas_points_match_aerocalc3(client):
    cas, feet, dev = random_points()
    doc = post(client, AIRSPEED, {"cas": cas.tolist(), "altitude": feet.tolist(), "isa_deviation": dev.tolist()}).json
    temp = isa_temp_c(feet) + dev
    rows = list(zip(cas, feet, temp, strict=True))
    units = {"speed_units": "kt", "alt_units": "ft"}
    # aerocalc3 0.10 airspeed.cas2tas, cas_alt2mach, cas2eas, cas2dp
    np.testing.assert_allclose(values(doc, "tas"), [ac.cas2tas(v, h, t, temp_units="C", **units) for v, h, t in rows],
                               rtol=API_RTOL)
    np.testing.assert_allclose(doc["mach"], [ac.cas_alt2mach(v, h, **units) for v, h, _ in rows], rtol=API_RTOL)
    np.testing.assert_allclose(values(doc, "eas"), [ac.cas2eas(v, h, **units) for v, h, _ in rows], rtol=API_RTOL)
    np.testing.assert_allclose(values(doc, "impact_pressure"),
                               [ac.cas2dp(v, speed_units="kt", press_units="hpa") for v in cas], rtol=API_RTOL)


def test_random_tas_eas_and_mach_points_match_aerocalc3(client):
    cas, feet, dev = random_points(200, seed=12)
    temp = isa_temp_c(feet) + dev
    base = {"altitude": feet.tolist(), "isa_deviation": dev.tolist()}
    tas = post(client, AIRSPEED, {"cas": cas.tolist()} | base).json["tas"]["value"]
    rows = list(zip(tas, feet, temp, strict=True))
    units = {"speed_units": "kt", "alt_units": "ft"}
    # TAS given: aerocalc3 0.10 airspeed.tas2cas
    doc = post(client, AIRSPEED, {"tas": tas} | base).json
    np.testing.assert_allclose(values(doc, "cas"), [ac.tas2cas(v, h, t, temp_units="C", **units) for v, h, t in rows],
                               rtol=API_RTOL)
    # EAS given: aerocalc3 0.10 airspeed.eas2tas
    eas = values(doc, "eas")
    doc = post(client, AIRSPEED, {"eas": eas.tolist()} | base).json
    np.testing.assert_allclose(values(doc, "tas"), [ac.eas2tas(v, h, t, temp_units="C", **units)
                                                    for v, h, t in zip(eas, feet, temp, strict=True)], rtol=API_RTOL)
    # Mach given: aerocalc3 0.10 airspeed.mach_alt2cas and mach2tas
    mach = np.asarray(doc["mach"])
    doc = post(client, AIRSPEED, {"mach": mach.tolist()} | base).json
    np.testing.assert_allclose(values(doc, "cas"), [ac.mach_alt2cas(m, h, alt_units="ft", speed_units="kt")
                                                    for m, h in zip(mach, feet, strict=True)], rtol=API_RTOL)
    np.testing.assert_allclose(values(doc, "tas"), [ac.mach2tas(m, t, temp_units="C", speed_units="kt")
                                                    for m, t in zip(mach, temp, strict=True)], rtol=API_RTOL)


def test_mach_1_6_at_fl450_follows_naca_1135(client):
    doc = post(client, AIRSPEED, {"mach": 1.6, "altitude": {"value": 450, "unit": "FL"},
                                  "output_units": {"speed": "m/s", "pressure": "Pa", "temperature": "K"}}).json
    text = json.dumps(doc)
    assert "NaN" not in text and "null" not in text
    p, T = doc["atmosphere"]["pressure"]["value"], doc["atmosphere"]["temperature"]["value"]
    assert p == pytest.approx(14_748, abs=1)  # ICAO Doc 7488/3: 147.48 hPa at 13 716 m (from memory)
    assert T == pytest.approx(216.65, abs=1e-9)  # ICAO Doc 7488/3: isothermal layer (from memory)
    # Rayleigh pitot formula, gamma = 1.4 (NACA Report 1135); 166.9216 is rounded to 7 digits
    qc = p * (166.9216 * 1.6**7 / (7 * 1.6**2 - 1) ** 2.5 - 1)
    assert doc["impact_pressure"]["value"] == pytest.approx(qc, rel=1e-6)
    # qc / p0 = 0.41 < 0.893: the CAS lies below a0, the subsonic closed form (NACA Report 1135)
    cas = 340.294 * math.sqrt(5 * ((qc / 101_325 + 1) ** (2 / 7) - 1))
    assert doc["cas"]["value"] == pytest.approx(cas, rel=1e-6)
    tas = 1.6 * math.sqrt(1.4 * 287.05287 * T)  # a = sqrt(gamma R T), ICAO Doc 7488/3
    assert doc["tas"]["value"] == pytest.approx(tas, rel=1e-9)
    assert doc["eas"]["value"] == pytest.approx(tas * math.sqrt(p / (287.05287 * T) / 1.225), rel=1e-6)
    assert doc["dynamic_pressure"]["value"] == pytest.approx(0.7 * p * 1.6**2, rel=1e-12)
    # and back: that CAS at FL450 is Mach 1.6 again
    back = post(client, AIRSPEED, {"cas": {"value": cas, "unit": "m/s"}, "altitude": {"value": 450, "unit": "FL"}})
    assert back.json["mach"] == pytest.approx(1.6, rel=1e-6)


def test_crossover_300_kt_mach_078_between_fl290_and_fl300(client):
    doc = post(client, CROSSOVER, {"cas": 300, "mach": 0.78}).json
    feet = doc["crossover_altitude"]["value"]
    assert doc["crossover_altitude"]["unit"] == "ft"
    assert 29_000 <= feet <= 30_000  # common practice, no source
    # aerocalc3 0.10 airspeed.cas_mach2alt (29 314.09 ft) and std_atm.alt2press there
    assert feet == pytest.approx(ac.cas_mach2alt(300, 0.78, speed_units="kt", alt_units="ft"), abs=0.1)
    assert doc["pressure"] == {"value": pytest.approx(ac_atm.alt2press(feet, alt_units="ft", press_units="hpa"),
                                                      rel=API_RTOL), "unit": "hPa"}
    assert doc["warnings"] == []


def test_crossover_arrays_match_aerocalc3(client):
    cas, mach = [250, 280, 300, 320, 350], [0.74, 0.76, 0.78, 0.80, 0.84]
    doc = post(client, CROSSOVER, {"cas": cas, "mach": mach, "output_units": {"altitude": "m"}}).json
    # aerocalc3 0.10 airspeed.cas_mach2alt
    ref = [ac.cas_mach2alt(c, m, speed_units="kt", alt_units="m") for c, m in zip(cas, mach, strict=True)]
    np.testing.assert_allclose(values(doc, "crossover_altitude"), ref, rtol=0, atol=0.03)
    assert doc["crossover_altitude"]["unit"] == "m"


# --------------------------------------------------------------------------------------------
# POST /v1/airspeed: fields, units, IAS and calibration
# --------------------------------------------------------------------------------------------


def test_sea_level_standard_day_cas_eas_tas_agree(client):
    # Definition of CAS and EAS at sea-level standard conditions (ICAO Doc 7488/3)
    doc = post(client, AIRSPEED, {"tas": [100, 400, 800], "altitude": 0}).json
    for name in ("cas", "eas", "tas"):
        np.testing.assert_allclose(values(doc, name), [100, 400, 800], rtol=1e-9)
    np.testing.assert_allclose(doc["mach"], np.array([100, 400, 800]) / 661.4786, rtol=1e-6)  # a0 = 661.48 kt


@pytest.mark.parametrize("given", ["cas", "eas", "tas", "mach"])
def test_every_kind_round_trips(client, given):
    base = {"altitude": {"value": [50, 250, 410], "unit": "FL"}, "isa_deviation": [-20, 0, 25]}
    first = post(client, AIRSPEED, {"cas": [180, 290, 250]} | base).json
    value = first[given] if given == "mach" else first[given]["value"]
    again = post(client, AIRSPEED, {given: value} | base).json
    for name in ("cas", "eas", "tas"):
        np.testing.assert_allclose(values(again, name), values(first, name), rtol=1e-9)
    np.testing.assert_allclose(again["mach"], first["mach"], rtol=1e-9)


def test_temperature_instead_of_isa_deviation(client):
    a = post(client, AIRSPEED, {"cas": 250, "altitude": 20000, "temperature": -10}).json
    b = post(client, AIRSPEED, {"cas": 250, "altitude": 20000,
                                "isa_deviation": -10 - float(isa_temp_c(20000)[0])}).json
    assert a["tas"]["value"] == pytest.approx(b["tas"]["value"], rel=1e-6)
    assert a["atmosphere"]["temperature"]["value"] == pytest.approx(-10.0, abs=1e-12)
    # the temperature moves the TAS but not the Mach number (qc/p fixes it)
    std = post(client, AIRSPEED, {"cas": 250, "altitude": 20000}).json
    assert a["mach"] == pytest.approx(std["mach"], rel=1e-12)
    assert a["tas"]["value"] > std["tas"]["value"]


def test_units_in_and_out(client):
    kt = post(client, AIRSPEED, {"cas": 250, "altitude": 10000}).json
    r = post(client, AIRSPEED, {"cas": {"value": 250 * 1.852, "unit": "km/h"},
                                "altitude": {"value": 3048, "unit": "m"}, "isa_deviation": {"value": 0, "unit": "degF"},
                                "output_units": {"speed": "m/s", "pressure": "inHg", "temperature": "K",
                                                 "density": "slug/ft3"}})
    doc = r.json
    assert doc["tas"] == {"value": pytest.approx(kt["tas"]["value"] * KT, rel=1e-12), "unit": "m/s"}
    assert doc["impact_pressure"]["unit"] == "inHg"
    assert doc["impact_pressure"]["value"] * 33.86389 == pytest.approx(kt["impact_pressure"]["value"], rel=1e-12)
    assert doc["atmosphere"]["temperature"] == {"value": pytest.approx(kt["atmosphere"]["temperature"]["value"]
                                                                       + 273.15, rel=1e-12), "unit": "K"}
    assert doc["atmosphere"]["density"]["unit"] == "slug/ft3"
    assert doc["atmosphere"]["speed_of_sound"]["unit"] == "m/s"


def test_ias_through_the_calibration_table(client):
    doc = post(client, AIRSPEED, {"ias": [250, 120, 320], "altitude": {"value": 330, "unit": "FL"},
                                  "isa_deviation": 15, "calibration": TQ62}).json
    # linear interpolation by hand: 240 + (250 - 240) (278.5 - 240) / (280 - 240); the end rows exactly
    np.testing.assert_allclose(values(doc, "cas"), [249.625, 123, 317], rtol=1e-12)
    np.testing.assert_allclose(values(doc, "ias"), [250, 120, 320], rtol=1e-12)
    same = post(client, AIRSPEED, {"cas": [249.625, 123, 317], "altitude": {"value": 330, "unit": "FL"},
                                   "isa_deviation": 15}).json
    np.testing.assert_allclose(values(doc, "tas"), values(same, "tas"), rtol=1e-12)
    assert doc["warnings"] == []


def test_calibration_in_another_unit(client):
    table = {"ias": [v * 1.852 for v in TQ62["ias"]], "cas": [v * 1.852 for v in TQ62["cas"]], "unit": "km/h"}
    doc = post(client, AIRSPEED, {"ias": 250, "altitude": 0, "calibration": table}).json
    assert doc["cas"]["value"] == pytest.approx(249.625, rel=1e-12)


def test_ias_output_null_with_warning_outside_the_table(client):
    doc = post(client, AIRSPEED, {"cas": [100, 200, 400, 317], "altitude": 5000, "calibration": TQ62}).json
    assert doc["ias"]["value"][0] is None and doc["ias"]["value"][2] is None
    # inverse interpolation by hand: 200 + (200 - 201) / (240 - 201) * 40; the last row exactly
    assert doc["ias"]["value"][1] == pytest.approx(200 - 40 / 39, rel=1e-12)
    assert doc["ias"]["value"][3] == pytest.approx(320, rel=1e-12)
    (warning,) = doc["warnings"]
    assert warning["field"] == "ias" and warning["count"] == 2 and warning["indices"] == [0, 2]
    assert "123 to 317 kt" in warning["message"]
    # the primary speeds are there at every point
    assert None not in doc["tas"]["value"]


def test_ias_outside_the_table_is_422(client):
    r = post(client, AIRSPEED, {"ias": [200, 110], "altitude": 0, "calibration": TQ62})
    doc = assert_problem(r, 422, "/ias")
    assert "IAS column, 120 to 320 kt at points [1]; nothing is extrapolated" in doc["detail"]
    one = assert_problem(post(client, AIRSPEED, {"ias": 330, "altitude": 0, "calibration": TQ62}), 422, "/ias")
    assert "120 to 320 kt; nothing" in one["detail"]


@pytest.mark.parametrize(("table", "pointer", "words"), [
    ({"ias": [120, 110], "cas": [123, 130]}, "/calibration/ias", "strictly increasing (row 1: 110 after 120)"),
    ({"ias": [120, 130], "cas": [123, 123]}, "/calibration/cas", "strictly increasing"),
    ({"ias": [120, 130], "cas": [123, 130, 140]}, "/calibration/ias", "same length, got 2 and 3"),
    ({"ias": [120], "cas": [123]}, "/calibration/ias", "at least 2 rows"),
    ({"ias": [120, "130"], "cas": [123, 130]}, "/calibration/ias/1", "a string"),
    ({"ias": [120, 130], "cas": [123, None]}, "/calibration/cas/1", "null"),
    ({"ias": [-10, 130], "cas": [123, 130]}, "/calibration/ias", "positive"),
    ({"ias": 120, "cas": [123, 130]}, "/calibration/ias", "array"),
    ({"cas": [123, 130]}, "/calibration/ias", "Missing"),
    ({"ias": [120, 130], "cas": [123, 130], "unit": "knots"}, "/calibration/unit", "kt"),
    ({"ias": [120, 130], "cas": [123, 130], "rows": 2}, "/calibration/rows", "Unknown"),
    ([[120, 123], [130, 130]], "/calibration", "object"),
])
def test_bad_calibration_tables(client, table, pointer, words):
    r = post(client, AIRSPEED, {"ias": 125, "altitude": 0, "calibration": table})
    doc = assert_problem(r, 422, pointer)
    assert words in doc["detail"]
    assert "table_" not in doc["detail"]


def test_ias_without_calibration(client):
    doc = assert_problem(post(client, AIRSPEED, {"ias": 250, "altitude": 0}), 422, "/calibration")
    assert "/ias" in [e["pointer"] for e in doc["errors"]]
    assert_problem(post(client, AIRSPEED, {"cas": 250, "altitude": 0, "outputs": ["tas", "ias"]}), 422, "/outputs/1")


def test_none_or_two_speeds(client):
    doc = assert_problem(post(client, AIRSPEED, {"altitude": 0}), 422, "")
    assert "ias, cas, eas, tas, mach" in doc["detail"]
    doc = assert_problem(post(client, AIRSPEED, {"cas": 250, "mach": 0.5, "altitude": 0}), 422, "/cas")
    assert {e["pointer"] for e in doc["errors"]} == {"/cas", "/mach"}
    assert "cas, mach" in doc["errors"][0]["message"]


@pytest.mark.parametrize(("body", "pointer"), [
    ({"cas": 0, "altitude": 0}, "/cas"),
    ({"eas": -50, "altitude": 0}, "/eas"),
    ({"tas": [100, 0], "altitude": 0}, "/tas/1"),
    ({"ias": {"value": -1, "unit": "kt"}, "altitude": 0, "calibration": TQ62}, "/ias/value"),
    ({"cas": 3001, "altitude": 0}, "/cas"),
    ({"cas": {"value": 100, "unit": "knots"}, "altitude": 0}, "/cas/unit"),
    ({"mach": 0, "altitude": 0}, "/mach"),
    ({"mach": -0.5, "altitude": 0}, "/mach"),
    ({"mach": 5.5, "altitude": 0}, "/mach"),
    ({"mach": {"value": 0.8, "unit": "-"}, "altitude": 0}, "/mach"),
    ({"mach": True, "altitude": 0}, "/mach"),
    ({"cas": "250", "altitude": 0}, "/cas"),
    ({"cas": [250, None], "altitude": 0}, "/cas/1"),
    ({"cas": [[250]], "altitude": 0}, "/cas/0"),
    ({"cas": 250}, "/altitude"),
    ({"cas": 250, "altitude": 300_000}, "/altitude"),
    ({"cas": 250, "altitude": {"value": -20, "unit": "km"}}, "/altitude/value"),
    ({"cas": 250, "altitude": [0, 1e6]}, "/altitude/1"),
    ({"cas": 250, "altitude": 0, "qnh": 1013}, "/qnh"),
    ({"cas": 250, "altitude": 0, "altitude_kind": "geometric"}, "/altitude_kind"),
    ({"cas": 250, "altitude": 0, "isa_deviation": 5, "temperature": 20}, "/isa_deviation"),
    ({"cas": 250, "altitude": 0, "isa_deviation": 5, "temperature": 20}, "/temperature"),
    ({"cas": 250, "altitude": 0, "isa_deviation": 150}, "/isa_deviation"),
    ({"cas": 250, "altitude": 0, "temperature": {"value": -10, "unit": "K"}}, "/temperature/value"),
    ({"cas": 250, "altitude": 0, "output_units": {"speed": "knots"}}, "/output_units/speed"),
    ({"cas": 250, "altitude": 0, "outputs": ["tas", "colour"]}, "/outputs/1"),
    ({"cas": 250, "altitude": 0, "outputs": []}, "/outputs"),
    ({"cas": 250, "altitude": 0, "grid": "yes"}, "/grid"),
    ({"cas": 250, "altitude": 0, "speed": 250}, "/speed"),
])
def test_bad_inputs(client, body, pointer):
    assert_problem(post(client, AIRSPEED, body), 422, pointer)


def test_no_mach_where_the_newton_iteration_fails_is_a_no_solution_422(client, monkeypatch):
    # With no Newton steps allowed, every supersonic Mach from an impact pressure is missing: a primary result.
    monkeypatch.setattr(spd, "NEWTON_MAX_ITER", 0)
    r = post(client, AIRSPEED, {"cas": [250, 400, 450], "altitude": {"value": 450, "unit": "FL"}})
    doc = assert_problem(r, 422)
    assert doc["type"] == "/problems/no-solution"
    assert doc["count"] == 2 and doc["indices"] == [1, 2]
    assert post(client, AIRSPEED, {"cas": 250, "altitude": 0}).status_code == 200


# --------------------------------------------------------------------------------------------
# Arrays, grids, CSV and output selection (issue 5), endpoint by endpoint
# --------------------------------------------------------------------------------------------


def test_arrays_broadcast_and_scalars_stay_scalars(client):
    doc = post(client, AIRSPEED, {"cas": [200, 250, 300], "altitude": [10000], "isa_deviation": 5}).json
    assert len(doc["tas"]["value"]) == 3 and len(doc["atmosphere"]["pressure"]["value"]) == 3
    assert len(set(doc["atmosphere"]["pressure"]["value"])) == 1
    assert isinstance(post(client, AIRSPEED, {"cas": 250, "altitude": 0}).json["mach"], float)
    one = post(client, AIRSPEED, {"cas": [250], "altitude": 0}).json
    assert isinstance(one["mach"], list) and len(one["mach"]) == 1


@pytest.mark.parametrize(("path", "body", "fields"), [
    (AIRSPEED, {"cas": [200, 250, 300], "altitude": [0, 1000]}, {"/cas", "/altitude"}),
    (AIRSPEED, {"mach": [0.5, 0.6], "altitude": 0, "isa_deviation": [1, 2, 3]}, {"/mach", "/isa_deviation"}),
    (CROSSOVER, {"cas": [280, 300], "mach": [0.7, 0.75, 0.8]}, {"/cas", "/mach"}),
    (SCHEDULE, {"cas": 300, "mach": [0.7, 0.8], "altitude": [0, 10000, 20000]}, {"/mach", "/altitude"}),
])
def test_array_length_mismatch_names_both_fields(client, path, body, fields):
    doc = assert_problem(post(client, path, body), 422)
    assert {e["pointer"] for e in doc["errors"]} == fields
    for name in fields:
        assert name[1:] in doc["detail"]


def test_grid_3_by_3(client):
    body = {"cas": [250, 280, 300], "altitude": {"value": [100, 200, 300], "unit": "FL"}, "isa_deviation": 10,
            "grid": True}
    doc = post(client, AIRSPEED, body).json
    assert len(doc["tas"]["value"]) == 9
    # the first-listed axis (cas) varies slowest; inputs in the output unit of their dimension
    assert doc["inputs"]["cas"] == {"value": [250.0] * 3 + [280.0] * 3 + [300.0] * 3, "unit": "kt"}
    assert doc["inputs"]["altitude"] == {"value": [10000.0, 20000.0, 30000.0] * 3, "unit": "ft"}
    assert doc["inputs"]["isa_deviation"] == {"value": [10.0] * 9, "unit": "K"}  # every input at every point
    # each point is the single-point answer
    one = post(client, AIRSPEED, {"cas": 280, "altitude": 20000, "isa_deviation": 10}).json
    assert doc["tas"]["value"][4] == pytest.approx(one["tas"]["value"], rel=1e-12)
    assert doc["atmosphere"]["density"]["value"][4] == pytest.approx(one["atmosphere"]["density"]["value"],
                                                                     rel=1e-12)


def test_grid_crossover_and_schedule(client):
    doc = post(client, CROSSOVER, {"cas": [280, 300, 320], "mach": [0.76, 0.78, 0.8], "grid": True}).json
    assert len(doc["crossover_altitude"]["value"]) == 9
    assert doc["inputs"]["mach"] == [0.76, 0.78, 0.8] * 3
    single = post(client, CROSSOVER, {"cas": 300, "mach": 0.8}).json
    assert doc["crossover_altitude"]["value"][5] == pytest.approx(single["crossover_altitude"]["value"], rel=1e-12)
    doc = post(client, SCHEDULE, {"cas": [280, 300], "mach": 0.78, "altitude": [10000, 30000, 40000],
                                  "grid": True}).json
    # crossovers: 280 kt / M 0.78 at 32 464 ft, 300 kt / M 0.78 at 29 314 ft (aerocalc3 0.10 cas_mach2alt)
    assert doc["governing"] == ["cas", "cas", "mach", "cas", "mach", "mach"]
    assert doc["inputs"]["altitude"]["value"] == [10000.0, 30000.0, 40000.0] * 2
    assert doc["inputs"]["cas"]["value"] == [280.0] * 3 + [300.0] * 3


def test_csv_header_units_and_dotted_names(client):
    body = {"cas": [250, 330], "altitude": {"value": [100, 300], "unit": "FL"}, "calibration": TQ62}
    r = post(client, AIRSPEED, body, headers={"Accept": "text/csv"})
    assert r.status_code == 200 and r.mimetype == "text/csv"
    rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
    assert rows[0] == ["input.cas [kt]", "input.altitude [ft]", "cas [kt]", "eas [kt]", "tas [kt]", "mach",
                       "ias [kt]", "impact_pressure [hPa]", "dynamic_pressure [hPa]", "total_air_temperature [degC]",
                       "ram_rise [K]", "atmosphere.pressure [hPa]",
                       "atmosphere.temperature [degC]", "atmosphere.density [kg/m3]",
                       "atmosphere.speed_of_sound [kt]"]
    json_doc = post(client, AIRSPEED, body).json
    assert len(rows) == 3
    assert [float(row[4]) for row in rows[1:]] == pytest.approx(json_doc["tas"]["value"])
    assert [float(row[11]) for row in rows[1:]] == pytest.approx(json_doc["atmosphere"]["pressure"]["value"])
    # IAS beyond the table: an empty cell (null in JSON), counted in X-Warnings
    assert rows[2][6] == "" and json_doc["ias"]["value"][1] is None
    assert r.headers["X-Warnings"] == "1"


def test_csv_schedule_labels(client):
    r = post(client, SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": [10000, 35000], "output_units": {
        "altitude": "m"}}, headers={"Accept": "text/csv"})
    rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
    assert rows[0] == ["input.cas [kt]", "input.mach", "input.altitude [m]", "governing", "cas [kt]", "mach",
                       "tas [kt]", "eas [kt]", "crossover_altitude [m]"]
    assert [row[3] for row in rows[1:]] == ["cas", "mach"]


@pytest.mark.parametrize(("path", "body", "keep"), [
    (AIRSPEED, {"cas": 250, "altitude": 0}, ["tas", "atmosphere"]),
    (CROSSOVER, {"cas": 300, "mach": 0.78}, ["pressure"]),
    (SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": 0}, ["governing", "crossover_altitude"]),
])
def test_output_selection(client, path, body, keep):
    doc = post(client, path, body | {"outputs": keep}).json
    assert list(doc) == [*keep, "warnings"]
    r = post(client, path, body | {"outputs": ["nothing"]})
    assert "valid:" in assert_problem(r, 422, "/outputs/0")["detail"]


def test_unrequested_airspeed_physics_does_not_run(client, monkeypatch):
    calls = spy(monkeypatch, spd, "cas_to_ias", "dynamic_pressure", "eas_from_tas", "tas_from_mach")
    calls_atm = spy(monkeypatch, atm, "density", "speed_of_sound")
    body = {"cas": [250, 300], "altitude": 10000, "calibration": TQ62}
    r = post(client, AIRSPEED, body | {"outputs": ["mach", "impact_pressure"]})
    assert r.status_code == 200, r.json
    assert list(r.json) == ["mach", "impact_pressure", "warnings"]
    assert not calls and not calls_atm
    r = post(client, AIRSPEED, body | {"outputs": ["ias", "dynamic_pressure", "eas", "atmosphere"]})
    assert r.status_code == 200, r.json
    assert set(calls) == {"cas_to_ias", "dynamic_pressure", "eas_from_tas", "tas_from_mach"}
    assert set(calls_atm) == {"density", "speed_of_sound"}


def test_unrequested_schedule_physics_does_not_run(client, monkeypatch):
    body = {"cas": 300, "mach": 0.78, "altitude": [10000, 35000]}
    calls = spy(monkeypatch, spd, "speed_schedule", "crossover_altitude")
    assert post(client, SCHEDULE, body | {"outputs": ["crossover_altitude"]}).status_code == 200
    assert calls == {"crossover_altitude": 1}
    assert post(client, SCHEDULE, body | {"outputs": ["governing", "tas"]}).status_code == 200
    assert calls == {"crossover_altitude": 1, "speed_schedule": 1}


def test_crossover_pressure_is_computed_once(client, monkeypatch):
    """The crossover altitude and the pressure there come from one evaluation of the pressure."""
    calls = []
    original = spd.crossover_pressure
    monkeypatch.setattr(spd, "crossover_pressure", lambda *a: calls.append(1) or original(*a))
    post(client, CROSSOVER, {"cas": 300, "mach": 0.78, "outputs": ["crossover_altitude"]})
    assert len(calls) == 1
    post(client, CROSSOVER, {"cas": 300, "mach": 0.78})
    assert len(calls) == 2


# --------------------------------------------------------------------------------------------
# POST /v1/airspeed/crossover
# --------------------------------------------------------------------------------------------


def test_crossover_outside_the_model_is_a_no_solution_422(client):
    # 600 kt is M 0.5 only below -5 km; 5 kt is M 4 only above 84.852 km
    r = post(client, CROSSOVER, {"cas": [600, 300, 5], "mach": [0.5, 0.78, 4]})
    doc = assert_problem(r, 422)
    assert doc["type"] == "/problems/no-solution" and doc["field"] == "crossover_altitude"
    assert doc["count"] == 2 and doc["indices"] == [0, 2]
    assert "outside the model's range of pressure altitudes, -5000 m (-16404 ft) to 84852 m" in doc["detail"]
    assert "below it at points [0], so the Mach number is the lower speed at every altitude" in doc["detail"]
    assert "above it at points [2], so the CAS is the lower speed at every altitude" in doc["detail"]
    one = assert_problem(post(client, CROSSOVER, {"cas": 600, "mach": 0.5}), 422)
    assert "points" not in one["detail"] and "below it, so the Mach number is the lower speed" in one["detail"]
    # The no-solution wording (README, errors): where, for arrays; nothing of points for one point.
    assert doc["detail"].startswith("No crossover_altitude at 2 point(s), first indices [0, 2]: the CAS and ")
    assert one["detail"].startswith("No crossover_altitude: the CAS and ")


@pytest.mark.parametrize(("body", "pointer"), [
    ({"mach": 0.78}, "/cas"),
    ({"cas": 300}, "/mach"),
    ({"cas": 0, "mach": 0.78}, "/cas"),
    ({"cas": 300, "mach": 0}, "/mach"),
    ({"cas": 300, "mach": 0.78, "altitude": 0}, "/altitude"),
    ({"cas": 300, "mach": 0.78, "isa_deviation": 10}, "/isa_deviation"),
    ({"cas": 300, "mach": 0.78, "outputs": ["tas"]}, "/outputs/0"),
])
def test_crossover_bad_inputs(client, body, pointer):
    assert_problem(post(client, CROSSOVER, body), 422, pointer)


def test_crossover_is_where_cas_and_mach_are_the_same_speed(client):
    doc = post(client, CROSSOVER, {"cas": 290, "mach": 0.76}).json
    at = {"altitude": doc["crossover_altitude"]["value"]}
    for dev in (-30, 0, 30):  # whatever the temperature
        there = post(client, AIRSPEED, {"cas": 290, "isa_deviation": dev} | at).json
        assert there["mach"] == pytest.approx(0.76, rel=1e-9)
        assert there["atmosphere"]["pressure"]["value"] == pytest.approx(doc["pressure"]["value"], rel=1e-9)


# --------------------------------------------------------------------------------------------
# POST /v1/airspeed/schedule
# --------------------------------------------------------------------------------------------


def test_schedule_matches_aerocalc3(client):
    levels = [100, 200, 250, 300, 350]
    doc = post(client, SCHEDULE, {"cas": 290, "mach": 0.76, "altitude": {"value": levels, "unit": "FL"},
                                  "isa_deviation": 10}).json
    feet = np.array(levels) * 100.0
    temp = isa_temp_c(feet) + 10
    cross = ac.cas_mach2alt(290, 0.76, speed_units="kt", alt_units="ft")  # aerocalc3 0.10: 29 573 ft
    assert doc["crossover_altitude"]["value"] == pytest.approx([cross] * 5, abs=0.1)
    assert doc["governing"] == ["cas" if h < cross else "mach" for h in feet]
    # aerocalc3 0.10 airspeed: below the crossover cas2tas at 290 kt, above mach2tas and mach_alt2cas at M 0.76
    units = {"speed_units": "kt", "alt_units": "ft"}
    tas = [ac.cas2tas(290, h, t, temp_units="C", **units) if h < cross else
           ac.mach2tas(0.76, t, temp_units="C", speed_units="kt") for h, t in zip(feet, temp, strict=True)]
    cas = [290 if h < cross else ac.mach_alt2cas(0.76, h, **units) for h in feet]
    mach = [ac.cas_alt2mach(290, h, **units) if h < cross else 0.76 for h in feet]
    np.testing.assert_allclose(values(doc, "tas"), tas, rtol=API_RTOL)
    np.testing.assert_allclose(values(doc, "cas"), cas, rtol=API_RTOL)
    np.testing.assert_allclose(doc["mach"], mach, rtol=API_RTOL)
    eas = [ac.cas2eas(c, h, **units) for c, h in zip(cas, feet, strict=True)]
    np.testing.assert_allclose(values(doc, "eas"), eas, rtol=API_RTOL)
    # the flown speed is the lower one: never above the scheduled CAS or Mach
    assert max(values(doc, "cas")) <= 290 and max(doc["mach"]) <= 0.76


def test_schedule_is_continuous_at_the_crossover_whatever_the_temperature(client):
    cross = post(client, CROSSOVER, {"cas": 300, "mach": 0.78}).json["crossover_altitude"]["value"]
    for dev in (-30, 30):
        doc = post(client, SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": [cross - 1, cross + 1],
                                      "isa_deviation": dev}).json
        assert doc["governing"] == ["cas", "mach"]
        np.testing.assert_allclose(values(doc, "cas"), 300, rtol=1e-4)
        np.testing.assert_allclose(doc["mach"], 0.78, rtol=1e-4)


def test_schedule_scalars_give_scalars(client):
    doc = post(client, SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": {"value": 350, "unit": "FL"},
                                  "temperature": -45}).json
    assert doc["governing"] == "mach" and doc["mach"] == pytest.approx(0.78)
    assert isinstance(doc["crossover_altitude"]["value"], float)


@pytest.mark.parametrize(("cas", "mach", "governs", "where"), [
    (600, 0.5, "mach", "below it, so the Mach number is the lower speed at every altitude"),
    (5, 4.0, "cas", "above it, so the CAS is the lower speed at every altitude"),
])
def test_schedule_without_crossover_in_range(client, cas, mach, governs, where):
    doc = post(client, SCHEDULE, {"cas": cas, "mach": mach, "altitude": [0, 20000, 40000]}).json
    assert doc["governing"] == [governs] * 3
    assert doc["crossover_altitude"] == {"value": [None, None, None], "unit": "ft"}
    (warning,) = doc["warnings"]
    assert warning["field"] == "crossover_altitude" and warning["count"] == 3 and warning["indices"] == [0, 1, 2]
    assert where in warning["message"]
    held = values(doc, "cas") if governs == "cas" else np.asarray(doc["mach"])
    np.testing.assert_allclose(held, cas if governs == "cas" else mach, rtol=1e-12)


def test_schedule_crossover_null_only_for_pairs_outside(client):
    doc = post(client, SCHEDULE, {"cas": [600, 300], "mach": [0.5, 0.78], "altitude": 10000}).json
    assert doc["crossover_altitude"]["value"][0] is None
    assert doc["crossover_altitude"]["value"][1] == pytest.approx(29314.1, abs=0.1)
    assert doc["warnings"][0]["indices"] == [0]


@pytest.mark.parametrize(("body", "pointer"), [
    ({"mach": 0.78, "altitude": 0}, "/cas"),
    ({"cas": 300, "altitude": 0}, "/mach"),
    ({"cas": 300, "mach": 0.78}, "/altitude"),
    ({"cas": 300, "mach": 0.78, "altitude": 300_000}, "/altitude"),
    ({"cas": 300, "mach": 0.78, "altitude": 0, "isa_deviation": 5, "temperature": 10}, "/temperature"),
    ({"cas": 300, "mach": 0.78, "altitude": 0, "qnh": 1013}, "/qnh"),
    ({"cas": -300, "mach": 0.78, "altitude": 0}, "/cas"),
    ({"cas": 300, "mach": [0.78, 0], "altitude": 0}, "/mach/1"),
    ({"cas": 300, "mach": 0.78, "altitude": 0, "outputs": ["ias"]}, "/outputs/0"),
])
def test_schedule_bad_inputs(client, body, pointer):
    assert_problem(post(client, SCHEDULE, body), 422, pointer)


def test_schedule_without_a_mach_is_a_no_solution_422(client, monkeypatch):
    monkeypatch.setattr(spd, "NEWTON_MAX_ITER", 0)  # no supersonic Mach from an impact pressure
    doc = assert_problem(post(client, SCHEDULE, {"cas": 400, "mach": 2.0, "altitude": [0, 45000]}), 422)
    assert doc["type"] == "/problems/no-solution" and doc["indices"] == [1]


@pytest.mark.parametrize(("path", "body"), [
    (AIRSPEED, {"cas": 300, "altitude": 0}),
    (CROSSOVER, {"cas": 300, "mach": 0.78}),
    (SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": 0}),
])
def test_documented_problem_statuses(client, path, body):
    assert_problem(client.post(path, data='{"cas": 300,', content_type="application/json"), 400)
    assert_problem(client.post(path, data='{"cas": NaN}', content_type="application/json"), 400)
    assert_problem(client.post(path, data=json.dumps(body)), 415)
    assert_problem(post(client, path, body, headers={"Accept": "image/png"}), 406)
    assert_problem(post(client, path, [body]), 422, "")
    assert_problem(client.get(path), 405)
    keyed = create_app({"TESTING": True, "QBAR_API_KEYS": "tav-ops-key-0123456789abcdef"}).test_client()
    assert_problem(post(keyed, path, body), 401)
    assert post(keyed, path, body, headers={"X-API-Key": "tav-ops-key-0123456789abcdef"}).status_code == 200


def test_point_limit_is_a_413(app):
    app.config.update(QBAR_MAX_POINTS=100)
    client = app.test_client()
    r = post(client, SCHEDULE, {"cas": [280, 300], "mach": 0.78, "altitude": list(range(0, 51000, 1000)),
                                "grid": True})
    assert "limit is 100 points" in assert_problem(r, 413)["detail"]


# --------------------------------------------------------------------------------------------
# The answers match the spec, and never carry NaN
# --------------------------------------------------------------------------------------------


def spec_validator(client, path):
    spec = client.get("/openapi.json").json
    schema = spec["paths"][path]["post"]["responses"]["200"]["content"]["application/json"]["schema"]
    return Draft202012Validator(schema | {"components": spec["components"]})


@pytest.mark.parametrize(("path", "body"), [
    (AIRSPEED, {"cas": [100, 280], "altitude": 10000, "calibration": TQ62}),
    (AIRSPEED, {"mach": 1.6, "altitude": {"value": 450, "unit": "FL"}, "grid": True}),
    (CROSSOVER, {"cas": [280, 300], "mach": 0.78, "grid": True}),
    (SCHEDULE, {"cas": [600, 300], "mach": [0.5, 0.78], "altitude": 10000}),
    (SCHEDULE, {"cas": 300, "mach": 0.78, "altitude": 10000}),
])
def test_answers_validate_against_the_spec(client, path, body):
    r = post(client, path, body)
    assert r.status_code == 200
    errors = list(spec_validator(client, path).iter_errors(r.json))
    assert not errors, errors[0].message
    assert "NaN" not in r.get_data(as_text=True)


def test_spec_examples_answer_200(client):
    spec = client.get("/openapi.json").json
    for path in (AIRSPEED, CROSSOVER, SCHEDULE):
        examples = spec["paths"][path]["post"]["requestBody"]["content"]["application/json"]["examples"]
        for name, example in examples.items():
            assert post(client, path, example["value"]).status_code == 200, (path, name)
