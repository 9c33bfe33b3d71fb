"""POST /v1/drag and /v1/drag/speeds through the test client: textbook references in the caller's units, closed
forms, the warnings and the refusals.

Unit constants are typed here (exact definitions), not imported from the service.
"""

import csv
import io
import math

import pytest

from tests.helpers import assert_problem, post

FT = 0.3048  # m, exact
G = 9.80665  # m/s^2, exact
KT = 1852.0 / 3600.0  # m/s, exact

# Anderson, "Introduction to Flight", chapter 6 (from memory): the CP-1, W = 2950 lb, S = 174 ft^2, A = 7.37,
# e = 0.8, CD0 = 0.025; the CJ-1, W = 19 815 lb, S = 318 ft^2, A = 8.93 (b = 53.3 ft), e = 0.81, CD0 = 0.02.
CP1 = {"weight": {"value": 2950, "unit": "lb"}, "wing_area": {"value": 174, "unit": "ft2"}, "cd0": 0.025,
       "aspect_ratio": 7.37, "oswald_efficiency": 0.8}
CJ1 = {"weight": {"value": 19815, "unit": "lb"}, "wing_area": {"value": 318, "unit": "ft2"}, "cd0": 0.02,
       "aspect_ratio": 53.3**2 / 318, "oswald_efficiency": 0.81}
