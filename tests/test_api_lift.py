"""POST /v1/lift/solve, /v1/lift/stall and /v1/lift/curve through the Flask test client.

Outside references
------------------
- Anderson, J. D., *Introduction to Flight*, McGraw-Hill: the CP-1 example (W = 2950 lb, S = 174 ft^2, sea level,
  V = 500 ft/s gives CL = 0.057), from memory, as in tests/test_physics_lift.py.
- ICAO Doc 7488/3 (1993) table value, from memory: 376.01 hPa at 25 000 ft.
- aerocalc3 0.10 (PyPI, K. Horton), test-only: cas2eas, eas2tas, tas2cas, tas2mach, cas_alt2mach, and std_atm's
  alt2press, alt2temp, alt2density. Its constants differ from ours by about 1e-6 (see
  tests/test_physics_airspeed.py), hence API_RTOL.
- Facts of the trade (common practice, no source): at constant lift CL varies as 1/EAS^2, so doubling the speed
  quarters CL; at 1.3 Vs CL/CLmax = 1/1.69 = 0.59; the stall speed in a 60 deg level turn (n = 2) is sqrt(2) times
  the 1 g stall speed; where the density is a quarter of sea level (near 40 000 ft) TAS = 2 EAS.
- DATCOM limits (as in tests/test_physics_wing.py): an unswept wing of very large aspect ratio tends to the section
  slope corrected by Prandtl-Glauert, 2 pi kappa / sqrt(1 - M^2); a very small aspect ratio to pi A / 2 (slender-wing
  theory, Jones, NACA Report 835).

Demo data: the invented type TQ-62 of the invented operator Tavrenne Regional (wing area 61 m2, aspect ratio 11,
MTOW 23 000 kg, CLmax clean 1.6, a flight-manual stall speed of 108 kt CAS at 22 000 kg).
"""

import csv
import io
import math

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from aerocalc3 import std_atm as ac_atm
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.helpers import assert_problem, post, spy

SOLVE, STALL, CURVE = "/v1/lift/solve", "/v1/lift/stall", "/v1/lift/curve"
API_RTOL = 5e-6
G0 = 9.80665  # standard gravity, exact by definition (CGPM 1901)
RHO0 = 101325 / (287.05287 * 288.15)  # ICAO Doc 7488/3: rho0 = p0 / (R T0), tabulated as 1.225 kg/m3
#: TQ-62 (invented): what the tests fly with.
TQ62 = {"weight": 21000, "wing_area": 61}
#: TQ-62 (invented) airspeed calibration IAS -> CAS [kt], as in tests/test_api_airspeed.py.
CALIBRATION = {"ias": [120, 160, 200, 240, 280, 320], "cas": [123, 162, 201, 240, 278.5, 317], "unit": "kt"}


def value(doc, name):
    """The value of output ``name`` (a quantity's value or a bare number), as float or array."""
    out = doc[name]["value"] if isinstance(doc[name], dict) else doc[name]
    return np.asarray(out, dtype=float) if isinstance(out, list) else out


def ok(client, path, body):
    r = post(client, path, body)
    assert r.status_code == 200, r.get_data(as_text=True)
    return r.json


# --------------------------------------------------------------------------------------------
# POST /v1/lift/solve: worked examples and facts
# --------------------------------------------------------------------------------------------


def test_anderson_cp1_cl_through_the_api(client):
    # Anderson, Introduction to Flight, CP-1 example (from memory): CL = 0.057 (half a unit in the last digit)
    doc = ok(client, SOLVE, {"solve_for": "cl", "weight": {"value": 2950, "unit": "lb"},
                             "wing_area": {"value": 174, "unit": "ft2"}, "tas": {"value": 500, "unit": "ft/s"},
                             "altitude": 0})
    assert doc["cl"] == pytest.approx(0.057, abs=5e-4)
    assert doc["solved_for"] == "cl"


def test_cl_at_cruise_is_complete_and_unit_tagged(client):
    doc = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": {"value": 250, "unit": "FL"},
                             "isa_deviation": 5})
    # q = (gamma/2) p M^2 with the ICAO table's 376.01 hPa at 25 000 ft (from memory)
    q = 0.7 * 37601 * 0.45**2
    assert doc["cl"] == pytest.approx(21000 * G0 / (q * 61), rel=1e-4)
    assert doc["dynamic_pressure"] == {"value": pytest.approx(q / 100, rel=1e-4), "unit": "hPa"}
    assert doc["weight"] == {"value": pytest.approx(21000 * G0), "unit": "N"}
    assert doc["lift"] == doc["weight"] and doc["load_factor"] == 1.0
    assert doc["bank_angle"] == {"value": 0.0, "unit": "deg"}
    assert doc["wing_loading"] == {"value": pytest.approx(21000 * G0 / 61), "unit": "N/m2"}
    assert doc["pressure_altitude"] == {"value": pytest.approx(25000), "unit": "ft"}
    assert doc["mach"] == 0.45
    # TAS and CAS at FL250 ISA+5 (aerocalc3 0.10 mach2tas through cas_alt2mach's inverse, tas2cas)
    t = ac_atm.alt2temp(25000, alt_units="ft", temp_units="C") + 5
    tas = value(doc, "tas")
    assert ac.tas2mach(tas, t, speed_units="kt", temp_units="C") == pytest.approx(0.45, rel=API_RTOL)
    assert value(doc, "cas") == pytest.approx(ac.tas2cas(tas, 25000, t, speed_units="kt", alt_units="ft",
                                                         temp_units="C"), rel=API_RTOL)
    assert value(doc, "eas") == pytest.approx(ac.cas2eas(value(doc, "cas"), 25000), rel=API_RTOL)
    assert doc["density_altitude"]["value"] > 25000  # warmer than standard
    assert doc["warnings"] == []
    assert list(doc) == ["solved_for", "lift", "weight", "load_factor", "bank_angle", "cl", "wing_area",
                         "wing_loading", "dynamic_pressure", "cas", "eas", "tas", "mach", "pressure_altitude",
                         "density_altitude", "density", "total_air_temperature", "ram_rise", "warnings"]


