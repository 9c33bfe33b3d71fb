"""The Quantity and Number fields: forms accepted, forms refused, pointers, no per-element calls."""


import marshmallow as ma
import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from service.api.fields import Number, OutputUnits, Quantity, trade_name
from service.api.inputs import ComputeSchema
from service.api.problems import flatten_messages
from tests.helpers import count_calls


class Sample(ma.Schema):
    altitude = Quantity("altitude")
    weight = Quantity("weight")
    mach = Number(minimum=0, exclusive_minimum=True)
    speed = Quantity("speed", minimum=0, exclusive_minimum=True)
    output_units = OutputUnits()


def load(**body):
    return Sample().load(body)


def errors_of(**body):
    with pytest.raises(ma.ValidationError) as err:
        load(**body)
    return flatten_messages(err.value.messages)


@pytest.mark.parametrize(("raw", "si"), [
    (1000, 304.8),
    (1000.0, 304.8),
    ({"value": 350, "unit": "FL"}, 35000 * 0.3048),
    ({"value": 1, "unit": "km"}, 1000.0),
    ({"value": [0, 1], "unit": "m"}, [0.0, 1.0]),
    ([0, 1000], [0.0, 304.8]),
])
def test_altitude_forms(raw, si):
    v = load(altitude=raw)["altitude"]
    np.testing.assert_allclose(v.si, si)
    assert v.is_array == isinstance(si, list)
    assert v.si.dtype == np.float64


def test_scalar_is_zero_dimensional():
    assert np.ndim(load(altitude=5)["altitude"].si) == 0


def test_weight_as_mass_or_force():
    assert load(weight=1000)["weight"].si == pytest.approx(9806.65)  # bare number: kg times g0
    assert load(weight={"value": 2, "unit": "kN"})["weight"].si == pytest.approx(2000.0)
    assert load(weight={"value": 1, "unit": "lb"})["weight"].si == pytest.approx(0.45359237 * 9.80665)


@pytest.mark.parametrize(("raw", "pointer", "text"), [
    (True, "/altitude", "boolean"),
    ("100", "/altitude", "string"),
    (None, "/altitude", "null"),
    ([1, "2", 3], "/altitude/1", "string"),
    ([1, None], "/altitude/1", "null"),
    ([1, True], "/altitude/1", "boolean"),
    ([[1, 2]], "/altitude/0", "Nested"),
    ([], "/altitude", "Empty"),
    ({"value": 1}, "/altitude/unit", "Missing"),
    ({"unit": "ft"}, "/altitude/value", "Missing"),
    ({"value": 1, "unit": "ft", "x": 2}, "/altitude/x", "Unknown"),
    ({"value": 1, "unit": "yd"}, "/altitude/unit", "allowed: m, ft, km, FL"),
    ({"value": [1, False], "unit": "ft"}, "/altitude/value/1", "boolean"),
    ({"value": 1, "unit": None}, "/altitude/unit", "Unknown unit"),
    (float("inf"), "/altitude", "floating-point range"),
    ([1.0, float("inf")], "/altitude/1", "floating-point range"),
    (10**400, "/altitude", "floating-point range"),
    ([1, 10**400], "/altitude/1", "floating-point range"),
    ({"a": 1}, "/altitude/a", "Unknown"),
])
def test_refused_with_pointer(raw, pointer, text):
    errors = {e["pointer"]: e["message"] for e in errors_of(altitude=raw)}
    assert pointer in errors
    assert text.lower() in errors[pointer].lower()


@pytest.mark.parametrize(("item", "message"), [
    ("1", "Not a number: a string."),
    ({}, "Not a number: an object."),
    (None, "Not a number: null."),
    (True, "Not a number: a boolean."),
    ([1], "Nested arrays are not accepted: give a flat array of numbers."),
    (10**400, "Number out of the floating-point range."),
])
def test_element_messages_word_for_word(item, message):
    # The messages are sentences a client shows as they are: capital first letter, full stop.
    assert errors_of(altitude=[1.0, item]) == [{"pointer": "/altitude/1", "message": message}]


def test_at_most_ten_bad_elements_are_reported():
    # The contract of every list of offenders (README, errors): the first ten, in order.
    errors = errors_of(altitude=["x"] * 12)
    assert [e["pointer"] for e in errors] == [f"/altitude/{i}" for i in range(10)]


class Bounded(ma.Schema):
    count = Number(minimum=1, maximum=9)
    fraction = Number(minimum=0, maximum=1, exclusive_minimum=True, exclusive_maximum=True)
    speed = Quantity("speed", minimum=0, maximum=600, exclusive_minimum=True)


@pytest.mark.parametrize(("body", "message"), [
    ({"count": 0}, "Must be at least 1 and at most 9."),
    ({"count": [5, 10]}, "Must be at least 1 and at most 9."),
    ({"fraction": 1}, "Must be above 0 and below 1."),
    ({"speed": 0}, "Must be above 0 kt and at most 600 kt."),
    ({"speed": {"value": 400, "unit": "m/s"}}, "Must be above 0 m/s and at most 308.666666667 m/s."),
])
def test_range_messages_word_for_word(body, message):
    # 600 kt = 600 * 1852 / 3600 m/s = 308.666... m/s (the knot is 1852 m per hour, exact), shown to 12 digits.
    with pytest.raises(ma.ValidationError) as err:
        Bounded().load(body)
    assert [e["message"] for e in flatten_messages(err.value.messages)] == [message]