TQ62 = {"weight": 21000, "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78}


def test_anderson_cp1_thrust_required(client):
    # Anderson (from memory): the CP-1 at sea level, 500 ft/s: CL = 0.057, CD = 0.0252, L/D = 2.26, TR = 1305 lb
    # (the book works L/D and TR out from the rounded CL and CD: tolerance 0.5 %). The service's sea-level density,
    # 1.225 kg/m3, is the book's 0.002377 slug/ft3.
    doc = post(client, "/v1/drag", CP1 | {"tas": {"value": 500, "unit": "ft/s"}, "altitude": 0,
                                          "output_units": {"force": "lbf", "power": "hp"}}).json
    assert doc["cl"] == pytest.approx(0.057, abs=5e-4)
    assert doc["cd"] == pytest.approx(0.0252, abs=5e-5)
    assert doc["lift_to_drag"] == pytest.approx(2.26, rel=5e-3)
    assert doc["thrust_required"] == {"value": pytest.approx(1305, rel=5e-3), "unit": "lbf"}
    assert doc["drag"] == doc["thrust_required"]
    # P = T V: 1305 lb x 500 ft/s / 550 = 1186 hp (the book's rounding again: 0.5 %).
    assert doc["power_required"] == {"value": pytest.approx(1305 * 500 / 550, rel=5e-3), "unit": "hp"}
    assert doc["warnings"] == []


@pytest.mark.parametrize(("aircraft", "ld_max"), [(CP1, 13.6), (CJ1, 16.9)])
def test_anderson_maximum_lift_to_drag(client, aircraft, ld_max):
    # Anderson (from memory): (L/D)max 13.6 (CP-1) and 16.9 (CJ-1); half a unit in the last digit.
    doc = post(client, "/v1/drag/speeds", aircraft | {"altitude": 0}).json
    assert doc["minimum_drag"]["lift_to_drag"] == pytest.approx(ld_max, abs=0.05)
    assert doc["best_glide"]["glide_ratio"] == pytest.approx(ld_max, abs=0.05)


def test_anderson_cp1_glide_from_10000_ft(client):
    # Anderson (from memory): the CP-1 from 10 000 ft: minimum glide angle 4.2 deg, range 136 000 ft.
    doc = post(client, "/v1/drag/speeds", CP1 | {"altitude": 10000, "height": 10000, "outputs": ["best_glide"],
                                                 "output_units": {"distance": "ft"}}).json
    glide = doc["best_glide"]
    assert glide["glide_angle"] == {"value": pytest.approx(4.2, abs=0.05), "unit": "deg"}
    assert glide["glide_distance"] == {"value": pytest.approx(136_000, abs=500), "unit": "ft"}
    assert set(doc) == {"best_glide", "warnings"}


def test_characteristic_speeds_closed_forms(client):
    # Closed forms (Anderson, chapter 6): V_mp / V_md = 3^(-1/4) = 0.759836, (L/D)_mp = 0.866025 (L/D)max; the EAS
    # of minimum drag sqrt(2 W / (rho0 S CL)) with CL = sqrt(CD0 / k), k = 1 / (pi A e); sink = TAS sin(gamma).
    doc = post(client, "/v1/drag/speeds", TQ62 | {"altitude": {"value": 250, "unit": "FL"}, "isa_deviation": 5,
                                                   "output_units": {"speed": "m/s", "vertical_speed": "m/s"}}).json
    md, mp, bg = doc["minimum_drag"], doc["minimum_power"], doc["best_glide"]
    k = 1 / (math.pi * 11 * 0.78)
    cl = math.sqrt(0.024 / k)
    assert md["cl"] == pytest.approx(cl, rel=1e-12)
    assert md["eas"]["value"] == pytest.approx(math.sqrt(2 * 21000 * G / (1.225 * 61 * cl)), rel=1e-5)
    assert md["drag"]["value"] == pytest.approx(2 * 21000 * G * math.sqrt(0.024 * k), rel=1e-12)
    assert mp["tas"]["value"] / md["tas"]["value"] == pytest.approx(0.759836, rel=1e-6)
    assert mp["power"]["value"] * 1000 == pytest.approx(mp["drag"]["value"] * mp["tas"]["value"], rel=1e-12)
    gamma = math.radians(bg["glide_angle"]["value"])
    assert math.tan(gamma) == pytest.approx(1 / md["lift_to_drag"], rel=1e-12)
    assert bg["sink_rate"]["value"] == pytest.approx(bg["tas"]["value"] * math.sin(gamma), rel=1e-12)
    assert "glide_distance" not in bg  # no height given
    assert doc["warnings"] == []


def test_drag_from_cl_and_from_the_speed_agree(client):
    # The same point from the CL, or from the EAS that CL gives: the same drag (and a level turn: n = 1/cos 30).
    base = TQ62 | {"altitude": 12000, "temperature": -10, "bank_angle": 30}
    by_cl = post(client, "/v1/drag", base | {"cl": 0.7}).json
    by_eas = post(client, "/v1/drag", base | {"eas": by_cl["eas"]}).json
    for name in ("cl", "cd", "lift_to_drag"):
        assert by_eas[name] == pytest.approx(by_cl[name], rel=1e-9)
    assert by_eas["drag"]["value"] == pytest.approx(by_cl["drag"]["value"], rel=1e-9)
    assert by_cl["drag"]["value"] == pytest.approx(21000 * G / math.cos(math.radians(30)) * by_cl["cd"] / 0.7,
                                                   rel=1e-9)


def test_induced_drag_factor_or_aspect_ratio(client):
    # k = 1 / (pi A e) given directly gives the same answer.
    k = 1 / (math.pi * 11 * 0.78)
    a = post(client, "/v1/drag", TQ62 | {"mach": 0.45, "altitude": 25000}).json
    b = post(client, "/v1/drag", {key: value for key, value in TQ62.items() if key not in ("aspect_ratio",
                                                                                            "oswald_efficiency")}
             | {"induced_drag_factor": k, "mach": 0.45, "altitude": 25000}).json
    assert b["cd"] == pytest.approx(a["cd"], rel=1e-12)


def test_warning_beyond_the_polar_mach_limit(client):
    # No compressibility drag: above the Mach limit (default 0.6) a warning names the points.
    doc = post(client, "/v1/drag", TQ62 | {"mach": [0.5, 0.74], "altitude": 37000}).json
    assert [w["field"] for w in doc["warnings"]] == ["cd"]
    assert doc["warnings"][0]["indices"] == [1] and "compressibility" in doc["warnings"][0]["message"]
    assert post(client, "/v1/drag", TQ62 | {"mach": 0.74, "altitude": 37000, "mach_limit": 0.78}).json[
        "warnings"] == []
    speeds = post(client, "/v1/drag/speeds", TQ62 | {"weight": 23000, "altitude": 41000, "mach_limit": 0.5}).json
    assert {w["field"] for w in speeds["warnings"]} == {"minimum_drag", "best_glide"}


def test_grid_and_csv(client):
    body = TQ62 | {"weight": [18000, 23000], "altitude": [0, 20000, 35000], "grid": True}
    doc = post(client, "/v1/drag/speeds", body).json
    assert len(doc["minimum_drag"]["eas"]["value"]) == 6
    assert doc["inputs"]["altitude"]["value"] == [0, 20000, 35000] * 2
    table = post(client, "/v1/drag/speeds", body, {"Accept": "text/csv"}).get_data(as_text=True)
    rows = list(csv.reader(io.StringIO(table)))
    assert "minimum_power.power [kW]" in rows[0] and "best_glide.sink_rate [ft/min]" in rows[0]
    assert len(rows) == 7


@pytest.mark.parametrize(
    ("path", "body", "pointer"),
    [
        ("/v1/drag", TQ62 | {"mach": 0.4, "cl": 0.5, "altitude": 0}, "/cl"),  # two flight conditions
        ("/v1/drag", TQ62 | {"altitude": 0}, ""),  # none
        ("/v1/drag", TQ62 | {"mach": 0.4, "altitude": 0, "induced_drag_factor": 0.04}, "/induced_drag_factor"),
        ("/v1/drag", {**TQ62, "oswald_efficiency": None} | {"mach": 0.4, "altitude": 0}, "/oswald_efficiency"),
        ("/v1/drag/speeds", {k: v for k, v in TQ62.items() if k != "oswald_efficiency"} | {"altitude": 0},
         "/aspect_ratio"),
        ("/v1/drag/speeds", {k: v for k, v in TQ62.items() if k != "cd0"} | {"altitude": 0}, "/cd0"),
        ("/v1/drag/speeds", TQ62 | {"altitude": 0, "cd0": 0}, "/cd0"),
        ("/v1/drag/speeds", TQ62 | {"altitude": 0, "oswald_efficiency": 1.2}, "/oswald_efficiency"),
        ("/v1/drag/speeds", TQ62 | {"altitude": 0, "height": -100}, "/height"),
        # a flight level is a pressure altitude, not a height to lose: a unit that does not fit is refused
        ("/v1/drag/speeds", TQ62 | {"altitude": 0, "height": {"value": 50, "unit": "FL"}}, "/height"),
        ("/v1/drag/speeds", TQ62 | {"altitude": 0, "mach_limit": [0.6, 0.7]}, "/mach_limit"),
        ("/v1/drag/speeds", TQ62, "/altitude"),  # no altitude: nothing defaults to sea level
    ],
)
def test_refusals(client, path, body, pointer):
    assert_problem(post(client, path, body), 422, pointer)


@pytest.mark.parametrize("altitude", [{"value": -5000, "unit": "m"}, {"value": 84852, "unit": "m"}])
def test_speeds_at_the_ends_of_the_atmosphere(client, altitude):
    # The model's range ends: 200 and finite (the Mach numbers far aloft are beyond the polar: a warning).
    doc = post(client, "/v1/drag/speeds", TQ62 | {"altitude": altitude}).json
    assert doc["minimum_drag"]["tas"]["value"] > 0 and doc["best_glide"]["sink_rate"]["value"] > 0
