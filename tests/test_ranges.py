"""Ranges {"start", "stop", "step", "unit"}: the count without allocating, the expansion, the refusals."""

import math

import marshmallow as ma
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.api import ranges
from service.api.problems import Problem


def expand(raw, limit=1000, unit_allowed=True):
    return ranges.expand(raw, limit=limit, unit_allowed=unit_allowed)


# (range, expected numbers): the arithmetic sequences typed out by hand.
CASES = [
    ({"start": 0, "stop": 40000, "step": 10000}, [0, 10000, 20000, 30000, 40000]),
    ({"start": 0, "stop": 1, "step": 0.1}, [0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1]),
    # (0.3 - 0.1) / 0.1 is 1.9999999999999998 in binary floating point: stop still falls on a step
    ({"start": 0.1, "stop": 0.3, "step": 0.1}, [0.1, 0.2, 0.3]),
    ({"start": 0, "stop": 10, "step": 3}, [0, 3, 6, 9]),  # stop between steps: not included
    ({"start": 10, "stop": 0, "step": -2.5}, [10, 7.5, 5, 2.5, 0]),
    ({"start": 5, "stop": 5, "step": 1}, [5]),
    ({"start": 5, "stop": 5, "step": -1}, [5]),
    ({"start": -40, "stop": 40, "step": 40, "unit": "degC"}, [-40, 0, 40]),
]


@pytest.mark.parametrize(("raw", "expected"), CASES)
def test_expand_and_count(raw, expected):
    values, unit = expand(raw)
    assert values.dtype == np.float64 and values.ndim == 1
    np.testing.assert_allclose(values, expected, rtol=0, atol=1e-12)
    assert ranges.count(raw) == len(expected)
    assert unit == raw.get("unit")


def test_stop_on_a_step_is_exactly_stop():
    values, _ = expand({"start": 0.1, "stop": 0.7, "step": 0.1})
    assert values[-1] == 0.7 and len(values) == 7


def test_count_allocates_nothing_for_a_huge_range():
    raw = {"start": 0, "stop": 1e15, "step": 1}
    assert ranges.count(raw) == 10**15 + 1  # arithmetic only: building it would need 8 PB


def test_expand_refuses_over_the_limit_before_allocating():
    with pytest.raises(Problem) as info:
        expand({"start": 0, "stop": 1e15, "step": 1}, limit=200_000)
    assert info.value.status == 413
    assert info.value.extra == {"limit": 200_000}
    assert "1000000000000001 points" in info.value.detail


def test_the_limit_itself_is_allowed():
    values, _ = expand({"start": 1, "stop": 100, "step": 1}, limit=100)
    assert len(values) == 100
    with pytest.raises(Problem):
        expand({"start": 1, "stop": 101, "step": 1}, limit=100)


@pytest.mark.parametrize(("raw", "key", "words"), [
    ({"start": 0, "stop": 10, "step": 0}, "step", "must not be zero"),
    ({"start": 0, "stop": 10, "step": -1}, "step", "must be positive"),
    ({"start": 10, "stop": 0, "step": 1}, "step", "must be negative"),
    ({"start": 0, "stop": 10}, "step", "Missing"),
    ({"stop": 10, "step": 1}, "start", "Missing"),
    ({"start": 0, "stop": 10, "step": 1, "stride": 2}, "stride", "Unknown field"),
    ({"start": 0, "stop": 10, "step": 1, "value": 2}, "value", "not both"),
    ({"start": -1.7e308, "stop": 1.7e308, "step": 1e-300}, "step", "too many steps"),
])
def test_refusals_point_at_the_key(raw, key, words):
    with pytest.raises(ma.ValidationError) as info:
        expand(raw)
    assert key in info.value.messages
    assert words in " ".join(info.value.messages[key])


@pytest.mark.parametrize("raw", [
    {"start": 0, "stop": 10, "step": 0}, {"start": 0, "stop": 10, "step": -1}, {"start": 0, "stop": 10},
    {"start": True, "stop": 10, "step": 1}, {"start": -1.7e308, "stop": 1.7e308, "step": 1e-300},
])
def test_count_leaves_refusals_to_the_field(raw):
    assert ranges.count(raw) == 1


