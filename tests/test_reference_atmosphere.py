"""POST /v1/atmosphere against the independent reference (tests/reference.py: ICAO Doc 7488/3 formulas with
constants typed from the standard, checked against ambiance, fluids and published tables in
tests/test_reference_oracle.py).

Every output, on the single-point path and the array path, in every unit of its dimension (offset units
included), on standard and off-standard days, from an ISA deviation, an outside air temperature, a QNH-corrected
indicated altitude and a geometric height. Only the public HTTP contract is used.
"""

import pytest

from tests import reference as ref
from tests.reference import UNITS, app_client, check, from_unit, post_ok, to_unit


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


#: Output -> dimension (None: a bare number), as the spec documents the answer.
OUTPUTS = {"pressure_altitude": "altitude", "geometric_altitude": "altitude", "temperature": "temperature",
           "isa_deviation": "temperature_difference", "pressure": "pressure", "density": "density",
           "speed_of_sound": "speed", "dynamic_viscosity": "dynamic_viscosity",
           "kinematic_viscosity": "kinematic_viscosity", "pressure_ratio": None, "temperature_ratio": None,
           "density_ratio": None, "density_altitude": "altitude"}
#: Absolute tolerances [SI] where a relative one means little near zero (altitudes near sea level).
ABS = {"pressure_altitude": 1e-7, "geometric_altitude": 1e-6, "density_altitude": 1e-6, "isa_deviation": 1e-9}

#: (pressure altitude [m], ISA deviation [K]): every layer, its bases, both ends of the range, cold and hot days.
CASES = [(-5000.0, 0.0), (-5000.0, 30.0), (-1000.0, -10.0), (0.0, 0.0), (0.0, 15.0), (0.0, -25.0), (1524.0, 20.0),
         (5000.0, -5.5), (11000.0, 0.0), (11000.0, 10.0), (16000.0, -30.0), (20000.0, 5.0), (26000.0, 0.0),
         (32000.0, -12.0), (40000.0, 25.0), (47000.0, 0.0), (49500.0, 7.0), (51000.0, -3.0), (60000.0, 0.0),
         (71000.0, 15.0), (78000.0, -40.0), (84852.0, 0.0)]
#: Density altitude outside the model: denser than -5 km standard, thinner than 84 852 m standard (null).
NULL_CASES = [(-5000.0, -60.0), (84852.0, 40.0)]


def _compare(answer, expected: dict, units: dict | None = None):
    for name, dim in OUTPUTS.items():
        unit = (units or {}).get(dim) if dim else None
        check(answer[name], expected[name], dim, unit, abs_si=ABS.get(name, 0.0))


def _expected(cases):
    rows = [ref.air(H, dT) for H, dT in cases]
    return {name: [row[name] for row in rows] for name in OUTPUTS}


@pytest.mark.parametrize(("H", "dT"), CASES + NULL_CASES)
def test_single_point_every_output(client, H, dT):
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": H, "unit": "m"}, "isa_deviation": dT})
    _compare(answer, ref.air(H, dT))


def test_array_every_output(client):
    cases = CASES + NULL_CASES
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": [H for H, _ in cases], "unit": "m"},
                                                "isa_deviation": [dT for _, dT in cases]})
    _compare(answer, _expected(cases))


def test_null_density_altitude_has_its_warning_exactly(client):
    cases = [(0.0, 0.0), *NULL_CASES, (1000.0, 0.0)]
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": [H for H, _ in cases], "unit": "m"},
                                                "isa_deviation": [dT for _, dT in cases]})
    assert answer["density_altitude"]["value"][0] == 0.0
    assert [v is None for v in answer["density_altitude"]["value"]] == [False, True, True, False]
    assert answer["warnings"] == [{"field": "density_altitude", "message": answer["warnings"][0]["message"],
                                   "count": 2, "indices": [1, 2]}]


# --- Every unit of every output dimension, single point and array ---------------------------------------------

_UNIT_CASES = [(dim, unit) for dim in dict.fromkeys(d for d in OUTPUTS.values() if d) for unit in UNITS[dim]]


@pytest.mark.parametrize(("dim", "unit"), _UNIT_CASES)
def test_every_output_unit_single_point(client, dim, unit):
    H, dT = 9000.0, -17.0
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": H, "unit": "m"}, "isa_deviation": dT,
                                                "output_units": {dim: unit}})
    _compare(answer, ref.air(H, dT), {dim: unit})


@pytest.mark.parametrize(("dim", "unit"), _UNIT_CASES)
def test_every_output_unit_array(client, dim, unit):
    cases = [(0.0, 0.0), (9000.0, -17.0), (30000.0, 22.0)]
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": [H for H, _ in cases], "unit": "m"},
                                                "isa_deviation": [dT for _, dT in cases],
                                                "output_units": {dim: unit}})
    _compare(answer, _expected(cases), {dim: unit})


