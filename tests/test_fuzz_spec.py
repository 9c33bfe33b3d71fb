"""Spec fuzzing: schemathesis against a real gunicorn, every operation of the spec, every check.

Requests are generated from the spec the application publishes (positive and negative data:
the examples, the coverage of each schema's edges, then random data), sent over HTTP to
gunicorn running qbar with API keys on, and each response is checked against the spec:
no server error, documented status code, content type, headers and body (problem documents
included), schema-valid data accepted, schema-violating data refused, credentials required.

positive_data_acceptance is off for one response only when the request was not in fact valid
by the published spec (checked here with an independent validator; see GENERATED_WITHOUT)
or when its 422 has a reason no JSON Schema can express (INEXPRESSIBLE); every other check
stays on. Bounded: MAX_EXAMPLES per operation and phase, a fixed seed, no deadline per example.
"""

from __future__ import annotations

import copy
import json

import jsonschema
import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from schemathesis.checks import negative_data_rejection, positive_data_acceptance

from service import create_app
from service.api.air_fields import HUMIDITY_FIELDS
from service.api.drag import ONE_FLIGHT_CONDITION
from service.api.rules import NotTogether
from service.api.speeds import AT_MOST_ONE_SPEED
from tests.live_server import running_gunicorn

KEY = "fuzz-test-key-8c1d2e40"  # an API key for this test's server only
MAX_EXAMPLES = 30
CONFIG = {
    "seed": 20240607,
    "generation": {
        "max-examples": MAX_EXAMPLES,
        "deterministic": True,
        # the valid key goes in every request (below); ignored_auth still sends none and a wrong one
        "with-security-parameters": False,
    },
    # The coverage phase (each schema's edges: bounds, the next float beyond them, every enum value)
    # with valid data only: its invalid variants number hundreds per operation, unbounded by
    # max-examples; the fuzzing phase sends invalid data, and tests/test_bad_inputs.py catalogues it.
    "phases": {"coverage": {"generation": {"mode": "positive"}}},
    # Invalid data may also be refused for its size: the point count (the product of a grid's axes) is checked
    # before the schema, cheapest first, and is a documented 413.
    "checks": {"negative_data_rejection": {"expected-statuses": [
        "400", "401", "403", "404", "405", "406", "409", "413", "415", "422", "428", "429", "5xx"]}},
}

#: The spec the application publishes (tests/test_spec.py: the same as openapi/openapi.json and /openapi.json).
SPEC = create_app({"TESTING": True}).test_client().get("/openapi.json").json

#: Rules over several fields (a request schema's allOf) that, together with the others of their
#: schema, are too many alternatives at once for schemathesis' generator (its jsonschema_rs
#: canonicalisation gives up: UnsupportedSchema): {schema: (rule, ...)}. Requests for those
#: schemas are generated without them; each one generated as valid is then checked against the
#: whole published schema (valid_by_spec), and is positive data only if it passes.
#: The alternatives of a request schema multiply (schemathesis expands the allOf into its cases, and gives up
#: past about a hundred: seven independent pairs of exclusive fields are already too many, whatever the form
#: of each rule): the lift and drag requests, with the air's altitude, temperature (api.rule_schema.Jointly: one
#: list of alternatives), humidity and speed each a choice, have one choice too many. Their dew point and
#: relative humidity are generated without their rule (a request giving both is not valid by the spec).
_HUMIDITY = NotTogether(*HUMIDITY_FIELDS).spec()
GENERATED_WITHOUT = {"LiftStallRequest": (AT_MOST_ONE_SPEED.spec(), _HUMIDITY),  # at most one speed, for the margin
                     "DragRequest": (ONE_FLIGHT_CONDITION.spec(), _HUMIDITY),  # one flight condition: a speed or CL
                     "LiftSolveRequest": (_HUMIDITY,), "TurnRequest": (_HUMIDITY,), "BuffetRequest": (_HUMIDITY,)}

GENERATION_SPEC = copy.deepcopy(SPEC)
for _name, _rules in GENERATED_WITHOUT.items():
    _schema = GENERATION_SPEC["components"]["schemas"][_name]
    assert all(rule in _schema["allOf"] for rule in _rules), f"{_name}: a rule left out is no longer in the spec"
    _schema["allOf"] = [rule for rule in _schema["allOf"] if rule not in _rules]

# The per-unit ranges of the {value, unit} form (conditionals beside a dimension's $ref) together with a
# request's rules are more than schemathesis's generator takes (UnsupportedSchema for the endpoints with
# five speed fields): data is generated without them, and valid_by_spec still judges it by the whole spec.
for _schema in GENERATION_SPEC["components"]["schemas"].values():
    for _prop in _schema.get("properties", {}).values():
        if ("$ref" in _prop or "oneOf" in _prop) and all("if" in c for c in _prop.get("allOf", [{}])):
            _prop.pop("allOf", None)


