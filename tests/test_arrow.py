"""Arrow (and Parquet) answers: the writer's columns, names, units, nulls and warnings, read back by pyarrow
and pandas."""

import io
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import orjson
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from service.api import arrow, outputs
from service.api.arrow import Column

WARNINGS = [{"field": "density_altitude", "message": "Outside the model's range.", "count": 1, "indices": [2]}]


def columns(n=3):
    altitude = np.linspace(0.0, 40000.0, n)
    density_altitude = np.linspace(100.0, 41000.0, n)
    density_altitude[2 % n] = np.nan
    null = np.zeros(n, dtype=bool)
    null[2 % n] = True
    return [
        Column("input.altitude", "ft", altitude),
        Column("density_altitude", "ft", density_altitude, null),
        Column("atmosphere.pressure", "hPa", np.linspace(1013.25, 187.5, n)),
        Column("pressure_ratio", None, np.linspace(1.0, 0.185, n)),
        Column("beyond_stall", None, np.arange(n) % 2 == 1),
        Column("governing", None, np.where(np.arange(n) < 1, "cas", "mach")),
    ]


def joined(media_type, columns, warnings) -> bytes:
    """The writer's body: its chunks, as the server sends them one after the other (once)."""
    body = arrow.body(media_type, columns, warnings)
    chunks = list(body)
    assert all(type(chunk) is bytes for chunk in chunks)  # what a WSGI server writes
    assert sum(map(len, chunks)) == body.length  # its Content-Length
    assert list(body) == []  # each chunk let go once sent
    return b"".join(chunks)


def read_stream(body: bytes) -> pa.Table:
    return pa.ipc.open_stream(body).read_all()


def test_names_units_and_types():
    table = read_stream(joined(arrow.ARROW_STREAM, columns(), WARNINGS))
    assert table.column_names == ["input.altitude [ft]", "density_altitude [ft]", "atmosphere.pressure [hPa]",
                                  "pressure_ratio", "beyond_stall", "governing"]
    units = [(f.metadata or {}).get(b"unit") for f in table.schema]
    assert units == [b"ft", b"ft", b"hPa", None, None, None]
    names = [f.metadata[b"name"] for f in table.schema]
    assert names == [b"input.altitude", b"density_altitude", b"atmosphere.pressure", b"pressure_ratio",
                     b"beyond_stall", b"governing"]
    assert [f.type for f in table.schema] == [pa.float64()] * 4 + [pa.bool_(), pa.string()]
    assert table.column("governing").to_pylist() == ["cas", "mach", "mach"]
    assert table.column("beyond_stall").to_pylist() == [False, True, False]


def test_nulls_where_json_has_null_and_no_nan_in_the_body():
    body = joined(arrow.ARROW_STREAM, columns(), WARNINGS)
    table = read_stream(body)
    assert table.column("density_altitude [ft]").to_pylist() == [100.0, 20550.0, None]
    assert table.column("density_altitude [ft]").null_count == 1
    data = table.column("density_altitude [ft]").chunk(0).buffers()[1]
    assert not np.isnan(np.frombuffer(data, dtype=np.float64)).any()  # the value under the null is 0
    assert np.frombuffer(np.float64(np.nan).tobytes(), dtype=np.uint8).tobytes() not in body


def test_warnings_in_the_schema_metadata():
    table = read_stream(joined(arrow.ARROW_STREAM, columns(), WARNINGS))
    assert orjson.loads(table.schema.metadata[b"warnings"]) == WARNINGS
    empty = read_stream(joined(arrow.ARROW_STREAM, columns(), []))
    assert orjson.loads(empty.schema.metadata[b"warnings"]) == []


def test_float_columns_are_not_copied():
    values = np.linspace(0.0, 1.0, 1000)
    batch = arrow.record_batch([Column("pressure_ratio", None, values)], [])
    assert batch.column(0).buffers()[1].address == values.ctypes.data


def test_a_scalar_answer_is_one_row():
    batch = arrow.record_batch([Column("mach", None, np.float64(0.78)), Column("cas", "kt", np.float64(280.0))], [])
    assert batch.num_rows == 1
    assert batch.to_pylist() == [{"mach": 0.78, "cas [kt]": 280.0}]


def test_broadcast_and_strided_values():
    base = np.arange(10.0)
    batch = arrow.record_batch([Column("a", None, base[::2]), Column("b", "kt", np.broadcast_to(3.0, (5,)))], [])
    assert batch.column(0).to_pylist() == [0.0, 2.0, 4.0, 6.0, 8.0]
    assert batch.column(1).to_pylist() == [3.0] * 5


