"""The documented contracts of every compute endpoint, pinned exactly through the public HTTP contract.

- warnings: one entry per field, ``count`` the number of points concerned, ``indices`` the first (up to ten) of
  them (the spec's Warning schema), and the nulls exactly at those points;
- a primary result that does not exist is a 422 ``no-solution`` with ``field``, ``count`` and the first ten
  ``indices``; a secondary one is null, never NaN, and an empty CSV cell counted in ``X-Warnings``;
- ``grid: true`` echoes every numeric input at every point, in the output units (offset units included);
- the single-point path and the array path give the same numbers.
"""

import csv
import io
import json
import math

import pytest

from tests.reference import app_client, post_ok


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


def _bad_at(n, bad, good, worse):
    """A list of n values: ``worse`` at the indices in ``bad``, ``good`` elsewhere."""
    return [worse if i in bad else good for i in range(n)]


#: 13 points concerned among 25, so the indices are cut at ten.
BAD = [0, 2, 3, 5, 8, 9, 11, 12, 15, 17, 20, 23, 24]
N = 25

# (name, path, body, warned field, where the value is (a path of keys into the answer) or None)
WARNINGS = [
    ("density altitude beyond the model", "/v1/atmosphere",
     {"altitude": {"value": _bad_at(N, BAD, 1000.0, 84852.0), "unit": "m"}, "isa_deviation": 40,
      "outputs": ["density_altitude"]}, "density_altitude", ("density_altitude", "value")),
    ("IAS output outside the calibration table", "/v1/airspeed",
     {"cas": _bad_at(N, BAD, 200.0, 400.0), "calibration": {"ias": [100, 200, 300], "cas": [102, 201, 298]},
      "altitude": 0, "outputs": ["ias"]}, "ias", ("ias", "value")),
    ("no level turn below n = 1", "/v1/lift/solve",
     {"solve_for": "load_factor", "weight": 21000, "wing_area": 61, "cl": 1.2, "cas": _bad_at(N, BAD, 250.0, 100.0),
      "altitude": 10000, "outputs": ["bank_angle"]}, "bank_angle", ("bank_angle", "value")),
    ("margin below the 1 g stall speed", "/v1/lift/stall",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "eas": _bad_at(N, BAD, 150.0, 100.0),
      "outputs": ["margin"]}, "margin.max_bank_angle", ("margin", "max_bank_angle", "value")),
    ("CL above CLmax at the margin speed", "/v1/lift/stall",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0, "eas": _bad_at(N, BAD, 150.0, 100.0),
      "outputs": ["margin"]}, "margin.cl_fraction", None),
    ("transonic lift-curve slope", "/v1/lift/curve",
     {"aspect_ratio": 8, "sweep_half_chord": 0, "mach": _bad_at(N, BAD, 0.5, 0.8), "cl": 0.5},
     "lift_slope", None),
    ("transonic angle of attack", "/v1/lift/solve",
     {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": _bad_at(N, BAD, 0.5, 0.75), "altitude": 30000,
      "wing": {"aspect_ratio": 8, "sweep_half_chord": 0}, "outputs": ["angle_of_attack"]}, "angle_of_attack", None),
    ("wings level: no turn radius", "/v1/lift/turn",
     {"tas": 200, "altitude": 5000, "bank_angle": _bad_at(N, BAD, 25.0, 0.0), "outputs": ["radius"]},
     "radius", ("radius", "value")),
    ("beyond buffet onset in 1 g", "/v1/lift/buffet",
     {"weight": _bad_at(N, BAD, 20000.0, 60000.0), "wing_area": 61, "mach": 0.74, "altitude": 41000,
      "buffet": {"mach": [0.6, 0.8], "cl": [0.8, 0.5]}, "outputs": ["bank_to_buffet"]},
     "bank_to_buffet", ("bank_to_buffet", "value")),
    ("drag beyond the polar's Mach limit", "/v1/drag",
     {"weight": 21000, "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.037, "altitude": 35000,
      "mach": _bad_at(N, BAD, 0.5, 0.7)}, "cd", None),
]