def _is_range_ref(node) -> bool:
    """A reference to a named range form (``<Dim>Range``, ``NumberRange``: api.field_schemas.named_schemas)."""
    return isinstance(node, dict) and node.get("$ref", "").endswith("Range")


def _inlined_without_ranges(node, schemas):
    """``node`` with every $ref resolved (inlined), the range forms left out of every oneOf and the per-unit
    conditionals (an allOf of if/then beside a field's schema) dropped."""
    if isinstance(node, dict):
        if "$ref" in node:
            target = _inlined_without_ranges(schemas[node["$ref"].rsplit("/", 1)[1]], schemas)
            node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        out = {}
        for key, value in node.items():
            if key == "oneOf":
                value = [v for v in value if not _is_range_ref(v)]
                if len(value) == 1 and isinstance(value[0], dict):  # oneOf [Dim]: Dim itself
                    merged = _inlined_without_ranges(value[0], schemas)
                    out.update({k: v for k, v in merged.items() if k not in out})
                    continue
            if key == "allOf" and isinstance(value, list) and value and all(
                    isinstance(c, dict) and "if" in c and "then" in c and "unit" in json.dumps(c["if"])
                    for c in value):
                continue
            out[key] = _inlined_without_ranges(value, schemas)
        return out
    if isinstance(node, list):
        return [_inlined_without_ranges(v, schemas) for v in node]
    return node


#: Schemas whose requests are generated with the dimension schemas inlined ($ref resolved), without the
#: per-unit conditionals and without the range form of their inputs: with the named schemas (references to
#: oneOf schemas beside conditionals) and the ranges, the alternatives of the lift solve and stall requests
#: (and of the turn and drag requests, with their several speed fields and rules) are too many for
#: the generator (UnsupportedSchema). Ranges and units are fuzzed at every other
#: operation, tests/test_ranges.py covers ranges at these, and valid_by_spec judges by the whole spec.
GENERATED_WITHOUT_RANGES = ("LiftSolveRequest", "LiftWing", "LiftStallRequest", "StallReference", "TurnRequest",
                            "DragRequest")
for _name in GENERATED_WITHOUT_RANGES:
    _schemas = GENERATION_SPEC["components"]["schemas"]
    _schemas[_name] = _inlined_without_ranges(_schemas[_name], _schemas)
schema = schemathesis.openapi.from_dict(GENERATION_SPEC, config=schemathesis.Config.from_dict(CONFIG))


def _request_validator(path: str, method: str):
    """A JSON Schema validator of the operation's request body, as published (None without a body)."""
    body = SPEC["paths"][path][method.lower()].get("requestBody")
    if body is None:
        return None
    root = {**body["content"]["application/json"]["schema"], "components": SPEC["components"]}
    return jsonschema.Draft202012Validator(root)


def valid_by_spec(case) -> bool:
    """Whether the request body of ``case`` is valid by the published spec (rules included)."""
    validator = _request_validator(case.operation.path, case.operation.method)
    return validator is None or validator.is_valid(case.body)


def _pointers(doc) -> set[str]:
    return {e["pointer"] for e in doc.get("errors", [])}


def _messages(doc) -> str:
    return " ".join(e["message"] for e in doc.get("errors", []))


