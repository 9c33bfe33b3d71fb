"""Valid edges of every compute endpoint: 200, finite numbers, continuous with the neighbours.

Each edge is a valid request at a place where the code changes branch or meets a limit: the
layer bases of the standard atmosphere, the ends of the model's range, Mach exactly 1 and CAS
exactly the sea-level speed of sound (where the pitot relation changes from isentropic to
Rayleigh), supersonic Mach and CAS up to the input limits, very small speeds, very hot and
very cold days, bank angles near 90 deg. Each must answer 200 with finite numbers (a null only
where a warning names its output), and every number must stay within a relative 1e-7 of its
value at a neighbour a relative 1e-12 away (on both sides where both are inside the range):
a jump there is a wrong constant or a branch that does not meet its neighbour.

Outside references for the places: ICAO Doc 7488/3 (1993), Table A (layer bases at 11, 20, 32,
47, 51 and 71 km geopotential; range -5 km to 80 km and, with the U.S. Standard Atmosphere 1976,
to 84.852 km; a0 = 340.294 m/s = 661.479 kt at sea level); NACA Report 1135 (1953), eqs. 48
and 50: the isentropic and Rayleigh pitot relations, which meet at Mach 1. The incompressible
limit (at low speed CAS = EAS, and TAS = EAS / sqrt(sigma)) is common practice, no source.
"""

from __future__ import annotations

import json
import math

import pytest

from service import create_app

ATM, AIRSPEED, CROSSOVER, SCHEDULE = "/v1/atmosphere", "/v1/airspeed", "/v1/airspeed/crossover", "/v1/airspeed/schedule"
SOLVE, STALL, CURVE = "/v1/lift/solve", "/v1/lift/stall", "/v1/lift/curve"

STEP = 1e-12  # relative distance to the neighbours
RTOL = 1e-7  # allowed relative difference from a neighbour (sensitivities up to 1e5)
ATOL = 1e-6  # for outputs near zero at the edge (ft, kt, hPa, ...)

# ICAO Doc 7488/3, Table A: layer bases [m geopotential] inside the model's range.
LAYER_BASES_M = (11_000, 20_000, 32_000, 47_000, 51_000, 71_000)
# The model's range [m geopotential]: ICAO Doc 7488/3 from -5 km; U.S. Standard Atmosphere 1976 to 84.852 km.
RANGE_M = (-5_000, 84_852)
# ICAO Doc 7488/3: a0 = 340.294 m/s at sea level, in kt (1 kt = 1852/3600 m/s exactly).
A0_KT = 340.294 / (1852 / 3600)


@pytest.fixture(scope="module")
def client():
    """One application for the module (it keeps no state between requests)."""
    return create_app({"TESTING": True}).test_client()


def _refuse(name):
    raise AssertionError(f"{name} in a JSON body")


def answer(client, path, body) -> dict:
    response = client.post(path, data=json.dumps(body), content_type="application/json")
    assert response.status_code == 200, (body, response.get_data(as_text=True))
    return json.loads(response.get_data(as_text=True), parse_constant=_refuse)


def numbers(doc, prefix="") -> dict[str, float | None]:
    """Every number of an answer by its path (warnings and grid inputs left out)."""
    out = {}
    if isinstance(doc, dict):
        for key, value in doc.items():
            if prefix == "" and key in ("warnings", "inputs"):
                continue
            if key == "unit":
                continue
            out.update(numbers(value, f"{prefix}.{key}" if prefix else key))
    elif isinstance(doc, list):
        for index, value in enumerate(doc):
            out.update(numbers(value, f"{prefix}.{index}"))
    elif doc is None or (isinstance(doc, (int, float)) and not isinstance(doc, bool)):
        out[prefix.removesuffix(".value")] = doc
    return out


def assert_finite(doc):
    """Finite numbers; a null only where a warning names that output."""
    warned = {w["field"] for w in doc["warnings"]}
    for path, value in numbers(doc).items():
        if value is None:
            assert any(path == f or path.startswith(f + ".") for f in warned), (path, doc["warnings"])
        else:
            assert math.isfinite(value), path


def nudge(value, direction):
    """``value`` moved by a relative STEP (an absolute one at zero) in ``direction``."""
    if isinstance(value, dict):
        return {**value, "value": nudge(value["value"], direction)}
    return value + direction * (abs(value) * STEP if value else STEP)


