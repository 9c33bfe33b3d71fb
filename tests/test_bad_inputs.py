"""The bad-input catalogue: every kind of bad request, at every compute endpoint.

Each case is a request that a client program could send by mistake, with the answer it must
get: the right 4xx status, an ``application/problem+json`` body that is strict JSON (no NaN or
Infinity) and a problem document (RFC 9457: type, title, status, detail), and a ``pointer``
(RFC 6901) to the offending value wherever there is one. The expectations follow DESIGN.md
("Errors"): 400 malformed JSON and NaN/Infinity, 415 wrong content type, 422 invalid or
physically impossible values (with the pointer "" for a body that is not an object), 404/405
for routing. The generic kinds run at every compute endpoint from a valid body of each; the kinds
that concern one sort of input run at every endpoint that has it.
"""

from __future__ import annotations

import copy
import json

import pytest

from service import create_app
from service.api.problems import bounded_pointer
from tests.helpers import PROBLEM, assert_problem

#: Every compute endpoint: a valid body, a field that takes a unit (Quantity), a dimensionless one
#: (Number) where there is one, and two fields that take arrays (for length mismatches).
ENDPOINTS = {
    "/v1/atmosphere": {"body": {"altitude": 10000, "isa_deviation": 5},
                       "quantity": "altitude", "number": None, "arrays": ("altitude", "isa_deviation")},
    "/v1/airspeed": {"body": {"cas": 250, "altitude": 10000},
                     "quantity": "cas", "number": None, "arrays": ("cas", "altitude")},
    "/v1/airspeed/crossover": {"body": {"cas": 300, "mach": 0.78},
                               "quantity": "cas", "number": "mach", "arrays": ("cas", "mach")},
    "/v1/airspeed/schedule": {"body": {"cas": 290, "mach": 0.76, "altitude": 30000},
                              "quantity": "altitude", "number": "mach", "arrays": ("altitude", "cas")},
    "/v1/lift/solve": {"body": {"solve_for": "cl", "weight": 21000, "wing_area": 61, "cas": 200, "altitude": 10000},
                       "quantity": "weight", "number": None, "arrays": ("weight", "altitude")},
    "/v1/lift/stall": {"body": {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000},
                       "quantity": "wing_area", "number": "cl_max", "arrays": ("weight", "altitude")},
    "/v1/lift/curve": {"body": {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3, "cl": 0.9},
                       "quantity": "sweep_half_chord", "number": "aspect_ratio", "arrays": ("aspect_ratio", "cl")},
    "/v1/lift/turn": {"body": {"tas": 200, "altitude": 5000, "bank_angle": 25},
                      "quantity": "altitude", "number": None, "arrays": ("tas", "altitude")},
    "/v1/lift/buffet": {"body": {"weight": 21000, "wing_area": 61, "mach": 0.74, "altitude": 37000,
                                 "buffet": {"mach": [0.6, 0.8], "cl": [0.9, 0.5]}, "margin": 1.3},
                        "quantity": "weight", "number": "mach", "arrays": ("weight", "altitude")},
    "/v1/drag": {"body": {"weight": 21000, "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11,
                          "oswald_efficiency": 0.78, "mach": 0.45, "altitude": 25000},
                 "quantity": "weight", "number": "cd0", "arrays": ("weight", "altitude")},
    "/v1/drag/speeds": {"body": {"weight": 21000, "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.0371,
                                 "altitude": 25000},
                        "quantity": "wing_area", "number": "cd0", "arrays": ("weight", "altitude")},
    "/v1/altimetry/pressure-settings": {"body": {"elevation": 7200, "qnh": 1008},
                                        "quantity": "elevation", "number": None, "arrays": ("elevation", "qnh")},
    "/v1/altimetry/temperature-correction": {"body": {"elevation": 7200, "temperature": -25, "altitude": 9500},
                                             "quantity": "altitude", "number": None,
                                             "arrays": ("altitude", "temperature")},
}
PATHS = tuple(ENDPOINTS)