@pytest.mark.parametrize(("name", "path", "body", "field", "where"), WARNINGS, ids=[w[0] for w in WARNINGS])
def test_warning_count_and_first_ten_indices(client, name, path, body, field, where):
    answer = post_ok(client, path, body)
    entries = [w for w in answer["warnings"] if w["field"] == field]
    assert len(entries) == 1, answer["warnings"]
    entry = entries[0]
    assert set(entry) == {"field", "message", "count", "indices"}
    assert entry["count"] == len(BAD) == 13
    assert entry["indices"] == BAD[:10]
    assert entry["message"] and entry["message"].endswith(".")
    if where is not None:
        values = answer
        for key in where:
            values = values[key]
        assert [i for i, v in enumerate(values) if v is None] == BAD


@pytest.mark.parametrize(("name", "path", "body", "field", "where"), WARNINGS, ids=[w[0] for w in WARNINGS])
def test_warning_on_a_single_point(client, name, path, body, field, where):
    # The same warning for one point (the single-point path): count 1, indices [0]; absent on a good point.
    def pick(value, index):
        if isinstance(value, list) and len(value) == N:
            return value[index]
        if isinstance(value, dict) and isinstance(value.get("value"), list) and len(value["value"]) == N:
            return dict(value, value=value["value"][index])
        return value

    def single(index):
        return {k: pick(v, index) for k, v in body.items()}

    bad = post_ok(client, path, single(BAD[0]))
    assert [(w["count"], w["indices"]) for w in bad["warnings"] if w["field"] == field] == [(1, [0])]
    good = post_ok(client, path, single(1))
    assert [w for w in good["warnings"] if w["field"] == field] == []
    if where is not None:
        value = bad
        for key in where:
            value = value[key]
        assert value is None


@pytest.mark.parametrize(("path", "body"), [
    ("/v1/lift/solve", {"solve_for": "altitude", "weight": 21000, "wing_area": 61, "cl": 0.6, "cas": [190, 195, 200],
                        "outputs": ["pressure_altitude"]}),
    ("/v1/lift/stall", {"weight": 21000, "wing_area": 61, "cl_max": 1.5, "altitude": [0, 1000, 2000],
                        "speed_factors": [0.9, 1.2], "outputs": ["multiples"]}),
])
def test_warning_about_every_point_lists_its_indices(client, path, body):
    answer = post_ok(client, path, body)
    for entry in answer["warnings"]:
        assert entry["indices"] == list(range(min(entry["count"], 10)))


def test_one_warning_entry_per_field_whatever_the_reasons(client):
    # angle_of_attack can be null for two reasons at once (a supersonic Mach: no DATCOM slope; a CL beyond
    # +/-90 deg on the linear curve): still one entry for the field, counting both kinds of points.
    answer = post_ok(client, "/v1/lift/solve", {
        "solve_for": "cl", "weight": [21000, 21000, 900000, 21000], "wing_area": 61, "mach": [1.2, 0.5, 0.1, 0.5],
        "altitude": 30000, "wing": {"aspect_ratio": 8, "sweep_half_chord": 0}, "outputs": ["angle_of_attack"]})
    fields = [w["field"] for w in answer["warnings"]]
    assert [v is None for v in answer["angle_of_attack"]["value"]] == [True, False, True, False]
    nulls = [w for w in answer["warnings"] if w["field"] == "angle_of_attack"]
    assert sum(w["count"] for w in nulls) == 2
    assert sorted(i for w in nulls for i in w["indices"]) == [0, 2]
    assert len(fields) == len(set(fields)), answer["warnings"]


# --- Nulls versus 422 ------------------------------------------------------------------------------------------

NO_SOLUTION = [
    ("crossover above the model", "/v1/airspeed/crossover",
     {"cas": _bad_at(N, BAD, 290.0, 1.0), "mach": 0.9}, "crossover_altitude"),
    ("altitude for a Mach number outside the model", "/v1/lift/solve",
     {"solve_for": "altitude", "weight": 21000, "wing_area": 61, "cl": 0.6, "mach": _bad_at(N, BAD, 0.45, 0.01)},
     "pressure_altitude"),
    ("altitude for a TAS outside the model", "/v1/lift/solve",
     {"solve_for": "altitude", "weight": 21000, "wing_area": 61, "cl": 0.6, "tas": _bad_at(N, BAD, 270.0, 20.0)},
     "pressure_altitude"),
    ("angle of attack beyond 90 deg on the curve", "/v1/lift/curve",
     {"aspect_ratio": 8, "sweep_half_chord": 0, "mach": 0.3, "cl": _bad_at(N, BAD, 0.5, 50.0)}, "angle_of_attack"),
]


