"""The fields' types in the spec: a named schema per dimension, and each field's schema with its bounds.

:func:`named_schemas` are registered once as components (api.base.Api); :func:`number_schema` and
:func:`quantity_schema` describe one field (api.fields.field_to_properties), referring to those names, with
the field's range beside the reference in every unit.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from service import units
from service.api import ranges

if TYPE_CHECKING:
    from service.api.fields import Number, Quantity


def _bounded_number(lo, hi, field: Number) -> dict:
    schema = {"type": "number"}
    if lo is not None:
        schema["exclusiveMinimum" if field.exclusive_minimum else "minimum"] = lo
    if hi is not None:
        schema["exclusiveMaximum" if field.exclusive_maximum else "maximum"] = hi
    return schema


# --- Named schemas: one per dimension, each field refers to its dimension's -------------------------

def schema_name(dimension: str, suffix: str = "") -> str:
    """The component name of a dimension's schema: "temperature_difference" -> "TemperatureDifference"."""
    return "".join(part.capitalize() for part in dimension.split("_")) + suffix


def ref(name: str) -> dict:
    return {"$ref": f"#/components/schemas/{name}"}


def named_schemas() -> dict[str, dict]:
    """The named schemas the fields refer to (registered once as components by api.base.Api).

    Per dimension: ``<Dim>Unit`` (the unit enum: every accepted symbol), ``<Dim>Value`` (``{value,
    unit}``) and ``<Dim>`` (an input: a number or array in the field's default unit, or a ``<Dim>Value``).
    One ``QuantityOut`` for every output (``{value, unit}``, null where a value does not exist), and
    ``Calibration``, ``AltitudeKind``, ``OutputUnits``. ``<Dim>Range`` is the range form ``{start, stop,
    step[, unit]}`` (``NumberRange`` without a unit), which array fields accept beside ``<Dim>``. The spec
    leaves out those no field uses (api.spec). The bounds are the field's: beside the reference (see
    :func:`quantity_schema`), not in these.
    """
    nullable = {"type": ["number", "null"]}
    schemas = {
        "NumberRange": ranges.schema({"type": "number"}),
        "Numbers": {"oneOf": [{"type": "number"}, {"type": "array", "items": {"type": "number"}, "minItems": 1}],
                    "description": "A number, or a non-empty array of numbers (one per point)."},
        "NumbersOut": {"oneOf": [nullable, {"type": "array", "items": nullable}],
                       "description": "A number (scalar inputs) or one number per point; null where the value does "
                                      "not exist (see warnings)."},
    }
    for name, dim in units.DIMENSIONS.items():
        base = schema_name(name)
        schemas[base + "Unit"] = {"type": "string", "enum": list(dim.symbols),
                                  "description": f"A unit of {name.replace('_', ' ')}: {units.allowed(name)} "
                                                 "(GET /v1/units lists them)."}
        schemas[base + "Value"] = {
            "type": "object",
            "properties": {"value": ref("Numbers") | {"description": "The number or numbers, in `unit`."},
                           "unit": ref(base + "Unit") | {"description": "The unit of `value`."}},
            "required": ["value", "unit"],
            "additionalProperties": False,
            "description": f"{dim.description} in a unit of your choice.",
        }
        schemas[base + "Range"] = ranges.schema({"type": "number"}, ref(base + "Unit"))
        schemas[base] = {"oneOf": [ref("Numbers"), ref(base + "Value")],
                         "description": f"{dim.description}: a number or array in the field's default unit, "
                                        "or {value, unit}."}
    column = {"type": "array", "items": {"type": "number", "exclusiveMinimum": 0}, "minItems": 2}
    # One output type for every dimension (a type per dimension would take the generated Python client past
    # 120 model classes): the unit is that of output_units, or the dimension's default (GET /v1/units).
    schemas["QuantityOut"] = {
        "type": "object",
        "properties": {"value": ref("NumbersOut") | {"description": "The number or numbers, in `unit`; "
                                                                   "null where there is none (see warnings)."},
                       "unit": {"type": "string", "description": "The unit of `value`: the one output_units chose "
                                                                  "for its dimension, else the dimension's default "
                                                                  "(GET /v1/units lists them)."}},
        "required": ["value", "unit"],
        "additionalProperties": False,
        "description": "A physical output, in the unit output_units chose for its dimension (a weight: a force, "
                       "or a mass when output_units names `mass`).",
    }
    schemas["InputsEcho"] = {
        "type": "object",
        "additionalProperties": {"oneOf": [ref("QuantityOut"), ref("NumbersOut")]},
        "description": "The numeric inputs echoed at every point of a grid, by name: a physical input as "
                       "QuantityOut (in the output unit of its dimension), a dimensionless one as numbers.",
    }
    schemas["AltitudeKind"] = {"type": "string", "enum": ["pressure", "geometric"],
                               "description": "What `altitude` is: a pressure altitude or a geometric height."}
    schemas["Calibration"] = {  # api.speeds.CalibrationField
        "type": "object",
        "properties": {
            "ias": column | {"description": "Indicated airspeeds of the table's rows, strictly increasing."},
            "cas": column | {"description": "Calibrated airspeeds of the same rows, strictly increasing."},
            "unit": ref("SpeedUnit") | {"description": "Unit of both columns; default kt."},
        },
        "required": ["ias", "cas"],
        "additionalProperties": False,
        "description": "An airspeed calibration table, IAS -> CAS.",
    }
    schemas["OutputUnits"] = {
        "type": "object",
        "properties": {name: _output_unit(name) | {
            "description": f"{units.DIMENSIONS[name].description}; default {units.DIMENSIONS[name].default}."}
            for name in units.OUTPUT_DIMENSIONS},
        "additionalProperties": False,
        "description": "Units of the outputs, by dimension; defaults: "
                       + ", ".join(f"{name} {units.DIMENSIONS[name].default}" for name in units.OUTPUT_DIMENSIONS)
                       + ". A weight output is a force (N, or the `force` unit), or a mass (weight / g0) when `mass` "
                         "is named. A key that applies to no output of the answer is refused (422).",
    }
    return schemas


