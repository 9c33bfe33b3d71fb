"""output_units: a weight read as a mass (kg, t, lb) or a force; a key that applies to nothing is a 422."""

import pytest

from tests.helpers import assert_problem, post

SOLVE = "/v1/lift/solve"
# The TQ-62 (invented demo type) at CL 0.6, Mach 0.45, FL250, ISA+5: the weight it can carry.
BODY = {"solve_for": "weight", "cl": 0.6, "wing_area": 61, "mach": 0.45, "altitude": 25000, "isa_deviation": 5,
        "outputs": ["weight", "lift"]}
G0 = 9.80665  # standard gravity [m/s2], exact (CGPM 1901; ISO 80000-3)
LB = 0.45359237  # kg, exact (international pound, 1959)


def answer(client, body):
    response = post(client, SOLVE, body)
    assert response.status_code == 200, response.get_data(as_text=True)
    return response.json


def test_a_weight_is_a_force_by_default_and_a_mass_on_request(client):
    newtons = answer(client, BODY)["weight"]
    assert newtons["unit"] == "N"
    for unit, per_unit in (("kg", 1.0), ("t", 1000.0), ("lb", LB)):
        mass = answer(client, BODY | {"output_units": {"mass": unit}})
        assert mass["weight"]["unit"] == unit
        assert mass["weight"]["value"] == pytest.approx(newtons["value"] / G0 / per_unit, rel=1e-14)
        assert mass["lift"] == newtons | {"value": mass["lift"]["value"]}  # lift stays a force
        assert mass["lift"]["unit"] == "N"


def test_force_units_apply_to_lift_and_to_weight_unless_a_mass_is_named(client):
    kn = answer(client, BODY | {"output_units": {"force": "kN"}})
    assert kn["weight"]["unit"] == kn["lift"]["unit"] == "kN"
    both = answer(client, BODY | {"output_units": {"force": "kN", "mass": "t"}})
    assert (both["weight"]["unit"], both["lift"]["unit"]) == ("t", "kN")


def test_a_grid_echoes_a_weight_in_its_output_unit(client):
    body = {"solve_for": "cl", "weight": [21000.0], "wing_area": 61, "mach": 0.45, "altitude": 25000,
            "isa_deviation": 5, "grid": True, "outputs": ["cl"], "output_units": {"mass": "kg"}}
    assert answer(client, body)["inputs"]["weight"] == {"value": [21000.0], "unit": "kg"}  # as given


@pytest.mark.parametrize(("path", "body", "key"), [
    ("/v1/atmosphere", {"altitude": 0, "isa_deviation": 0, "output_units": {"mass": "t"}}, "mass"),
    ("/v1/atmosphere", {"altitude": 0, "isa_deviation": 0, "outputs": ["pressure"],
                        "output_units": {"altitude": "m"}}, "altitude"),
    ("/v1/airspeed/crossover", {"cas": 280, "mach": 0.78, "output_units": {"speed": "km/h"}}, "speed"),
    (SOLVE, BODY | {"outputs": ["cl"], "output_units": {"mass": "t"}}, "mass"),
])
def test_an_output_unit_that_applies_to_nothing_is_refused(client, path, body, key):
    doc = assert_problem(post(client, path, body), 422, f"/output_units/{key}")
    assert "No output of this answer is" in doc["errors"][0]["message"]


def test_the_unused_output_unit_message_word_for_word(client):
    doc = assert_problem(post(client, "/v1/atmosphere", {"altitude": 0, "isa_deviation": 0, "outputs": ["pressure"],
                                                         "output_units": {"speed": "kt"}}), 422, "/output_units/speed")
    assert doc["errors"] == [{"pointer": "/output_units/speed", "message": "No output of this answer is a speed: leave "
                              "it out, or ask for an output it applies to (`outputs`)."}]


def test_the_spec_documents_weight_as_a_mass(client):
    spec = client.get("/openapi.json").json["components"]["schemas"]
    # one output type for every dimension (QuantityOut: the Python client's model count), its unit a string
    assert spec["LiftSolveResponse"]["properties"]["weight"]["$ref"] == "#/components/schemas/QuantityOut"
    assert "mass" in spec["QuantityOut"]["description"]
    assert set(spec["WeightUnit"]["enum"]) >= {"kg", "t", "lb", "N", "kN", "lbf"}
    assert "mass" in spec["OutputUnits"]["description"] and "422" in spec["OutputUnits"]["description"]