def test_doubling_speed_quarters_cl(client):
    # common practice, no source: CL ~ 1 / EAS^2 at constant lift (any altitude, any kind of speed at one altitude)
    doc = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "eas": [120, 240], "altitude": [3000, 30000]})
    assert value(doc, "cl")[1] == pytest.approx(value(doc, "cl")[0] / 4, rel=1e-12)
    doc = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "tas": [150, 300], "altitude": 10000})
    assert value(doc, "cl")[1] == pytest.approx(value(doc, "cl")[0] / 4, rel=1e-12)


def test_at_1_3_vs_cl_is_59_percent_of_clmax(client):
    # common practice, no source: CL / CLmax = 1 / 1.3^2 = 0.59 at 1.3 Vs
    vs = ok(client, SOLVE, {"solve_for": "speed", **TQ62, "cl": 1.6, "altitude": 2000})
    at = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "eas": 1.3 * value(vs, "eas"), "altitude": 2000})
    assert at["cl"] / 1.6 == pytest.approx(1 / 1.69, rel=1e-12)
    assert at["cl"] / 1.6 == pytest.approx(0.59, abs=0.005)
    stall = ok(client, STALL, {**TQ62, "cl_max": 1.6, "altitude": 2000, "speed_factors": [1.3]})
    assert stall["multiples"][0]["cl_fraction"] == pytest.approx(0.59, abs=0.005)
    assert value(stall["multiples"][0], "eas") == pytest.approx(1.3 * value(vs, "eas"), rel=1e-12)


def test_quarter_density_near_40000_ft_doubles_tas(client):
    # common practice, no source: TAS = EAS / sqrt(sigma), sigma = 1/4 near 40 000 ft; aerocalc3 0.10
    # std_atm.alt2density gives 0.30156 kg/m3 at 40 000 ft, sigma = 0.2462, so TAS / EAS = 2.015 there
    doc = ok(client, SOLVE, {"solve_for": "speed", **TQ62, "cl": 0.5, "altitude": 40000})
    assert value(doc, "density") == pytest.approx(ac_atm.alt2density(40000, alt_units="ft",
                                                                     density_units="kg/m**3"), rel=API_RTOL)
    assert value(doc, "tas") / value(doc, "eas") == pytest.approx(2.0, rel=0.01)
    assert value(doc, "tas") / value(doc, "eas") == pytest.approx(math.sqrt(RHO0 / value(doc, "density")), rel=1e-9)


def test_speed_solve_gives_every_kind(client):
    doc = ok(client, SOLVE, {"solve_for": "speed", "weight": {"value": 22, "unit": "t"}, "wing_area": 61,
                             "cl": 0.95, "altitude": 5000, "isa_deviation": -10})
    eas = value(doc, "eas")
    # EAS = sqrt(2 W / (rho0 S CL)) by hand, then aerocalc3 0.10 eas2tas and tas2cas at 5000 ft ISA-10
    assert eas * 1852 / 3600 == pytest.approx(math.sqrt(2 * 22000 * G0 / (RHO0 * 61 * 0.95)), rel=1e-12)
    t = ac_atm.alt2temp(5000, alt_units="ft", temp_units="C") - 10
    assert value(doc, "tas") == pytest.approx(ac.eas2tas(eas, 5000, t, speed_units="kt", alt_units="ft",
                                                         temp_units="C"), rel=API_RTOL)
    assert value(doc, "cas") == pytest.approx(ac.tas2cas(value(doc, "tas"), 5000, t, speed_units="kt",
                                                         alt_units="ft", temp_units="C"), rel=API_RTOL)
    assert doc["mach"] == pytest.approx(ac.tas2mach(value(doc, "tas"), t, speed_units="kt", temp_units="C"),
                                        rel=API_RTOL)


def test_weight_as_force_or_mass(client):
    base = {"solve_for": "cl", "wing_area": 61, "eas": 200, "altitude": 10000}
    kg = ok(client, SOLVE, base | {"weight": 21000})
    kn = ok(client, SOLVE, base | {"weight": {"value": 21000 * G0 / 1000, "unit": "kN"}})
    lb = ok(client, SOLVE, base | {"weight": {"value": 21000 / 0.45359237, "unit": "lb"}})
    assert kg["cl"] == pytest.approx(kn["cl"], rel=1e-12) == pytest.approx(lb["cl"], rel=1e-12)
    units = ok(client, SOLVE, base | {"weight": 21000, "output_units": {"force": "kN", "wing_loading": "kg/m2"}})
    assert units["weight"] == {"value": pytest.approx(21000 * G0 / 1000), "unit": "kN"}
    assert units["wing_loading"] == {"value": pytest.approx(21000 / 61), "unit": "kg/m2"}


def test_load_factor_and_bank_angle(client):
    base = {"solve_for": "cl", **TQ62, "eas": 180, "altitude": 5000}
    level = ok(client, SOLVE, base)
    turn = ok(client, SOLVE, base | {"bank_angle": 60})
    assert turn["load_factor"] == pytest.approx(2.0)  # n = 1 / cos 60 deg
    assert turn["cl"] == pytest.approx(2 * level["cl"])
    assert turn["lift"]["value"] == pytest.approx(2 * 21000 * G0)
    n = ok(client, SOLVE, base | {"load_factor": [0.5, 2.0]})
    assert n["bank_angle"]["value"][0] is None
    assert n["bank_angle"]["value"][1] == pytest.approx(60.0)
    (warning,) = n["warnings"]
    assert warning["field"] == "bank_angle" and warning["indices"] == [0]


