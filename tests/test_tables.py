"""Tables in: CSV and Arrow bodies read into the JSON-shaped request, errors located by column and row."""

import numpy as np
import pyarrow as pa
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.api import table_readers, tables
from service.api.atmosphere import AtmosphereRequest
from service.api.lift.solve import LiftSolveRequest
from service.api.problems import Problem

SOLVE = LiftSolveRequest()
ATMOSPHERE = AtmosphereRequest()


def read(body, media_type=tables.CSV, schema=SOLVE, params=(), max_points=1000):
    return tables.read_table(body, media_type, schema, params, max_points=max_points)


def refused(body, status, media_type=tables.CSV, schema=SOLVE, params=(), max_points=1000) -> Problem:
    with pytest.raises(Problem) as info:
        read(body, media_type, schema, params, max_points)
    assert info.value.status == status, info.value.detail
    return info.value


def arrow_stream(table: pa.Table, **options) -> bytes:
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema, options=pa.ipc.IpcWriteOptions(**options)) as writer:
        writer.write_table(table)
    return sink.getvalue().to_pybytes()


# --- the JSON-shaped request ---------------------------------------------------------------------------

def test_csv_gives_the_json_request():
    table = read(b"mach,altitude [FL],weight [t]\r\n0.45,250,21\r\n0.5,300,22.5\r\n",
                 params=[("solve_for", "cl"), ("wing_area", "61"), ("outputs", '["cl","tas"]'),
                         ("output_units", '{"speed": "km/h"}')])
    data = table.data
    assert data.keys() == {"solve_for", "wing_area", "outputs", "output_units", "mach", "altitude", "weight"}
    assert data["solve_for"] == "cl" and data["wing_area"] == 61
    assert data["outputs"] == ["cl", "tas"] and data["output_units"] == {"speed": "km/h"}
    assert data["mach"].dtype == np.float64 and data["mach"].tolist() == [0.45, 0.5]
    assert data["altitude"]["unit"] == "FL" and data["altitude"]["value"].tolist() == [250.0, 300.0]
    assert data["weight"]["unit"] == "t" and data["weight"]["value"].tolist() == [21.0, 22.5]
    assert table.rows == 2


def test_integers_and_quoted_headers_and_no_final_line_break():
    data = read(b'"altitude [ft]",isa_deviation\n0,10\n5000,-5', schema=ATMOSPHERE).data
    assert data["altitude"]["value"].tolist() == [0.0, 5000.0]
    assert data["isa_deviation"].dtype == np.float64 and data["isa_deviation"].tolist() == [10.0, -5.0]


def test_a_byte_order_mark_is_not_part_of_the_first_header():
    data = read("\ufeffaltitude [FL]\n100\n".encode(), schema=ATMOSPHERE).data
    assert data["altitude"]["unit"] == "FL"


def test_arrow_with_units_in_the_names_or_in_the_metadata():
    schema = pa.schema([pa.field("altitude", pa.float64(), metadata={"unit": "FL"}),
                        pa.field("isa_deviation [K]", pa.int32()), pa.field("temperature", pa.float32())])
    table = pa.table([pa.array([100.0, 200.0]), pa.array([5, 10], pa.int32()),
                      pa.array([1.5, -3.25], pa.float32())], schema=schema)
    data = read(arrow_stream(table), tables.ARROW_STREAM, ATMOSPHERE).data
    assert data["altitude"] == {"value": data["altitude"]["value"], "unit": "FL"}
    assert data["altitude"]["value"].tolist() == [100.0, 200.0]
    assert data["isa_deviation"]["unit"] == "K" and data["isa_deviation"]["value"].tolist() == [5.0, 10.0]
    assert data["temperature"].dtype == np.float64 and data["temperature"].tolist() == [1.5, -3.25]


def test_arrow_in_several_batches():
    table = pa.table({"altitude [ft]": np.arange(10.0)})
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table, max_chunksize=3)
    data = read(sink.getvalue().to_pybytes(), tables.ARROW_STREAM, ATMOSPHERE).data
    assert data["altitude"]["value"].tolist() == list(np.arange(10.0))