def assert_continuous(base, other, where, rtol=RTOL):
    a, b = numbers(base), numbers(other)
    assert a.keys() == b.keys(), where
    for path, x in a.items():
        y = b[path]
        if x is None or y is None:
            continue
        assert math.isclose(x, y, rel_tol=rtol, abs_tol=ATOL), (where, path, x, y)


def check_edge(client, path, body, field, directions=(-1, 1), rtol=RTOL):
    """200 and finite at the edge and at its neighbours; continuous across them."""
    base = answer(client, path, body)
    assert_finite(base)
    for direction in directions:
        neighbour = answer(client, path, {**body, field: nudge(body[field], direction)})
        assert_finite(neighbour)
        assert_continuous(base, neighbour, (field, direction), rtol)
    return base


# --- The standard atmosphere ----------------------------------------------------------------------

@pytest.mark.parametrize("base_m", LAYER_BASES_M)
@pytest.mark.parametrize("day", [{}, {"isa_deviation": 30}, {"temperature": -70}])
def test_atmosphere_at_layer_bases(client, base_m, day):
    check_edge(client, ATM, {"altitude": {"value": base_m, "unit": "m"}, **day}, "altitude")


@pytest.mark.parametrize(("altitude", "inward"), [
    ({"value": RANGE_M[0], "unit": "m"}, 1),
    ({"value": RANGE_M[1], "unit": "m"}, -1),
    ({"value": RANGE_M[0] / 1000, "unit": "km"}, 1),
    ({"value": RANGE_M[1] / 1000, "unit": "km"}, -1),
])
def test_atmosphere_at_the_ends_of_the_range(client, altitude, inward):
    doc = check_edge(client, ATM, {"altitude": altitude}, "altitude", directions=(inward,))
    assert doc["pressure_altitude"]["value"] == pytest.approx(altitude["value"] * 1000 / 0.3048
                                                              if altitude["unit"] == "km" else
                                                              altitude["value"] / 0.3048, rel=1e-12)


def _published_bounds(client, unit):
    """The altitude bounds the spec publishes for ``unit`` (the else branch: pressure altitudes)."""
    spec = client.get("/openapi.json").json
    rule = spec["components"]["schemas"]["AtmosphereRequest"]["allOf"][0]
    conditions = rule["else"]["properties"]["altitude"]["allOf"]  # one conditional per unit of {value, unit}
    value = next(c["then"]["properties"]["value"] for c in conditions
                 if c["if"]["properties"]["unit"].get("const") == unit)
    return value["minimum"], value["maximum"]


@pytest.mark.parametrize("unit", ["ft", "FL", "m", "km"])
def test_atmosphere_at_the_published_ends_in_every_unit(client, unit):
    """The bounds the spec publishes are accepted exactly, and the next float beyond them is not."""
    lo, hi = _published_bounds(client, unit)
    for bound, inward in ((lo, 1), (hi, -1)):
        check_edge(client, ATM, {"altitude": {"value": bound, "unit": unit}}, "altitude", directions=(inward,))
        beyond = math.nextafter(bound, -inward * math.inf)
        response = client.post(ATM, json={"altitude": {"value": beyond, "unit": unit}})
        assert response.status_code == 422


@pytest.mark.parametrize(("altitude", "inward"), [(-4996.070273568692, 1), (85999.95290624202, -1)])
def test_geometric_heights_at_the_ends(client, altitude, inward):
    # geometric = r H / (r - H) of the range's ends (U.S. Standard Atmosphere 1976, eq. 19, r = 6 356 766 m)
    check_edge(client, ATM, {"altitude": {"value": altitude, "unit": "m"}, "altitude_kind": "geometric"},
               "altitude", directions=(inward,))


def _isa_c(altitude_ft: float) -> float:
    """Standard temperature [degC] at a pressure altitude below 65 617 ft (ICAO Doc 7488/3 layers, typed here)."""
    H = altitude_ft * 0.3048
    return (288.15 - 0.0065 * H if H < 11_000 else 216.65 + 0.001 * max(H - 20_000, 0.0)) - 273.15