@pytest.fixture(scope="module")
def app():
    """One application for the whole catalogue (it keeps no state between requests)."""
    return create_app({"TESTING": True})


@pytest.fixture(scope="module")
def client(app):
    """A test client for it."""
    return app.test_client()


def raw(client, path, data: bytes | str, content_type="application/json", method="POST"):
    return client.open(path, method=method, data=data, content_type=content_type)


def send(client, path, body):
    return raw(client, path, json.dumps(body, allow_nan=False))


def with_field(path, name, value, drop=()):
    body = copy.deepcopy(ENDPOINTS[path]["body"])
    for key in drop:
        body.pop(key, None)
    body[name] = value
    return body


def check(response, status, pointer=None):
    """The catalogue's promise: status, problem+json, strict JSON, problem members, the pointer."""
    assert response.mimetype == PROBLEM, response.headers
    return assert_problem(response, status, pointer)  # parses with parse_constant refusing NaN/Infinity


def test_every_compute_endpoint_is_in_the_catalogue(app):
    spec_paths = {rule.rule for rule in app.url_map.iter_rules() if "POST" in rule.methods
                  and rule.rule.startswith("/v1/")}
    assert spec_paths == set(PATHS)


@pytest.mark.parametrize("path", PATHS)
def test_valid_bodies_of_the_catalogue_are_valid(client, path):
    response = send(client, path, ENDPOINTS[path]["body"])
    assert response.status_code == 200, response.get_data(as_text=True)


# --- The body as a whole -------------------------------------------------------------------------

MALFORMED = [
    pytest.param(b'{"altitude": 1000', id="truncated-object"),
    pytest.param(b'{"altitude": [1000, 2000', id="truncated-array"),
    pytest.param(b'{"altitude": 10', id="truncated-number"),
    pytest.param(b'{"altitude": "FL3', id="truncated-string"),
    pytest.param(b'{"altitude": 1000,}', id="trailing-comma"),
    pytest.param(b"{'altitude': 1000}", id="single-quotes"),
    pytest.param(b'{altitude: 1000}', id="bare-key"),
    pytest.param(b'{"altitude": 1000} {"altitude": 0}', id="two-documents"),
    pytest.param(b'{"altitude": 01000}', id="leading-zero"),
    pytest.param(b'{"altitude": .5}', id="bare-decimal-point"),
    pytest.param(b"\xff\xfe{}", id="not-utf8"),
    pytest.param(b"", id="empty"),
    pytest.param(b"   \n", id="blank"),
    pytest.param(b'{"altitude": NaN}', id="NaN"),
    pytest.param(b'{"altitude": Infinity}', id="Infinity"),
    pytest.param(b'{"altitude": -Infinity}', id="minus-Infinity"),
    pytest.param(b'{"altitude": [0, NaN]}', id="NaN-in-array"),
    pytest.param(b'{"altitude": {"value": Infinity, "unit": "m"}}', id="Infinity-in-object"),
]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("data", MALFORMED)
def test_malformed_json_is_400(client, path, data):
    doc = check(raw(client, path, data), 400)
    assert doc["type"] == "/problems/malformed-json"


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("data", ["[]", "[{\"altitude\": 0}]", "\"altitude\"", "1000", "true", "null"])
def test_body_that_is_not_an_object_is_422_at_the_body(client, path, data):
    doc = check(raw(client, path, data), 422, "")
    assert doc["type"] == "/problems/validation"


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("content_type", ["text/plain", "application/x-www-form-urlencoded", "application/xml",
                                          "multipart/form-data; boundary=x", ""])
def test_wrong_content_type_is_415(client, path, content_type):
    body = json.dumps(ENDPOINTS[path]["body"])
    doc = check(raw(client, path, body, content_type=content_type or None), 415)
    assert doc["type"] == "/problems/unsupported-media-type"


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("method", ["GET", "PUT", "PATCH", "DELETE"])
def test_wrong_method_is_405_with_allow(client, path, method):
    response = raw(client, path, json.dumps(ENDPOINTS[path]["body"]), method=method)
    check(response, 405)
    assert "POST" in response.headers["Allow"]


