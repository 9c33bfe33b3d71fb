"""Bulk requests: the request path does no Python work per point, grids label every point, CSV mirrors JSON."""

import csv
import gzip
import io

import numpy as np
import orjson
import pytest

from service.api import outputs
from tests.helpers import assert_problem, count_calls, post

#: (path, body builder for n points): one representative bulk request per compute endpoint.
BULK = {
    "/v1/atmosphere": lambda n: {
        "altitude": {"value": np.linspace(-1000, 40000, n).tolist(), "unit": "ft"},
        "isa_deviation": np.linspace(-20, 20, n).tolist(),
    },
    # Moist air and the U.S. 1976 property set (every output computed).
    "/v1/atmosphere#humid": lambda n: {
        "altitude": {"value": np.linspace(-1000, 40000, n).tolist(), "unit": "ft"},
        "temperature": np.linspace(30, -50, n).tolist(),
        "relative_humidity": 60,
    },
    # The static temperature from a total air temperature (EAS with a relative humidity: the fixed-point steps).
    "/v1/airspeed#tat": lambda n: {
        "eas": np.linspace(130, 300, n).tolist(),
        "altitude": {"value": np.linspace(0, 39000, n).tolist(), "unit": "ft"},
        "total_air_temperature": -10,
        "recovery_factor": 0.98,
        "relative_humidity": 50,
    },
    "/v1/altimetry/pressure-settings": lambda n: {
        "elevation": np.linspace(-1000, 15000, n).tolist(),
        "qnh": np.linspace(950, 1050, n).tolist(),
    },
    "/v1/altimetry/temperature-correction": lambda n: {
        "elevation": np.linspace(0, 9000, n).tolist(),
        "temperature": -30,
        "altitude": np.linspace(10000, 14000, n).tolist(),
    },
    # Subsonic Mach throughout (300 kt at FL390 is M 0.95), so no Newton iteration count depends on the points.
    "/v1/airspeed": lambda n: {
        "cas": np.linspace(130, 300, n).tolist(),
        "altitude": {"value": np.linspace(0, 39000, n).tolist(), "unit": "ft"},
        "isa_deviation": 10,
        "calibration": {"ias": [120, 160, 200, 240, 280, 320], "cas": [123, 162, 201, 240, 278.5, 317]},
    },
    "/v1/airspeed/crossover": lambda n: {
        "cas": np.linspace(250, 350, n).tolist(),
        "mach": np.linspace(0.70, 0.86, n).tolist(),
    },
    "/v1/airspeed/schedule": lambda n: {
        "cas": np.linspace(250, 300, n).tolist(),
        "mach": 0.78,
        "altitude": np.linspace(0, 39000, n).tolist(),
        "temperature": -20,
    },
    # Lift: two array axes each (a 3 x 3 grid is 9 points); subsonic throughout and no warnings in either size,
    # so no branch depends on the points.
    "/v1/lift/solve": lambda n: {
        "solve_for": "cl",
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61,
        "mach": 0.6,
        "altitude": {"value": np.linspace(50, 350, n).tolist(), "unit": "FL"},
        "isa_deviation": 5,
    },
    "/v1/lift/stall": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61,
        "cl_max": 1.6,
        "altitude": np.linspace(0, 10000, n).tolist(),
        "bank_angle": 30,
        "speed_factors": [1.13, 1.23, 1.3],
        "cas": 180,
    },
    # The static temperature from a TAT at the speed the lift gives (EAS with a relative humidity: the fixed-point
    # steps), and at the margin's CAS with a dew point.
    "/v1/lift/solve#tat-humid": lambda n: {
        "solve_for": "speed",
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "cl": 1.2,
        "altitude": np.linspace(0, 10000, n).tolist(),
        "total_air_temperature": 15, "recovery_factor": 0.98, "relative_humidity": 60,
    },
    "/v1/lift/stall#tat-humid": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "cl_max": 1.6,
        "altitude": np.linspace(0, 10000, n).tolist(),
        "cas": 180, "total_air_temperature": 20, "dew_point": 5,
    },
    "/v1/lift/curve": lambda n: {
        "aspect_ratio": np.linspace(4, 14, n).tolist(),
        "sweep_half_chord": 25,
        "mach": np.linspace(0.1, 0.65, n).tolist(),
        "cl": 0.8,
        "cl_max": 1.6,
    },
    # Drag, turns and buffet: subsonic, inside the polar's Mach limit and the buffet table, no warnings.
    "/v1/drag": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78,
        "cas": np.linspace(160, 250, n).tolist(),
        "altitude": 10000, "bank_angle": 20,
    },
    "/v1/drag#tat-cl": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78,
        "cl": np.linspace(0.4, 0.9, n).tolist(),
        "altitude": 10000, "total_air_temperature": 5, "dew_point": -10,
    },
    "/v1/drag/speeds": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.0371,
        "altitude": np.linspace(0, 20000, n).tolist(), "height": 5000,
    },
    "/v1/lift/turn": lambda n: {
        "cas": np.linspace(150, 250, n).tolist(),
        "altitude": np.linspace(0, 20000, n).tolist(), "turn_rate": 3,
    },
    "/v1/lift/buffet": lambda n: {
        "weight": np.linspace(15000, 23000, n).tolist(),
        "wing_area": 61, "mach": np.linspace(0.6, 0.78, n).tolist(), "altitude": 35000,
        "buffet": {"mach": [0.30, 0.40, 0.50, 0.60, 0.66, 0.70, 0.74, 0.78, 0.82],
                   "cl": [1.30, 1.20, 1.08, 0.94, 0.84, 0.76, 0.66, 0.55, 0.42]},
        "margin": 1.3,
    },
}


