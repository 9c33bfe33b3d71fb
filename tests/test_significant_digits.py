"""significant_digits: numbers people read, rounded in one vectorised pass; full precision by default."""

import json

import numpy as np
import pytest

from service.api.outputs import round_significant
from tests.helpers import assert_problem, count_calls, post

ATM = "/v1/atmosphere"
SEA_LEVEL_IN_DEGF = {"altitude": 0, "isa_deviation": 0, "outputs": ["temperature"],
                     "output_units": {"temperature": "degF"}}


def test_15_degc_reads_59_degf(client):
    # ISA sea-level temperature 15 degC = 59 degF (ICAO Doc 7488/3; the conversion is exact)
    assert post(client, ATM, SEA_LEVEL_IN_DEGF | {"significant_digits": 6}).json["temperature"]["value"] == 59
    array = post(client, ATM, SEA_LEVEL_IN_DEGF | {"altitude": [0, 0], "significant_digits": 6}).json
    assert array["temperature"]["value"] == [59, 59]


def test_the_default_is_full_precision(client):
    full = post(client, ATM, SEA_LEVEL_IN_DEGF).json["temperature"]["value"]
    assert full != 59 and abs(full - 59) < 1e-12  # the nearest double to the SI round trip, untouched


@pytest.mark.parametrize("digits", [1, 2, 3, 6, 10])
def test_every_number_is_rounded_as_a_decimal(client, digits):
    body = {"altitude": list(np.linspace(-1000, 60000, 37)), "isa_deviation": 7.3}
    full = post(client, ATM, body).json
    rounded = post(client, ATM, body | {"significant_digits": digits}).json
    checked = 0
    for name, value in full.items():
        if name == "warnings":
            continue
        numbers = value["value"] if isinstance(value, dict) else value
        got = rounded[name]["value"] if isinstance(value, dict) else rounded[name]
        for x, y in zip(numbers, got, strict=True):
            if x is None:
                assert y is None
                continue
            assert y == float(f"{x:.{digits}g}"), (name, x, y)
            assert len(repr(abs(y)).replace(".", "").strip("0").split("e")[0]) <= max(digits, 1) + 1
            checked += 1
    assert checked > 300


def test_csv_and_grid_inputs_are_rounded_too(client):
    body = {"altitude": {"value": [1000.123456, 2000.5], "unit": "m"}, "isa_deviation": [0.1234567], "grid": True,
            "outputs": ["pressure"], "significant_digits": 3}
    answer = post(client, ATM, body).json
    assert answer["inputs"]["altitude"]["value"] == [3280.0, 6560.0]  # 1000.123456 m = 3281.24 ft
    assert answer["inputs"]["isa_deviation"]["value"] == [0.123, 0.123]
    csv = post(client, ATM, body, headers={"Accept": "text/csv"}).get_data(as_text=True).splitlines()
    assert csv[1].split(",")[:2] == ["3280.0", "0.123"]


@pytest.mark.parametrize("digits", [0, 18, -1, 6.5, True, "6", None, [6]])
def test_digits_outside_1_to_17_are_refused(client, digits):
    assert_problem(post(client, ATM, {"altitude": 0, "isa_deviation": 0, "significant_digits": digits}), 422,
                   "/significant_digits")


def test_rounding_is_vectorised(client):
    def calls(points):
        body = json.dumps({"altitude": list(np.linspace(0, 30000, points)), "isa_deviation": 5,
                           "significant_digits": 4})
        return count_calls(lambda: client.post(ATM, data=body, content_type="application/json"))

    post(client, ATM, {"altitude": [0, 1], "isa_deviation": 5, "significant_digits": 4})  # warm caches
    assert calls(20_000) == calls(20)


@pytest.mark.parametrize("value", [None, "cl", True, 7, np.array([1, 2]), np.array(["cas", "mach"]), [1.23456]])
def test_what_is_not_a_float_is_written_as_it_is(value):
    # Labels (solved_for, governing), flags, whole numbers and nulls are not rounded (outputs.round_significant).
    assert round_significant(value, 2) is value