def test_pandas_reads_the_stream_with_nulls_as_nan():
    frame = pa.ipc.open_stream(joined(arrow.ARROW_STREAM, columns(), WARNINGS)).read_pandas()
    assert list(frame.columns) == ["input.altitude [ft]", "density_altitude [ft]", "atmosphere.pressure [hPa]",
                                   "pressure_ratio", "beyond_stall", "governing"]
    assert frame["density_altitude [ft]"].isna().tolist() == [False, False, True]
    assert frame["input.altitude [ft]"].tolist() == [0.0, 20000.0, 40000.0]


def test_parquet_holds_the_same_table():
    body = joined(arrow.PARQUET, columns(), WARNINGS)
    assert body[:4] == b"PAR1"
    table = pq.read_table(io.BytesIO(body))
    assert table.equals(read_stream(joined(arrow.ARROW_STREAM, columns(), WARNINGS)))
    assert orjson.loads(table.schema.metadata[b"warnings"]) == WARNINGS
    assert table.schema.field("atmosphere.pressure [hPa]").metadata[b"unit"] == b"hPa"
    frame = pd.read_parquet(io.BytesIO(body))
    assert frame["density_altitude [ft]"].isna().sum() == 1


@pytest.mark.parametrize("name", ["multiples.0.tas", "stall.cas", "input.altitude"])
def test_header_is_the_csv_header(name):
    assert arrow.header(name, "kt") == f"{name} [kt]"


# --- Arrow and Parquet answers of every compute endpoint, value for value against JSON ---------------

from service.api import examples  # noqa: E402
from tests.helpers import assert_problem, count_calls, post  # noqa: E402
from tests.test_bulk import BULK  # noqa: E402

ARROW = arrow.ARROW_STREAM
#: Python calls that padding may add or save (see test_python_calls_do_not_grow_with_points).
PADDING_CALLS = 20
TQ62_TABLE = {"ias": [120, 160, 200, 240, 280, 320], "cas": [123, 162, 201, 240, 278.5, 317]}

#: Requests per endpoint: the spec's examples, a bulk request, its grid, and answers with nulls and warnings.
REQUESTS = {
    "/v1/atmosphere": [*(e["value"] for e in examples.ATMOSPHERE.values()),
                       {"altitude": [-16000, 0], "isa_deviation": -60}],  # density altitude null at point 0
    "/v1/airspeed": [*(e["value"] for e in examples.AIRSPEED.values()),
                     {"cas": [100, 200, 400, 317], "altitude": 5000, "calibration": TQ62_TABLE}],  # ias null
    "/v1/airspeed/crossover": [e["value"] for e in examples.CROSSOVER.values()],
    "/v1/airspeed/schedule": [e["value"] for e in examples.SCHEDULE.values()],
    "/v1/lift/solve": [*(e["value"] for e in examples.LIFT_SOLVE.values()),
                       {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": [0.5, 0.8, 1.2],
                        "altitude": 35000, "wing": {"aspect_ratio": 11, "sweep_half_chord": 0}}],  # alpha null
    "/v1/lift/stall": [e["value"] for e in examples.LIFT_STALL.values()],
    "/v1/lift/curve": [e["value"] for e in examples.LIFT_CURVE.values()],
}
CASES = [(path, body) for path, bodies in REQUESTS.items()
         for body in [*bodies, BULK[path](4), BULK[path](3) | {"grid": True}]]


def json_columns(doc: dict) -> dict[str, list]:
    """The JSON answer flattened the way CSV and Arrow name columns: {header: values per point}."""
    out = {}

    def walk(prefix, node):
        if isinstance(node, dict) and set(node) == {"value", "unit"}:
            out[f"{prefix} [{node['unit']}]"] = node["value"]
        elif isinstance(node, dict):
            for key, value in node.items():
                walk(f"{prefix}.{key}" if prefix else key, value)
        elif isinstance(node, list) and node and isinstance(node[0], dict):
            for index, value in enumerate(node):
                walk(f"{prefix}.{index}", value)
        else:
            out[prefix] = node

    for name, value in (doc.get("inputs") or {}).items():
        walk(f"input.{name}", value)
    walk("", {k: v for k, v in doc.items() if k not in ("inputs", "warnings", "solved_for")})
    return out


def same(arrow_values: list, json_values) -> bool:
    if not isinstance(json_values, list):
        json_values = [json_values] * len(arrow_values)
    return len(arrow_values) == len(json_values) and all(
        (a is None and j is None) or (a is not None and j is not None and (a == j or abs(a - j) <= 1e-12 * abs(j)))
        if not isinstance(j, (str, bool)) else a == j for a, j in zip(arrow_values, json_values, strict=True))


