"""Request fields for physical quantities and plain numbers, parsed straight to NumPy.

A Quantity accepts a bare number, a bare 1-D array of numbers (both in the field's default
unit) or an object ``{"value": number | [numbers], "unit": "..."}``; it loads to a
:class:`Value` holding the SI array. A Number accepts a bare number or array only
(dimensionless inputs: Mach, CL, load factor, ratios).

Arrays are checked with one pass of C-level work (``set(map(type, ...))`` and
``np.isfinite``), never a Python call per element: booleans, strings, nulls and nested
arrays are refused with a pointer to the first offending element; numbers beyond the
float range (1e400) are refused the same way.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import marshmallow as ma
import numpy as np
from flask import current_app

from service import units
from service.api import ranges
from service.api.masks import MAX_REPORTED, any_true, first_indices

_NUMBER_TYPES = {int, float}


class Value(NamedTuple):
    """A loaded numeric input: SI values (0-d or 1-D float64) and how it was given."""

    si: np.ndarray
    unit: str | None
    dimension: str | None
    is_array: bool
    #: The numbers as given, in ``unit`` (for the echo of inputs); None for a dimensionless input (``si``).
    given: np.ndarray | None = None

    @property
    def size(self) -> int:
        return self.si.size


def _element_error(items: list, message_for) -> dict:
    """Error messages keyed by index for the offending elements (error path only)."""
    errors = {}
    for index, item in enumerate(items):
        message = message_for(item)
        if message:
            errors[index] = [message]
            if len(errors) >= MAX_REPORTED:
                break
    return errors


def _describe_bad(item) -> str | None:
    if type(item) in _NUMBER_TYPES:
        try:
            if np.isfinite(float(item)):
                return None
        except OverflowError:
            pass
        return "Number out of the floating-point range."
    if isinstance(item, bool):
        return "Not a number: a boolean."
    if item is None:
        return "Not a number: null."
    if isinstance(item, str):
        return "Not a number: a string."
    if isinstance(item, list):
        return "Nested arrays are not accepted: give a flat array of numbers."
    if isinstance(item, dict):
        return "Not a number: an object."
    return "Not a number."


def parse_numbers(raw, *, allow_array: bool = True):
    """Parse a bare number or a flat array of numbers to float64; raise ma.ValidationError.

    Returns ``(array, is_array)``; a number gives a 0-d array.
    """
    kind = type(raw)
    if kind is np.ndarray and raw.ndim == 1 and raw.dtype == np.float64 and allow_array:
        return raw, True  # a table column (api.tables): finite numbers already, one C-level check there
    if kind is float or kind is int:
        try:
            value = float(raw)
        except OverflowError:
            raise ma.ValidationError("Number out of the floating-point range.") from None
        if value - value != 0.0:  # inf or nan
            raise ma.ValidationError("Number out of the floating-point range.")
        return np.float64(value), False
    if kind is list:
        if not allow_array:
            raise ma.ValidationError("Give a single number here, not an array.")
        if not raw:
            raise ma.ValidationError("Empty array: give at least one number.")
        if not set(map(type, raw)) <= _NUMBER_TYPES:
            raise ma.ValidationError(_element_error(raw, _describe_bad))
        try:
            array = np.array(raw, dtype=np.float64)
        except OverflowError:
            raise ma.ValidationError(_element_error(raw, _describe_bad)) from None
        if not np.isfinite(array).all():
            raise ma.ValidationError(_element_error(raw, _describe_bad))
        return array, True
    message = _describe_bad(raw) or "Not a number."
    if allow_array and message == "Not a number.":
        message = "Not a number or an array of numbers."
    raise ma.ValidationError(message)


def _one_number(raw) -> float:
    """One of a range's start, stop and step, with the words of any other number field."""
    return float(parse_numbers(raw, allow_array=False)[0])


#: Words that keep their capital when a description's first words become part of a sentence.
_PROPER = ("Mach",)