def test_offset_units_typed_values(client):
    # Sea level, standard day: 15 degC = 288.15 K = 59 degF exactly (definitions of the scales); ISA+10 K is
    # +18 degF as a difference. FL of 10 000 ft is 100.
    answer = post_ok(client, "/v1/atmosphere", {"altitude": [0, 10000], "isa_deviation": [0, 10],
                                                "output_units": {"temperature": "degF",
                                                                 "temperature_difference": "degF",
                                                                 "altitude": "FL"}})
    assert answer["temperature"]["value"][0] == pytest.approx(59.0, abs=1e-10)
    assert answer["isa_deviation"]["value"] == pytest.approx([0.0, 18.0], abs=1e-10)
    assert answer["pressure_altitude"]["value"] == pytest.approx([0.0, 100.0], abs=1e-10)
    for temperature_unit, sea_level in (("K", 288.15), ("degC", 15.0), ("degF", 59.0)):
        single = post_ok(client, "/v1/atmosphere", {"altitude": 0, "outputs": ["temperature"],
                                                    "output_units": {"temperature": temperature_unit}})
        assert single["temperature"] == {"value": pytest.approx(sea_level, abs=1e-10), "unit": temperature_unit}


# --- Every input unit, single point and array -------------------------------------------------------------------

@pytest.mark.parametrize("unit", list(UNITS["altitude"]))
@pytest.mark.parametrize("array", [False, True])
def test_altitude_in_every_unit(client, unit, array):
    H = [3048.0, 11582.4]  # 10 000 ft and FL380
    value = to_unit(H, "altitude", unit)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": value if array else value[1], "unit": unit},
                                                "isa_deviation": 4.0})
    rows = [ref.air(h, 4.0) for h in H]
    for name, dim in OUTPUTS.items():
        want = [row[name] for row in rows] if array else rows[1][name]
        check(answer[name], want, dim, abs_si=ABS.get(name, 0.0))


@pytest.mark.parametrize("unit", list(UNITS["temperature_difference"]))
@pytest.mark.parametrize("array", [False, True])
def test_isa_deviation_in_every_unit(client, unit, array):
    dT = [-18.0, 27.0]
    value = to_unit(dT, "temperature_difference", unit)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 20000,
                                                "isa_deviation": {"value": value if array else value[0],
                                                                  "unit": unit}})
    rows = [ref.air(6096.0, d) for d in dT]
    for name, dim in OUTPUTS.items():
        want = [row[name] for row in rows] if array else rows[0][name]
        check(answer[name], want, dim, abs_si=ABS.get(name, 0.0))


@pytest.mark.parametrize("unit", list(UNITS["temperature"]))
@pytest.mark.parametrize("array", [False, True])
def test_outside_air_temperature_in_every_unit(client, unit, array):
    # OAT -40 (the same number in degC and degF) and +35 degC at 5000 ft; the ISA deviation follows.
    H = 1524.0
    T = [233.15, 308.15]
    value = to_unit(T, "temperature", unit)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 5000,
                                                "temperature": {"value": value if array else value[0],
                                                                "unit": unit}})
    T_std = ref.std_tp(H)[0]
    rows = [ref.air(H, t - T_std) for t in T]
    for name, dim in OUTPUTS.items():
        want = [row[name] for row in rows] if array else rows[0][name]
        check(answer[name], want, dim, abs_si=ABS.get(name, 0.0))


def test_minus_forty_is_the_same_in_both_scales(client):
    # -40 degC = -40 degF (the scales cross there): both give the same air.
    c = post_ok(client, "/v1/atmosphere", {"altitude": 5000, "temperature": {"value": -40, "unit": "degC"}})
    f = post_ok(client, "/v1/atmosphere", {"altitude": 5000, "temperature": {"value": -40, "unit": "degF"}})
    assert c["temperature"]["value"] == pytest.approx(-40.0, abs=1e-10)
    assert f["density"]["value"] == pytest.approx(c["density"]["value"], rel=1e-14)


# --- QNH: indicated altitude + H(QNH), both directions, several sizes, every pressure unit ------------------

QNH_HPA = [800.0, 950.0, 990.0, 1000.0, 1013.25, 1020.0, 1040.0, 1100.0]


@pytest.mark.parametrize("qnh", QNH_HPA)
def test_qnh_single_point(client, qnh):
    indicated = 1500.0  # m
    H = indicated + ref.pressure_altitude(qnh * 100.0)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": indicated, "unit": "m"}, "qnh": qnh,
                                                "isa_deviation": 8.0})
    _compare(answer, ref.air(H, 8.0, ref.pressure_altitude(qnh * 100.0)))  # geometric: above mean sea level