@pytest.mark.parametrize(("path", "body"), CASES)
def test_arrow_answer_is_the_json_answer(client, path, body):
    doc = post(client, path, body).json
    response = post(client, path, body, {"Accept": ARROW})
    assert response.status_code == 200, response.get_data(as_text=True)[:300]
    assert response.mimetype == ARROW
    assert response.headers["Content-Length"] == str(len(response.data))
    table = pa.ipc.open_stream(response.data).read_all()
    expected = json_columns(doc)
    grid_inputs = {name for name in table.column_names if name.startswith("input.")}
    outputs = [name for name in table.column_names if name not in grid_inputs]
    assert outputs == [name for name in expected if not name.startswith("input.")]  # same columns, same order
    for name in table.column_names:
        values = table.column(name).to_pylist()
        if name in expected:
            assert same(values, expected[name]), name
    if doc.get("inputs"):  # a grid: every input at every point, as the JSON `inputs`
        assert grid_inputs == {name for name in expected if name.startswith("input.")}
    assert orjson.loads(table.schema.metadata[b"warnings"]) == doc["warnings"]
    assert response.headers.get("X-Warnings") == (str(len(doc["warnings"])) if doc["warnings"] else None)
    for field in table.schema:
        unit = field.name.rsplit(" [", 1)[1][:-1] if field.name.endswith("]") else None
        assert (field.metadata or {}).get(b"unit") == (unit.encode() if unit else None)


@pytest.mark.parametrize(("path", "body"), CASES[::3])
def test_pandas_reads_the_same_numbers(client, path, body):
    doc = post(client, path, body).json
    expected = json_columns(doc)
    stream = pa.ipc.open_stream(post(client, path, body, {"Accept": ARROW}).data).read_pandas()
    parquet = pd.read_parquet(io.BytesIO(post(client, path, body, {"Accept": arrow.PARQUET}).data))
    for frame in (stream, parquet):
        for name, values in expected.items():
            column = frame[name].tolist()
            column = [None if isinstance(v, float) and np.isnan(v) else v for v in column]
            assert same(column, values), name


@pytest.mark.parametrize(("accept", "answer"), [
    ("application/vnd.apache.arrow.stream", ARROW),
    ("application/json;q=0.5, application/vnd.apache.arrow.stream", ARROW),
    ("text/csv;q=0.2, application/vnd.apache.arrow.stream;q=0.9", ARROW),
    ("application/vnd.apache.parquet, text/csv;q=0.9", arrow.PARQUET),
    ("application/*", "application/json"),  # JSON first among equals
])
def test_accept_negotiation(client, accept, answer):
    response = post(client, "/v1/atmosphere", {"altitude": 0}, {"Accept": accept})
    assert response.status_code == 200
    assert response.mimetype == answer


def test_406_lists_the_media_types(client):
    response = post(client, "/v1/atmosphere", {"altitude": 0}, {"Accept": "application/xml"})
    assert response.status_code == 406
    assert ARROW in response.json["detail"] and arrow.PARQUET in response.json["detail"]


@pytest.mark.parametrize("path", list(BULK))
def test_python_calls_do_not_grow_with_points(app, path):
    """10 points and 100,000 points cost the same number of Python function calls, as Arrow, but for the
    padding: the stream writer hands each buffer, and each padding to 8 bytes, to the body's Python sink,
    and whether a buffer of booleans or strings needs padding depends on its length (a few calls per
    column at most; a call per point would be 100,000)."""
    app.config["QBAR_MAX_POINTS"] = 400_000  # the stall request: 100,000 points x (1 + 3 speed factors)
    client = app.test_client()
    small, large = BULK[path](10), BULK[path](100_000)
    headers = {"Accept": ARROW}
    post(client, path, small, headers)

    def run(body):
        response = post(client, path, body, headers)
        assert response.status_code == 200, response.get_data(as_text=True)[:300]

    assert abs(count_calls(lambda: run(small)) - count_calls(lambda: run(large))) <= PADDING_CALLS


def test_errors_stay_problem_documents(client):
    response = post(client, "/v1/atmosphere", {"altitude": True}, {"Accept": ARROW})
    assert response.status_code == 422 and response.mimetype == "application/problem+json"