def test_solve_for_load_factor_gives_bank(client):
    cl = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "eas": 150, "altitude": 5000})["cl"]
    doc = ok(client, SOLVE, {"solve_for": "load_factor", **TQ62, "eas": 150, "altitude": 5000, "cl": 2 * cl})
    assert doc["load_factor"] == pytest.approx(2.0, rel=1e-12)
    assert doc["bank_angle"]["value"] == pytest.approx(60.0, rel=1e-9)


@pytest.mark.parametrize("isa_deviation", [-20, 0, 15])
def test_altitude_for_mach_and_cl(client, isa_deviation):
    forward = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": 23000,
                                 "isa_deviation": isa_deviation})
    # p = n W / ((gamma/2) M^2 S CL): temperature does not enter
    doc = ok(client, SOLVE, {"solve_for": "altitude", **TQ62, "mach": 0.45, "cl": forward["cl"],
                             "isa_deviation": isa_deviation})
    assert value(doc, "pressure_altitude") == pytest.approx(23000, abs=1e-6)
    assert value(doc, "tas") == pytest.approx(value(forward, "tas"), rel=1e-12)
    assert doc["solved_for"] == "altitude"


def test_altitude_for_tas_and_cl(client):
    doc = ok(client, SOLVE, {"solve_for": "altitude", **TQ62, "tas": 250, "cl": 0.6, "isa_deviation": [0, 15]})
    rho = 2 * 21000 * G0 / (61 * 0.6 * (250 * 1852 / 3600) ** 2)  # rho = 2 W / (S CL V^2)
    assert value(doc, "density") == pytest.approx([rho, rho], rel=1e-9)
    h = value(doc, "pressure_altitude")
    # standard day: pressure altitude = density altitude; warmer: the same density lies lower
    assert h[0] == pytest.approx(value(doc, "density_altitude")[0], abs=1e-3)
    assert h[1] < h[0]
    assert value(doc, "density_altitude") == pytest.approx([h[0], h[0]], abs=1e-3)


def test_altitude_for_tas_with_temperature(client):
    """With the outside air temperature, the density fixes the pressure by the gas law p = rho R T."""
    forward = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "tas": 250, "altitude": 12000, "temperature": -12})
    doc = ok(client, SOLVE, {"solve_for": "altitude", **TQ62, "tas": 250, "cl": forward["cl"], "temperature": -12})
    assert value(doc, "pressure_altitude") == pytest.approx(12000, abs=1e-6)
    assert value(doc, "density") == pytest.approx(value(forward, "density"), rel=1e-12)


def test_altitude_for_cas_matches_aerocalc_and_warns(client):
    # the q of 200 kt CAS at 15 000 ft: aerocalc3 0.10 cas_alt2mach and std_atm.alt2press; q = (gamma/2) p M^2
    mach = ac.cas_alt2mach(200, 15000, speed_units="kt", alt_units="ft")
    q = 0.7 * ac_atm.alt2press(15000, alt_units="ft", press_units="pa") * mach**2
    weight = q * 61 * 0.5 / G0
    doc = ok(client, SOLVE, {"solve_for": "altitude", "weight": weight, "wing_area": 61, "cl": 0.5, "cas": 200})
    # aerocalc3's constants differ by ~1e-6; at a given CAS that moves the altitude by about a foot
    assert value(doc, "pressure_altitude") == pytest.approx(15000, abs=5)
    assert doc["mach"] == pytest.approx(mach, rel=1e-5)
    (warning,) = doc["warnings"]
    assert warning["field"] == "pressure_altitude" and "sensitive" in warning["message"]


def test_altitude_for_ias_with_calibration(client):
    forward = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "ias": 200, "calibration": CALIBRATION,
                                 "altitude": 12000})
    doc = ok(client, SOLVE, {"solve_for": "altitude", **TQ62, "ias": 200, "calibration": CALIBRATION,
                             "cl": forward["cl"]})
    assert value(doc, "cas") == pytest.approx(201.0)  # the table's row
    assert value(doc, "pressure_altitude") == pytest.approx(12000, abs=1e-3)


def test_wing_block_adds_angle_of_attack_and_flags_stall(client):
    wing = {"aspect_ratio": 11, "sweep_half_chord": 0, "zero_lift_angle": -2.5, "cl_max": 1.6}
    doc = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "eas": [90, 120, 200], "altitude": 2000, "wing": wing})
    curve = ok(client, CURVE, {"aspect_ratio": 11, "sweep_half_chord": 0, "zero_lift_angle": -2.5,
                               "mach": doc["mach"], "cl": doc["cl"]})
    assert value(doc, "angle_of_attack") == pytest.approx(value(curve, "angle_of_attack"), rel=1e-12)
    assert doc["beyond_stall"] == [c > 1.6 for c in doc["cl"]] == [True, False, False]
    assert list(doc)[-3:] == ["angle_of_attack", "beyond_stall", "warnings"]
    # without cl_max: no flag; supersonic points: null with a warning
    fast = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": [0.5, 0.8, 1.2], "altitude": 35000,
                              "wing": {"aspect_ratio": 11, "sweep_half_chord": 0}})
    assert "beyond_stall" not in fast
    assert fast["angle_of_attack"]["value"][2] is None
    # Mach 1.2: no slope (null); Mach 0.8: a warning that the formula fades toward transonic flow; one entry for
    # the field (DESIGN.md), its message giving both reasons
    assert [(w["field"], w["count"], w["indices"]) for w in fast["warnings"]] == [("angle_of_attack", 2, [1, 2])]
    assert fast["warnings"][0]["message"].count(".") >= 2


