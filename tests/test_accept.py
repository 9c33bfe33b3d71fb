"""Content negotiation by the rules (RFC 9110, section 12.5.1): Accept with parameters, q-values, wildcards and
lists, parsed by werkzeug; 406 only when nothing offered is acceptable, with what is."""

import json

import pytest

from tests.helpers import assert_problem, post

BODY = {"altitude": [1000, 2000], "isa_deviation": 0, "outputs": ["pressure"]}
JSON, CSV = "application/json", "text/csv"


@pytest.mark.parametrize(("accept", "answer"), [
    ("application/json; charset=utf-8", JSON),  # what many mobile HTTP stacks send
    ("application/JSON; Charset=UTF-8", JSON),
    ("text/csv; charset=utf-8", CSV),  # the service's own CSV media type
    ("text/csv", CSV),
    ("application/json, text/csv", JSON),  # equal preference: JSON first
    ("text/csv, application/json", JSON),
    ("text/csv;q=0.5, application/json;q=0.4", CSV),
    ("application/json;q=0.1, text/csv", CSV),
    ("application/*", JSON),
    ("text/*", CSV),
    ("*/*", JSON),
    ("*/*;q=0.1, text/csv", CSV),
    ("application/json;q=0, */*", CSV),  # JSON refused, anything else welcome
    ("text/html, application/xhtml+xml, */*;q=0.8", JSON),  # a browser
    ("application/problem+json", JSON),
])
def test_accept_picks_the_answer(client, accept, answer):
    response = post(client, "/v1/atmosphere", BODY, headers={"Accept": accept})
    assert response.status_code == 200, response.get_data(as_text=True)
    assert response.mimetype == answer
    if answer == JSON:
        assert json.loads(response.get_data(as_text=True))["pressure"]["unit"] == "hPa"
    else:
        assert response.get_data(as_text=True).startswith("input.altitude [ft],")


@pytest.mark.parametrize("accept", [
    "application/xml", "image/png, text/plain", "text/csv; charset=latin-1", "application/json;q=0, text/csv;q=0",
    "text/plain;q=1, application/json;q=0",
])
def test_406_only_when_nothing_offered_is_acceptable_and_it_says_what_is(client, accept):
    doc = assert_problem(post(client, "/v1/atmosphere", BODY, headers={"Accept": accept}), 406)
    assert doc["type"] == "/problems/not-acceptable"
    # the four answers: JSON, CSV, an Arrow IPC stream, Parquet (api.formats.ANSWER_MEDIA_TYPES)
    assert doc["acceptable"] == [JSON, CSV, "application/vnd.apache.arrow.stream", "application/vnd.apache.parquet"]
    assert ("application/json, text/csv, application/vnd.apache.arrow.stream, application/vnd.apache.parquet"
            in doc["detail"])


def test_the_406_echoes_the_accept_header_it_refused(client):
    # The wording (README, errors): what the endpoint answers, and the client's own Accept header, quoted.
    doc = assert_problem(post(client, "/v1/atmosphere", BODY, headers={"Accept": "image/png"}), 406)
    assert doc["detail"] == ("This endpoint answers application/json, text/csv, application/vnd.apache.arrow.stream, "
                             "application/vnd.apache.parquet (text in UTF-8); Accept was 'image/png'.")


def test_a_long_accept_header_is_not_echoed_whole(client):
    accept = "application/x-" + "y" * 5000
    doc = assert_problem(post(client, "/v1/atmosphere", BODY, headers={"Accept": accept}), 406)
    assert len(doc["detail"]) < 300
