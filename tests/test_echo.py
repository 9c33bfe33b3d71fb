"""Echoes are exact: an input echoed (grid `inputs`, CSV input columns) is the caller's number, to the last bit,
when it was given in the output unit of its dimension; converted only when another output unit was asked for."""

import csv
import io

import pytest

from tests.helpers import post

ATM = "/v1/atmosphere"
#: Numbers whose trip through SI and back is not exact in float64 (checked below), and round ones.
FEET = [1800.3, 0.1, 3.3, 1234.5678, 29000.7, 100.0]
DEGC = [-56.5, 15.1, 0.3, 32.7]


def test_these_numbers_do_not_survive_a_trip_through_si():
    assert any(x * 0.3048 / 0.3048 != x for x in FEET)
    assert any((x + 273.15) - 273.15 != x for x in DEGC)


def test_grid_inputs_are_the_numbers_given(client):
    body = {"altitude": FEET, "temperature": DEGC, "grid": True, "outputs": ["pressure"]}
    inputs = post_ok(client, body)["inputs"]
    assert inputs["altitude"] == {"value": [x for x in FEET for _ in DEGC], "unit": "ft"}
    assert inputs["temperature"] == {"value": DEGC * len(FEET), "unit": "degC"}


def test_csv_input_columns_are_the_numbers_given(client):
    body = {"altitude": {"value": FEET, "unit": "ft"}, "temperature": DEGC[0], "outputs": ["pressure"]}
    text = post(client, ATM, body, headers={"Accept": "text/csv"}).get_data(as_text=True)
    rows = list(csv.DictReader(io.StringIO(text)))
    assert [float(r["input.altitude [ft]"]) for r in rows] == FEET
    assert {float(r["input.temperature [degC]"]) for r in rows} == {DEGC[0]}


def test_an_input_in_another_unit_is_converted_to_the_output_unit(client):
    body = {"altitude": {"value": [549.64], "unit": "m"}, "isa_deviation": 0, "grid": True, "outputs": ["pressure"]}
    assert post_ok(client, body)["inputs"]["altitude"]["value"] == pytest.approx([549.64 / 0.3048], rel=1e-15)
    metres = post_ok(client, body | {"output_units": {"altitude": "m"}})["inputs"]["altitude"]
    assert metres == {"value": [549.64], "unit": "m"}  # asked for in the unit given: as given


def test_a_weight_given_as_a_mass_is_echoed_in_its_output_unit(client):
    body = {"solve_for": "cl", "weight": [21000.3], "wing_area": 61, "mach": 0.45, "altitude": 25000,
            "isa_deviation": 5, "grid": True, "outputs": ["cl"]}
    weight = post_ok(client, body, "/v1/lift/solve")["inputs"]["weight"]
    assert weight["unit"] == "N" and weight["value"] == pytest.approx([21000.3 * 9.80665], rel=1e-15)


def post_ok(client, body, path=ATM):
    response = post(client, path, body)
    assert response.status_code == 200, response.get_data(as_text=True)
    return response.json