def test_a_column_of_booleans():
    problem = refused(b"altitude\ntrue\nfalse\n", 422, schema=ATMOSPHERE)
    assert problem.errors[0]["message"] == "Not a number: a boolean."


def test_the_columns_are_writable_copies():
    data = read(b"altitude\n1\n2\n", schema=ATMOSPHERE).data
    data["altitude"][0] = 5.0  # nothing downstream may be handed a read-only view of the body
    assert data["altitude"].flags.owndata


# --- errors located by column and row ------------------------------------------------------------------

def test_bad_cells_name_column_row_and_line():
    problem = refused(b"mach,altitude [FL]\n0.45,250\n,abc\ntrue,1e400\nnan,300\n", 422)
    errors = {(e.get("column"), e.get("row")): e for e in problem.errors}
    assert errors[("mach", 1)]["pointer"] == "/mach/1"
    assert errors[("mach", 1)]["message"] == "Empty cell: give a number."
    assert errors[("mach", 2)]["message"] == "Not a number: 'true'."
    assert errors[("mach", 3)]["message"] == "Not a number: NaN."
    assert errors[("altitude [FL]", 1)]["pointer"] == "/altitude/value/1"
    assert errors[("altitude [FL]", 1)]["message"] == "Not a number: 'abc'."
    assert errors[("altitude [FL]", 2)]["message"] == "Number out of the floating-point range."
    assert "column 'mach', row 1 (line 3): Empty cell" in problem.detail


def test_only_the_first_cells_of_a_column_are_listed_and_echoes_are_short():
    body = b"altitude\n" + b"x" * 500 + b"\n" + b"abc\n" * 100
    problem = refused(body, 422, schema=ATMOSPHERE)
    assert len(problem.errors) == tables.MAX_CELL_ERRORS
    assert len(problem.errors[0]["message"]) < 80


@pytest.mark.parametrize(("body", "column", "words"), [
    (b"mach,foo\n1,2\n", "foo", "Unknown column 'foo'; the columns this endpoint takes are: weight,"),
    (b"mach,solve_for\n0.5,1\n", "solve_for", "not a column input: give it as a query parameter"),
    (b"mach [kt]\n0.5\n", "mach [kt]", "dimensionless"),
    (b"altitude [FL],altitude [ft]\n1,2\n", "altitude [ft]", "given twice"),
    (b"weight\n1\n", "weight", "both as a column and as a query parameter"),
])
def test_columns_that_are_not_inputs(body, column, words):
    problem = refused(body, 422, params=[("weight", "20000")])
    assert any(e["column"] == column and words in e["message"] for e in problem.errors), problem.errors


def test_query_parameters_are_located():
    table = read(b"mach\n0.5\n", params=[("solve_for", "cl"), ("weight", "heavy")])
    assert table.data["weight"] == "heavy"  # not JSON: a string, which the schema then refuses
    errors = table.locate_errors([{"pointer": "/weight", "message": "Not a number: a string."},
                                  {"pointer": "/mach/0", "message": "Must be below 5."},
                                  {"pointer": "/altitude", "message": "Missing data for required field."}])
    assert errors[0]["parameter"] == "weight"
    assert errors[1]["column"] == "mach" and errors[1]["row"] == 0
    assert "column" not in errors[2] and "parameter" not in errors[2]


def test_a_parameter_given_twice():
    problem = refused(b"mach\n0.5\n", 422, params=[("weight", "1"), ("weight", "2")])
    assert problem.errors[0] == {"pointer": "/weight", "parameter": "weight",
                                 "message": "Given more than once; give each query parameter once."}


def test_locate_rewrites_the_detail_of_a_schema_problem():
    from service.api.problems import invalid

    table = read(b"altitude [FL]\n100\n900\n", schema=ATMOSPHERE)
    problem = table.locate(invalid([{"pointer": "/altitude/value/1", "message": "Must be at most 510 FL."},
                                    {"pointer": "/altitude/unit", "message": "Unknown unit."}]))
    assert problem.errors[0] | {} == {"pointer": "/altitude/value/1", "message": "Must be at most 510 FL.",
                                      "column": "altitude [FL]", "row": 1}
    assert problem.errors[1]["column"] == "altitude [FL]" and "row" not in problem.errors[1]
    assert problem.detail == ("column 'altitude [FL]', row 1 (line 3): Must be at most 510 FL; "
                              "column 'altitude [FL]': Unknown unit.")