def trade_name(field: ma.fields.Field, name: str) -> str:
    """What a field is, in the words of its description: "Pressure altitude [ft] (FL allowed): ..."
    -> "the pressure altitude (altitude)"; "Mach number [-], ..." -> "the Mach number (mach)"."""
    words = field.metadata.get("description", "") or name
    for stop in (" [", " (", " = ", ", ", ". ", ": "):
        words = words.split(stop, 1)[0]
    words = words.rstrip(".")
    first = words.split(" ", 1)[0]
    if first not in _PROPER and first[1:].islower():
        words = words[0].lower() + words[1:]
    if not words.startswith("the "):
        words = "the " + words
    return words if words.replace(" ", "_").removeprefix("the_") == name else f"{words} ({name})"


def what_to_give(field: ma.fields.Field, name: str) -> str:
    """The message for a missing input: what it is and how to give it."""
    message = f"Missing: {trade_name(field, name)}"
    if isinstance(field, Quantity):
        symbols = ", ".join(field.dim.units)
        return f"{message}, in {field.default_unit}, or as {{\"value\": ..., \"unit\": ...}} in one of {symbols}."
    return message + "."


class Number(ma.fields.Field):
    """A dimensionless input: a bare number or a flat array of numbers.

    ``minimum``/``maximum`` (inclusive unless ``exclusive_minimum``/``exclusive_maximum``)
    are checked over the whole array at once and published in the spec.
    """

    def __init__(self, *, minimum=None, maximum=None, exclusive_minimum=False,
                 exclusive_maximum=False, allow_array=True, rules: tuple = (), **kwargs):
        super().__init__(**kwargs)
        self.minimum = minimum
        self.maximum = maximum
        self.exclusive_minimum = exclusive_minimum
        self.exclusive_maximum = exclusive_maximum
        self.allow_array = allow_array
        self.rules = rules

    def rules_for(self, name: str) -> tuple:
        """The rules (api.rules) this field brings to the schema that holds it under ``name``."""
        return self.rules

    dimension: str | None = None

    def make_error(self, key: str, **kwargs) -> ma.ValidationError:
        """marshmallow's hook for a field's error messages: a missing input says what to give."""
        if key == "required":
            return ma.ValidationError(what_to_give(self, self.name))
        return super().make_error(key, **kwargs)

    def _check_range(self, array, lo, hi, message_for):
        """Refuse values outside [lo, hi] (bounds as published); ``message_for()`` says why."""
        bad = None
        if lo is not None:
            bad = array <= lo if self.exclusive_minimum else array < lo
        if hi is not None:
            over = array >= hi if self.exclusive_maximum else array > hi
            bad = over if bad is None else bad | over
        if bad is None or not any_true(bad):
            return
        message = message_for()
        if array.ndim == 0:
            raise ma.ValidationError(message)
        raise ma.ValidationError({i: [message] for i in first_indices(bad)})

    def range_message(self, unit_text="") -> str:
        return self.describe_range(self.minimum, self.maximum, unit_text)

    def describe_range(self, lo, hi, unit_text="") -> str:
        """"Must be at least lo unit and below hi unit." for the bounds as published."""
        parts = []
        if lo is not None:
            parts.append(f"{'above' if self.exclusive_minimum else 'at least'} {self._show(lo, unit_text)}")
        if hi is not None:
            parts.append(f"{'below' if self.exclusive_maximum else 'at most'} {self._show(hi, unit_text)}")
        return "Must be " + " and ".join(parts) + "."

    @staticmethod
    def _show(bound, unit_text):
        text = f"{bound:.12g}"
        return f"{text} {unit_text}".strip()

    @property
    def bounded(self) -> bool:
        return self.minimum is not None or self.maximum is not None

    def _deserialize(self, value, attr, data, **kwargs):
        if self.allow_array and ranges.is_range(value):
            array, _ = self._range(value, unit_allowed=False)
            if self.bounded:
                self._check_ends(value, self.minimum, self.maximum, self.range_message)
            return Value(array, None, None, True)
        array, is_array = parse_numbers(value, allow_array=self.allow_array)
        if self.bounded:
            self._check_range(array, self.minimum, self.maximum, self.range_message)
        return Value(array, None, None, is_array)

    def _range(self, value: dict, *, unit_allowed: bool):
        """A range {start, stop, step[, unit]} expanded (api.ranges), after the point limit."""
        return ranges.expand(value, limit=current_app.config["QBAR_MAX_POINTS"], unit_allowed=unit_allowed,
                             number=_one_number)

    def _check_ends(self, value: dict, lo, hi, message_for):
        """A range's bounds: its start and its stop lie within the field's range (as the spec says), so
        every point of it does."""
        try:
            self._check_range(np.array([float(value["start"]), float(value["stop"])]), lo, hi, message_for)
        except ma.ValidationError as err:
            raise ma.ValidationError({("start", "stop")[index]: messages
                                      for index, messages in err.messages.items()}) from None