@pytest.mark.parametrize("path", list(BULK))
@pytest.mark.parametrize("accept", ["application/json", "text/csv"])
def test_python_calls_do_not_grow_with_points(app, path, accept):
    """10 points and 100,000 points cost the same number of Python function calls."""
    app.config["QBAR_MAX_POINTS"] = 400_000  # the stall request: 100,000 points x (1 + 3 speed factors)
    # Answers under 4 KiB take the compressor's short way (a few calls fewer, whatever the points): both sizes
    # take its full way here, so that only the number of points differs.
    app.extensions["qbar.compress"]._min_size = 0
    client = app.test_client()
    small, large = BULK[path](10), BULK[path](100_000)
    headers = {"Accept": accept}
    url = path.split("#")[0]  # "#variant": another body for the same endpoint
    post(client, url, small, headers)  # warm caches (imports, url map)

    def run(body):
        response = post(client, url, body, headers)
        assert response.status_code == 200, response.get_data(as_text=True)[:300]

    calls = count_calls(lambda: run(small))
    assert calls > 100, "the profiler saw no request path"  # a request is hundreds of Python calls
    assert calls == count_calls(lambda: run(large))


def test_count_calls_sees_per_point_python_work():
    """The check above would catch a Python call per point (here: a list comprehension over a function)."""
    def per_point(n):
        return count_calls(lambda: [_touch(x) for x in range(n)])

    assert per_point(100) - per_point(10) == 90


def _touch(x):
    return x


@pytest.mark.parametrize("path", list(BULK))
def test_grid_csv_matches_json(client, path):
    body = BULK[path](3) | {"grid": True}
    url = path.split("#")[0]
    doc = post(client, url, body).json
    table = post(client, url, body, {"Accept": "text/csv"}).get_data(as_text=True)
    rows = list(csv.reader(io.StringIO(table)))
    header, data = rows[0], rows[1:]
    assert len(data) == 9
    # every JSON leaf appears as a column with its unit, inputs first
    for key, value in doc["inputs"].items():
        column = header.index(f"input.{key} [{value['unit']}]" if isinstance(value, dict) else f"input.{key}")
        expected = value["value"] if isinstance(value, dict) else value
        assert [float(r[column]) for r in data] == pytest.approx(expected)
    first_output = header.index(next(h for h in header if not h.startswith("input.")))
    assert all(h.startswith("input.") for h in header[:first_output])


def test_gzip_when_accepted(client):
    body = BULK["/v1/atmosphere"](2000)
    r = post(client, "/v1/atmosphere", body, {"Accept-Encoding": "gzip"})
    assert r.headers["Content-Encoding"] == "gzip"
    small = post(client, "/v1/atmosphere", {"altitude": 0}, {"Accept-Encoding": "gzip"})
    assert "Content-Encoding" not in small.headers
    # both vary on Accept-Encoding (RFC 9110 12.5.5): a cache must not hand the gzipped answer to a client
    # that did not ask for it, nor the plain one to a client that did (service.SmallAnswersCompress)
    assert r.headers["Vary"] == small.headers["Vary"] == "Accept-Encoding"
    assert post(client, "/v1/atmosphere", {"altitude": 0}).headers["Vary"] == "Accept-Encoding"


@pytest.mark.parametrize("path", list(BULK))
@pytest.mark.parametrize("extra", [{}, {"grid": True}, {"significant_digits": 6}])
def test_json_streamed_is_the_document(client, monkeypatch, path, extra):
    """An array answer is streamed one output at a time (outputs.Result.json_chunks, for memory): the same bytes
    as the whole document in one orjson call, nested outputs, warnings and a grid's inputs included."""
    body = BULK[path](3) | extra
    streamed = post(client, path, body)
    assert streamed.status_code == 200, streamed.get_data(as_text=True)[:300]
    assert streamed.is_streamed and "Content-Length" not in streamed.headers  # chunked transfer encoding
    monkeypatch.setattr(outputs.Result, "json_chunks",
                        lambda self: [orjson.dumps(self.document(), option=orjson.OPT_SERIALIZE_NUMPY)])
    assert post(client, path, body).data == streamed.data


def test_a_stream_begins_only_once_every_output_is_checked(client):
    """A value finite in SI but not in the output unit (a wing area of 3.4e307 m2 is beyond the float range in
    ft2) is a 422 before the answer begins, as when the answer was written whole (a stream cannot turn into a
    422): the outputs are converted and checked before the first byte."""
    body = {"solve_for": "wing_area", "cl": [0.5, 1e-306], "weight": 21000, "mach": 0.6, "altitude": 35000}
    assert post(client, "/v1/lift/solve", body).status_code == 200
    response = post(client, "/v1/lift/solve", body | {"output_units": {"area": "ft2"}})
    problem = assert_problem(response, 422, "/wing_area")
    assert "wing_area is not a finite number here" in problem["detail"]


def test_a_streamed_answer_is_gzipped_when_accepted(client):
    body = BULK["/v1/atmosphere"](3)
    r = post(client, "/v1/atmosphere", body, {"Accept-Encoding": "gzip"})
    assert r.headers["Content-Encoding"] == "gzip"
    assert orjson.loads(gzip.decompress(r.data)) == post(client, "/v1/atmosphere", body).json