def test_no_rows():
    problem = refused(b"altitude\n", 422, schema=ATMOSPHERE)
    assert problem.errors == [{"pointer": "", "message": "The table has no rows: give at least one."}]


@pytest.mark.parametrize("body", [b"", b"a,b\n1\n", b"a,b\n1,2,3\n", b"\xff\xfe\x00a\n1\n"])
def test_not_a_csv_table(body):
    problem = refused(body, 400, schema=ATMOSPHERE)
    assert len(problem.detail) < 200


# --- bounded work before refusing ----------------------------------------------------------------------

def test_csv_rows_over_the_limit_are_refused_before_parsing(monkeypatch):
    def parse(*args, **kwargs):
        raise AssertionError("parsed")

    monkeypatch.setattr(table_readers.pa_csv, "read_csv", parse)
    problem = refused(b"altitude\n" + b"1\n" * 101, 413, schema=ATMOSPHERE, max_points=100)
    assert problem.extra == {"limit": 100}
    assert "101 lines" in problem.detail


def test_csv_rows_at_the_limit_are_read():
    assert read(b"altitude\n" + b"1\n" * 100, schema=ATMOSPHERE, max_points=100).rows == 100


def test_arrow_rows_over_the_limit_are_refused_before_the_batch_is_read(monkeypatch):
    body = arrow_stream(pa.table({"altitude": np.arange(101.0)}))

    def read_batch(*args, **kwargs):
        raise AssertionError("read")

    monkeypatch.setattr(table_readers.pa.ipc, "read_record_batch", read_batch)
    problem = refused(body, 413, tables.ARROW_STREAM, ATMOSPHERE, max_points=100)
    assert "101 rows" in problem.detail


@pytest.mark.parametrize("codec", ["zstd", "lz4"])
def test_compressed_arrow_buffers_are_refused(codec):
    body = arrow_stream(pa.table({"altitude": np.zeros(1000)}), compression=codec)
    problem = refused(body, 400, tables.ARROW_STREAM, ATMOSPHERE)
    assert "compressed" in problem.detail


@pytest.mark.parametrize("rows", [0, 1, 7, 1000])
def test_the_batch_header_gives_the_length(rows):
    batch = pa.record_batch({"altitude": np.zeros(rows), "mach": np.ones(rows)})
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, batch.schema) as writer:
        writer.write_batch(batch)
    body = sink.getvalue()
    reader = pa.ipc.MessageReader.open_stream(pa.BufferReader(body))
    reader.read_next_message()
    assert table_readers._message_header(reader.read_next_message().metadata.to_pybytes()) == (3, rows, False)


# --- Arrow types and nulls -----------------------------------------------------------------------------

@pytest.mark.parametrize("array", [pa.array(["1", "2"]), pa.array([True, False]),
                                   pa.array(["a", "b"]).dictionary_encode(), pa.array([[1.0], [2.0]])])
def test_arrow_columns_that_are_not_numbers(array):
    body = arrow_stream(pa.table({"altitude": array}))
    problem = refused(body, 422, tables.ARROW_STREAM, ATMOSPHERE)
    assert problem.errors[0]["column"] == "altitude" and "give numbers" in problem.errors[0]["message"]


def test_arrow_nulls_and_nan_are_located():
    body = arrow_stream(pa.table({"altitude [ft]": pa.array([0.0, None, 3.0]),
                                  "isa_deviation": pa.array([0.0, 1.0, float("nan")])}))
    problem = refused(body, 422, tables.ARROW_STREAM, ATMOSPHERE)
    assert {(e["pointer"], e["row"], e["message"]) for e in problem.errors} == {
        ("/altitude/value/1", 1, "Null: give a number."), ("/isa_deviation/2", 2, "Not a number: NaN.")}
    assert "(line" not in problem.detail  # rows of an Arrow table have no lines