#: 422s that schema-valid requests can get, each for a reason no JSON Schema can express:
#: (why, test on the problem document).
INEXPRESSIBLE = [
    # The primary result does not exist for these values (a CAS and a Mach number that do not
    # cross within the model's range, a speed beyond the pitot relations, a lift solve without
    # a solution, a result beyond the floating-point range): physics, not the shape of the data.
    ("no solution", lambda doc: doc["type"] == "/problems/no-solution"),
    # An output_units key must apply to an output of the answer, which depends on `outputs`, the
    # endpoint's answer tree, grid and Accept: a 422 for a key that applies to nothing.
    ("output unit for nothing", lambda doc: all(p.startswith("/output_units/") for p in _pointers(doc))
     and "No output of this answer is" in _messages(doc)),
    # pressure altitude = indicated altitude + H(QNH): each is within its range, their sum may not be.
    ("QNH-corrected altitude out of range",
     lambda doc: _pointers(doc) == {"/altitude"} and "corrected for QNH" in _messages(doc)),
    # Arrays broadcast only when their lengths are equal or 1 (also in the wing and reference
    # blocks, against the number of points): JSON Schema cannot relate the lengths of two properties.
    ("array lengths differ", lambda doc: doc["detail"].startswith("Array lengths differ")
     or all("but the request has" in e["message"] for e in doc.get("errors", [{"message": ""}]))),
    # A calibration table's columns must be strictly increasing and of one length, and an IAS
    # must lie within its IAS column: order, equal lengths and a range set by another input.
    ("calibration table", lambda doc: _pointers(doc) <= {"/calibration/ias", "/calibration/cas", "/ias"}
     and any(word in _messages(doc) for word in ("strictly increasing", "same length", "calibration table"))),
    # A buffet table's Mach column must be strictly increasing and its columns of one length, and the Mach number
    # of the point must lie within the table (never extrapolated): order, lengths and a range set by another input.
    ("buffet table", lambda doc: _pointers(doc) <= {"/buffet/mach", "/buffet/cl", "/mach"}
     and any(word in _messages(doc) for word in ("strictly increasing", "same length", "buffet table"))),
    # A range's step must point from start to stop, and their distance must be a countable number of steps:
    # JSON Schema cannot compare two properties.
    ("range step against start and stop", lambda doc: all(p.endswith("/step") for p in _pointers(doc))
     and any(word in _messages(doc) for word in ("so the step must be", "too many steps to count"))),
    # One validity range whatever the input form: a temperature (given, or found from a total air
    # temperature and the speed) within +-100 K of the standard temperature at the pressure altitude;
    # a CAS, EAS or TAS within the Mach range of `mach` at that altitude; a geometric height whose
    # pressure level lies within the model on that day. Each limit depends on two or more inputs.
    ("temperature against the altitude", lambda doc: "from the standard temperature" in _messages(doc)),
    ("speed beyond the Mach range", lambda doc: "the range accepted for `mach`" in _messages(doc)),
    ("geometric height on the day", lambda doc: "On this day the geometric height" in _messages(doc)),
    # Water vapour: a dew point at most the temperature, a relative humidity within the saturation
    # formula's temperature range, a vapour pressure below the static pressure at the altitude.
    ("humidity against temperature and pressure", lambda doc: _pointers(doc) <= {"/dew_point", "/relative_humidity"}
     and any(word in _messages(doc) for word in ("above the temperature", "saturation formula", "vapour pressure"))),
    # Altimetry: the QNH a QFE gives with an elevation within the bounds of qnh; a minimum altitude at or
    # above the aerodrome elevation (two inputs each).
    ("QNH from QFE and elevation", lambda doc: _pointers(doc) == {"/qfe"} and "gives a QNH" in _messages(doc)),
    ("minimum altitude below the aerodrome", lambda doc: _pointers(doc) == {"/altitude"}
     and "below the aerodrome elevation" in _messages(doc)),
]


def over_the_point_limit(response) -> bool:
    """A 413 for the number of points: a range's count, (stop - start) / step, or a grid's product of lengths,
    neither of which JSON Schema can bound."""
    return response.status_code == 413 and "points per request (QBAR_MAX_POINTS)" in json.loads(response.text)["detail"]


def _why(doc) -> str | None:
    return next((why for why, test in INEXPRESSIBLE if test(doc)), None)


def inexpressible(response) -> str | None:
    """Why a 422 to schema-valid data is acceptable, or None: the whole problem document has one such reason, or
    each of its errors has one (a request can break two rules JSON Schema cannot express at once)."""
    if response.status_code != 422:
        return None
    doc = json.loads(response.text)
    whole = _why(doc)
    if whole or not doc.get("errors"):
        return whole
    reasons = [_why(doc | {"detail": error["message"], "errors": [error]}) for error in doc["errors"]]
    return None if None in reasons else "; ".join(sorted(set(reasons)))


@pytest.fixture(scope="module")
def base_url():
    """gunicorn (2 workers) serving qbar with API keys on."""
    with running_gunicorn(env={"QBAR_API_KEYS": KEY}, workers=2) as url:
        yield url


@schema.parametrize()
# Generation time depends on the machine's load (CI builds an image in the same run); the data is
# still generated in full, only the timing health check is off.
@settings(deadline=None, suppress_health_check=[HealthCheck.too_slow])
def test_operation_conforms_to_spec(case, base_url):
    headers = {"X-API-Key": KEY}
    response = case.call(base_url=base_url, headers=headers)
    excluded = []
    if not valid_by_spec(case) or inexpressible(response) or over_the_point_limit(response):
        excluded.append(positive_data_acceptance)
    if over_the_point_limit(response):  # counted before the schema is checked (cheapest first): a refusal too
        excluded.append(negative_data_rejection)
    case.validate_response(response, headers=headers, excluded_checks=excluded,
                           transport_kwargs={"base_url": base_url, "headers": headers})
