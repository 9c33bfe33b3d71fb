"""Answers bounded by the request's worth: hostile bodies get short problem documents, never a 500.

Through the Flask test client (the server's own cases are in tests/test_ops_server.py). Each
request here makes hundreds of thousands of bad entries, or echoes megabytes, or nests, or cannot
be encoded; the answer stays a short 4xx problem document, and the work before it is bounded (the
structure check refuses an object of 300 000 members before the schema looks at any of them).
"""

from __future__ import annotations

import json
import logging

import orjson
import pytest

from service import create_app
from service.api.problems import MAX_ECHO, MAX_ERRORS, MAX_TEXT, flatten_messages, invalid
from service.api.request_body import MAX_JSON_DEPTH, MAX_MEMBERS
from service.logs import JsonFormatter

LIMIT = 16 * 1024 * 1024
MAX_DOCUMENT = 4096  # bytes: MAX_ERRORS entries of bounded pointers and messages, and the rest


@pytest.fixture(scope="module")
def client():
    """A test client with a body limit large enough for the floods below."""
    return create_app({"TESTING": True, "QBAR_MAX_BODY_BYTES": LIMIT}).test_client()


def send(client, body, path="/v1/atmosphere"):
    data = body if isinstance(body, bytes) else orjson.dumps(body)
    assert len(data) <= LIMIT
    response = client.post(path, data=data, content_type="application/json")
    assert 400 <= response.status_code < 500, response.get_data()[:500]
    assert response.mimetype == "application/problem+json"
    raw = response.get_data()
    assert len(raw) <= MAX_DOCUMENT, len(raw)
    doc = json.loads(raw)  # strict JSON, whatever the input held
    assert len(doc.get("errors", ())) <= MAX_ERRORS
    for text in [doc["detail"], *(e["message"] for e in doc.get("errors", ())),
                 *(e["pointer"] for e in doc.get("errors", ()))]:
        assert len(text) <= MAX_TEXT
    return response.status_code, doc


@pytest.mark.parametrize(("body", "pointer"), [
    ({"altitude": 1000, **{f"x{i}": 1 for i in range(300_000)}}, ""),           # 300 000 unknown fields
    ({"altitude": 1000, "outputs": ["nope"] * 300_000}, "/outputs"),            # 300 000 unknown outputs
    ({"altitude": 1000, "output_units": {f"d{i}": "m" for i in range(200_000)}}, "/output_units"),
    ({"altitude": {"value": 1000, "unit": "ft", **{f"u{i}": 0 for i in range(200_000)}}}, "/altitude"),
])
def test_a_flood_of_bad_entries_is_one_short_answer(client, body, pointer):
    status, doc = send(client, body)
    assert status == 422
    assert [e["pointer"] for e in doc["errors"]] == [pointer]
    assert str(MAX_MEMBERS) in doc["errors"][0]["message"]


def test_errors_beyond_the_cap_are_counted_not_listed(client):
    body = {"altitude": 1000, **{f"unknown_{i}": 1 for i in range(MAX_MEMBERS - 1)}}
    status, doc = send(client, body)
    assert status == 422
    assert len(doc["errors"]) == MAX_ERRORS
    assert doc["errors_omitted"] == MAX_MEMBERS - 1 - MAX_ERRORS
    assert doc["detail"].endswith(f"and {MAX_MEMBERS - 1 - 5} more.")


@pytest.mark.parametrize(("body", "listed"), [
    ({"altitude": 1000, "outputs": ["temperature", *(f"nope{i}" for i in range(30)), 7]}, "; valid: "),
    ({"altitude": 1000, "output_units": {f"d{i}": "m" for i in range(30)}}, "; allowed: "),
])
def test_a_long_list_of_valid_names_is_said_once_not_per_entry(client, body, listed):
    """Each bad name is an entry of its own, but the valid names (hundreds of characters) come once, in the first
    of them: 30 bad names make an answer of a few KiB, not thirty copies of the list."""
    status, doc = send(client, body)
    assert status == 422 and len(doc["errors"]) == MAX_ERRORS
    with_list = [e for e in doc["errors"] if listed in e["message"]]
    assert len(with_list) == 1 and with_list[0] is doc["errors"][0]
    assert len(json.dumps(doc)) < 4096


def test_flattening_stops_building_entries_at_the_cap():
    messages = {f"field{i}": ["Unknown field."] for i in range(200_000)}
    errors = flatten_messages(messages)
    assert len(errors) == MAX_ERRORS and errors.omitted == 200_000 - MAX_ERRORS
    assert invalid(errors).body()["errors_omitted"] == 200_000 - MAX_ERRORS