def test_arrow_unit_in_name_and_metadata_must_agree():
    schema = pa.schema([pa.field("altitude [ft]", pa.float64(), metadata={"unit": "m"})])
    body = arrow_stream(pa.table([pa.array([1.0])], schema=schema))
    problem = refused(body, 422, tables.ARROW_STREAM, ATMOSPHERE)
    assert "give one unit" in problem.errors[0]["message"]


@settings(max_examples=60, deadline=None)
@given(cut=st.integers(min_value=0, max_value=400), noise=st.binary(max_size=64))
def test_damaged_arrow_streams_are_a_4xx(cut, noise):
    good = arrow_stream(pa.table({"altitude [ft]": np.arange(20.0), "isa_deviation": np.arange(20.0)}))
    for body in (good[:cut], good[:cut] + noise, noise):
        try:
            read(body, tables.ARROW_STREAM, ATMOSPHERE)
        except Problem as problem:
            assert 400 <= problem.status < 500


# --- tables at every compute endpoint: the same answer as the JSON request -----------------------------

import csv  # noqa: E402
import io  # noqa: E402
import json  # noqa: E402
from urllib.parse import urlencode  # noqa: E402

from tests.helpers import assert_problem, differences, post  # noqa: E402
from tests.test_bulk import BULK  # noqa: E402


def split(body: dict) -> tuple[dict[str, object], dict]:
    """A JSON request's array inputs (the table's columns, with their unit) and the rest (query parameters)."""
    columns, options = {}, {}
    for name, value in body.items():
        if isinstance(value, list) and name not in ("outputs", "speed_factors"):
            columns[name] = value
        elif isinstance(value, dict) and isinstance(value.get("value"), list) and set(value) == {"value", "unit"}:
            columns[f"{name} [{value['unit']}]"] = value["value"]
        else:
            options[name] = value
    return columns, options


def as_csv(columns: dict) -> bytes:
    lines = [",".join(columns)] + [",".join(repr(float(v)) for v in row) for row in zip(*columns.values(), strict=True)]
    return ("\r\n".join(lines) + "\r\n").encode()


def as_arrow(columns: dict) -> bytes:
    return arrow_stream(pa.table({name: pa.array(values, pa.float64()) for name, values in columns.items()}))


def endpoint(key: str) -> str:
    """The address of a BULK key ("/v1/atmosphere#humid" is a variant of /v1/atmosphere)."""
    return key.partition("#")[0]


def query(options: dict) -> str:
    return "?" + urlencode({name: value if isinstance(value, str) else json.dumps(value)
                            for name, value in options.items()}) if options else ""


@pytest.mark.parametrize("path", list(BULK))
@pytest.mark.parametrize("media_type", [tables.CSV, tables.ARROW_STREAM])
def test_a_table_gets_the_json_answer(client, path, media_type):
    body = BULK[path](5)
    columns, options = split(body)
    assert columns, "the bulk request has array inputs"
    data = as_csv(columns) if media_type == tables.CSV else as_arrow(columns)
    # (a BULK key may carry a variant after '#', which is not part of the address: the query goes before it)
    response = client.post(endpoint(path) + query(options), data=data, content_type=media_type)
    assert response.status_code == 200, response.get_data(as_text=True)[:400]
    assert response.json == post(client, path, body).json


@pytest.mark.parametrize("path", list(BULK))
def test_a_table_in_arrow_out(client, path):
    body = BULK[path](5)
    columns, options = split(body)
    response = client.post(endpoint(path) + query(options), data=as_arrow(columns), content_type=tables.ARROW_STREAM,
                           headers={"Accept": tables.ARROW_STREAM})
    assert response.status_code == 200
    expected = post(client, path, body, {"Accept": tables.ARROW_STREAM}).data
    assert pa.ipc.open_stream(response.data).read_all().equals(pa.ipc.open_stream(expected).read_all())