def test_an_arrow_answer_does_not_import_pandas():
    """pa.array looks for pandas and imports it when installed (a test-only dependency here, 50 MB in a worker):
    the answer's arrays are built from their buffers instead. A fresh interpreter, as a worker is."""
    code = ("import json, sys\n"
            "from service import create_app\n"
            "client = create_app({'TESTING': True}).test_client()\n"
            "body = {'weight': [15000, 23000], 'wing_area': 61, 'cl_max': 1.6, 'altitude': [0, 3000],\n"
            "        'speed_factors': [0.9, 1.3], 'cas': [80, 180]}\n"
            "r = client.post('/v1/lift/stall', data=json.dumps(body), content_type='application/json',\n"
            "                headers={'Accept': 'application/vnd.apache.arrow.stream'})\n"
            "assert r.status_code == 200 and r.data, r.status_code\n"
            "print('pandas' in sys.modules)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         cwd=Path(__file__).resolve().parent.parent, env=dict(os.environ, QBAR_LOG_LEVEL="warning"))
    assert out.stdout.strip() == "False", out.stderr[-2000:]


def test_a_column_made_as_it_is_sent_replaces_its_stand_in():
    """A column converted to the caller's unit only when it is sent (Column.later): the stand-in (its SI values)
    fixes the stream's header, the values made later fill it; the same bytes as the values given at once."""
    stand_in = np.array([0.0, 1000.0, 2000.0])
    null = np.array([False, True, False])

    def later():
        return stand_in / 0.3048

    columns = [Column("input.altitude", "m", stand_in), Column("pressure_altitude", "ft", stand_in, null, later),
               Column("pressure_ratio", None, np.array([1.0, 0.9, 0.8]))]
    body = joined(arrow.ARROW_STREAM, columns, WARNINGS)
    assert read_stream(body).column("pressure_altitude [ft]").to_pylist() == [0.0, None, 2000.0 / 0.3048]
    at_once = [column._replace(values=later(), later=None) if column.later else column for column in columns]
    assert body == joined(arrow.ARROW_STREAM, at_once, WARNINGS)
    parquet = pq.read_table(io.BytesIO(joined(arrow.PARQUET, columns, WARNINGS)))
    assert parquet.column("pressure_altitude [ft]").to_pylist() == [0.0, None, 2000.0 / 0.3048]


@pytest.mark.parametrize(("path", "body"), CASES)
def test_columns_converted_as_sent_are_the_same_bytes(client, monkeypatch, path, body):
    """The answers' columns in other units than SI are converted as they are sent (for memory): the same stream as
    when every column was converted before the writing began."""
    sent = post(client, path, body, {"Accept": ARROW})
    assert sent.status_code == 200, sent.get_data(as_text=True)[:300]
    columns = outputs.Result.columns
    monkeypatch.setattr(outputs.Result, "columns", lambda self, later=False: columns(self))
    assert post(client, path, body, {"Accept": ARROW}).data == sent.data


@pytest.mark.parametrize("extra", [{"significant_digits": 4}, {"output_units": {"altitude": "m", "speed": "km/h"}}])
def test_columns_rounded_or_in_other_units_as_sent_are_the_same_bytes(client, monkeypatch, extra):
    body = BULK["/v1/airspeed"](50) | extra
    sent = post(client, "/v1/airspeed", body, {"Accept": ARROW})
    assert sent.status_code == 200, sent.get_data(as_text=True)[:300]
    columns = outputs.Result.columns
    monkeypatch.setattr(outputs.Result, "columns", lambda self, later=False: columns(self))
    assert post(client, "/v1/airspeed", body, {"Accept": ARROW}).data == sent.data


def test_a_column_is_checked_in_its_unit_before_the_stream_begins(client):
    """A wing area of 3.4e307 m2 is finite, but not in ft2: a 422 before any byte, as for JSON."""
    body = {"solve_for": "wing_area", "cl": [0.5, 1e-306], "weight": 21000, "mach": 0.6, "altitude": 35000}
    assert post(client, "/v1/lift/solve", body, {"Accept": ARROW}).status_code == 200
    response = post(client, "/v1/lift/solve", body | {"output_units": {"area": "ft2"}}, {"Accept": ARROW})
    assert "wing_area is not a finite number here" in assert_problem(response, 422, "/wing_area")["detail"]


@pytest.mark.parametrize("accept", ["application/json", "text/csv", ARROW, arrow.PARQUET])
def test_an_unforeseen_non_finite_output_is_a_422_in_every_format(client, monkeypatch, accept):
    # The safety net of outputs.Result (README, errors): an output that is not finite where no null_where made it
    # null is a no-solution 422, in tables as in JSON, never an empty cell or an Arrow NaN. No valid input makes
    # the turn relations overflow, so the physics the endpoint calls is replaced by one that does; the call is
    # counted, so that a change in what the endpoint calls fails here rather than passing without the check.
    from service.api.lift import turn as turn_api

    real, calls = turn_api.level_turn, []

    def overflowing(*args, **kwargs):
        calls.append(1)
        turn = real(*args, **kwargs)
        return turn._replace(turn_rate=np.where(np.arange(np.size(turn.turn_rate)) == 1, np.inf,
                                                turn.turn_rate).reshape(np.shape(turn.turn_rate)))

    monkeypatch.setattr(turn_api, "level_turn", overflowing)
    response = post(client, "/v1/lift/turn", {"tas": [150, 200], "bank_angle": 30, "altitude": 5000},
                    {"Accept": accept})
    assert calls and response.status_code == 422, response.status_code
    doc = response.get_json()
    assert doc["type"] == "/problems/no-solution" and doc["field"] == "turn_rate" and doc["indices"] == [1]