@pytest.mark.parametrize(("body", "pointer"), [
    ({"altitude": {"value": 1000, "unit": "k" * 1_000_000}}, "/altitude/unit"),   # a 1 MB unit name
    ({"altitude": 1000, "output_units": {"altitude": "m" * 1_000_000}}, "/output_units/altitude"),
    ({"altitude": 1000, "outputs": ["p" * 1_000_000]}, "/outputs/0"),
])
def test_a_long_input_is_echoed_as_a_short_prefix(client, body, pointer):
    status, doc = send(client, body)
    assert status == 422 and doc["errors"][0]["pointer"] == pointer
    longest_run = max(len(run) for run in doc["errors"][0]["message"].replace("'", " ").split())
    assert longest_run <= MAX_ECHO + 3  # the prefix and "..."


def test_a_long_field_name_is_cut_in_its_pointer(client):
    status, doc = send(client, {"altitude": 1000, "f" * 1_000_000: 1})
    assert status == 422
    assert doc["errors"][0]["pointer"] == "/" + "f" * MAX_ECHO + "..."


@pytest.mark.parametrize("raw", [
    b'{"altitude": 1000, "\\ud800": 1}',                       # a lone surrogate as a field name
    b'{"altitude": {"value": 1000, "unit": "\\udfff"}}',        # ... as a unit
    b'{"altitude": 1000, "outputs": ["\\ud83d"]}',               # ... as an output name
    b'{"altitude": 1000, "output_units": {"\\ud800x": "m"}}',    # ... as a dimension
])
def test_unencodable_text_is_answered_not_a_500(client, raw):
    status, doc = send(client, raw)
    assert status == 422
    assert "\\ud" in json.dumps(doc)  # written as an escape, visible to the caller


def test_json_nested_deeper_than_the_limit_is_a_422(client):
    depth = 5 * MAX_JSON_DEPTH
    status, doc = send(client, b'{"altitude": ' + b"[" * depth + b"]" * depth + b"}")
    assert status == 422 and doc["errors"][0]["pointer"] == ""
    assert str(MAX_JSON_DEPTH) in doc["errors"][0]["message"]


@pytest.mark.parametrize("digits", [401, 5_000, 100_000])
def test_a_whole_number_with_thousands_of_digits_is_a_422_at_it(client, digits):
    status, doc = send(client, b'{"altitude": [1000, 1' + b"0" * digits + b"]}")
    assert status == 422 and doc["errors"][0]["pointer"] == "/altitude/1"


def test_a_whole_number_under_the_digit_limit_stays_exact(client):
    response = client.post("/v1/atmosphere", data=b'{"altitude": 1000}', content_type="application/json")
    assert response.status_code == 200


def test_the_log_writes_unencodable_text_escaped():
    record = logging.LogRecord("qbar", logging.ERROR, __file__, 1, "bad name %s", ("\ud800",), None)
    assert json.loads(JsonFormatter().format(record))["message"] == "bad name \\ud800"


# --- CORS ----------------------------------------------------------------------------------------

@pytest.mark.parametrize("origins", ["https://efb.example.com", "https://efb.example.com,https://ops.example.com",
                                     "*"])
@pytest.mark.parametrize("origin", [None, "https://efb.example.com", "https://elsewhere.example.com"])
def test_cors_answers_vary_on_origin(origins, origin):
    client = create_app({"TESTING": True, "QBAR_CORS_ORIGINS": origins}).test_client()
    headers = {"Origin": origin} if origin else {}
    for response in (client.get("/v1/health", headers=headers),
                     client.post("/v1/atmosphere", json={"altitude": 0}, headers=headers)):
        assert "Origin" in response.vary  # a cache must key on it: the CORS headers depend on it
        assert "Accept-Encoding" in response.vary  # and on the encoding asked for, small answer or not


def test_without_cors_nothing_varies_on_origin():
    response = create_app({"TESTING": True}).test_client().get("/v1/health")
    assert "Origin" not in response.vary


# --- the app's own Flask class ---------------------------------------------------------------

def test_an_async_view_or_hook_is_refused_when_the_app_is_built():
    """service.QbarFlask calls views and hooks as they are (no per-request coroutine check): an ``async def``
    one would never run, so building an app with one fails, naming it."""
    app = create_app({"TESTING": True})
    app.check_sync()  # the service's own views and hooks are plain functions

    async def slow_view():
        return "never awaited"

    app.add_url_rule("/async", "async_view", slow_view)
    with pytest.raises(TypeError, match="slow_view is async"):
        app.check_sync()
    app = create_app({"TESTING": True})

    async def hook():
        return None

    app.before_request(hook)
    with pytest.raises(TypeError, match="hook is async"):
        app.check_sync()
    app = create_app({"TESTING": True})

    async def on_teapot(error):
        return "never awaited", 418

    app.register_error_handler(418, on_teapot)
    with pytest.raises(TypeError, match="on_teapot is async"):
        app.check_sync()
