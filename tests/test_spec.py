"""The committed OpenAPI spec matches the code, validates, and carries the caution."""

import json
from pathlib import Path

from openapi_spec_validator import validate

from service.cli import SPEC_PATH, spec_text
from tests.helpers import differences

ROOT = Path(__file__).resolve().parent.parent


def test_differences_sees_real_changes():
    assert differences({"a": [1.0, "x,2.5"]}, {"a": [1.0 + 1e-15, "x,2.5000000000000004"]}) == []
    assert differences({"a": 1.0}, {"a": 1.001}) and differences({"a": "x,2.5"}, {"a": "y,2.5"})
    assert differences({"a": 1}, {"a": 1.0}) and differences({"a": 1, "b": 2}, {"b": 2, "a": 1})


def test_committed_spec_is_current():
    committed = (ROOT / SPEC_PATH).read_text(encoding="utf-8")
    generated = spec_text()
    if committed != generated:
        found = differences(json.loads(committed), json.loads(generated))
        assert not found, "openapi/openapi.json is stale: run `qbar spec` and commit it; " + "; ".join(found[:5])


def test_spec_validates():
    validate(json.loads(spec_text()))


def test_spec_served_matches_file(client):
    served = client.get("/openapi.json").json
    assert not differences(served, json.loads((ROOT / SPEC_PATH).read_text(encoding="utf-8")))


def test_caution_in_info():
    info = json.loads(spec_text())["info"]["description"]
    assert "not certified for flight planning" in info
    assert "approved flight manual" in info and "local regulations govern" in info


def test_every_operation_has_summary_and_tag():
    spec = json.loads(spec_text())
    for path, item in spec["paths"].items():
        for method, op in item.items():
            if method == "parameters":
                continue
            assert op.get("summary"), (path, method)
            assert op.get("tags"), (path, method)


def test_errors_are_problem_documents():
    spec = json.loads(spec_text())
    for name, response in spec["components"]["responses"].items():
        assert list(response["content"]) == ["application/problem+json"], name