# --------------------------------------------------------------------------------------------
# Round trips: solve for each variable in turn
# --------------------------------------------------------------------------------------------

KIND_RANGES = {"cas": (80.0, 330.0), "eas": (80.0, 330.0), "tas": (100.0, 480.0), "mach": (0.15, 0.85)}


@st.composite
def flights(draw):
    kind = draw(st.sampled_from(sorted(KIND_RANGES)))
    return {
        "weight": draw(st.floats(5000, 80000)),
        "wing_area": draw(st.floats(20, 200)),
        "load_factor": draw(st.floats(0.5, 3.0)),
        kind: draw(st.floats(*KIND_RANGES[kind])),
        "altitude": draw(st.floats(0, 41000)),
        "isa_deviation": draw(st.floats(-30, 30)),
    }


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(flight=flights())
def test_each_unknown_solves_back(client, flight):
    cl = ok(client, SOLVE, {"solve_for": "cl", **flight})["cl"]
    full = flight | {"cl": cl}
    kind = next(k for k in KIND_RANGES if k in flight)
    for unknown in ("weight", "wing_area", "load_factor", "speed", "altitude"):
        if unknown == "altitude" and kind == "eas":
            continue
        left_out = (kind,) if unknown == "speed" else (unknown,)
        body = {"solve_for": unknown} | {k: v for k, v in full.items() if k not in left_out}
        doc = ok(client, SOLVE, body)
        if unknown == "speed":
            assert value(doc, kind) == pytest.approx(flight[kind], rel=1e-9)
        elif unknown == "altitude":
            assert value(doc, "pressure_altitude") == pytest.approx(flight["altitude"], abs=1e-3)
        elif unknown == "weight":
            assert value(doc, "weight") == pytest.approx(flight["weight"] * G0, rel=1e-9)
        else:
            assert value(doc, unknown) == pytest.approx(flight[unknown], rel=1e-9)
        assert doc["cl"] == pytest.approx(cl, rel=1e-12)


# --------------------------------------------------------------------------------------------
# POST /v1/lift/stall
# --------------------------------------------------------------------------------------------


def test_stall_speed_in_a_60_degree_turn_is_root_two_times(client):
    # common practice, no source: Vs(n) = Vs1g sqrt(n), n = 2 at 60 deg bank
    doc = ok(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000,
                             "bank_angle": [0, 60]})
    eas = value(doc["stall"], "eas")
    assert eas[1] / eas[0] == pytest.approx(math.sqrt(2), rel=1e-12)
    assert eas[1] / eas[0] == pytest.approx(1.414, abs=5e-4)
    # Vs1g = sqrt(2 W / (rho0 S CLmax)) by hand
    assert eas[0] * 1852 / 3600 == pytest.approx(math.sqrt(2 * 22000 * G0 / (RHO0 * 61 * 1.6)), rel=1e-12)
    # as CAS and TAS at 3000 ft (aerocalc3 0.10 eas2tas, tas2cas)
    tas = [ac.eas2tas(e, 3000, speed_units="kt", alt_units="ft") for e in eas]
    assert value(doc["stall"], "tas") == pytest.approx(tas, rel=API_RTOL)
    assert value(doc["stall"], "cas") == pytest.approx([ac.tas2cas(t, 3000, speed_units="kt", alt_units="ft")
                                                        for t in tas], rel=API_RTOL)


def test_multiples_and_margin(client):
    doc = ok(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "load_factor": 1.5,
                             "speed_factors": [1.13, 1.23, 1.3], "cas": 160})
    vs = value(doc["stall"], "eas")
    assert [m["factor"] for m in doc["multiples"]] == [1.13, 1.23, 1.3]
    for m in doc["multiples"]:
        assert value(m, "eas") == pytest.approx(m["factor"] * vs, rel=1e-12)
        assert m["cl_fraction"] == pytest.approx(1 / m["factor"] ** 2, rel=1e-12)
        assert value(m, "tas") > value(m, "eas")  # above sea level
    eas = ac.cas2eas(160, 3000, speed_units="kt", alt_units="ft")  # aerocalc3 0.10
    vs_1g = vs / math.sqrt(1.5)
    margin = doc["margin"]
    assert margin["stall_load_factor"] == pytest.approx((eas / vs_1g) ** 2, rel=API_RTOL)
    assert margin["max_bank_angle"]["value"] == pytest.approx(
        math.degrees(math.acos(1 / margin["stall_load_factor"])), rel=1e-9)
    assert margin["cl_fraction"] == pytest.approx(1.5 / margin["stall_load_factor"], rel=1e-12)
    assert doc["warnings"] == []


def test_margin_below_the_stall_speed(client):
    doc = ok(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0,
                             "eas": [100, 150], "speed_factors": [0.9]})
    assert doc["margin"]["max_bank_angle"]["value"][0] is None
    assert doc["margin"]["cl_fraction"][0] > 1
    fields = [w["field"] for w in doc["warnings"]]
    assert fields == ["multiples", "margin.cl_fraction", "margin.max_bank_angle"]