@pytest.mark.parametrize("path", ["/v1/nowhere", "/v1/atmosphere/", "/v1/airspeed/crossovers", "/v2/atmosphere",
                                  "/v1/lift", "/v1/lift/solve/cl", "/", "/v1/%00"])
def test_unknown_path_is_404(client, path):
    doc = check(raw(client, path, "{}"), 404)
    assert doc["type"] == "/problems/not-found"


# --- One input of the wrong form: at a field with a unit and at a dimensionless one -------------------

WRONG_FORMS = [  # (value, pointer below the field, what the message says)
    pytest.param("1000", "", "string", id="string"),
    pytest.param("", "", "string", id="empty-string"),
    pytest.param(True, "", "boolean", id="true"),
    pytest.param(False, "", "boolean", id="false"),
    pytest.param(None, "", "null", id="null"),
    pytest.param([], "", "Empty array", id="empty-array"),
    pytest.param([[1000, 2000]], "/0", "Nested", id="nested-array"),
    pytest.param([1000, [2000]], "/1", "Nested", id="nested-in-array"),
    pytest.param([1000, "2000"], "/1", "string", id="string-in-array"),
    pytest.param([1000, True], "/1", "boolean", id="boolean-in-array"),
    pytest.param([1000, None], "/1", "null", id="null-in-array"),
    pytest.param([1000, {}], "/1", "object", id="object-in-array"),
]

NUMBERS_BEYOND_FLOAT = [  # JSON numbers that no float64 holds
    pytest.param(b"1e400", "", id="1e400"),
    pytest.param(b"-1e400", "", id="-1e400"),
    pytest.param(b"[1, 1e400]", "/1", id="1e400-in-array"),
    pytest.param(b"1" + b"0" * 400, "", id="400-digit-integer"),
]


def _fields(path):
    spec = ENDPOINTS[path]
    return [name for name in (spec["quantity"], spec["number"]) if name]


FIELD_CASES = [(path, name) for path in PATHS for name in _fields(path)]


@pytest.mark.parametrize(("path", "name"), FIELD_CASES)
@pytest.mark.parametrize(("value", "below", "says"), WRONG_FORMS)
def test_wrong_type_is_422_at_the_value(client, path, name, value, below, says):
    doc = check(send(client, path, with_field(path, name, value)), 422, f"/{name}{below}")
    assert any(says in e["message"] for e in doc["errors"]), doc["errors"]


@pytest.mark.parametrize(("path", "name"), FIELD_CASES)
@pytest.mark.parametrize(("number", "below"), NUMBERS_BEYOND_FLOAT)
def test_number_beyond_float_range_is_422_at_the_value(client, path, name, number, below):
    body = json.dumps(with_field(path, name, "__N__")).replace('"__N__"', number.decode())
    doc = check(raw(client, path, body), 422, f"/{name}{below}")
    assert any("floating-point range" in e["message"] for e in doc["errors"]), doc["errors"]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(("number", "below"), NUMBERS_BEYOND_FLOAT)
def test_number_beyond_float_range_in_the_object_form_is_422(client, path, number, below):
    name = ENDPOINTS[path]["quantity"]
    unit = {"altitude": "ft", "elevation": "ft", "cas": "kt", "weight": "kg", "wing_area": "m2",
            "sweep_half_chord": "deg"}[name]
    body = json.dumps(with_field(path, name, {"value": "__N__", "unit": unit})).replace('"__N__"', number.decode())
    check(raw(client, path, body), 422, f"/{name}/value{below}")


# --- The object form {value, unit} ---------------------------------------------------------------