@pytest.mark.parametrize(("name", "path", "body", "field"), NO_SOLUTION, ids=[c[0] for c in NO_SOLUTION])
def test_primary_result_missing_is_a_422_with_count_and_first_ten_indices(client, name, path, body, field):
    response = client.post(path, data=json.dumps(body), content_type="application/json")
    assert response.status_code == 422
    assert response.mimetype == "application/problem+json"
    doc = json.loads(response.get_data(as_text=True))
    assert doc["type"] == "/problems/no-solution"
    assert doc["status"] == 422
    assert doc["field"] == field
    assert doc["count"] == 13
    assert doc["indices"] == BAD[:10]
    assert [e["pointer"] for e in doc["errors"]] == [f"/{field}"]


def test_null_is_an_empty_csv_cell_and_counted_in_the_header(client):
    body = {"altitude": {"value": [0, 84852, 1000, 84852], "unit": "m"}, "isa_deviation": 40,
            "outputs": ["density_altitude", "density_ratio"]}
    response = client.post("/v1/atmosphere", data=json.dumps(body), content_type="application/json",
                           headers={"Accept": "text/csv"})
    assert response.status_code == 200 and response.mimetype == "text/csv"
    rows = list(csv.reader(io.StringIO(response.get_data(as_text=True))))
    assert rows[0] == ["input.altitude [ft]", "input.isa_deviation [K]", "density_altitude [ft]", "density_ratio"]
    assert [r[2] == "" for r in rows[1:]] == [False, True, False, True]
    assert all(r[3] not in ("", "nan", "NaN") for r in rows[1:])
    assert response.headers["X-Warnings"] == "1"


# --- The echo of the inputs of a grid -----------------------------------------------------------------------------

