"""POST /v1/airspeed, /v1/airspeed/crossover and /v1/airspeed/schedule against the independent reference
(tests/reference.py: the pitot relations of NACA Report 1135 and the ICAO atmosphere, constants typed from the
texts; checked against aerocalc3 and the normal-shock table in tests/test_reference_oracle.py).

Every output, single point and array, every unit of every dimension (offset units included), standard and
off-standard days, both sides of the supersonic switch. Only the public HTTP contract is used.
"""

import pytest

from tests import reference as ref
from tests.reference import UNITS, app_client, check, post_ok, to_unit

KT = 0.5144444444444445  # 1852 m / 3600 s (exact definition)
FT = 0.3048  # international foot (exact)


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


# --- POST /v1/airspeed ------------------------------------------------------------------------------------------

#: Output -> dimension, as the spec documents the answer (atmosphere.* nested).
SPEED_OUTPUTS = {"cas": "speed", "eas": "speed", "tas": "speed", "mach": None, "impact_pressure": "pressure",
                 "dynamic_pressure": "pressure"}
AIR_OUTPUTS = {"pressure": "pressure", "temperature": "temperature", "density": "density",
               "speed_of_sound": "speed"}

#: (kind, value in the default unit (kt or Mach), pressure altitude [ft], ISA deviation [K]): subsonic and
#: supersonic on either side of CAS = a0 (661.48 kt) and of Mach 1, low and high, cold and hot days.
CASES = [("cas", 60.0, 0.0, 0.0), ("cas", 250.0, 10000.0, 12.0), ("cas", 320.0, 24000.0, -15.0),
         ("cas", 661.0, 0.0, 0.0), ("cas", 662.0, 0.0, 0.0), ("cas", 900.0, 30000.0, 5.0),
         ("cas", 280.0, 41000.0, 20.0), ("eas", 150.0, 5000.0, -30.0), ("eas", 400.0, 40000.0, 0.0),
         ("tas", 480.0, 35000.0, 10.0), ("tas", 1200.0, 50000.0, -8.0), ("mach", 0.78, 37000.0, 15.0),
         ("mach", 0.999, 20000.0, 0.0), ("mach", 1.0, 20000.0, 0.0), ("mach", 1.001, 20000.0, 0.0),
         ("mach", 2.2, 55000.0, -5.0), ("mach", 4.9, 80000.0, 0.0), ("mach", 0.05, -1000.0, 40.0)]


def _airspeed_expected(kind, value, alt_ft, dT):
    T_std, p = ref.std_tp(alt_ft * FT)
    T = T_std + dT
    si = value if kind == "mach" else value * KT
    out = ref.speeds(kind, si, p, T)
    out["atmosphere"] = {"pressure": p, "temperature": T, "density": p / (ref.R * T),
                         "speed_of_sound": (ref.KAPPA * ref.R * T) ** 0.5}
    return out


def _compare_airspeed(answer, expected, units=None, rel=ref.REL):
    units = units or {}
    for name, dim in SPEED_OUTPUTS.items():
        check(answer[name], expected[name], dim, units.get(dim) if dim else None, rel=rel)
    for name, dim in AIR_OUTPUTS.items():
        check(answer["atmosphere"][name], expected["atmosphere"][name], dim, units.get(dim), rel=rel)


def _rows(cases):
    rows = [_airspeed_expected(*case) for case in cases]
    out = {name: [row[name] for row in rows] for name in SPEED_OUTPUTS}
    out["atmosphere"] = {name: [row["atmosphere"][name] for row in rows] for name in AIR_OUTPUTS}
    return out


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c[0]}{c[1]:g}@{c[2]:g}ft{c[3]:+g}K")
def test_airspeed_single_point(client, case):
    kind, value, alt_ft, dT = case
    answer = post_ok(client, "/v1/airspeed", {kind: value, "altitude": alt_ft, "isa_deviation": dT})
    _compare_airspeed(answer, _airspeed_expected(*case))


@pytest.mark.parametrize("kind", ["cas", "eas", "tas", "mach"])
def test_airspeed_array(client, kind):
    cases = [c for c in CASES if c[0] == kind]
    answer = post_ok(client, "/v1/airspeed", {kind: [c[1] for c in cases], "altitude": [c[2] for c in cases],
                                              "isa_deviation": [c[3] for c in cases]})
    _compare_airspeed(answer, _rows(cases))