def test_reference_stall_speed_scaled_by_weight(client):
    # TQ-62 (invented): 108 kt CAS at 22 000 kg, given at 10 000 ft; at 19 000 kg, 2000 ft, ISA+10
    doc = ok(client, STALL, {"weight": 19000, "altitude": 2000, "isa_deviation": 10,
                             "reference": {"stall_speed": 108, "weight": {"value": 22, "unit": "t"},
                                           "altitude": {"value": 100, "unit": "FL"}}})
    # aerocalc3 0.10 cas2eas at the reference altitude, scaled by sqrt(W / W_ref), then eas2tas and tas2cas
    eas = ac.cas2eas(108, 10000, speed_units="kt", alt_units="ft") * math.sqrt(19000 / 22000)
    t = ac_atm.alt2temp(2000, alt_units="ft", temp_units="C") + 10
    tas = ac.eas2tas(eas, 2000, t, speed_units="kt", alt_units="ft", temp_units="C")
    assert value(doc["stall"], "eas") == pytest.approx(eas, rel=API_RTOL)
    assert value(doc["stall"], "tas") == pytest.approx(tas, rel=API_RTOL)
    assert value(doc["stall"], "cas") == pytest.approx(ac.tas2cas(tas, 2000, t, speed_units="kt", alt_units="ft",
                                                                  temp_units="C"), rel=API_RTOL)
    # the reference altitude defaults to the request's: at the same weight the CAS comes back
    same = ok(client, STALL, {"weight": 22000, "altitude": [0, 8000],
                              "reference": {"stall_speed": 108, "weight": 22000}})
    assert value(same["stall"], "cas") == pytest.approx([108, 108], rel=1e-12)
    # a wing from the reference: the same stall speed from wing_area and the CLmax it implies
    cl_max = 2 * 22000 * G0 / (RHO0 * 61 * (value(same["stall"], "eas")[0] * 1852 / 3600) ** 2)
    wing = ok(client, STALL, {"weight": 22000, "altitude": 0, "wing_area": 61, "cl_max": cl_max})
    assert value(wing["stall"], "eas") == pytest.approx(value(same["stall"], "eas")[0], rel=1e-12)


#: 20 stall points with 2 speed factors: an answer of 20 x (1 + 2) = 60 rows' worth.
WIDE_STALL = {"weight": np.linspace(15000, 23000, 20).tolist(), "wing_area": 61, "cl_max": 1.6, "altitude": 3000,
              "speed_factors": [1.13, 1.3]}


@pytest.mark.parametrize("body", [
    WIDE_STALL,
    # a grid of 4 x 5 points, the same worth
    {**WIDE_STALL, "weight": [15000, 18000, 21000, 23000], "altitude": [0, 1000, 2000, 3000, 4000], "grid": True},
])
def test_speed_factors_count_against_the_point_limit(app, monkeypatch, body):
    """The point limit bounds the answer, not only the points: each speed factor adds a row per point (the rule
    is the service's own; its spec and README state it)."""
    from service.api.lift import stall

    client = app.test_client()
    app.config["QBAR_MAX_POINTS"] = 60  # at the limit: 60 points' worth
    doc = ok(client, STALL, body)
    assert len(doc["multiples"]) == 2 and len(value(doc["multiples"][1], "eas")) == 20
    app.config["QBAR_MAX_POINTS"] = 59  # the same request is the limit + 1
    calls = spy(monkeypatch, stall, "parse_numbers")
    problem = assert_problem(post(client, STALL, body), 413)
    assert problem["detail"] == ("The request asks for 60 points (20 points x (1 + 2 speed factors)); the limit is "
                                 "59 points per request (QBAR_MAX_POINTS).")
    assert problem["limit"] == 59
    assert calls["parse_numbers"] == 0  # counted from the raw lists, before any is read
    # without speed factors each point counts once
    plain = {key: given for key, given in body.items() if key != "speed_factors"}
    assert len(value(ok(client, STALL, plain)["stall"], "eas")) == 20
    ok(client, STALL, {**body, "speed_factors": [1.3]})  # 20 x (1 + 1) = 40
    assert calls["parse_numbers"] == 1  # the spy sees the factors read when they are


# --------------------------------------------------------------------------------------------
# POST /v1/lift/curve
# --------------------------------------------------------------------------------------------


def test_curve_angle_of_attack_for_a_cl(client):
    doc = ok(client, CURVE, {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3,
                             "airfoil_lift_slope": {"value": 0.105, "unit": "1/deg"}, "zero_lift_angle": -2.5,
                             "cl": [0.9, 1.7], "cl_max": 1.6})
    kappa = 0.105 * 180 / math.pi / (2 * math.pi)
    # DATCOM 4.1.3.2 by hand: 2 pi A / (2 + sqrt(4 + (A beta / kappa)^2 (1 + tan^2 0 / beta^2)))
    slope = 2 * math.pi * 11 / (2 + math.sqrt(4 + (11 * math.sqrt(1 - 0.09) / kappa) ** 2))
    assert doc["lift_slope"] == {"value": pytest.approx([slope, slope], rel=1e-12), "unit": "1/rad"}
    assert value(doc, "angle_of_attack") == pytest.approx(-2.5 + np.degrees(np.array([0.9, 1.7]) / slope), rel=1e-12)
    assert doc["beyond_stall"] == [False, True]
    per_deg = ok(client, CURVE, {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3,
                                 "airfoil_efficiency": kappa, "output_units": {"lift_slope": "1/deg"}})
    assert per_deg["lift_slope"] == {"value": pytest.approx(slope * math.pi / 180, rel=1e-12), "unit": "1/deg"}
    assert set(per_deg) == {"lift_slope", "warnings"}