def test_range_checks_point_at_elements():
    errors = errors_of(speed=[100, 0, -5, 20])
    assert [e["pointer"] for e in errors] == ["/speed/1", "/speed/2"]
    assert "above 0 kt" in errors[0]["message"]
    errors = errors_of(speed={"value": -1, "unit": "m/s"})
    assert errors[0]["pointer"] == "/speed/value"
    errors = errors_of(mach=[0.5, 0])
    assert errors[0]["pointer"] == "/mach/1"


def test_number_refuses_object_form():
    errors = errors_of(mach={"value": 0.8, "unit": "-"})
    assert errors[0]["pointer"] == "/mach"


def test_output_units():
    assert load(output_units={"altitude": "m"})["output_units"] == {"altitude": "m"}
    errors = errors_of(output_units={"altitude": "yd", "colour": "red"})
    assert {e["pointer"] for e in errors} == {"/output_units/altitude", "/output_units/colour"}
    assert errors_of(output_units=["m"]) == [{"pointer": "/output_units",
                                              "message": "Give an object of {dimension: unit}."}]


def test_no_python_call_per_element():
    """Parsing 10 and 100,000 elements makes the same number of Python-level calls."""
    schema = Sample()

    def count(n):
        body = {"altitude": {"value": [float(i) for i in range(n)], "unit": "m"}, "speed": list(range(1, n + 1))}
        return count_calls(lambda: schema.load(body))

    assert count(10) == count(100_000)


@given(st.lists(st.floats(-1e5, 1e5, allow_nan=False) | st.integers(-10**6, 10**6), min_size=1, max_size=50))
def test_any_finite_list_loads(values):
    v = load(altitude=values)["altitude"]
    np.testing.assert_allclose(v.si, np.array(values, dtype=float) * 0.3048)


@given(st.lists(st.one_of(st.booleans(), st.text(max_size=3), st.none(), st.just([1.0])), min_size=1, max_size=5),
       st.integers(0, 5))
def test_any_non_number_is_refused(bad, position):
    values = [1.0] * 5
    values[position:position] = bad
    errors = errors_of(altitude=values)
    assert errors[0]["pointer"] == f"/altitude/{position}"


class ComputeSample(ComputeSchema):
    OUTPUTS = ("x",)
    altitude = Quantity("altitude", required=True)
    speed = Quantity("speed", minimum=0, exclusive_minimum=True)
    mach = Number(load_default=None)


@pytest.mark.parametrize("body", [
    {"altitude": 5000},
    {"altitude": {"value": [0, 1000], "unit": "m"}, "speed": [1, 2], "output_units": {"altitude": "m"}},
    {"altitude": "high", "colour": "red"},
    {"speed": 3},
    {"altitude": [0, True], "grid": "yes"},
])
def test_lean_field_loop_loads_as_marshmallow_does(body):
    """ComputeSchema._deserialize (a lean copy of marshmallow's field loop) against marshmallow's own
    (taken with partial=(), which the lean loop leaves to marshmallow): the same data or the same errors."""
    schema = ComputeSample()

    def outcome(**kwargs):
        try:
            loaded = schema.load(dict(body), **kwargs)
        except ma.ValidationError as err:
            return "errors", err.messages
        return "data", {k: (v.si.tolist(), v.unit) if hasattr(v, "si") else v for k, v in loaded.data.items()}

    assert outcome() == outcome(partial=())


@pytest.mark.parametrize(("description", "name", "words"), [
    ("Pressure altitude [ft] (FL allowed): the level.", "altitude", "the pressure altitude (altitude)"),
    ("Density ratio sigma = rho / rho0 [-].", "density_ratio", "the density ratio sigma (density_ratio)"),
    ("Wing area, the reference of CL [m2].", "wing_area", "the wing area"),
    ("Oswald efficiency. Between 0 and 1.", "oswald", "the oswald efficiency (oswald)"),
    ("ISA deviation: OAT minus the standard temperature.", "isa_deviation", "the ISA deviation (isa_deviation)"),
    ("Mach number [-].", "mach", "the Mach number (mach)"),
    ("CLmax of the clean wing [-].", "cl_max", "the CLmax of the clean wing (cl_max)"),
    ("The weight (mass or force).", "weight", "the weight"),
])
def test_trade_names_in_the_words_of_the_description(description, name, words):
    # The wording of "Missing: ..." (fields.what_to_give): the description up to its first " [", " (", " = ",
    # ", ", ". " or ": "; a first word keeps its capital when the rest of it is not all lower case (QNH, CLmax)
    # or it is a name (Mach); the field's name in brackets unless the words already say it.
    assert trade_name(ma.fields.Field(metadata={"description": description}), name) == words


def test_ends_are_published_as_the_short_decimals_they_stand_for():
    # -100 degC to 100 degC is -148 degF to 212 degF (t/degF = 1.8 t/degC + 32, exact): the ends are published and
    # checked as those numbers, not as the floats a few units in the last place away that the conversion gives.
    field = Quantity("temperature", minimum=-100.0, maximum=100.0, bounds_unit="degC")
    assert tuple(field.bounds["degF"]) == (-148.0, 212.0)
    assert tuple(field.bounds["degC"]) == (-100.0, 100.0)
