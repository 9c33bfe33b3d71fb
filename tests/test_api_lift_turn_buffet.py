"""POST /v1/lift/turn and /v1/lift/buffet (service/api/lift/turn.py, buffet.py) through the test client: ICAO
PANS-OPS turn formulas, the trade's rules of thumb, ICAO standard pressures and aerocalc3, the nulls, warnings and
refusals.

Unit constants are typed here (exact definitions), not imported from the service.
"""

import math

import pytest
from aerocalc3 import std_atm as aerocalc_std_atm

from tests.helpers import assert_problem, post

FT = 0.3048  # m, exact
G = 9.80665  # m/s^2, exact
P_SEA_LEVEL_HPA = 1013.25  # ICAO Doc 7488/3

# --- POST /v1/lift/turn -------------------------------------------------------------------------------------


@pytest.mark.parametrize(("bank_deg", "tas_kt"), [(25.0, 150.0), (25.0, 240.0), (30.0, 200.0)])
def test_pans_ops_rate_and_radius(client, bank_deg, tas_kt):
    # ICAO Doc 8168 (PANS-OPS) Volume II (formulas from memory): rate R [deg/s] = 3431 tan(bank) / (pi V),
    # radius r [NM] = V / (20 pi R), V the TAS in kt; 3431 / pi against the exact g: tolerance 1e-4.
    doc = post(client, "/v1/lift/turn", {"tas": tas_kt, "altitude": 5000, "bank_angle": bank_deg}).json
    rate = 3431 * math.tan(math.radians(bank_deg)) / (math.pi * tas_kt)
    assert doc["turn_rate"] == {"value": pytest.approx(rate, rel=1e-4), "unit": "deg/s"}
    assert doc["radius"] == {"value": pytest.approx(tas_kt / (20 * math.pi * rate), rel=1e-4), "unit": "NM"}
    assert doc["load_factor"] == pytest.approx(1 / math.cos(math.radians(bank_deg)), rel=1e-12)


@pytest.mark.parametrize("tas_kt", [100, 150, 200])
def test_standard_rate_rule_of_thumb(client, tas_kt):
    # Common practice, no source: standard-rate bank is about TAS/10 + 7 deg (within 2 deg from 100 to 200 kt).
    # ICAO Doc 8168: the standard rate is 3 deg/s, so a full turn takes 2 minutes.
    doc = post(client, "/v1/lift/turn", {"tas": tas_kt, "altitude": 3000, "turn_rate": 3,
                                         "output_units": {"time": "min"}}).json
    assert abs(doc["bank_angle"]["value"] - (tas_kt / 10 + 7)) < 2.0
    assert doc["time_for_360"] == {"value": pytest.approx(2.0, rel=1e-12), "unit": "min"}
    rate_one = post(client, "/v1/lift/turn", {"tas": tas_kt, "altitude": 3000,
                                              "turn_rate": {"value": 1, "unit": "standard_rate"}}).json
    assert rate_one["bank_angle"]["value"] == pytest.approx(doc["bank_angle"]["value"], rel=1e-12)


def test_turn_from_a_cas_uses_the_tas_at_altitude(client):
    # The same turn from a CAS and from the TAS it is at that altitude and temperature.
    air = {"altitude": 14000, "temperature": -10, "load_factor": 1.5}
    by_cas = post(client, "/v1/lift/turn", air | {"cas": 220}).json
    by_tas = post(client, "/v1/lift/turn", air | {"tas": by_cas["tas"]}).json
    assert by_tas["radius"]["value"] == pytest.approx(by_cas["radius"]["value"], rel=1e-9)
    # R = V^2 / (g sqrt(n^2 - 1)), typed here.
    v = by_cas["tas"]["value"] * 1852 / 3600
    assert by_cas["radius"]["value"] * 1852 == pytest.approx(v**2 / (G * math.sqrt(1.5**2 - 1)), rel=1e-12)


def test_wings_level_has_no_radius(client):
    doc = post(client, "/v1/lift/turn", {"tas": [150, 200], "altitude": 0, "bank_angle": [0, 20]}).json
    assert doc["radius"]["value"][0] is None and doc["time_for_360"]["value"][0] is None
    assert doc["radius"]["value"][1] > 0
    assert {w["field"] for w in doc["warnings"]} == {"radius", "time_for_360"}
    assert all(w["indices"] == [0] for w in doc["warnings"])