def test_curve_cl_at_an_angle(client):
    doc = ok(client, CURVE, {"aspect_ratio": 6, "sweep_half_chord": 0, "mach": 0, "angle_of_attack": 5,
                             "airfoil_efficiency": 1})
    # Helmbold at A = 6, thin airfoil: 4.5287 /rad (tests/test_physics_wing.py); CL = CLa alpha
    assert doc["cl"] == pytest.approx(4.5287 * math.radians(5), rel=1e-4)
    assert doc["angle_of_attack"] == {"value": 5.0, "unit": "deg"}


@pytest.mark.parametrize("mach", [0.0, 0.5, 0.69])
def test_datcom_limits(client, mach):
    beta = math.sqrt(1 - mach**2)
    big = ok(client, CURVE, {"aspect_ratio": 1e7, "sweep_half_chord": 0, "mach": mach})
    assert value(big, "lift_slope") == pytest.approx(2 * math.pi / beta, rel=1e-5)  # Prandtl-Glauert section slope
    small = ok(client, CURVE, {"aspect_ratio": 1e-4, "sweep_half_chord": 30, "mach": mach})
    assert value(small, "lift_slope") == pytest.approx(math.pi * 1e-4 / 2, rel=1e-6)  # slender wing
    assert big["warnings"] == []


def test_curve_warns_above_mach_0_7(client):
    doc = ok(client, CURVE, {"aspect_ratio": 9, "sweep_half_chord": 25, "mach": [0.6, 0.78]})
    (warning,) = doc["warnings"]
    assert warning["field"] == "lift_slope" and warning["indices"] == [1]


# --------------------------------------------------------------------------------------------
# Errors
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(("path", "body", "pointers"), [
    # missing inputs, each named
    (SOLVE, {"solve_for": "cl"}, ["/weight", "/wing_area", "/altitude", ""]),
    (SOLVE, {"solve_for": "speed", **TQ62}, ["/cl", "/altitude"]),
    (SOLVE, {"solve_for": "altitude", **TQ62, "mach": 0.5}, ["/cl"]),
    (SOLVE, {**TQ62, "cl": 0.5, "mach": 0.5, "altitude": 0}, ["/solve_for"]),
    (STALL, {"weight": 22000, "wing_area": 61, "altitude": 0}, ["/cl_max"]),
    (STALL, {"wing_area": 61, "cl_max": 1.6, "altitude": 0}, ["/weight"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6}, ["/altitude"]),
    (STALL, {"weight": 22000, "reference": {"stall_speed": 108}, "altitude": 0}, ["/reference/weight"]),
    (CURVE, {"sweep_half_chord": 0, "mach": 0.5}, ["/aspect_ratio"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "wing": {"aspect_ratio": 9}},
     ["/wing/sweep_half_chord"]),
    # a value given for the unknown
    (SOLVE, {"solve_for": "cl", **TQ62, "cl": 0.5, "mach": 0.5, "altitude": 0}, ["/cl"]),
    (SOLVE, {"solve_for": "speed", **TQ62, "cl": 0.5, "tas": 200, "altitude": 0}, ["/tas"]),
    (SOLVE, {"solve_for": "weight", **TQ62, "cl": 0.5, "tas": 200, "altitude": 0}, ["/weight"]),
    (SOLVE, {"solve_for": "wing_area", **TQ62, "cl": 0.5, "tas": 200, "altitude": 0}, ["/wing_area"]),
    (SOLVE, {"solve_for": "load_factor", **TQ62, "cl": 0.5, "tas": 200, "altitude": 0, "bank_angle": 30},
     ["/bank_angle"]),
    (SOLVE, {"solve_for": "altitude", **TQ62, "cl": 0.5, "tas": 200, "altitude": 0}, ["/altitude"]),
    (SOLVE, {"solve_for": "altitude", **TQ62, "cl": 0.5, "tas": 200, "qnh": 1000}, ["/qnh"]),
    # impossible combinations
    (SOLVE, {"solve_for": "altitude", **TQ62, "cl": 0.5, "eas": 200}, ["/eas"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "cas": 200, "altitude": 0}, ["/mach", "/cas"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "load_factor": 2, "bank_angle": 60},
     ["/load_factor", "/bank_angle"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "ias": 200, "altitude": 0}, ["/calibration", "/ias"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "cas": 200, "calibration": CALIBRATION, "altitude": 0}, ["/calibration"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "isa_deviation": 5, "temperature": 10},
     ["/isa_deviation", "/temperature"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "reference": {"stall_speed": 108, "weight": 22000},
             "altitude": 0}, ["/wing_area", "/cl_max"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "cl": 0.5, "angle_of_attack": 3},
     ["/cl", "/angle_of_attack"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "airfoil_efficiency": 0.95,
             "airfoil_lift_slope": 6}, ["/airfoil_efficiency", "/airfoil_lift_slope"]),
    # out of range
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "bank_angle": 90}, ["/bank_angle"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "bank_angle": -10}, ["/bank_angle"]),
    (SOLVE, {"solve_for": "cl", "weight": -21000, "wing_area": 61, "mach": 0.5, "altitude": 0}, ["/weight"]),
    (SOLVE, {"solve_for": "cl", "weight": 21000, "wing_area": {"value": 0, "unit": "ft2"}, "mach": 0.5,
             "altitude": 0}, ["/wing_area/value"]),
    (SOLVE, {"solve_for": "weight", "wing_area": 61, "cl": [0.5, -0.1], "mach": 0.5, "altitude": 0}, ["/cl/1"]),
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "load_factor": 0}, ["/load_factor"]),
    (SOLVE, {"solve_for": "lift", **TQ62, "mach": 0.5, "altitude": 0}, ["/solve_for"]),
    (SOLVE, {"solve_for": "cl", "weight": {"value": 21, "unit": "m2"}, "wing_area": 61, "mach": 0.5,
             "altitude": 0}, ["/weight/unit"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "speed_factors": [1.3, 0]},
     ["/speed_factors/1"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "speed_factors": 1.3},
     ["/speed_factors"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "speed_factors": [1.1] * 21},
     ["/speed_factors"]),
    (STALL, {"weight": 22000, "reference": {"stall_speed": 108, "weight": 22000, "altitude": 1e6},
             "altitude": 0}, ["/reference/altitude"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 1.0}, ["/mach"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": [0.5, 1.4]}, ["/mach/1"]),
    (CURVE, {"aspect_ratio": 0, "sweep_half_chord": 0, "mach": 0.5}, ["/aspect_ratio"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 90, "mach": 0.5}, ["/sweep_half_chord"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "wing_span": 30}, ["/wing_span"]),
    # outputs that the inputs do not give
    (SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.5, "altitude": 0, "outputs": ["cl", "angle_of_attack"]},
     ["/outputs/1"]),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "outputs": ["margin"]},
     ["/outputs/0"]),
    (CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "outputs": ["cl"]}, ["/outputs/0"]),
])
def test_bad_inputs_name_the_fields(client, path, body, pointers):
    doc = assert_problem(post(client, path, body), 422)
    assert doc["type"] == "/problems/validation"
    assert sorted(e["pointer"] for e in doc["errors"]) == sorted(pointers)