def test_airspeed_with_outside_air_temperature(client):
    # 250 kt CAS at 10 000 ft with OAT -10 degC and +25 degC (degF and K in the same request shape).
    T = [263.15, 298.15]
    for unit in UNITS["temperature"]:
        answer = post_ok(client, "/v1/airspeed", {"cas": 250, "altitude": 10000,
                                                  "temperature": {"value": to_unit(T, "temperature", unit),
                                                                  "unit": unit}})
        T_std = ref.std_tp(3048.0)[0]
        _compare_airspeed(answer, _rows([("cas", 250.0, 10000.0, t - T_std) for t in T]))


_AIRSPEED_UNITS = [(dim, unit) for dim in ("speed", "pressure", "temperature", "density") for unit in UNITS[dim]]


@pytest.mark.parametrize(("dim", "unit"), _AIRSPEED_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_airspeed_every_output_unit(client, dim, unit, array):
    cases = [("cas", 270.0, 18000.0, -11.0), ("cas", 700.0, 25000.0, 9.0)]
    if array:
        body = {"cas": [c[1] for c in cases], "altitude": [c[2] for c in cases], "isa_deviation": [c[3] for c in cases]}
        expected = _rows(cases)
    else:
        body = {"cas": cases[0][1], "altitude": cases[0][2], "isa_deviation": cases[0][3]}
        expected = _airspeed_expected(*cases[0])
    answer = post_ok(client, "/v1/airspeed", body | {"output_units": {dim: unit}})
    _compare_airspeed(answer, expected, {dim: unit})


@pytest.mark.parametrize("kind", ["cas", "eas", "tas"])
@pytest.mark.parametrize("unit", list(UNITS["speed"]))
@pytest.mark.parametrize("array", [False, True])
def test_airspeed_every_input_speed_unit(client, kind, unit, array):
    values_kt = [210.0, 455.0]
    value = to_unit([v * KT for v in values_kt], "speed", unit)
    answer = post_ok(client, "/v1/airspeed", {kind: {"value": value if array else value[0], "unit": unit},
                                              "altitude": {"value": 5000, "unit": "m"}, "isa_deviation": 7})
    cases = [(kind, v, 5000.0 / FT, 7.0) for v in values_kt]
    _compare_airspeed(answer, _rows(cases) if array else _airspeed_expected(*cases[0]))


@pytest.mark.parametrize("unit", list(UNITS["altitude"]))
def test_airspeed_every_altitude_unit(client, unit):
    answer = post_ok(client, "/v1/airspeed", {"mach": 0.8, "altitude": {"value": to_unit(10668.0, "altitude", unit),
                                                                        "unit": unit}})
    _compare_airspeed(answer, _airspeed_expected("mach", 0.8, 35000.0, 0.0))


# A calibration table (kt): IAS -> CAS by linear interpolation, typed by hand: IAS 250 lies halfway between the
# rows 200 -> 201 and 300 -> 298, so CAS = 201 + 0.5 * 97 = 249.5 kt; CAS 150 lies halfway between 102 and 201
# at 150 - 102 = 48 of 99, so IAS = 100 + 100 * 48 / 99.
CALIBRATION = {"ias": [100, 200, 300], "cas": [102, 201, 298]}


@pytest.mark.parametrize("unit", list(UNITS["speed"]))
def test_ias_through_the_calibration_table(client, unit):
    table = {key: to_unit([v * KT for v in column], "speed", unit) for key, column in CALIBRATION.items()}
    answer = post_ok(client, "/v1/airspeed", {"ias": 250, "calibration": table | {"unit": unit},
                                              "altitude": 10000, "isa_deviation": 5})
    expected = _airspeed_expected("cas", 249.5, 10000.0, 5.0)
    _compare_airspeed(answer, expected)
    check(answer["ias"], 250 * KT, "speed")


def test_ias_output_from_cas_and_null_outside_the_table(client):
    answer = post_ok(client, "/v1/airspeed", {"cas": [150, 250, 80, 298, 400], "calibration": CALIBRATION,
                                              "altitude": 0})
    check(answer["ias"], [(100 + 100 * 48 / 99) * KT, (200 + 100 * 49 / 97) * KT, None, 300 * KT, None], "speed")
    assert answer["warnings"] == [{"field": "ias", "message": answer["warnings"][0]["message"], "count": 2,
                                   "indices": [2, 4]}]


# --- POST /v1/airspeed/crossover ----------------------------------------------------------------------------------

#: (CAS [kt], Mach): the crossover p = qc(CAS) / (qc/p)(M) and its standard pressure altitude; supersonic CAS
#: and Mach included (the Rayleigh branch on either side).
CROSSOVER = [(250.0, 0.70), (280.0, 0.78), (290.0, 0.76), (300.0, 0.78), (320.0, 0.74), (350.0, 0.84),
             (180.0, 0.50), (700.0, 1.5), (400.0, 1.2), (660.0, 0.99), (120.0, 0.6)]


@pytest.mark.parametrize(("cas", "mach"), CROSSOVER)
def test_crossover_single_point(client, cas, mach):
    answer = post_ok(client, "/v1/airspeed/crossover", {"cas": cas, "mach": mach})
    p, H = ref.crossover(cas * KT, mach)
    check(answer["crossover_altitude"], H, "altitude", abs_si=1e-7)
    check(answer["pressure"], p, "pressure")
    assert answer["warnings"] == []


def test_crossover_array_and_every_unit(client):
    rows = [ref.crossover(c * KT, m) for c, m in CROSSOVER]
    for alt_unit in UNITS["altitude"]:
        for p_unit in UNITS["pressure"]:
            answer = post_ok(client, "/v1/airspeed/crossover", {
                "cas": [c for c, _ in CROSSOVER], "mach": [m for _, m in CROSSOVER],
                "output_units": {"altitude": alt_unit, "pressure": p_unit}})
            check(answer["crossover_altitude"], [H for _, H in rows], "altitude", alt_unit, abs_si=1e-7)
            check(answer["pressure"], [p for p, _ in rows], "pressure", p_unit)


@pytest.mark.parametrize("unit", list(UNITS["speed"]))
def test_crossover_every_input_speed_unit(client, unit):
    value = to_unit([290 * KT, 310 * KT], "speed", unit)
    answer = post_ok(client, "/v1/airspeed/crossover", {"cas": {"value": value, "unit": unit}, "mach": 0.8})
    check(answer["crossover_altitude"], [ref.crossover(v * KT, 0.8)[1] for v in (290, 310)], "altitude")
    single = post_ok(client, "/v1/airspeed/crossover", {"cas": {"value": value[0], "unit": unit}, "mach": 0.8})
    check(single["crossover_altitude"], ref.crossover(290 * KT, 0.8)[1], "altitude")


def test_crossover_grid_order_and_echo(client):
    # The outer product in the schema's field order (cas, then mach), whatever the JSON key order.
    answer = post_ok(client, "/v1/airspeed/crossover", {"mach": [0.74, 0.78], "cas": [280, 300, 320], "grid": True,
                                                        "output_units": {"speed": "km/h"}})
    points = [(c, m) for c in (280, 300, 320) for m in (0.74, 0.78)]
    check(answer["crossover_altitude"], [ref.crossover(c * KT, m)[1] for c, m in points], "altitude")
    assert answer["inputs"]["mach"] == [m for _, m in points]
    check(answer["inputs"]["cas"], [c * KT for c, _ in points], "speed", "km/h", rel=1e-14)


def test_crossover_no_solution_names_count_and_first_ten_indices(client):
    # CAS 1 kt meets Mach 0.9 only above the model (its qc, 1/2 rho0 V^2 = 0.16 Pa, over qc/p = 0.69 at M 0.9
    # is 0.24 Pa, below the 0.37 Pa at 84 852 m): no crossover. Twelve such points among good ones: count 12 and
    # the first ten indices.
    cas = [290.0] * 15
    bad = [1, 2, 4, 5, 6, 7, 8, 9, 10, 11, 12, 14]
    for i in bad:
        cas[i] = 1.0
    response = client.post("/v1/airspeed/crossover", json={"cas": cas, "mach": 0.9})
    assert response.status_code == 422
    doc = response.get_json()
    assert doc["type"] == "/problems/no-solution"
    assert doc["count"] == 12
    assert doc["indices"] == bad[:10]


# --- POST /v1/airspeed/schedule -----------------------------------------------------------------------------------

SCHEDULE_OUTPUTS = {"cas": "speed", "mach": None, "tas": "speed", "eas": "speed", "crossover_altitude": "altitude"}


def _schedule_expected(cas_kt, mach, alt_ft, dT):
    """Fly the CAS until its Mach reaches the limit, then the Mach (the crossover decides which)."""
    T_std, p = ref.std_tp(alt_ft * FT)
    T = T_std + dT
    at_cas = ref.speeds("cas", cas_kt * KT, p, T)
    governs = "mach" if at_cas["mach"] > mach else "cas"
    flown = ref.speeds("mach", mach, p, T) if governs == "mach" else at_cas
    return {"governing": governs, "cas": flown["cas"], "mach": flown["mach"], "tas": flown["tas"],
            "eas": flown["eas"], "crossover_altitude": ref.crossover(cas_kt * KT, mach)[1]}


SCHEDULE = [(290.0, 0.76, 5000.0, 10.0), (290.0, 0.76, 25000.0, 10.0), (290.0, 0.76, 29000.0, -10.0),
            (290.0, 0.76, 30000.0, 0.0), (290.0, 0.76, 39000.0, 15.0), (250.0, 0.70, 20000.0, -20.0),
            (320.0, 0.84, 33000.0, 0.0), (300.0, 0.78, 45000.0, 5.0)]


def _compare_schedule(answer, rows, units=None):
    units = units or {}
    single = not isinstance(rows, list)
    rows = [rows] if single else rows
    pick = (lambda v: v[0]) if single else (lambda v: v)
    assert answer["governing"] == pick([r["governing"] for r in rows])
    for name, dim in SCHEDULE_OUTPUTS.items():
        check(answer[name], pick([r[name] for r in rows]), dim, units.get(dim) if dim else None, abs_si=1e-7)


@pytest.mark.parametrize("case", SCHEDULE)
def test_schedule_single_point(client, case):
    cas, mach, alt, dT = case
    answer = post_ok(client, "/v1/airspeed/schedule", {"cas": cas, "mach": mach, "altitude": alt, "isa_deviation": dT})
    _compare_schedule(answer, _schedule_expected(*case))


def test_schedule_array_and_exact_held_speed(client):
    answer = post_ok(client, "/v1/airspeed/schedule", {
        "cas": [c[0] for c in SCHEDULE], "mach": [c[1] for c in SCHEDULE], "altitude": [c[2] for c in SCHEDULE],
        "isa_deviation": [c[3] for c in SCHEDULE]})
    rows = [_schedule_expected(*c) for c in SCHEDULE]
    _compare_schedule(answer, rows)
    for i, row in enumerate(rows):  # the governing speed is the scheduled one exactly
        if row["governing"] == "cas":
            assert answer["cas"]["value"][i] == SCHEDULE[i][0]
        else:
            assert answer["mach"][i] == SCHEDULE[i][1]


@pytest.mark.parametrize(("dim", "unit"), [(d, u) for d in ("speed", "altitude") for u in UNITS[d]])
@pytest.mark.parametrize("array", [False, True])
def test_schedule_every_unit(client, dim, unit, array):
    cases = SCHEDULE[1:4]
    body = {"cas": 290, "mach": 0.76, "isa_deviation": [c[3] for c in cases] if array else cases[0][3],
            "output_units": {dim: unit}}
    # The inputs in the unit too: the altitude, or the CAS.
    alts = [c[2] * FT for c in cases]
    alt_unit = unit if dim == "altitude" else "m"
    body["altitude"] = {"value": to_unit(alts if array else alts[0], "altitude", alt_unit), "unit": alt_unit}
    if dim == "speed":
        body["cas"] = {"value": to_unit(290 * KT, "speed", unit), "unit": unit}
    answer = post_ok(client, "/v1/airspeed/schedule", body)
    rows = [_schedule_expected(*c) for c in cases]
    _compare_schedule(answer, rows if array else rows[0], {dim: unit})


@pytest.mark.parametrize("unit", list(UNITS["temperature"]))
def test_schedule_with_outside_air_temperature(client, unit):
    T = [268.15, 220.0]
    alts = [10000.0, 35000.0]
    answer = post_ok(client, "/v1/airspeed/schedule", {
        "cas": 290, "mach": 0.76, "altitude": alts,
        "temperature": {"value": to_unit(T, "temperature", unit), "unit": unit}})
    rows = [_schedule_expected(290.0, 0.76, a, t - ref.std_tp(a * FT)[0]) for a, t in zip(alts, T, strict=True)]
    _compare_schedule(answer, rows)