UNITS_OF = {"altitude": "ft", "elevation": "ft", "cas": "kt", "weight": "kg", "wing_area": "m2",
            "sweep_half_chord": "deg"}


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(("make", "pointer"), [
    pytest.param(lambda u: {"value": 1, "unit": "furlong"}, "/unit", id="unknown-unit"),
    pytest.param(lambda u: {"value": 1, "unit": u.upper() + "s"}, "/unit", id="misspelt-unit"),
    pytest.param(lambda u: {"value": 1, "unit": ""}, "/unit", id="empty-unit"),
    pytest.param(lambda u: {"value": 1, "unit": None}, "/unit", id="null-unit"),
    pytest.param(lambda u: {"value": 1, "unit": 3}, "/unit", id="number-unit"),
    pytest.param(lambda u: {"value": 1, "unit": [u]}, "/unit", id="array-unit"),
    pytest.param(lambda u: {"value": 1, "unit": {}}, "/unit", id="object-unit"),
    pytest.param(lambda u: {"value": 1}, "/unit", id="missing-unit"),
    pytest.param(lambda u: {"unit": u}, "/value", id="missing-value"),
    pytest.param(lambda u: {}, "/value", id="empty-object"),
    pytest.param(lambda u: {"value": 1, "unit": u, "units": u}, "/units", id="extra-member"),
    pytest.param(lambda u: {"value": "1", "unit": u}, "/value", id="string-value"),
    pytest.param(lambda u: {"value": [], "unit": u}, "/value", id="empty-array-value"),
    pytest.param(lambda u: {"value": [[1]], "unit": u}, "/value/0", id="nested-array-value"),
    pytest.param(lambda u: {"value": {"value": 1, "unit": u}, "unit": u}, "/value", id="nested-object-value"),
])
def test_bad_object_form_is_422_at_the_member(client, path, make, pointer):
    name = ENDPOINTS[path]["quantity"]
    doc = check(send(client, path, with_field(path, name, make(UNITS_OF[name]))), 422, f"/{name}{pointer}")
    if pointer == "/unit" and "value" in make(UNITS_OF[name]) and "unit" in make(UNITS_OF[name]):
        message = next(e["message"] for e in doc["errors"] if e["pointer"] == f"/{name}/unit")
        assert "allowed:" in message and UNITS_OF[name] in message  # names the units it takes


@pytest.mark.parametrize("path", PATHS)
def test_a_unit_of_another_dimension_is_422(client, path):
    name = ENDPOINTS[path]["quantity"]
    other = "kt" if UNITS_OF[name] != "kt" else "ft"
    check(send(client, path, with_field(path, name, {"value": 1, "unit": other})), 422, f"/{name}/unit")


# --- Requests as a whole ----------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("extra", ["altitude_ft", "Altitude", "units", "output", "grid_", "",
                                   "a" * 300, "~/"])
def test_unknown_field_is_422_at_it(client, path, extra):
    doc = check(send(client, path, with_field(path, extra, 1)), 422)
    escaped = "/" + extra.replace("~", "~0").replace("/", "~1")
    assert bounded_pointer(escaped) in [e["pointer"] for e in doc["errors"]]  # a long name is cut (MAX_ECHO)


@pytest.mark.parametrize("path", PATHS)
def test_arrays_of_different_lengths_are_422_at_both(client, path):
    first, second = ENDPOINTS[path]["arrays"]
    body = copy.deepcopy(ENDPOINTS[path]["body"])
    body[first] = [body[first]] * 3
    body[second] = [body.get(second, 1)] * 2
    doc = check(send(client, path, body), 422)
    assert {f"/{first}", f"/{second}"} <= {e["pointer"] for e in doc["errors"]}


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(("name", "value", "pointer"), [
    ("outputs", ["no_such_output"], "/outputs/0"),
    ("outputs", [], "/outputs"),
    ("outputs", "pressure", "/outputs"),
    ("outputs", [3], "/outputs/0"),
    ("output_units", {"speed": "furlong/fortnight"}, "/output_units/speed"),
    ("output_units", {"velocity": "kt"}, "/output_units/velocity"),
    ("output_units", {"speed": None}, "/output_units/speed"),
    ("output_units", {"altitude": {}}, "/output_units/altitude"),
    ("output_units", ["kt"], "/output_units"),
    ("grid", "yes", "/grid"),
    ("grid", 1, "/grid"),
    ("grid", 0, "/grid"),
    ("grid", None, "/grid"),
])
def test_bad_common_fields_are_422_at_them(client, path, name, value, pointer):
    check(send(client, path, with_field(path, name, value)), 422, pointer)