def test_eas_altitude_solve_explains(client):
    doc = assert_problem(post(client, SOLVE, {"solve_for": "altitude", **TQ62, "cl": 0.5, "eas": 200}), 422)
    assert "does not fix the altitude" in doc["detail"] and "Mach number, TAS or CAS" in doc["detail"]


@pytest.mark.parametrize(("body", "field"), [
    # no pressure altitude in range: Mach 0.1 would need a static pressure far above sea level's
    ({"solve_for": "altitude", **TQ62, "cl": 0.5, "mach": [0.5, 0.1]}, "pressure_altitude"),
    # TAS too low for any density in the model
    ({"solve_for": "altitude", **TQ62, "cl": 0.5, "tas": 60}, "pressure_altitude"),
    # at 200 kt CAS q is at most about 1/2 rho0 CAS^2 = 6484 Pa, and the lift needs 6752 Pa
    ({"solve_for": "altitude", **TQ62, "cl": 0.5, "cas": 200}, "pressure_altitude"),
    # the linear lift curve never reaches CL 30
    ({"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "cl": [1, 30]}, "angle_of_attack"),
])
def test_no_solution(client, body, field):
    path = CURVE if "aspect_ratio" in body else SOLVE
    doc = assert_problem(post(client, path, body), 422)
    assert doc["type"] == "/problems/no-solution"
    assert doc["field"] == field and doc["count"] == 1


# --------------------------------------------------------------------------------------------
# Arrays, grids, CSV, output selection
# --------------------------------------------------------------------------------------------


def test_arrays_broadcast_and_scalars_stay_scalars(client):
    doc = ok(client, SOLVE, {"solve_for": "cl", "weight": [19000, 21000, 23000], "wing_area": 61, "mach": [0.45],
                             "altitude": {"value": [200, 220, 250], "unit": "FL"}, "isa_deviation": 5})
    assert len(doc["cl"]) == 3 and doc["mach"] == [0.45] * 3
    assert isinstance(ok(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": 0})["cl"], float)
    stall = ok(client, STALL, {"weight": [19000, 23000], "wing_area": 61, "cl_max": 1.6, "altitude": 0,
                               "speed_factors": [1.3]})
    assert len(stall["multiples"][0]["eas"]["value"]) == 2 and stall["multiples"][0]["factor"] == [1.3, 1.3]
    curve = ok(client, CURVE, {"aspect_ratio": [7, 9, 11], "sweep_half_chord": [0], "mach": 0.4})
    assert len(curve["lift_slope"]["value"]) == 3


def test_block_arrays_broadcast_against_points(client):
    base = {"solve_for": "cl", **TQ62, "eas": [150, 150, 150], "altitude": 0}
    doc = ok(client, SOLVE, base | {"wing": {"aspect_ratio": [7, 9, 11], "sweep_half_chord": [0]}})
    assert np.all(np.diff(value(doc, "angle_of_attack")) < 0)  # larger aspect ratio, steeper lift curve
    assert_problem(post(client, SOLVE, base | {"wing": {"aspect_ratio": [7, 9], "sweep_half_chord": 0}}), 422,
                   "/wing/aspect_ratio")
    stall = ok(client, STALL, {"weight": 22000, "altitude": [0, 0], "reference": {"stall_speed": [100, 110],
                                                                                 "weight": 22000}})
    assert value(stall["stall"], "cas") == pytest.approx([100, 110])


@pytest.mark.parametrize(("path", "body", "pointer"), [
    (SOLVE, {"solve_for": "cl", "weight": [19000, 21000], "wing_area": [50, 60, 70], "mach": 0.5, "altitude": 0},
     "/weight"),
    (STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": [0, 1000], "bank_angle": [0, 30, 60]},
     "/altitude"),
    (CURVE, {"aspect_ratio": [7, 9], "sweep_half_chord": 0, "mach": [0.1, 0.2, 0.3]}, "/aspect_ratio"),
])
def test_broadcasting_mismatch_names_both_fields(client, path, body, pointer):
    doc = assert_problem(post(client, path, body), 422, pointer)
    assert len(doc["errors"]) == 2


def test_grid_is_nine_labelled_points(client):
    doc = ok(client, SOLVE, {"solve_for": "cl", "weight": [19000, 21000, 23000], "wing_area": 61, "mach": 0.45,
                             "altitude": {"value": [200, 220, 250], "unit": "FL"}, "grid": True})
    assert len(doc["cl"]) == 9
    assert doc["inputs"]["weight"]["value"] == pytest.approx([w * G0 for w in [19000] * 3 + [21000] * 3
                                                              + [23000] * 3])
    assert doc["inputs"]["altitude"] == {"value": pytest.approx([20000, 22000, 25000] * 3), "unit": "ft"}
    cl = np.array(doc["cl"]).reshape(3, 3)
    assert cl[:, 0] / cl[0, 0] == pytest.approx([1, 21 / 19, 23 / 19])  # CL ~ W at one altitude
    stall = ok(client, STALL, {"weight": [19000, 21000, 23000], "wing_area": 61, "cl_max": 1.6, "altitude": 0,
                               "bank_angle": [0, 30, 60], "grid": True, "speed_factors": [1.3]})
    assert len(stall["stall"]["eas"]["value"]) == 9
    assert stall["inputs"]["bank_angle"]["value"] == pytest.approx([0, 30, 60] * 3)


def test_csv_flattens_multiples_with_dotted_names(client):
    r = post(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": [0, 5000],
                             "speed_factors": [1.13, 1.3], "eas": 150},
             headers={"Accept": "text/csv"})
    assert r.status_code == 200 and r.mimetype == "text/csv"
    rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
    header = rows[0]
    assert header[:7] == ["input.weight [N]", "input.wing_area [m2]", "input.cl_max", "input.altitude [ft]",
                          "input.eas [kt]", "stall.eas [kt]", "stall.cas [kt]"]
    assert "multiples.0.factor" in header and "multiples.1.cl_fraction" in header
    assert "margin.max_bank_angle [deg]" in header
    assert len(rows) == 3
    json_doc = ok(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": [0, 5000],
                                  "speed_factors": [1.13, 1.3], "eas": 150})
    column = header.index("multiples.1.tas [kt]")
    assert [float(row[column]) for row in rows[1:]] == pytest.approx(json_doc["multiples"][1]["tas"]["value"])
    solve = post(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": [20000, 25000],
                                 "outputs": ["cl", "tas"]}, headers={"Accept": "text/csv"})
    lines = solve.get_data(as_text=True).strip().split("\r\n")
    assert lines[0] == "input.weight [N],input.wing_area [m2],input.mach,input.altitude [ft],cl,tas [kt]"
    assert len(lines) == 3


def test_output_selection(client):
    doc = ok(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": 20000,
                             "outputs": ["tas", "cl"]})
    assert list(doc) == ["solved_for", "tas", "cl", "warnings"]
    stall = ok(client, STALL, {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "eas": 150,
                               "speed_factors": [1.3], "outputs": ["margin"]})
    assert set(stall) == {"margin", "warnings"}
    assert_problem(post(client, SOLVE, {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": 0,
                                        "outputs": ["colour"]}), 422, "/outputs/0")