def test_the_cookbook_schedule_as_a_csv_table(client):
    """The climb schedule of cookbook scenario 4, its flight levels sent as a CSV column."""
    response = client.post('/v1/airspeed/schedule?cas=290&mach=0.76&isa_deviation=10&outputs=["governing","cas"]',
                           data=b"altitude [FL]\n50\n300\n350\n", content_type="text/csv; charset=utf-8",
                           headers={"Accept": "text/csv"})
    assert response.status_code == 200
    rows = list(csv.reader(io.StringIO(response.get_data(as_text=True))))
    assert rows[0] == ["input.cas [kt]", "input.mach", "input.altitude [ft]", "input.isa_deviation [K]",
                       "governing", "cas [kt]"]
    assert [row[4] for row in rows[1:]] == ["cas", "mach", "mach"]


def test_a_grid_from_a_table_and_a_parameter(client):
    response = client.post('/v1/atmosphere?grid=true&qnh=[995,1013]&outputs=["pressure_altitude"]',
                           data=b"altitude [ft],temperature\n7200,20\n", content_type="text/csv")
    expected = post(client, "/v1/atmosphere", {"altitude": 7200, "temperature": [20], "qnh": [995, 1013],
                                               "grid": True, "outputs": ["pressure_altitude"]})
    assert response.status_code == 200 and response.json["pressure_altitude"] == expected.json["pressure_altitude"]


def test_schema_errors_name_column_and_row(client):
    response = client.post("/v1/atmosphere", data=b"altitude [FL],isa_deviation\n100,0\n9000,5\n200,500\n",
                           content_type="text/csv")
    doc = assert_problem(response, 422)
    located = {(e["column"], e["row"]) for e in doc["errors"]}
    assert located == {("altitude [FL]", 1), ("isa_deviation", 2)}
    assert {e["pointer"] for e in doc["errors"]} == {"/altitude/value/1", "/isa_deviation/2"}
    assert "column 'altitude [FL]', row 1 (line 3)" in doc["detail"]


def test_an_unknown_unit_in_a_header(client):
    doc = assert_problem(client.post("/v1/atmosphere", data=b"altitude [feet]\n100\n", content_type="text/csv"), 422)
    assert doc["errors"][0]["column"] == "altitude [feet]" and "allowed: m, ft, km, FL" in doc["errors"][0]["message"]


def test_errors_in_parameters_are_located(client):
    response = client.post("/v1/lift/solve?solve_for=cl&weight=heavy&wing_area=61", data=b"mach,altitude\n0.5,0\n",
                           content_type="text/csv")
    doc = assert_problem(response, 422, "/weight")
    assert doc["errors"][0]["parameter"] == "weight"
    assert doc["detail"].startswith("query parameter 'weight':")


def test_a_view_error_is_located_too(client):
    """Array lengths are checked after the schema (Inputs.arrange): a table column against a parameter array."""
    response = client.post("/v1/atmosphere?isa_deviation=[1,2,3]", data=b"altitude\n0\n1000\n", content_type="text/csv")
    doc = assert_problem(response, 422)
    assert {e.get("column") or e.get("parameter") for e in doc["errors"]} == {"altitude", "isa_deviation"}


def test_rows_over_the_point_limit(client, app):
    app.config["QBAR_MAX_POINTS"] = 10
    doc = assert_problem(client.post("/v1/atmosphere", data=b"altitude\n" + b"0\n" * 11, content_type="text/csv"), 413)
    assert doc["limit"] == 10


def test_a_body_over_the_size_limit(client, app):
    app.config["QBAR_MAX_BODY_BYTES"] = 100
    assert_problem(client.post("/v1/atmosphere", data=b"altitude\n" + b"0\n" * 100, content_type="text/csv"), 413)


@pytest.mark.parametrize(("content_type", "status"), [
    ("text/csv; charset=latin-1", 415), ("text/plain", 415), ("application/vnd.apache.arrow.file", 415),
    ("text/csv; charset=UTF-8", 200)])
def test_media_types(client, content_type, status):
    response = client.post("/v1/atmosphere", data=b"altitude\n0\n", content_type=content_type)
    assert response.status_code == status