@pytest.mark.parametrize("altitude", [-16_000, 0, 36_089, 65_617, 150_000, 270_000])
@pytest.mark.parametrize(("day", "inward"), [({"isa_deviation": -100}, 1), ({"isa_deviation": 100}, -1)])
def test_atmosphere_on_very_hot_and_very_cold_days(client, altitude, day, inward):
    doc = check_edge(client, ATM, {"altitude": altitude, **day}, "altitude")
    check_edge(client, ATM, {"altitude": altitude, **day}, next(iter(day)), directions=(inward,))
    assert doc["density"]["value"] > 0


@pytest.mark.parametrize("altitude", [-16_000, 0, 36_089, 65_617])
@pytest.mark.parametrize("offset", [-99.999, 99.999])
def test_outside_air_temperature_at_the_deviation_limits(client, altitude, offset):
    # One validity range whatever the form: an outside air temperature within +-100 K of ISA is taken
    # (a thousandth inside, since the deviation is computed from it), and beyond is a 422.
    t = _isa_c(altitude) + offset
    doc = check_edge(client, ATM, {"altitude": altitude, "temperature": t}, "temperature")
    assert doc["isa_deviation"]["value"] == pytest.approx(offset, abs=1e-6)
    beyond = _isa_c(altitude) + offset * 1.0001 + (0.01 if offset > 0 else -0.01)
    assert client.post(ATM, json={"altitude": altitude, "temperature": beyond}).status_code == 422


def test_qnh_at_its_limits(client):
    for qnh in (800, 1100, {"value": 23.6239841318, "unit": "inHg"}):
        check_edge(client, ATM, {"altitude": 5000, "qnh": qnh}, "altitude")


# --- Airspeeds ------------------------------------------------------------------------------------

@pytest.mark.parametrize("altitude", [0, 11_000, 36_089, 60_000])
def test_mach_exactly_one(client, altitude):
    doc = check_edge(client, AIRSPEED, {"mach": 1.0, "altitude": altitude}, "mach")
    assert doc["mach"] == 1.0


def test_cas_exactly_the_sea_level_speed_of_sound(client):
    doc = check_edge(client, AIRSPEED, {"cas": A0_KT, "altitude": 0}, "cas")
    assert doc["mach"] == pytest.approx(1.0, rel=1e-5)  # at sea level CAS = TAS, so Mach 1 (to a0's 6 digits)


@pytest.mark.parametrize(("speed", "altitude"), [
    ({"mach": 1.5}, 30_000), ({"mach": 3.0}, 60_000), ({"mach": 5.0}, 270_000), ({"mach": 5.0}, -16_000),
    ({"cas": 1_000}, 0), ({"cas": 2_000}, 20_000), ({"cas": 3_000}, -16_000),
    # (a speed whose Mach number is beyond the range of `mach`, 5, is refused: tests/test_api_airdata.py)
    ({"tas": 2_500}, 80_000), ({"eas": 2_000}, 10_000), ({"cas": 50}, 200_000),
])
def test_supersonic_mach_and_cas(client, speed, altitude):
    field = next(iter(speed))
    directions = (-1,) if speed[field] in (3_000, 5.0) else (-1, 1)
    doc = check_edge(client, AIRSPEED, {**speed, "altitude": altitude}, field, directions)
    assert doc["mach"] > 1


@pytest.mark.parametrize("kind", ["cas", "eas", "tas", "mach"])
@pytest.mark.parametrize("value", [1e-3, 1e-6])
def test_very_small_speeds(client, kind, value):
    doc = check_edge(client, AIRSPEED, {kind: value, "altitude": 0}, kind)
    if kind != "mach":  # the incompressible limit at sea level: CAS = EAS = TAS (common practice, no source)
        for other in ("cas", "eas", "tas"):
            assert doc[other]["value"] == pytest.approx(value, rel=1e-9)


def test_very_small_speed_aloft_follows_the_density(client):
    doc = answer(client, AIRSPEED, {"eas": 1e-3, "altitude": 40_000})
    sigma = answer(client, ATM, {"altitude": 40_000})["density_ratio"]
    assert doc["tas"]["value"] == pytest.approx(1e-3 / math.sqrt(sigma), rel=1e-9)  # TAS = EAS / sqrt(sigma)
    assert doc["cas"]["value"] == pytest.approx(1e-3, rel=1e-6)


@pytest.mark.parametrize("day", [{"isa_deviation": -100}, {"isa_deviation": 100},
                                 {"temperature": _isa_c(10_000) - 99.999}, {"temperature": _isa_c(10_000) + 99.999}])