@pytest.mark.parametrize(
    ("body", "pointer"),
    [
        ({"tas": 200, "altitude": 0, "bank_angle": 20, "load_factor": 1.2}, "/load_factor"),
        ({"tas": 200, "altitude": 0}, ""),
        ({"tas": 200, "altitude": 0, "load_factor": 0.9}, "/load_factor"),
        ({"tas": 200, "altitude": 0, "bank_angle": 90}, "/bank_angle"),
        ({"tas": 200, "altitude": 0, "turn_rate": -3}, "/turn_rate"),
        ({"tas": 200, "altitude": 0, "turn_rate": {"value": 3, "unit": "rpm"}}, "/turn_rate/unit"),
        ({"tas": 200, "cas": 180, "altitude": 0, "turn_rate": 3}, "/cas"),
        ({"tas": 200, "turn_rate": 3}, "/altitude"),
    ],
)
def test_turn_refusals(client, body, pointer):
    assert_problem(post(client, "/v1/lift/turn", body), 422, pointer)


# --- POST /v1/lift/buffet -----------------------------------------------------------------------------------
# Test boundary (arbitrary numbers, no type's data).
TABLE = {"mach": [0.40, 0.60, 0.70, 0.76, 0.80], "cl": [1.00, 0.84, 0.74, 0.64, 0.52]}
CL_B_074 = 0.74 + (0.64 - 0.74) * (0.74 - 0.70) / (0.76 - 0.70)  # linear between the rows, typed here


@pytest.mark.parametrize(("p_hpa", "altitude_ft"), [(238.42, 35_000.0), (178.75, 41_000.0), (300.0, 9164 / FT)])
def test_maximum_altitude_at_icao_standard_pressures(client, p_hpa, altitude_ft):
    # ICAO Doc 7488/3 (from memory): 238.42 hPa at FL350, 178.75 hPa at FL410, 300 hPa at 9164 m. The weight
    # whose 1.3 g limit at Mach 0.74 falls at that pressure, W = 0.7 p M^2 S CL_b / 1.3 (as a mass: / g).
    weight_kg = 0.7 * p_hpa * 100 * 0.74**2 * 61 * CL_B_074 / 1.3 / G
    doc = post(client, "/v1/lift/buffet", {"weight": weight_kg, "wing_area": 61, "mach": 0.74, "altitude": 20000,
                                           "buffet": TABLE, "margin": 1.3}).json
    assert doc["maximum_altitude"] == {"value": pytest.approx(altitude_ft, abs=3.0), "unit": "ft"}
    assert doc["buffet_cl"] == pytest.approx(CL_B_074, rel=1e-12)


@pytest.mark.parametrize("fl", [250, 350, 410])
def test_weight_over_delta_matches_aerocalc3(client, fl):
    # aerocalc3 0.10 std_atm.alt2press_ratio (test-only reference library): W/delta = W / (p / p0).
    delta = aerocalc_std_atm.alt2press_ratio(fl * 100.0, alt_units="ft")
    doc = post(client, "/v1/lift/buffet", {"weight": 22000, "wing_area": 61, "mach": 0.72,
                                           "altitude": {"value": fl, "unit": "FL"}, "buffet": TABLE,
                                           "outputs": ["weight_over_delta"]}).json
    assert doc["weight_over_delta"] == {"value": pytest.approx(22000 / delta, rel=5e-6), "unit": "kg"}


def test_margins_at_one_point(client):
    # Hand computation: 22 t, Mach 0.74, FL350 (238.42 hPa, ICAO Doc 7488/3 from memory), 61 m2:
    # q = 0.7 * 23 842 * 0.5476 = 9139.1 Pa; CL = 215 746 / (9139.1 * 61) = 0.38700; n = CL_b / CL; bank = acos(1/n).
    doc = post(client, "/v1/lift/buffet", {"weight": 22000, "wing_area": 61, "mach": 0.74,
                                           "altitude": {"value": 350, "unit": "FL"}, "buffet": TABLE,
                                           "margin": 1.3}).json
    cl = 22000 * G / (0.7 * 23842 * 0.74**2 * 61)
    assert doc["cl"] == pytest.approx(cl, rel=2e-5)
    n = CL_B_074 / cl
    assert doc["load_factor_to_buffet"] == pytest.approx(n, rel=2e-5)
    assert doc["bank_to_buffet"]["value"] == pytest.approx(math.degrees(math.acos(1 / n)), rel=2e-5)
    assert doc["maximum_weight"]["value"] == pytest.approx(22000 * n / 1.3, rel=2e-5)
    assert doc["warnings"] == []