def test_unrequested_physics_does_not_run(client, monkeypatch):
    from service.physics import airspeed as spd
    from service.physics import atmosphere as atm
    from service.physics import lift as lf
    from service.physics import wing

    watched = {atm: ("density_altitude", "standard_state"),
               spd: ("cas_from_impact_pressure", "tas_from_mach", "eas_from_tas"),
               lf: ("bank_from_load_factor", "stall_load_factor", "cl_fraction"), wing: ("angle_from_cl",)}
    calls = {module: spy(monkeypatch, module, *names) for module, names in watched.items()}

    def ran(path, body) -> set[str]:
        """The watched functions one request runs."""
        for counter in calls.values():
            counter.clear()
        assert post(client, path, body).status_code == 200
        return {name for counter in calls.values() for name in counter}

    wing_block = {"aspect_ratio": 11, "sweep_half_chord": 0}
    solve = {"solve_for": "cl", **TQ62, "mach": 0.45, "altitude": 20000, "wing": wing_block}
    assert ran(SOLVE, solve | {"outputs": ["cl", "pressure_altitude"]}) == {"standard_state"}
    # with an EAS even the standard atmosphere is not evaluated
    assert ran(SOLVE, {"solve_for": "speed", **TQ62, "cl": 0.8, "altitude": 20000,
                       "outputs": ["eas", "dynamic_pressure"]}) == set()
    assert ran(CURVE, {"aspect_ratio": 9, "sweep_half_chord": 0, "mach": 0.5, "cl": 0.5,
                       "outputs": ["lift_slope"]}) == set()
    stall = {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "eas": 150, "speed_factors": [1.3]}
    assert not ran(STALL, stall | {"outputs": ["stall"]}) & {"stall_load_factor", "cl_fraction",
                                                             "bank_from_load_factor"}
    # asked for, each runs (so the counts above watch the calls the endpoints make)
    asked = ran(SOLVE, solve | {"outputs": ["density_altitude", "cas", "tas", "eas", "bank_angle", "angle_of_attack"]})
    assert asked | ran(STALL, stall | {"outputs": ["margin"]}) == {name for names in watched.values() for name in names}


def test_no_nan_anywhere(client):
    r = post(client, SOLVE, {"solve_for": "load_factor", **TQ62, "cl": np.linspace(0.1, 2, 20).tolist(),
                             "mach": [0.3] * 19 + [1.5], "altitude": 80000,
                             "wing": {"aspect_ratio": 11, "sweep_half_chord": 0, "cl_max": 1.6}})
    text = r.get_data(as_text=True)
    assert r.status_code == 200 and "NaN" not in text and "Infinity" not in text