# Mutually exclusive inputs given together: every endpoint that has a pair, and every pair; each
# member is pointed at.
EXCLUSIVE = [
    ("/v1/atmosphere", {"isa_deviation": 5, "temperature": 10}, {"isa_deviation", "temperature"}),
    ("/v1/airspeed", {"mach": 0.5}, {"cas", "mach"}),  # with the body's cas: two speeds
    ("/v1/airspeed", {"eas": 200, "tas": 300}, {"cas", "eas", "tas"}),
    ("/v1/airspeed/schedule", {"isa_deviation": 5, "temperature": -20}, {"isa_deviation", "temperature"}),
    ("/v1/lift/solve", {"load_factor": 1.2, "bank_angle": 30}, {"load_factor", "bank_angle"}),
    ("/v1/lift/solve", {"isa_deviation": 5, "temperature": 10}, {"isa_deviation", "temperature"}),
    ("/v1/lift/solve", {"mach": 0.3}, {"cas", "mach"}),
    ("/v1/lift/stall", {"load_factor": 1.2, "bank_angle": 30}, {"load_factor", "bank_angle"}),
    ("/v1/lift/stall", {"reference": {"stall_speed": 108, "weight": 22000}}, {"wing_area", "cl_max"}),
    ("/v1/lift/stall", {"isa_deviation": 5, "temperature": 10}, {"isa_deviation", "temperature"}),
    ("/v1/lift/curve", {"angle_of_attack": 4}, {"angle_of_attack", "cl"}),
    ("/v1/lift/curve", {"airfoil_efficiency": 0.95, "airfoil_lift_slope": 6.0},
     {"airfoil_efficiency", "airfoil_lift_slope"}),
]


@pytest.mark.parametrize(("path", "extra", "clashing"), EXCLUSIVE)
def test_mutually_exclusive_inputs_are_422_at_each(client, path, extra, clashing):
    doc = check(send(client, path, ENDPOINTS[path]["body"] | extra), 422)
    pointers = {e["pointer"] for e in doc["errors"]}
    assert {f"/{name}" for name in clashing} <= pointers, pointers


# --- Values out of range ----------------------------------------------------------------------

# (the temperature correction's altitude is a minimum altitude, with the method's own bounds)
ALTITUDE_PATHS = [p for p in PATHS if "altitude" in ENDPOINTS[p]["body"] and not p.startswith("/v1/altimetry")]


@pytest.mark.parametrize("path", ALTITUDE_PATHS)
@pytest.mark.parametrize(("altitude", "extra", "pointer"), [
    pytest.param(300_000, {}, "/altitude", id="above-model"),
    pytest.param(-17_000, {}, "/altitude", id="below-model"),
    pytest.param([0, 1e6], {}, "/altitude/1", id="in-array"),
    pytest.param({"value": 85, "unit": "km"}, {}, "/altitude/value", id="km"),
    pytest.param({"value": 2800, "unit": "FL"}, {}, "/altitude/value", id="FL"),
    pytest.param({"value": -5001, "unit": "m"}, {}, "/altitude/value", id="m-below"),
    pytest.param(1e300, {}, "/altitude", id="huge"),
])
def test_altitude_out_of_the_models_range_is_422(client, path, altitude, extra, pointer):
    doc = check(send(client, path, with_field(path, "altitude", altitude) | extra), 422, pointer)
    assert any("model's range" in e["message"] for e in doc["errors"]), doc["errors"]


