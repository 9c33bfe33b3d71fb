"""The published spec is complete: every operation and field described with its unit, with real examples.

What an integrator reads in /docs or generates a client from must be whole: a summary, description and tag for
every operation, a description naming the default unit for every field (request and response, nested ones too),
an example for every field, request and response examples that are the service's own answers, and a problem
document for every error.
"""

from __future__ import annotations

import csv
import io
import json

import pytest
from jsonschema import Draft202012Validator

from service import create_app
from service.api.base import COMPUTE_PROBLEMS
from service.api.field_schemas import named_schemas
from service.api.problems import PROBLEM_MEDIA_TYPE
from service.cli import spec_text
from service.version import __version__
from tests.helpers import post

SPEC = json.loads(spec_text())
SCHEMAS = SPEC["components"]["schemas"]
#: The schemas of requests and answers (their fields); the others are the named types the fields refer to
#: (a dimension's input, value object, unit enum and output: api.field_schemas.named_schemas).
FIELD_SCHEMAS = {name: schema for name, schema in SCHEMAS.items() if name not in named_schemas()}
TAGS = ("atmosphere", "airspeed", "lift", "drag", "altimetry", "service")
HTTP_METHODS = ("get", "put", "post", "delete", "options", "head", "patch", "trace")
#: The keywords under which a schema holds further schemas that describe data (alternatives, items, members).
#: allOf/not/if/then/else hold the cross-field rules, which restate properties already described.
ALTERNATIVES = ("oneOf", "anyOf")

OPERATIONS = [(path, method, op) for path, item in SPEC["paths"].items()
              for method, op in item.items() if method in HTTP_METHODS]
COMPUTE = [(path, method, op) for path, method, op in OPERATIONS if "requestBody" in op]


def walk(schema: dict, where: str):
    """Yield (where, name, property schema) for every property at any depth below ``schema``."""
    for name, prop in schema.get("properties", {}).items():
        yield where, name, prop
        yield from walk(prop, f"{where}.{name}")
    for key in ALTERNATIVES:
        for i, sub in enumerate(schema.get(key, ())):
            yield from walk(sub, f"{where}<{key}{i}>")
    for key in ("items", "additionalProperties"):
        if isinstance(schema.get(key), dict):
            yield from walk(schema[key], f"{where}[{key}]")


def inline_schemas():
    """Every schema written inline in the paths (parameters, bodies, responses), by where it is."""
    for path, method, op in OPERATIONS:
        for parameter in op.get("parameters", []) + SPEC["paths"][path].get("parameters", []):
            yield f"{method} {path} parameter {parameter['name']}", parameter["schema"]
        for status, response in op["responses"].items():
            for media, content in response.get("content", {}).items():
                yield f"{method} {path} {status} {media}", content["schema"]


def validator(schema: dict) -> Draft202012Validator:
    """A validator for ``schema`` whose #/components/... references resolve in the spec."""
    return Draft202012Validator(dict(schema) | {"components": SPEC["components"]})


def test_every_property_has_a_description():
    missing = [f"{where}.{name}" for sname, schema in SCHEMAS.items() for where, name, prop in walk(schema, sname)
               if not prop.get("description")]
    missing += [f"{where}.{name}" for place, schema in inline_schemas() for where, name, prop in walk(schema, place)
                if not prop.get("description")]
    assert not missing, missing
    assert sum(1 for schema in SCHEMAS.values() for _ in walk(schema, "")) > 300  # the walk reaches the fields


@pytest.mark.parametrize("name", list(FIELD_SCHEMAS))
def test_every_field_has_an_example_that_fits_it(name):
    """Each field of each schema (request, response, nested) has an example, valid by the field's own schema."""
    for field, prop in FIELD_SCHEMAS[name]["properties"].items():
        assert "example" in prop, f"{name}.{field} has no example"
        errors = list(validator({k: v for k, v in prop.items() if k != "example"}).iter_errors(prop["example"]))
        assert not errors, f"{name}.{field}: {errors[0].message}"


def _types(schema: dict) -> set:
    kind = schema.get("type", [])
    return {kind} if isinstance(kind, str) else set(kind)


def _dimensionless(prop: dict) -> bool:
    """qbar's bare number or array of numbers, with no {value, unit} form (Number, NumberOut)."""
    if prop.get("$ref") in ("#/components/schemas/Numbers", "#/components/schemas/NumbersOut"):
        return True
    branches = prop.get("oneOf", ())
    return bool(branches) and all(
        _types(b) <= {"number", "null"} or (_types(b) == {"array"} and _types(b["items"]) <= {"number", "null"})
        for b in branches)


def test_every_physical_field_names_its_default_unit():
    """Requests: the x-default-unit in brackets. Responses: the unit the service answers in by default, as the
    computed example shows it. Dimensionless numbers: [-]."""
    wrong = []
    checked = 0
    for sname, schema in FIELD_SCHEMAS.items():
        for field, prop in schema["properties"].items():
            text = prop.get("description", "")
            example = prop.get("example")
            if "x-default-unit" in prop:
                unit = prop["x-default-unit"]
            elif isinstance(example, dict) and set(example) == {"value", "unit"}:
                unit = example["unit"]
            elif _dimensionless(prop):
                unit = "-"
            else:
                continue
            checked += 1
            if f"[{unit}" not in text:
                wrong.append(f"{sname}.{field}: [{unit}] not in {text!r}")
    assert not wrong, "\n".join(wrong)
    assert checked > 150