#: A range end converted to another unit is published as the short decimal it stands for (100 degC is
#: 212 degF) when the exact float end (units.bound_in) lies within this many units in the last place of it.
_SNAP_ULPS = 4


class Range(tuple):
    """``(lo, hi)`` of a field in one unit, as published and checked; ``si``: the same range in SI, to which
    the converted values are clipped (a published end that is a short decimal may convert a few units in
    the last place beyond the SI end)."""

    si: tuple = (None, None)

    def __new__(cls, lo, hi, si):
        bounds = super().__new__(cls, (lo, hi))
        bounds.si = si
        return bounds


def _published(exact: float | None) -> float | None:
    """The end as published: the short decimal it stands for, or the exact float end."""
    if exact is None or exact == 0.0:
        return exact
    snapped = float(f"{exact:.12g}")
    return snapped if abs(snapped - exact) <= _SNAP_ULPS * math.ulp(exact) else exact


_MISSING_IN_OBJECT = {"value": "Missing: the number or array of numbers (value), in `unit`.",
                      "unit": "Missing: the unit of `value` (unit), one of {units}."}


class Quantity(Number):
    """A physical input of one dimension (see service.units), loaded to SI.

    ``minimum``/``maximum`` are given in ``bounds_unit`` (default: the field's default unit).
    Each unit has its own bounds (:meth:`bounds_in`), published in the spec and checked in the
    unit the request gives, so that what the spec calls valid is exactly what is accepted.
    """

    def __init__(self, dimension: str, *, bounds_unit: str | None = None, **kwargs):
        super().__init__(**kwargs)
        self.dimension = dimension
        self.dim = units.DIMENSIONS[dimension]
        self.default_unit = self.dim.default
        self.bounds = self.unit_bounds(self.minimum, self.maximum, bounds_unit or self.default_unit)
        # the bare-number form is in the default unit: publish its bounds there
        self.minimum, self.maximum = self.bounds[self.default_unit]

    def unit_bounds(self, lo, hi, given_in: str) -> dict[str, Range]:
        """{unit: (lo, hi)}: the range ``lo``..``hi`` (in unit ``given_in``) in every unit of the field, exact.

        Each end is the float end of :func:`service.units.bound_in` (84 852 m is 278385.82677165355 ft),
        or the short decimal it stands for when that is a few units in the last place away (100 degC
        is 212 degF); the check uses the same numbers, and the SI values are clipped to the SI range.
        """
        si = tuple(None if b is None else float(units.to_si(np.float64(b), self.dimension, given_in))
                   for b in (lo, hi))
        return {name: Range(
            None if si[0] is None else _published(units.bound_in(
                self.dimension, name, si[0], upper=False, exclusive=self.exclusive_minimum)),
            None if si[1] is None else _published(units.bound_in(
                self.dimension, name, si[1], upper=True, exclusive=self.exclusive_maximum)),
            si) for name in self.dim.units}

    def _unit(self, unit) -> str:
        """The unit's name (aliases accepted: units.canonical); a 422 with suggestions otherwise."""
        try:
            return units.canonical(self.dimension, unit)
        except units.UnitError as err:
            raise ma.ValidationError({"unit": [str(err)]}) from None

    def bounds_in(self, unit: str, data) -> tuple[float | None, float | None]:
        """The bounds of a value given in ``unit`` (``data``: the raw request, for subclasses)."""
        return self.bounds[unit]

    def _deserialize(self, value, attr, data, **kwargs):
        unit = self.default_unit
        if self.allow_array and ranges.is_range(value):
            array, given = self._range(value, unit_allowed=True)
            if given is not None:
                unit = self._unit(given)
            if self.bounded:
                lo, hi = self.bounds_in(unit, data)
                self._check_ends(value, lo, hi, lambda: self.describe_range(lo, hi, unit))
            return Value(units.to_si(array, self.dimension, unit), unit, self.dimension, True)
        if type(value) is dict:
            missing = {"value", "unit"} - value.keys()
            extra = value.keys() - {"value", "unit"}
            errors = {k: [_MISSING_IN_OBJECT[k].format(units=", ".join(self.dim.units))] for k in sorted(missing)}
            errors.update({k: ["Unknown field."] for k in sorted(extra)})
            if errors:
                raise ma.ValidationError(errors)
            unit = self._unit(value["unit"])
            try:
                array, is_array = parse_numbers(value["value"], allow_array=self.allow_array)
            except ma.ValidationError as err:
                raise ma.ValidationError({"value": err.messages}) from None
        else:
            array, is_array = parse_numbers(value, allow_array=self.allow_array)
        si_lo = si_hi = None
        if self.bounded:
            bounds = self.bounds_in(unit, data)
            lo, hi = bounds
            try:
                self._check_range(array, lo, hi, lambda: self.describe_range(lo, hi, unit))
            except ma.ValidationError as err:
                if type(value) is dict:
                    raise ma.ValidationError({"value": err.messages}) from None
                raise
            si_lo, si_hi = getattr(bounds, "si", (None, None))
        si = units.to_si(array, self.dimension, unit)
        if si_hi is not None and not self.exclusive_maximum:
            si = np.minimum(si, si_hi)
        if si_lo is not None and not self.exclusive_minimum:
            si = np.maximum(si, si_lo)
        return Value(np.asarray(si, dtype=np.float64) if is_array else np.float64(si), unit, self.dimension, is_array,
                     array)