def test_airspeed_on_very_hot_and_very_cold_days(client, day):
    check_edge(client, AIRSPEED, {"cas": 250, "altitude": 10_000, **day}, "cas")


@pytest.mark.parametrize(("cas", "mach"), [(300, 0.78), (250, 0.5), (3_000, 5.0), (A0_KT, 1.0)])
def test_crossover_and_the_schedule_at_it(client, cas, mach):
    doc = check_edge(client, CROSSOVER, {"cas": cas, "mach": mach}, "cas",
                     directions=(-1,) if cas == 3_000 else (-1, 1))
    crossover_ft = doc["crossover_altitude"]["value"]
    schedule = check_edge(client, SCHEDULE, {"cas": cas, "mach": mach, "altitude": crossover_ft}, "altitude")
    assert schedule["mach"] == pytest.approx(mach, rel=1e-9)
    assert schedule["cas"]["value"] == pytest.approx(cas, rel=1e-9)


# --- Lift -----------------------------------------------------------------------------------------

TQ62 = {"weight": 21_000, "wing_area": 61}  # our invented TQ-62


@pytest.mark.parametrize("bank", [89.0, 89.9, 89.999, 89.99999])
def test_bank_angles_near_90_deg(client, bank):
    # n = 1 / cos(bank) (coordinated level turn; common practice, no source) changes by a relative
    # bank x tan(bank) x STEP between neighbours: the tolerance follows that sensitivity.
    theta = math.radians(bank)
    rtol = max(RTOL, 10 * theta * math.tan(theta) * STEP)
    solve = check_edge(client, SOLVE, {"solve_for": "cl", **TQ62, "cas": 200, "altitude": 10_000,
                                       "bank_angle": bank}, "bank_angle", rtol=rtol)
    assert solve["load_factor"] == pytest.approx(1 / math.cos(theta), rel=1e-9)
    stall = check_edge(client, STALL, {**TQ62, "cl_max": 1.6, "altitude": 3_000, "bank_angle": bank},
                       "bank_angle", rtol=rtol)
    assert stall["stall"]["eas"]["value"] > 0


@pytest.mark.parametrize("speed", [{"mach": 1.0}, {"mach": 2.5}, {"cas": 1e-3}, {"tas": 2_500}])
def test_lift_solve_at_speed_edges(client, speed):
    # (TAS 2 500 kt is Mach 4.3 at 30 000 ft; beyond Mach 5 a speed is refused, as `mach` is)
    field = next(iter(speed))
    body = {"solve_for": "cl", **TQ62, **speed, "altitude": 30_000}
    check_edge(client, SOLVE, body, field)


@pytest.mark.parametrize("unknown", ["speed", "weight", "wing_area", "load_factor", "altitude"])
def test_lift_solve_every_unknown_at_a_layer_base(client, unknown):
    known = {"cl": 0.5, **TQ62, "mach": 0.6, "altitude": {"value": 11_000, "unit": "m"}, "load_factor": 1.2}
    if unknown == "speed":
        known.pop("mach")
    elif unknown == "altitude":
        solved = answer(client, SOLVE, {"solve_for": "cl", **{k: v for k, v in known.items() if k != "cl"}})
        known["cl"] = solved["cl"]  # the CL that puts the solution at the layer base
        known.pop("altitude")
    else:
        known.pop(unknown)
    field = "cl"
    doc = check_edge(client, SOLVE, {"solve_for": unknown, **known}, field)
    if unknown == "altitude":
        assert doc["pressure_altitude"]["value"] == pytest.approx(11_000 / 0.3048, rel=1e-9)


@pytest.mark.parametrize(("mach", "directions"), [(0.0, (1,)), (0.7, (-1, 1)), (0.999999, (-1,))])
@pytest.mark.parametrize(("sweep", "point"), [(0, {"cl": 0.9}), (60, {"cl": 0.9}), (-89.999, {"angle_of_attack": 4}),
                                              (89.999, {"angle_of_attack": -3})])
def test_lift_curve_edges(client, mach, directions, sweep, point):
    body = {"aspect_ratio": 11, "sweep_half_chord": sweep, "mach": mach, **point}
    check_edge(client, CURVE, body, "mach", directions)
    check_edge(client, CURVE, body, "aspect_ratio")
    check_edge(client, CURVE, body, "sweep_half_chord", directions=(1,) if sweep < -89 else (-1,) if sweep > 89
               else (-1, 1))