@pytest.mark.parametrize(("body", "pointer"), [
    ({"altitude": {"value": 90, "unit": "km"}, "altitude_kind": "geometric"}, "/altitude/value"),
    ({"altitude": {"value": -4999, "unit": "m"}, "altitude_kind": "geometric"}, "/altitude/value"),
    ({"altitude": 278_000, "qnh": 980}, "/altitude"),  # in range alone; out of range corrected for QNH
    ({"altitude": -16_000, "qnh": 1050}, "/altitude"),
    ({"altitude": {"value": 100, "unit": "FL"}, "qnh": 1013}, "/qnh"),
    ({"altitude": {"value": 100, "unit": "FL"}, "altitude_kind": "geometric"}, "/altitude_kind"),
    ({"altitude": 0, "altitude_kind": "geometric", "qnh": 1013}, "/qnh"),
    ({"altitude": 0, "qnh": 799}, "/qnh"),
    ({"altitude": 0, "qnh": {"value": 35, "unit": "inHg"}}, "/qnh/value"),
    ({"altitude": 0, "altitude_kind": "density"}, "/altitude_kind"),
])
def test_altitude_kinds_and_qnh_out_of_range_are_422(client, body, pointer):
    check(send(client, "/v1/atmosphere", body), 422, pointer)


TEMPERATURE_PATHS = ["/v1/atmosphere", "/v1/airspeed", "/v1/airspeed/schedule", "/v1/lift/solve", "/v1/lift/stall"]


@pytest.mark.parametrize("path", TEMPERATURE_PATHS)
@pytest.mark.parametrize(("temperature", "pointer"), [
    pytest.param({"value": 0, "unit": "K"}, "/temperature/value", id="0K"),
    pytest.param({"value": -1, "unit": "K"}, "/temperature/value", id="negative-K"),
    pytest.param(-273.15, "/temperature", id="0K-in-degC"),
    pytest.param(-300, "/temperature", id="below-0K-in-degC"),
    pytest.param({"value": -459.67, "unit": "degF"}, "/temperature/value", id="0K-in-degF"),
    pytest.param([15, -273.15], "/temperature/1", id="0K-in-array"),
])
def test_absolute_temperature_at_or_below_zero_kelvin_is_422(client, path, temperature, pointer):
    body = with_field(path, "temperature", temperature, drop=("isa_deviation",))
    check(send(client, path, body), 422, pointer)


@pytest.mark.parametrize("path", TEMPERATURE_PATHS)
@pytest.mark.parametrize(("deviation", "pointer"), [
    pytest.param(-300, "/isa_deviation", id="cold"),
    pytest.param({"value": 400, "unit": "degF"}, "/isa_deviation/value", id="hot-degF"),
])
def test_isa_deviation_out_of_range_is_422(client, path, deviation, pointer):
    check(send(client, path, with_field(path, "isa_deviation", deviation)), 422, pointer)


# Zero or negative speeds, masses (weights) and areas: every endpoint and field that takes one.
POSITIVE_INPUTS = [
    ("/v1/airspeed", "cas", ()), ("/v1/airspeed", "tas", ("cas",)), ("/v1/airspeed", "eas", ("cas",)),
    ("/v1/airspeed", "mach", ("cas",)),
    ("/v1/airspeed/crossover", "cas", ()), ("/v1/airspeed/crossover", "mach", ()),
    ("/v1/airspeed/schedule", "cas", ()), ("/v1/airspeed/schedule", "mach", ()),
    ("/v1/lift/solve", "cas", ()), ("/v1/lift/solve", "weight", ()), ("/v1/lift/solve", "wing_area", ()),
    ("/v1/lift/stall", "weight", ()), ("/v1/lift/stall", "wing_area", ()), ("/v1/lift/stall", "cl_max", ()),
    ("/v1/lift/curve", "aspect_ratio", ()),
]


#: A unit other than the default for the object form of those that take one.
OTHER_UNIT = {"cas": "km/h", "tas": "m/s", "eas": "mph", "weight": "lb", "wing_area": "ft2"}
NOT_POSITIVE = [
    pytest.param(0, "", id="zero"),
    pytest.param(-0.0, "", id="minus-zero"),
    pytest.param(-1, "", id="negative"),
    pytest.param([100, 0], "/1", id="zero-in-array"),
]


