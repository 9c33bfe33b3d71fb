"""Units people type, through the API: aliases accepted and published, a suggestion for a misspelt unit, and
missing inputs that say what to give."""

import json

import jsonschema
import pytest

from service import units
from tests.helpers import assert_problem, post

ATMOSPHERE = "/v1/atmosphere"


def _spec():
    with open("openapi/openapi.json", encoding="utf-8") as f:
        return json.load(f)


def test_an_alias_gives_the_same_answer(client):
    given = post(client, "/v1/airspeed", {"cas": {"value": 250, "unit": "kn"}, "altitude": 10000,
                                          "temperature": {"value": 5, "unit": "°C"}})
    canonical = post(client, "/v1/airspeed", {"cas": {"value": 250, "unit": "kt"}, "altitude": 10000,
                                              "temperature": {"value": 5, "unit": "degC"}})
    assert given.status_code == 200, given.json
    assert given.json == canonical.json


def test_output_units_take_an_alias_and_answer_in_the_unit_s_name(client):
    answer = post(client, "/v1/airspeed", {"cas": 250, "altitude": 10000, "isa_deviation": 0,
                                           "output_units": {"speed": "kn", "temperature": "°F"},
                                           "outputs": ["tas", "atmosphere"]})
    assert answer.status_code == 200, answer.json
    assert answer.json["tas"]["unit"] == "kt"
    assert answer.json["atmosphere"]["temperature"]["unit"] == "degF"


def test_the_calibration_table_takes_an_alias(client):
    table = {"ias": [60, 100, 160], "cas": [62, 101, 159]}
    kn = post(client, "/v1/airspeed", {"ias": 120, "altitude": 0, "isa_deviation": 0,
                                       "calibration": table | {"unit": "kn"}})
    kt = post(client, "/v1/airspeed", {"ias": 120, "altitude": 0, "isa_deviation": 0, "calibration": table})
    assert kn.status_code == 200, kn.json
    assert kn.json == kt.json


@pytest.mark.parametrize(("body", "pointer", "meant"), [
    ({"altitude": {"value": 7200, "unit": "feet"}, "isa_deviation": 0}, "/altitude/unit", "ft"),
    ({"altitude": 7200, "qnh": {"value": 1008, "unit": "hpa"}, "isa_deviation": 0}, "/qnh/unit", "hPa"),
    ({"altitude": 0, "temperature": {"value": 15, "unit": "C"}}, "/temperature/unit", "degC"),
    ({"altitude": 0, "isa_deviation": 0, "output_units": {"speed": "kts"}}, "/output_units/speed", "kt"),
    ({"altitude": 0, "isa_deviation": 0, "output_units": {"altitude": "meters"}}, "/output_units/altitude", "m"),
])
def test_a_misspelt_unit_is_a_422_that_says_which_was_meant(client, body, pointer, meant):
    doc = assert_problem(post(client, ATMOSPHERE, body), 422, pointer)
    message = next(e["message"] for e in doc["errors"] if e["pointer"] == pointer)
    assert f"did you mean {meant!r}?" in message


def test_the_units_table_says_which_symbols_are_also_accepted(client):
    dimensions = {d["dimension"]: {u["unit"]: u["aliases"] for u in d["units"]}
                  for d in client.get("/v1/units").json["dimensions"]}
    assert dimensions["speed"]["kt"] == ["kn"]
    assert dimensions["speed"]["m/s"] == []
    assert dimensions["temperature"]["degC"] == ["°C"]


def test_the_spec_accepts_the_aliases_and_refuses_the_misspellings():
    spec = _spec()
    schema = {"$ref": "#/components/schemas/AirspeedRequest", "components": spec["components"]}
    base = {"altitude": 10000, "isa_deviation": 0}
    for unit in units.DIMENSIONS["speed"].symbols:
        jsonschema.validate(base | {"cas": {"value": 250, "unit": unit}}, schema)
    for unit in ("kts", "knots", "KT"):
        with pytest.raises(jsonschema.ValidationError):
            jsonschema.validate(base | {"cas": {"value": 250, "unit": unit}}, schema)


# --- Missing inputs say what to give, in the words of the trade ---

@pytest.mark.parametrize(("path", "body", "pointer", "words"), [
    ("/v1/airspeed/schedule", {"cas": 290, "mach": 0.76}, "/altitude",
     "Missing: the pressure altitude (altitude), in ft"),
    ("/v1/airspeed/crossover", {"mach": 0.76}, "/cas", "Missing: the calibrated airspeed (cas), in kt"),
    ("/v1/airspeed/crossover", {"cas": 290}, "/mach", "Missing: the Mach number (mach)."),
    ("/v1/lift/curve", {"aspect_ratio": 11, "mach": 0.3}, "/sweep_half_chord",
     "Missing: the sweep of the wing's half-chord line (sweep_half_chord), in deg"),
    ("/v1/lift/stall", {"wing_area": 61, "cl_max": 1.6, "altitude": 0, "isa_deviation": 0}, "/weight",
     'Missing: the weight, in kg, or as {"value": ..., "unit": ...} in one of kg, t, lb, N, kN, lbf.'),
    (ATMOSPHERE, {"altitude": {"value": 10}}, "/altitude/unit", "Missing: the unit of `value` (unit), one of m, ft"),
])
def test_a_missing_input_says_what_to_give(client, path, body, pointer, words):
    doc = assert_problem(post(client, path, body), 422, pointer)
    message = next(e["message"] for e in doc["errors"] if e["pointer"] == pointer)
    assert message.startswith(words), message
    assert "Missing data for required field" not in json.dumps(doc)