def test_a_dimensionless_range_takes_no_unit():
    with pytest.raises(ma.ValidationError) as info:
        expand({"start": 0.5, "stop": 0.8, "step": 0.1, "unit": "kt"}, unit_allowed=False)
    assert "unit" in info.value.messages


@pytest.mark.parametrize("bad", [True, None, "10", [1, 2], {"value": 1}])
def test_the_numbers_go_through_the_fields_parser(bad):
    """start, stop and step are read by the caller's number parser, so they get the fields' messages."""
    def number(raw):
        if type(raw) not in (int, float):
            raise ma.ValidationError("Not a number (the field's words).")
        return raw

    with pytest.raises(ma.ValidationError) as info:
        ranges.expand({"start": 0, "stop": bad, "step": 1}, limit=10, unit_allowed=True, number=number)
    assert info.value.messages == {"stop": ["Not a number (the field's words)."]}


@pytest.mark.parametrize(("raw", "expected"), [
    ([1, 2, 3], 3), (5, 1), ({"value": [1, 2], "unit": "ft"}, 2), ({"value": 3, "unit": "ft"}, 1),
    (np.arange(7.0), 7), ({"value": np.arange(4.0), "unit": "FL"}, 4),
    ({"start": 0, "stop": 100, "step": 10, "unit": "FL"}, 11), ({"start": 0, "stop": 100}, 1), ("text", 1),
])
def test_length_of_any_raw_input(raw, expected):
    assert ranges.length(raw) == expected


finite = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(start=finite, span=st.floats(min_value=0, max_value=1e6), step=st.floats(min_value=1e-3, max_value=1e6),
       down=st.booleans())
def test_count_is_the_length_of_the_expansion(start, span, step, down):
    stop = start - span if down else start + span
    raw = {"start": start, "stop": stop, "step": -step if down else step}
    n = ranges.count(raw)
    if n > 10_000:
        return
    values, _ = expand(raw, limit=10_000)
    assert len(values) == n
    lo, hi = min(start, stop), max(start, stop)
    slack = 1e-9 * max(1.0, abs(lo), abs(hi))
    assert values.min() >= lo - slack and values.max() <= hi + slack
    if n > 1:
        np.testing.assert_allclose(np.diff(values), raw["step"], rtol=1e-6, atol=1e-6 * max(1.0, abs(start)))
    # one more step would pass stop: the range is not cut short
    assert math.copysign(1.0, raw["step"]) * (start + n * raw["step"] - stop) > -1e-6 * step


# --- ranges at the endpoints ---------------------------------------------------------------------------

from tests.helpers import assert_problem, post  # noqa: E402

#: (path, request with ranges, the same request with arrays typed out by hand)
SAME = [
    ("/v1/atmosphere", {"altitude": {"start": 0, "stop": 400, "step": 100, "unit": "FL"}, "isa_deviation": 10},
     {"altitude": {"value": [0, 100, 200, 300, 400], "unit": "FL"}, "isa_deviation": 10}),
    ("/v1/atmosphere", {"altitude": {"start": 0, "stop": 10000, "step": 5000}, "temperature": {
        "start": 15, "stop": 5, "step": -5}, "grid": True},
     {"altitude": [0, 5000, 10000], "temperature": [15, 10, 5], "grid": True}),
    ("/v1/airspeed", {"cas": {"start": 250, "stop": 300, "step": 25, "unit": "kt"}, "altitude": 30000},
     {"cas": {"value": [250, 275, 300], "unit": "kt"}, "altitude": 30000}),
    ("/v1/airspeed/crossover", {"cas": 280, "mach": {"start": 0.70, "stop": 0.80, "step": 0.05}},
     {"cas": 280, "mach": [0.70, 0.75, 0.80]}),
    ("/v1/airspeed/schedule", {"cas": 290, "mach": 0.76, "altitude": {"start": 5000, "stop": 35000, "step": 10000}},
     {"cas": 290, "mach": 0.76, "altitude": [5000, 15000, 25000, 35000]}),
    ("/v1/lift/solve", {"solve_for": "cl", "weight": {"start": 18, "stop": 22, "step": 2, "unit": "t"},
                        "wing_area": 61, "mach": 0.45, "altitude": 25000},
     {"solve_for": "cl", "weight": {"value": [18, 20, 22], "unit": "t"}, "wing_area": 61, "mach": 0.45,
      "altitude": 25000}),
    ("/v1/lift/stall", {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000,
                        "bank_angle": {"start": 0, "stop": 60, "step": 15}},
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "bank_angle": [0, 15, 30, 45, 60]}),
    ("/v1/lift/curve", {"aspect_ratio": {"start": 6, "stop": 12, "step": 3}, "sweep_half_chord": 0, "mach": 0.3,
                        "airfoil_lift_slope": 6.0, "cl": 0.5},
     {"aspect_ratio": [6, 9, 12], "sweep_half_chord": 0, "mach": 0.3, "airfoil_lift_slope": 6.0, "cl": 0.5}),
]