def test_margin_of_1_3_g_is_about_40_deg(client):
    # Common practice, no source: 1.3 g to buffet is about 40 deg of bank (acos(1/1.3) = 39.7 deg). At the maximum
    # weight the margin is the required one.
    first = post(client, "/v1/lift/buffet", {"weight": 22000, "wing_area": 61, "mach": 0.74, "altitude": 37000,
                                             "buffet": TABLE, "margin": 1.3}).json
    at_limit = post(client, "/v1/lift/buffet", {"weight": first["maximum_weight"]["value"], "wing_area": 61,
                                                "mach": 0.74, "altitude": 37000, "buffet": TABLE}).json
    assert at_limit["load_factor_to_buffet"] == pytest.approx(1.3, rel=1e-9)
    assert abs(at_limit["bank_to_buffet"]["value"] - 40.0) < 0.5


def test_beyond_buffet_onset_and_below_the_margin(client):
    doc = post(client, "/v1/lift/buffet", {"weight": [20000, 60000], "wing_area": 61, "mach": 0.74,
                                           "altitude": 41000, "buffet": TABLE, "margin": 1.3}).json
    assert doc["bank_to_buffet"]["value"][1] is None and doc["bank_to_buffet"]["value"][0] > 0
    fields = {w["field"]: w for w in doc["warnings"]}
    assert fields["bank_to_buffet"]["indices"] == [1]
    assert fields["load_factor_to_buffet"]["indices"] == [1]


@pytest.mark.parametrize(
    ("body", "pointer"),
    [
        ({"mach": 0.85}, "/mach"),  # outside the table: never extrapolated
        ({"mach": [0.5, 0.3]}, "/mach"),
        ({"buffet": {"mach": [0.6, 0.6], "cl": [0.8, 0.7]}}, "/buffet/mach"),
        ({"buffet": {"mach": [0.6, 0.7], "cl": [0.8, -0.7]}}, "/buffet/cl"),
        ({"buffet": {"mach": [0.6, 0.7], "cl": [0.8, 0.7, 0.6]}}, "/buffet/mach"),
        ({"buffet": {"mach": [0.6, 0.7]}}, "/buffet/cl"),
        ({"buffet": {"mach": 0.6, "cl": 0.8}}, "/buffet/mach"),
        ({"buffet": [0.6, 0.7]}, "/buffet"),
        ({"margin": 0.9}, "/margin"),
        ({"outputs": ["maximum_altitude"]}, "/outputs/0"),  # needs a margin
    ],
)
def test_buffet_refusals(client, body, pointer):
    base = {"weight": 22000, "wing_area": 61, "mach": 0.74, "altitude": 37000, "buffet": TABLE}
    assert_problem(post(client, "/v1/lift/buffet", base | body), 422, pointer)


def test_buffet_is_required(client):
    assert_problem(post(client, "/v1/lift/buffet", {"weight": 22000, "wing_area": 61, "mach": 0.74,
                                                    "altitude": 37000}), 422, "/buffet")


# --- Valid edges: 200 and finite -------------------------------------------------------------------------------


@pytest.mark.parametrize("bank", [89.999999, 1e-9])
def test_turn_at_bank_edges(client, bank):
    doc = post(client, "/v1/lift/turn", {"tas": 200, "altitude": 0, "bank_angle": bank}).json
    assert doc["warnings"] == [] and all(isinstance(doc[k]["value"], float) for k in ("radius", "time_for_360"))
    assert doc["load_factor"] == pytest.approx(1 / math.cos(math.radians(bank)), rel=1e-9)


@pytest.mark.parametrize("mach", [0.40, 0.80])
def test_buffet_at_the_table_ends(client, mach):
    # The table's first and last rows are inside it (interpolation, not extrapolation).
    doc = post(client, "/v1/lift/buffet", {"weight": 22000, "wing_area": 61, "mach": mach, "altitude": 30000,
                                           "buffet": TABLE}).json
    assert doc["buffet_cl"] == pytest.approx(TABLE["cl"][TABLE["mach"].index(mach)], rel=1e-15)