GRIDS = [
    ("/v1/atmosphere", {"altitude": {"value": [10000, 20000], "unit": "ft"}, "temperature": [-20, 15, 30], "qnh": 1000,
                        "grid": True, "outputs": ["density"],
                        "output_units": {"altitude": "m", "temperature": "degF", "pressure": "inHg"}},
     {"altitude": ("m", [3048.0] * 3 + [6096.0] * 3),
      "temperature": ("degF", [-4.0, 59.0, 86.0] * 2),
      "qnh": ("inHg", [100000 / 3386.389] * 6)}),
    ("/v1/airspeed", {"cas": [250, 300], "altitude": [0, 10000, 20000], "isa_deviation": 5, "grid": True,
                      "outputs": ["mach"], "output_units": {"speed": "m/s", "temperature_difference": "degF"}},
     {"cas": ("m/s", [250 * 1852 / 3600] * 3 + [300 * 1852 / 3600] * 3),
      "altitude": ("ft", [0.0, 10000.0, 20000.0] * 2),
      "isa_deviation": ("degF", [9.0] * 6)}),
    ("/v1/airspeed/schedule", {"cas": 290, "mach": [0.74, 0.78], "altitude": [10000, 30000], "temperature": 0,
                               "grid": True, "outputs": ["governing"], "output_units": {"temperature": "K"}},
     {"cas": ("kt", [290.0] * 4), "mach": (None, [0.74, 0.74, 0.78, 0.78]), "altitude": ("ft", [10000.0, 30000.0] * 2),
      "temperature": ("K", [273.15] * 4)}),
    ("/v1/lift/solve", {"solve_for": "cl", "weight": {"value": [20, 22], "unit": "t"}, "wing_area": 61,
                        "mach": [0.4, 0.5], "altitude": 20000, "bank_angle": [0, 30], "grid": True,
                        "outputs": ["cl"], "output_units": {"force": "kN", "angle": "rad", "area": "ft2"}},
     {"weight": ("kN", [20 * 9.80665] * 4 + [22 * 9.80665] * 4), "wing_area": ("ft2", [61 / 0.09290304] * 8),
      "mach": (None, [0.4, 0.4, 0.5, 0.5] * 2), "altitude": ("ft", [20000.0] * 8),
      "bank_angle": ("rad", [0.0, math.pi / 6] * 4)}),
    ("/v1/lift/stall", {"weight": [20000, 22000], "wing_area": 61, "cl_max": 1.6, "altitude": [0, 5000],
                        "grid": True, "outputs": ["stall"], "output_units": {"mass": "lb"}},
     {"weight": ("lb", [20000 / 0.45359237] * 2 + [22000 / 0.45359237] * 2),
      "wing_area": ("m2", [61.0] * 4), "cl_max": (None, [1.6] * 4), "altitude": ("ft", [0.0, 5000.0] * 2)}),
    ("/v1/lift/curve", {"aspect_ratio": [8, 11], "sweep_half_chord": 0, "mach": 0.3, "cl": [0.2, 0.9], "grid": True,
                        "outputs": ["angle_of_attack"], "output_units": {"angle": "rad"}},
     {"aspect_ratio": (None, [8.0, 8.0, 11.0, 11.0]), "sweep_half_chord": ("rad", [0.0] * 4),
      "mach": (None, [0.3] * 4), "cl": (None, [0.2, 0.9, 0.2, 0.9])}),
    ("/v1/lift/turn", {"tas": [150, 250], "altitude": 5000, "turn_rate": [3, 1.5], "grid": True,
                       "outputs": ["radius"], "output_units": {"angular_rate": "standard_rate", "speed": "m/s"}},
     {"tas": ("m/s", [150 * 1852 / 3600] * 2 + [250 * 1852 / 3600] * 2), "altitude": ("ft", [5000.0] * 4),
      "turn_rate": ("standard_rate", [1.0, 0.5] * 2)}),
    ("/v1/drag/speeds", {"weight": [20000, 22000], "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.037,
                         "altitude": 20000, "height": [10000, 20000], "grid": True, "outputs": ["best_glide"],
                         "output_units": {"altitude": "m", "force": "kN"}},
     {"weight": ("kN", [20 * 9.80665] * 2 + [22 * 9.80665] * 2), "wing_area": ("m2", [61.0] * 4),
      "cd0": (None, [0.024] * 4), "induced_drag_factor": (None, [0.037] * 4), "altitude": ("m", [6096.0] * 4),
      "height": ("m", [3048.0, 6096.0] * 2)}),
]


@pytest.mark.parametrize(("path", "body", "echo"), GRIDS, ids=[g[0] for g in GRIDS])
def test_grid_echoes_every_input_in_the_output_units(client, path, body, echo):
    answer = post_ok(client, path, body)
    inputs = answer["inputs"]
    for name, (unit, values) in echo.items():
        got = inputs[name]
        if unit is None:
            assert got == pytest.approx(values, rel=1e-13)
        else:
            assert got["unit"] == unit
            assert got["value"] == pytest.approx(values, rel=1e-13, abs=1e-12)
    assert set(inputs) == set(echo)


# --- The single-point path and the array path agree ----------------------------------------------------------------

