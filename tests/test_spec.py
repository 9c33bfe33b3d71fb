"""The committed OpenAPI spec matches the code, validates, and carries the caution."""

import json
from pathlib import Path

from openapi_spec_validator import validate

from service.cli import SPEC_PATH, spec_text

ROOT = Path(__file__).resolve().parent.parent


def test_committed_spec_is_current():
    committed = (ROOT / SPEC_PATH).read_text(encoding="utf-8")
    assert committed == spec_text(), "openapi/openapi.json is stale: run `qbar spec` and commit it"


def test_spec_validates():
    validate(json.loads(spec_text()))


def test_spec_served_matches_file(client):
    served = client.get("/openapi.json").json
    assert served == json.loads((ROOT / SPEC_PATH).read_text(encoding="utf-8"))


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
