"""Exact range ends: every bounded physical field, in every unit, accepts its published ends and refuses the
next float past them; what the spec publishes is, to the last bit, what the field checks.

84 852 m (the top of the model, U.S. Standard Atmosphere 1976) is 278 385.826 771 653 5... ft and
FL 2 783.858 267 716 535... (1 ft = 0.3048 m exactly, NIST SP 811): those are accepted, not a rounded-in value.
"""

import json
import math

import pytest
from marshmallow import ValidationError, class_registry

from service.api.fields import Quantity
from service.cli import spec_text

SPEC = json.loads(spec_text())
SCHEMAS = SPEC["components"]["schemas"]


def bounded_fields():
    """(where, field, published property) for every bounded Quantity of every request schema, nested ones too."""
    found = []
    for name, schema in SCHEMAS.items():
        if "properties" not in schema:
            continue
        try:
            cls = class_registry.get_class(name)
        except Exception:  # a schema the app builds without a class (responses' inputs) or a named type
            continue
        instance = cls()
        for field_name, field in instance.fields.items():
            if isinstance(field, Quantity) and field.bounded:
                found.append((f"{name}.{field_name}", field, schema["properties"][field_name]))
    return found


FIELDS = bounded_fields()


def test_the_walk_reaches_every_bounded_dimension():
    assert {field.dimension for _, field, _ in FIELDS} >= {
        "altitude", "speed", "temperature", "temperature_difference", "pressure", "weight", "area", "angle"}
    assert len(FIELDS) > 30


def _ranges(field):
    yield {}, field.bounds
    if hasattr(field, "geometric_bounds") and "altitude_kind" in field.parent.fields:
        yield {"altitude_kind": "geometric"}, field.geometric_bounds


@pytest.mark.parametrize(("where", "field", "prop"), FIELDS, ids=[w for w, _, _ in FIELDS])
def test_every_unit_at_and_just_past_both_ends(where, field, prop):
    walked = 0
    for data, bounds in _ranges(field):
        for unit, (lo, hi) in bounds.items():
            si_lo, si_hi = bounds[unit].si
            for end, outward, exclusive in ((lo, -math.inf, field.exclusive_minimum),
                                            (hi, math.inf, field.exclusive_maximum)):
                if end is None:
                    continue
                inside = math.nextafter(end, -outward)
                accepted = [inside] if exclusive else [end, inside]
                refused = [end] if exclusive else [math.nextafter(end, outward)]
                for value in accepted:
                    si = float(field.deserialize({"value": value, "unit": unit}, field.name, data).si)
                    assert (si_lo is None or si >= si_lo) and (si_hi is None or si <= si_hi), (unit, value, si)
                for value in refused:
                    with pytest.raises(ValidationError):
                        field.deserialize({"value": value, "unit": unit}, field.name, data)
                walked += 1
    assert walked >= len(field.dim.units)


@pytest.mark.parametrize(("where", "field", "prop"), FIELDS, ids=[w for w, _, _ in FIELDS])
def test_the_spec_publishes_the_ends_the_field_checks(where, field, prop):
    bounds = field.bounds
    if hasattr(field, "geometric_bounds") and "altitude_kind" in field.parent.fields:
        # published as the wider of the pressure and geometric ranges; a rule on altitude_kind narrows it (its
        # two branches are read by tests/test_edges.py)
        bounds = {unit: (min(lo, field.geometric_bounds[unit][0]), max(hi, field.geometric_bounds[unit][1]))
                  for unit, (lo, hi) in field.bounds.items()}
        assert bounds != field.bounds
    low = "exclusiveMinimum" if field.exclusive_minimum else "minimum"
    high = "exclusiveMaximum" if field.exclusive_maximum else "maximum"
    assert (prop.get(low), prop.get(high)) == tuple(bounds[field.default_unit])
    for condition in prop["allOf"]:
        unit = condition["if"]["properties"]["unit"]
        name = unit.get("const") or unit["enum"][0]
        value = condition["then"]["properties"]["value"]
        assert (value.get(low), value.get(high)) == tuple(bounds[name]), name
        assert value.get("items", {}).get(low) == value.get(low)


def test_the_top_of_the_model_in_feet_and_flight_levels():
    altitude = next(f for w, f, _ in FIELDS if w == "AtmosphereRequest.altitude")
    assert altitude.bounds["ft"][1] == pytest.approx(84852 / 0.3048, rel=1e-15)  # 278385.8267716535... ft
    assert altitude.bounds["FL"][1] == pytest.approx(848.52 / 0.3048, rel=1e-15)
    for unit in ("ft", "FL"):
        value = altitude.deserialize({"value": altitude.bounds[unit][1], "unit": unit}, "altitude", {})
        assert float(value.si) == pytest.approx(84852, rel=1e-15)