SINGLE = [
    ("/v1/atmosphere", {"altitude": 7200, "qnh": 1008, "temperature": {"value": 90, "unit": "degF"},
                        "output_units": {"temperature": "degF", "temperature_difference": "degF",
                                         "altitude": "FL", "pressure": "psi", "density": "slug/ft3"}}),
    ("/v1/atmosphere", {"altitude": {"value": 20, "unit": "km"}, "isa_deviation": {"value": -30, "unit": "degC"},
                        "output_units": {"temperature": "K", "speed": "mph"}}),
    ("/v1/airspeed", {"cas": 700, "altitude": 30000, "isa_deviation": 9,
                      "output_units": {"speed": "km/h", "pressure": "inHg", "temperature": "degF"}}),
    ("/v1/airspeed", {"mach": 1.7, "altitude": 50000, "temperature": -60}),
    ("/v1/airspeed", {"ias": 250, "calibration": {"ias": [100, 200, 300], "cas": [102, 201, 298]},
                      "altitude": 10000, "temperature": {"value": 20, "unit": "degF"}}),
    ("/v1/airspeed/crossover", {"cas": 300, "mach": 0.78, "output_units": {"altitude": "FL", "pressure": "psi"}}),
    ("/v1/airspeed/schedule", {"cas": 290, "mach": 0.76, "altitude": 31000, "temperature": -40,
                               "output_units": {"speed": "ft/s"}}),
    ("/v1/lift/solve", {"solve_for": "altitude", "weight": 21000, "wing_area": 61, "cl": 0.6, "tas": 270,
                        "temperature": -20}),
    ("/v1/lift/solve", {"solve_for": "speed", "weight": {"value": 48000, "unit": "lb"}, "wing_area": 61, "cl": 1.2,
                        "altitude": 3000, "qnh": 990, "bank_angle": 25,
                        "output_units": {"wing_loading": "lb/ft2", "force": "lbf"}}),
    ("/v1/lift/stall", {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "temperature": 30,
                        "bank_angle": 40, "speed_factors": [1.3], "cas": 150}),
    ("/v1/lift/curve", {"aspect_ratio": 9, "sweep_half_chord": 20, "mach": 0.6, "angle_of_attack": 5,
                        "zero_lift_angle": -2, "cl_max": 1.4, "output_units": {"lift_slope": "1/deg"}}),
    ("/v1/lift/turn", {"cas": 210, "altitude": 5000, "qnh": 1000, "turn_rate": {"value": 1, "unit": "standard_rate"},
                       "output_units": {"distance": "ft", "time": "min", "angular_rate": "rad/s"}}),
    ("/v1/lift/buffet", {"weight": 21000, "wing_area": 61, "mach": 0.74, "altitude": 37000, "temperature": -50,
                         "buffet": {"mach": [0.6, 0.8], "cl": [0.8, 0.5]}, "margin": 1.3,
                         "output_units": {"mass": "lb", "altitude": "FL"}}),
    ("/v1/drag", {"weight": 21000, "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78,
                  "cas": 250, "altitude": 20000, "bank_angle": 20, "output_units": {"power": "hp", "force": "lbf"}}),
    ("/v1/drag/speeds", {"weight": 21000, "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.037,
                         "altitude": 20000, "isa_deviation": 10, "height": 20000,
                         "output_units": {"distance": "km", "vertical_speed": "m/s", "power": "W"}}),
]

_POINT_FIELDS = {"altitude", "temperature", "isa_deviation", "qnh", "cas", "mach", "tas", "ias", "weight",
                 "bank_angle", "angle_of_attack"}


def _as_array(body, copies):
    """The body with its first point-valued input repeated ``copies`` times (an array of that length)."""
    out = dict(body)
    for name in _POINT_FIELDS:
        if name in out:
            value = out[name]
            out[name] = ({"value": [value["value"]] * copies, "unit": value["unit"]} if isinstance(value, dict)
                         else [value] * copies)
            return out
    raise AssertionError(body)


def _first(node):
    """The answer of an array request at point 0, in the shape of a single-point answer."""
    if isinstance(node, dict):
        return {k: _first(v) for k, v in node.items() if k not in ("warnings", "inputs")}
    if isinstance(node, list):
        return node[0] if node and not isinstance(node[0], dict) else [_first(x) for x in node]
    return node


def _same(single, first, path=""):
    if isinstance(single, dict):
        assert set(single) - {"warnings"} == set(first), path
        for key in first:
            _same(single[key], first[key], f"{path}/{key}")
    elif isinstance(single, list):
        assert len(single) == len(first), path
        for i, (a, b) in enumerate(zip(single, first, strict=True)):
            _same(a, b, f"{path}/{i}")
    elif isinstance(single, float) and isinstance(first, float):
        assert single == pytest.approx(first, rel=1e-13, abs=1e-300), path
    else:
        assert single == first, path


@pytest.mark.parametrize(("path", "body"), SINGLE, ids=[f"{p}-{i}" for i, (p, _) in enumerate(SINGLE)])
def test_single_point_path_equals_array_path(client, path, body):
    single = post_ok(client, path, body)
    for copies in (1, 3):
        array = post_ok(client, path, _as_array(body, copies))
        _same(single, _first(array))
