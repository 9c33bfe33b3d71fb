"""Each rule over several fields is declared once and yields both its JSON Schema (the spec's allOf) and its
check (the 422): over random requests, the spec's verdict and the check's agree, for every request schema."""

from __future__ import annotations

import functools
import itertools

import jsonschema
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.api.airspeed import AirspeedRequest, CrossoverRequest, ScheduleRequest
from service.api.atmosphere import AtmosphereRequest
from service.api.drag import DragRequest, DragSpeedsRequest
from service.api.field_schemas import named_schemas
from service.api.fields import Value
from service.api.lift.buffet import BuffetRequest
from service.api.lift.curve import LiftCurveRequest
from service.api.lift.solve import UNKNOWNS, LiftSolveRequest, LiftWingSchema
from service.api.lift.stall import LiftStallRequest
from service.api.lift.turn import TurnRequest
from service.api.rule_schema import Jointly, RuleSchema, _cover, schema_rules
from service.api.rules import NotTogether

SCHEMAS = [AtmosphereRequest, AirspeedRequest, CrossoverRequest, ScheduleRequest, LiftSolveRequest,
           LiftStallRequest, LiftCurveRequest, LiftWingSchema, TurnRequest, BuffetRequest, DragRequest,
           DragSpeedsRequest]


def _value(unit):
    """A loaded quantity as a check sees it."""
    return Value(1.0, unit, "altitude", False)


#: Per field, the (raw JSON, loaded) forms a request may give (absent is always possible).
FORMS = {
    "altitude": [(5000, _value("ft")), ({"value": 300, "unit": "FL"}, _value("FL"))],
    "altitude_kind": [("pressure", "pressure"), ("geometric", "geometric")],
    "wing": [({}, {}), ({"cl_max": 1.6}, {"cl_max": 1.6})],
    "solve_for": [(unknown, unknown) for unknown in UNKNOWNS],
}


def _request(schema: RuleSchema, draw) -> tuple[dict, dict]:
    """A random request over the fields the schema's rules name: (raw JSON, loaded data)."""
    rules = schema_rules(schema)
    names = sorted({name for rule in rules for name in _fields(rule)} - {"outputs"})
    raw, loaded = {}, {}
    for name in names:
        if name == "solve_for" or draw(st.booleans()):
            raw[name], loaded[name] = draw(st.sampled_from(FORMS.get(name, [(1.0, 1.0)])))
    if "altitude_kind" in schema.fields and "altitude_kind" not in loaded:
        loaded["altitude_kind"] = "pressure"  # its load_default
    outputs = list(getattr(schema, "OUTPUTS", ()))
    if outputs and draw(st.booleans()):
        raw["outputs"] = loaded["outputs"] = draw(st.lists(st.sampled_from(outputs), min_size=1, max_size=3))
    return raw, loaded


def _fields(rule):
    names = set(rule.names)
    for _, (required, _, rules) in getattr(rule, "cases", {}).items():
        names |= set(required) | {name for inner in rules for name in _fields(inner)}
    return names


@functools.cache
def _schema_and_validator(schema_class):
    schema = schema_class()
    # the rules refer to the dimensions' named types (api.field_schemas.named_schemas): resolved from the same root
    return schema, jsonschema.Draft202012Validator({"allOf": [rule.spec() for rule in schema_rules(schema)],
                                                    "components": {"schemas": named_schemas()}})


@pytest.mark.parametrize("schema_class", SCHEMAS, ids=lambda c: c.__name__)
@settings(max_examples=100, deadline=None)
@given(data=st.data())
def test_spec_and_check_agree(schema_class, data):
    schema, validator = _schema_and_validator(schema_class)
    rules = schema_rules(schema)
    raw, loaded = _request(schema, data.draw)
    by_spec = validator.is_valid(raw)
    errors = {key: message for rule in rules if rule.check for key, message in rule.check(loaded).items()}
    assert by_spec == (not errors), (raw, errors)


def test_a_rule_applies_only_where_its_fields_are():
    assert NotTogether("load_factor", "bank_angle") not in schema_rules(AtmosphereRequest())
    assert all(set(rule.names) <= set(AtmosphereRequest().fields) for rule in schema_rules(AtmosphereRequest()))


@settings(max_examples=200, deadline=None)
@given(size=st.integers(1, 4), data=st.data())
def test_jointly_alternatives_cover_the_allowed_combinations_once(size, data):
    """rule_schema._cover: every allowed combination by exactly one term (disjoint, for generators that expand them),
    nothing forbidden (don't-care combinations may be either)."""
    combos = list(itertools.product((0, 1), repeat=size))
    kinds = data.draw(st.lists(st.sampled_from(["allowed", "forbidden", "free"]), min_size=len(combos),
                               max_size=len(combos)))
    allowed = {c for c, k in zip(combos, kinds, strict=True) if k == "allowed"}
    free = {c for c, k in zip(combos, kinds, strict=True) if k == "free"}
    if not allowed:
        return
    terms = _cover(allowed, free)

    def covers(term, bits):
        return all(t is None or t == b for t, b in zip(term, bits, strict=True))

    for bits in combos:
        hits = sum(covers(term, bits) for term in terms)
        assert hits <= 1
        if bits in allowed:
            assert hits == 1
        elif bits not in free:
            assert hits == 0


def test_grouped_rules_are_published_as_one_list_of_alternatives():
    """The air's temperature forms (T, ISA deviation, TAT, recovery factor, TAT not with a geometric height) and its
    altitude forms (FL, QNH, geometric) count as one choice each for a request generator (tests/test_fuzz_spec.py)."""
    joint = [rule for rule in schema_rules(TurnRequest()) if isinstance(rule, Jointly)]
    assert [set(rule.names) for rule in joint] == [
        {"altitude", "altitude_kind", "qnh"},
        {"temperature", "isa_deviation", "total_air_temperature", "altitude_kind", "recovery_factor"}]
    assert [len(rule.spec()["anyOf"]) for rule in joint] == [3, 3]