@pytest.mark.parametrize(("path", "name", "drop"), POSITIVE_INPUTS)
@pytest.mark.parametrize(("value", "below"), NOT_POSITIVE)
def test_zero_or_negative_speed_mass_area_is_422(client, path, name, drop, value, below):
    check(send(client, path, with_field(path, name, value, drop=drop)), 422, f"/{name}{below}")


@pytest.mark.parametrize(("path", "name", "drop"), [case for case in POSITIVE_INPUTS if case[1] in OTHER_UNIT])
@pytest.mark.parametrize(("value", "below"), NOT_POSITIVE)
def test_zero_or_negative_speed_mass_area_in_another_unit_is_422(client, path, name, drop, value, below):
    body = with_field(path, name, {"value": value, "unit": OTHER_UNIT[name]}, drop=drop)
    check(send(client, path, body), 422, f"/{name}/value{below}")


@pytest.mark.parametrize("path", ["/v1/lift/solve", "/v1/lift/stall"])
@pytest.mark.parametrize(("bank", "pointer"), [
    pytest.param(90, "/bank_angle", id="90"),
    pytest.param(90.0000001, "/bank_angle", id="just-above-90"),
    pytest.param(135, "/bank_angle", id="135"),
    pytest.param(-10, "/bank_angle", id="negative"),
    pytest.param([30, 90], "/bank_angle/1", id="90-in-array"),
    pytest.param({"value": 1.5707963267948966, "unit": "rad"}, "/bank_angle/value", id="pi/2-rad"),
])
def test_bank_angle_of_90_deg_or_more_is_422(client, path, bank, pointer):
    check(send(client, path, with_field(path, "bank_angle", bank)), 422, pointer)


@pytest.mark.parametrize(("mach", "pointer"), [
    pytest.param(1.0, "/mach", id="1"),
    pytest.param(1.2, "/mach", id="supersonic"),
    pytest.param([0.5, 2.0], "/mach/1", id="in-array"),
    pytest.param(-0.1, "/mach", id="negative"),
])
def test_supersonic_mach_at_the_lift_curve_is_422(client, mach, pointer):
    doc = check(send(client, "/v1/lift/curve", with_field("/v1/lift/curve", "mach", mach)), 422, pointer)
    assert any("subsonic" in e["message"] for e in doc["errors"]), doc["errors"]


# --- Point limits -------------------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
def test_too_many_points_is_413(path):
    client = create_app({"TESTING": True, "QBAR_MAX_POINTS": 10}).test_client()
    first, second = ENDPOINTS[path]["arrays"]
    body = with_field(path, first, [ENDPOINTS[path]["body"][first]] * 4)
    body[second] = [body.get(second, 1)] * 4
    body["grid"] = True  # 16 points
    doc = check(send(client, path, body), 413)
    assert doc["limit"] == 10


def test_body_over_the_byte_limit_is_413():
    client = create_app({"TESTING": True, "QBAR_MAX_BODY_BYTES": 1024}).test_client()
    body = json.dumps({"altitude": [1000.0] * 500})
    check(raw(client, "/v1/atmosphere", body), 413)


@pytest.mark.parametrize("depth", [2_000, 100_000])
def test_nesting_deeper_than_the_parsers_take_is_a_422_that_says_so(client, depth):
    # orjson's depth limit (and the standard library's recursion limit past it) end in the same 422, word for word.
    body = '{"altitude": ' + "[" * depth + "]" * depth + ', "isa_deviation": 0}'
    doc = assert_problem(client.post("/v1/atmosphere", data=body, content_type="application/json"), 422, "")
    assert doc["errors"] == [{"pointer": "", "message": "The body nests arrays or objects deeper than 1024 levels; "
                                                        "qbar's inputs nest three levels at most."}]