def test_tags_are_the_capabilities_with_descriptions():
    assert [t["name"] for t in SPEC["tags"]] == list(TAGS)
    assert all(len(t["description"]) > 40 for t in SPEC["tags"])


@pytest.mark.parametrize(("path", "method", "op"), OPERATIONS, ids=[f"{m} {p}" for p, m, _ in OPERATIONS])
def test_every_operation_is_documented(path, method, op):
    assert op.get("summary") and len(op.get("description", "")) > 40
    assert len(op["tags"]) == 1 and op["tags"][0] in TAGS
    ok = op["responses"]["200"]
    assert ok["description"] and ok["headers"]["X-Request-ID"]
    json_content = ok["content"]["application/json"]
    if "requestBody" not in op:
        answers = {"": json_content["example"]}
    else:
        body = op["requestBody"]["content"]["application/json"]
        assert body["examples"], "no request example"
        for name, example in body["examples"].items():
            assert example["summary"]
            errors = list(validator(body["schema"]).iter_errors(example["value"]))
            assert not errors, (name, errors[0].message)
        answers = {name: example["value"] for name, example in json_content["examples"].items()}
        assert list(answers) == list(body["examples"])  # an answer to each request example
    for name, answer in answers.items():
        errors = list(validator(json_content["schema"]).iter_errors(answer))
        assert not errors, (name, errors[0].message)


@pytest.mark.parametrize(("path", "method", "op"), COMPUTE, ids=[p for p, _, _ in COMPUTE])
def test_compute_operations_document_csv_problems_and_keys(path, method, op):
    csv_content = op["responses"]["200"]["content"]["text/csv"]
    assert csv_content["schema"]["type"] == "string" and csv_content["schema"]["description"]
    assert list(csv_content["examples"]) == list(op["requestBody"]["content"]["application/json"]["examples"])
    for example in csv_content["examples"].values():
        header = next(csv.reader(io.StringIO(example["value"])))
        assert header[0].startswith("input.")  # the inputs first
    assert {int(s) for s in op["responses"] if s != "200"} == set(COMPUTE_PROBLEMS)
    assert "security" not in op  # the spec-wide one: a key when the operator has configured keys
    assert SPEC["security"] == [{"bearerAuth": []}, {"apiKeyHeader": []}]
    assert set(SPEC["components"]["securitySchemes"]) == {"bearerAuth", "apiKeyHeader"}


def test_open_operations_need_no_key():
    for path, _method, op in OPERATIONS:
        if "requestBody" not in op:
            assert op["security"] == [], path


def test_every_error_is_a_problem_document_with_a_real_example():
    problem = {"$ref": "#/components/schemas/Problem"}
    for _path, _method, op in OPERATIONS:
        for status, response in op["responses"].items():
            if int(status) >= 400:
                name = response["$ref"].rsplit("/", 1)[1]
                content = SPEC["components"]["responses"][name]["content"]
                assert list(content) == [PROBLEM_MEDIA_TYPE] and content[PROBLEM_MEDIA_TYPE]["schema"] == problem
    examples = 0
    for name, response in SPEC["components"]["responses"].items():
        content = response["content"][PROBLEM_MEDIA_TYPE]
        values = [content["example"]] if "example" in content else [e["value"] for e in
                                                                     content.get("examples", {}).values()]
        for value in values:
            errors = list(validator(problem).iter_errors(value))
            assert not errors, (name, errors[0].message)
            assert value["type"].startswith("/problems/") and value["title"] and value["detail"]
            examples += 1
    assert examples >= len(COMPUTE_PROBLEMS) + 1  # 422 has two kinds, validation and no-solution


def test_info_servers_and_version():
    assert SPEC["info"]["version"] == __version__
    assert "not certified for flight planning" in SPEC["info"]["description"]
    assert SPEC["servers"] and all(s["url"] and s["description"] for s in SPEC["servers"])
    assert "PaginationMetadata" not in SCHEMAS  # nothing the service does not use


# --- the examples are the service's own answers ---------------------------------------------------------------


@pytest.fixture(scope="module")
def served():
    """A test client of an app without keys (the hooks run: ids, log, metrics)."""
    return create_app({"TESTING": True, "QBAR_API_KEYS": ()}).test_client()


@pytest.mark.parametrize(("path", "method", "op"), COMPUTE, ids=[p for p, _, _ in COMPUTE])
def test_response_examples_are_what_the_service_answers(served, path, method, op):
    """Through the whole request path (hooks, compression off), the request example gives the 200 examples."""
    content = op["responses"]["200"]["content"]
    for name, example in op["requestBody"]["content"]["application/json"]["examples"].items():
        answer = post(served, path, example["value"])
        assert answer.status_code == 200
        assert answer.json == content["application/json"]["examples"][name]["value"], name
        table = post(served, path, example["value"], {"Accept": "text/csv"})
        assert table.get_data(as_text=True) == content["text/csv"]["examples"][name]["value"], name


@pytest.mark.parametrize(("path", "method", "op"), [o for o in OPERATIONS if "requestBody" not in o[2]],
                         ids=[p for p, _, o in OPERATIONS if "requestBody" not in o])
def test_get_examples_are_what_the_service_answers(served, path, method, op):
    parameters = {p["name"]: p["example"] for p in SPEC["paths"][path].get("parameters", [])}
    answer = served.get(path.format(**parameters))
    assert answer.status_code == 200
    assert answer.json == op["responses"]["200"]["content"]["application/json"]["example"]