def test_qnh_directions_and_sizes(client):
    # A low QNH puts the aircraft higher in pressure altitude than indicated, a high one lower; about 27-28 ft per
    # hPa near sea level (common practice, no source; checked loosely beside the exact reference).
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 0, "qnh": QNH_HPA, "outputs": ["pressure_altitude"]})
    got = answer["pressure_altitude"]["value"]
    want = [ref.pressure_altitude(q * 100.0) / 0.3048 for q in QNH_HPA]
    assert got == pytest.approx(want, rel=1e-9, abs=1e-7)
    assert got[QNH_HPA.index(1013.25)] == pytest.approx(0.0, abs=1e-7)
    assert got[QNH_HPA.index(1000.0)] == pytest.approx(13.25 * 27.5, rel=0.03)
    assert got[QNH_HPA.index(1020.0)] == pytest.approx(-6.75 * 27.3, rel=0.03)
    assert all(a > b for a, b in zip(got, got[1:], strict=False))


@pytest.mark.parametrize("unit", list(UNITS["pressure"]))
@pytest.mark.parametrize("array", [False, True])
def test_qnh_in_every_pressure_unit(client, unit, array):
    qnh_pa = [97_500.0, 103_900.0]
    value = to_unit(qnh_pa, "pressure", unit)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 3000, "qnh": {"value": value if array else value[1],
                                                                          "unit": unit}})
    H = [914.4 + ref.pressure_altitude(q) for q in qnh_pa]
    rows = [ref.air(h, 0.0, ref.pressure_altitude(q)) for h, q in zip(H, qnh_pa, strict=True)]
    for name, dim in OUTPUTS.items():
        want = [row[name] for row in rows] if array else rows[1][name]
        check(answer[name], want, dim, abs_si=ABS.get(name, 0.0))


def test_inhg_setting_typed_value(client):
    # 29.92 inHg = 1013.2 hPa (3386.389 Pa per inHg, NIST SP 811): the offset is the standard altitude of
    # 101 320.76 Pa.
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 0, "qnh": {"value": 29.92, "unit": "inHg"},
                                                "outputs": ["pressure_altitude"], "output_units": {"altitude": "m"}})
    check(answer["pressure_altitude"], ref.pressure_altitude(29.92 * 3386.389), "altitude", "m", abs_si=1e-9)


# --- Geometric heights: H = r h / (r + h) ---------------------------------------------------------------------

@pytest.mark.parametrize("h", [-4996.0, 0.0, 3000.0, 11019.0, 50000.0, 85999.0])
def test_geometric_height_input(client, h):
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": h, "unit": "m"}, "altitude_kind": "geometric"})
    expected = ref.air(ref.geopotential(h))
    _compare(answer, expected)
    # On a standard day the geometric height output is the input itself.
    check(answer["geometric_altitude"], h, "altitude", abs_si=1e-6)


def test_geometric_height_array_with_temperature(client):
    h = [100.0, 12000.0, 40000.0]
    T = [300.0, 210.0, 260.0]
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": h, "unit": "m"}, "altitude_kind": "geometric",
                                                "temperature": {"value": T, "unit": "K"}})
    # the exact inverse of the geometric-altitude output on that day (the deviation at the level, from T)
    H = [ref.pressure_altitude_of_height(x, T=t) for x, t in zip(h, T, strict=True)]
    rows = [ref.air(Hp, t - ref.std_tp(Hp)[0]) for Hp, t in zip(H, T, strict=True)]
    _compare(answer, {name: [row[name] for row in rows] for name in OUTPUTS})


# --- The grid: outer product in the schema's field order, inputs echoed ---------------------------------------

def test_grid_values_and_echo(client):
    altitudes_ft, deviations_degf = [0.0, 20000.0], [-9.0, 0.0, 27.0]
    answer = post_ok(client, "/v1/atmosphere", {
        "isa_deviation": {"value": deviations_degf, "unit": "degF"}, "altitude": altitudes_ft, "grid": True,
        "output_units": {"temperature_difference": "degF", "temperature": "degF"}})
    points = [(a, d) for a in altitudes_ft for d in deviations_degf]  # altitude first: the schema's order
    assert answer["inputs"] == {
        "altitude": {"value": [a for a, _ in points], "unit": "ft"},
        "isa_deviation": {"value": pytest.approx([d for _, d in points], abs=1e-12), "unit": "degF"}}
    rows = [ref.air(from_unit(a, "altitude", "ft"), from_unit(d, "temperature_difference", "degF"))
            for a, d in points]
    _compare(answer, {name: [row[name] for row in rows] for name in OUTPUTS},
             {"temperature_difference": "degF", "temperature": "degF"})