@pytest.mark.parametrize(("path", "ranged", "typed"), SAME)
def test_a_range_is_its_array(client, path, ranged, typed):
    response = post(client, path, ranged)
    assert response.status_code == 200, response.get_data(as_text=True)
    assert response.json == post(client, path, typed).json


def test_a_range_counts_against_the_point_limit_before_anything_is_built(client, app, monkeypatch):
    app.config["QBAR_MAX_POINTS"] = 1000

    def build(*args, **kwargs):
        raise AssertionError("built")

    monkeypatch.setattr(ranges.np, "arange", build)
    doc = assert_problem(post(client, "/v1/atmosphere", {"altitude": {"start": 0, "stop": 1e12, "step": 1}}), 413)
    assert doc["limit"] == 1000 and "1000000000001 points" in doc["detail"]
    # in a grid, the product of the counts
    doc = assert_problem(post(client, "/v1/atmosphere", {"altitude": {"start": 0, "stop": 99, "step": 1},
                                                         "isa_deviation": {"start": 0, "stop": 10, "step": 1},
                                                         "grid": True}), 413)
    assert "1100 points" in doc["detail"]


def test_a_range_in_a_nested_block_is_limited_too(client, app):
    app.config["QBAR_MAX_POINTS"] = 100
    body = {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": 0.45, "altitude": 25000,
            "wing": {"aspect_ratio": {"start": 1, "stop": 1e9, "step": 1}, "sweep_half_chord": 0}}
    assert_problem(post(client, "/v1/lift/solve", body), 413)


@pytest.mark.parametrize(("body", "pointer", "words"), [
    ({"altitude": {"start": 0, "stop": 1000, "step": 0}}, "/altitude/step", "must not be zero"),
    ({"altitude": {"start": 0, "stop": 1000, "step": -100}}, "/altitude/step", "must be positive"),
    ({"altitude": {"start": 0, "stop": 1000, "step": True}}, "/altitude/step", "boolean"),
    ({"altitude": {"start": 0, "stop": "1000", "step": 10}}, "/altitude/stop", "string"),
    ({"altitude": {"start": 0, "stop": 1000}}, "/altitude/step", "Missing"),
    ({"altitude": {"start": 0, "stop": 1000, "step": 10, "unit": "feet"}}, "/altitude/unit", "allowed: m, ft, km, FL"),
    ({"altitude": {"start": 0, "stop": 1e6, "step": 1e5}}, "/altitude/stop", "model's range"),
    ({"altitude": {"start": -1e5, "stop": 0, "step": 1e4}}, "/altitude/start", "model's range"),
    ({"altitude": 0, "isa_deviation": {"start": 0, "stop": 1, "step": 0.5, "value": 3}}, "/isa_deviation/value",
     "not both"),
])
def test_range_refusals_point_into_the_range(client, body, pointer, words):
    doc = assert_problem(post(client, "/v1/atmosphere", body), 422, pointer)
    assert any(words in e["message"] for e in doc["errors"]), doc["errors"]


def test_a_dimensionless_range_with_a_unit(client):
    assert_problem(post(client, "/v1/airspeed/crossover", {"cas": 280, "mach": {"start": 0.7, "stop": 0.8,
                                                                                 "step": 0.1, "unit": "kt"}}),
                   422, "/mach/unit")


def test_a_range_of_flight_levels_is_a_pressure_altitude(client):
    """FL with QNH is refused whichever form the altitude takes."""
    body = {"altitude": {"start": 0, "stop": 100, "step": 50, "unit": "FL"}, "qnh": 1000}
    assert_problem(post(client, "/v1/atmosphere", body), 422, "/qnh")