def test_query_parameters_with_a_json_body_are_refused(client):
    response = client.post("/v1/atmosphere?outputs=[\"pressure\"]", data=b'{"altitude": 0}',
                           content_type="application/json")
    assert "read only with a table body" in assert_problem(response, 422, "")["detail"]


@pytest.mark.parametrize("body", [b"", b"altitude\n", b"a,b\n1,2,3\n", b"\x00\x01garbage"])
def test_bad_tables_are_problem_documents(client, body):
    for media_type in (tables.CSV, tables.ARROW_STREAM):
        response = client.post("/v1/atmosphere", data=body, content_type=media_type)
        assert 400 <= response.status_code < 500
        assert_problem(response, response.status_code)


def test_pandas_frame_to_csv_is_a_valid_body(client):
    """A table an operations system writes with pandas, as it comes."""
    import pandas as pd

    frame = pd.DataFrame({"cas [kt]": [250.0, 280.0], "altitude [FL]": [240, 330]})
    text = io.StringIO()
    frame.to_csv(text, index=False)
    response = client.post('/v1/airspeed?isa_deviation=12&outputs=["mach"]', data=text.getvalue().encode(),
                           content_type="text/csv")
    expected = post(client, "/v1/airspeed", {"cas": [250, 280], "altitude": {"value": [240, 330], "unit": "FL"},
                                             "isa_deviation": 12, "outputs": ["mach"]})
    assert response.json == expected.json


def _spec():
    from service import create_app

    return create_app({"TESTING": True}).test_client().get("/openapi.json").json


SPEC_EXAMPLES = [(path, name, op["post"]["requestBody"]["content"])
                 for path, op in _spec()["paths"].items() if "post" in op
                 for name in op["post"]["requestBody"]["content"]["text/csv"].get("examples", {})]


@pytest.mark.parametrize(("path", "name", "content"), SPEC_EXAMPLES, ids=[f"{p} {n}" for p, n, _ in SPEC_EXAMPLES])
def test_the_spec_table_examples_give_the_json_examples_answers(client, path, name, content):
    from urllib.parse import parse_qsl

    example = content["text/csv"]["examples"][name]
    query = example["description"].removeprefix("With the query string `").removesuffix("`.")
    params = parse_qsl(query.removeprefix("?")) if query.startswith("?") else []
    response = client.post(path, query_string=params, data=example["value"].encode(), content_type="text/csv")
    assert response.status_code == 200, response.get_data(as_text=True)
    expected = post(client, path, content["application/json"]["examples"][name]["value"]).json
    # a one-row table gives arrays of one; the array path and the single-point path agree to the last digits
    assert differences(squeeze(response.json), squeeze(expected)) == []


def squeeze(node):
    """Arrays of one element as that element, everywhere in a JSON document."""
    if isinstance(node, dict):
        return {key: squeeze(value) for key, value in node.items() if key != "indices"}
    if isinstance(node, list):
        return squeeze(node[0]) if len(node) == 1 else [squeeze(value) for value in node]
    return node


def test_every_compute_operation_documents_the_table_bodies():
    for op in _spec()["paths"].values():
        if "post" in op:
            content = op["post"]["requestBody"]["content"]
            assert content["text/csv"]["schema"]["description"].startswith("The array inputs as a table")
            assert content[tables.ARROW_STREAM]["schema"]["format"] == "binary"


@pytest.mark.parametrize("media_type", [tables.CSV, tables.ARROW_STREAM])
def test_python_calls_do_not_grow_with_rows(client, media_type):
    """A table of 10 rows and one of 100,000 rows cost the same number of Python function calls."""
    from tests.helpers import count_calls

    def body(n):
        columns = {"altitude [ft]": np.linspace(0, 40000, n).tolist(),
                   "isa_deviation": np.linspace(-20, 20, n).tolist()}
        return as_csv(columns) if media_type == tables.CSV else as_arrow(columns)

    small, large = body(10), body(100_000)

    def run(data):
        response = client.post('/v1/atmosphere?outputs=["pressure"]', data=data, content_type=media_type)
        assert response.status_code == 200, response.get_data(as_text=True)[:300]

    run(small)
    assert count_calls(lambda: run(small)) == count_calls(lambda: run(large))