class OutputUnits(ma.fields.Field):
    """``output_units``: {dimension: unit} for the dimensions in service.units.OUTPUT_DIMENSIONS."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not dict:
            raise ma.ValidationError("Give an object of {dimension: unit}.")
        errors = {}
        chosen = {}
        for key, unit in value.items():
            if key not in units.OUTPUT_DIMENSIONS:
                errors[key] = [f"Unknown dimension; allowed: {', '.join(units.OUTPUT_DIMENSIONS)}."]
            else:
                try:
                    chosen[key] = units.canonical(key, unit)
                except units.UnitError as err:
                    errors[key] = [str(err)]
        if errors:
            raise ma.ValidationError(errors)
        return chosen


# --- OpenAPI descriptions of the fields (registered with the apispec marshmallow plugin) ---

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


def field_to_properties(self, field, ret):
    """apispec attribute function: describe Number, Quantity, OutputUnits and output fields."""
    if hasattr(field, "openapi"):
        return field.openapi()
    if isinstance(field, Quantity):
        schema = quantity_schema(field)
        schema["x-default-unit"] = field.default_unit
        return schema
    if isinstance(field, Number):
        return number_schema(field)
    if isinstance(field, OutputUnits):
        return ref("OutputUnits")
    if field.metadata.get("title") == "AltitudeKind":  # api.air.altitude_kind_field: one named enum
        return ref("AltitudeKind")
    return {}