def _output_unit(dimension: str) -> dict:
    """The schema of an output_units key: the dimension's unit enum, or a const where it has one symbol only
    (a one-value enum type in every generated client would say nothing more)."""
    symbols = units.DIMENSIONS[dimension].symbols
    if len(symbols) == 1:
        return {"type": "string", "const": next(iter(symbols))}
    return ref(schema_name(dimension, "Unit"))


def _bounds(field: Number, lo, hi) -> dict:
    """Range keywords for a number or an array of numbers (JSON Schema applies each to its own type)."""
    number = {k: v for k, v in _bounded_number(lo, hi, field).items() if k != "type"}
    return number | {"items": dict(number)} if number and field.allow_array else number


def _range_bounds(field: Number, lo, hi) -> dict:
    """The bounds of a range's start and stop (properties keywords: they apply to objects only)."""
    number = {k: v for k, v in _bounded_number(lo, hi, field).items() if k != "type"}
    if not number:
        return {}
    return {"start": number | {"description": "A range's first number, within the field's range."},
            "stop": number | {"description": "A range's last number, within the field's range."}}


def number_schema(field: Number, lo=None, hi=None, *, bounded: bool = True, ranged: bool = True) -> dict:
    """OpenAPI 3.1 schema of a bare number, a flat array of numbers (``Numbers``) or a range
    (``NumberRange``), within the field's bounds (or ``lo``/``hi``; none with ``bounded=False``)."""
    if bounded and lo is None and hi is None:
        lo, hi = field.minimum, field.maximum
    if not field.allow_array:
        return _bounded_number(lo, hi, field) if bounded else {"type": "number"}
    if not ranged:
        return ref("Numbers") | (_bounds(field, lo, hi) if bounded else {})
    schema = {"oneOf": [ref("Numbers"), ref("NumberRange")]}
    if bounded:
        schema |= _bounds(field, lo, hi)
        if starts := _range_bounds(field, lo, hi):
            schema["properties"] = starts
    return schema


def quantity_schema(field: Quantity, bounds: dict | None = None) -> dict:
    """OpenAPI schema of a Quantity: its dimension's named schema (and, for array fields, its named range
    form ``<Dim>Range``), with the field's range beside it.

    The range of the bare number or array (in the default unit) is ``minimum``/``maximum`` and
    ``items``; the range in each unit of the ``{value, unit}`` form (and of a range's start and stop)
    is a conditional on the unit (``if unit is ft then value within ...``), one per unit, so that the
    type stays the one named schema. ``bounds``: {unit: (lo, hi)}, ``field.bounds`` unless given.
    """
    schema = ref(schema_name(field.dimension))
    if field.allow_array:
        schema = {"oneOf": [schema, ref(schema_name(field.dimension, "Range"))]}
    else:  # one number: no array, bare or as the value of {value, unit}
        schema |= {"type": ["number", "object"],
                   "properties": {"value": {"type": "number", "description": "One number, in `unit`."}}}
    if not field.bounded:
        return schema
    bounds = field.bounds if bounds is None else bounds
    schema |= _bounds(field, *bounds[field.default_unit])
    # A range may leave out its unit (then the default unit's conditional applies: its `if` does not
    # require the key); {value, unit} always has one.
    schema["allOf"] = [{
        "if": {"type": "object", **({} if field.allow_array and name == field.default_unit else
                                    {"required": ["unit"]}),
               "properties": {"unit": {"enum": [name, *unit.aliases]} if unit.aliases else {"const": name}}},
        "then": {"properties": {"value": _bounds(field, *bounds[name])}
                 | (_range_bounds(field, *bounds[name]) if field.allow_array else {})},
    } for name, unit in field.dim.units.items()]
    return schema
