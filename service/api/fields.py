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
from decimal import ROUND_CEILING, ROUND_FLOOR, Decimal
from typing import NamedTuple

import marshmallow as ma
import numpy as np

from service import units
from service.api.masks import MAX_REPORTED, any_true, first_indices

_NUMBER_TYPES = {int, float}


class Value(NamedTuple):
    """A loaded numeric input: SI values (0-d or 1-D float64) and how it was given."""

    si: np.ndarray
    unit: str | None
    dimension: str | None
    is_array: bool

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
        array, is_array = parse_numbers(value, allow_array=self.allow_array)
        if self.bounded:
            self._check_range(array, self.minimum, self.maximum, self.range_message)
        return Value(array, None, None, is_array)


def inward(value: float | None, *, up: bool) -> float | None:
    """A bound converted to another unit, as published and checked: 12 significant digits.

    A conversion that is exact but for floating-point noise (100 degC = 212 degF) gives the
    exact number; any other is rounded toward the inside of the range (``up`` for a lower
    bound), so that a value which passes it lies inside the range in every unit.
    """
    if value is None or value == 0.0:
        return value
    nearest = float(f"{value:.12g}")
    if abs(nearest - value) <= 1e-12 * abs(value):
        return nearest
    exponent = math.floor(math.log10(abs(value))) - 11
    rounded = Decimal(value).quantize(Decimal(1).scaleb(exponent), rounding=ROUND_CEILING if up else ROUND_FLOOR)
    return float(rounded)


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

    def unit_bounds(self, lo, hi, given_in: str) -> dict[str, tuple[float | None, float | None]]:
        """{unit: (lo, hi)}: the bounds ``lo``/``hi`` (in unit ``given_in``) in every unit of the field."""
        out = {}
        source = self.dim.units[given_in]
        for name, unit in self.dim.units.items():
            if (unit.factor, unit.offset) == (source.factor, source.offset):
                out[name] = (inward(lo, up=True), inward(hi, up=False))
                continue
            converted = [None if b is None else float(units.from_si(units.to_si(b, self.dimension, given_in),
                                                                    self.dimension, name)) for b in (lo, hi)]
            out[name] = (inward(converted[0], up=True), inward(converted[1], up=False))
        return out

    def bounds_in(self, unit: str, data) -> tuple[float | None, float | None]:
        """The bounds of a value given in ``unit`` (``data``: the raw request, for subclasses)."""
        return self.bounds[unit]

    def _deserialize(self, value, attr, data, **kwargs):
        unit = self.default_unit
        if type(value) is dict:
            missing = {"value", "unit"} - value.keys()
            extra = value.keys() - {"value", "unit"}
            errors = {k: ["Missing data for required field."] for k in sorted(missing)}
            errors.update({k: ["Unknown field."] for k in sorted(extra)})
            if errors:
                raise ma.ValidationError(errors)
            unit = value["unit"]
            if type(unit) is not str or unit not in self.dim.units:  # {} or [] would not even hash
                raise ma.ValidationError({"unit": [str(units.UnitError(self.dimension, unit))]})
            try:
                array, is_array = parse_numbers(value["value"], allow_array=self.allow_array)
            except ma.ValidationError as err:
                raise ma.ValidationError({"value": err.messages}) from None
        else:
            array, is_array = parse_numbers(value, allow_array=self.allow_array)
        if self.bounded:
            lo, hi = self.bounds_in(unit, data)
            try:
                self._check_range(array, lo, hi, lambda: self.describe_range(lo, hi, unit))
            except ma.ValidationError as err:
                if type(value) is dict:
                    raise ma.ValidationError({"value": err.messages}) from None
                raise
        si = units.to_si(array, self.dimension, unit)
        return Value(np.asarray(si, dtype=np.float64) if is_array else np.float64(si), unit, self.dimension, is_array)


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
            elif not isinstance(unit, str) or unit not in units.DIMENSIONS[key].units:
                errors[key] = [str(units.UnitError(key, unit))]
            else:
                chosen[key] = unit
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


def number_schema(field: Number, lo=None, hi=None, *, bounded: bool = True) -> dict:
    """OpenAPI 3.1 schema of a bare number or flat array of numbers, within the field's bounds
    (or ``lo``/``hi``; none with ``bounded=False``)."""
    if bounded and lo is None and hi is None:
        lo, hi = field.minimum, field.maximum
    number = _bounded_number(lo, hi, field) if bounded else {"type": "number"}
    if not field.allow_array:
        return number
    return {"oneOf": [number, {"type": "array", "items": number, "minItems": 1}]}


def quantity_schema(field: Quantity, bounds: dict | None = None) -> dict:
    """OpenAPI schema of a Quantity: number or array in the default unit, or {value, unit}.

    With bounds (``field.bounds`` unless given: {unit: (lo, hi)}), the object form is one
    branch per unit, each with the bounds in that unit.
    """
    bounds = field.bounds if bounds is None else bounds
    lo, hi = bounds[field.default_unit]
    plain = number_schema(field, lo, hi)
    if not field.bounded:
        objects = [{
            "type": "object",
            "properties": {
                "value": number_schema(field, bounded=False) | {"description": "The number or numbers, in `unit`."},
                "unit": {"type": "string", "enum": list(field.dim.units), "description": "The unit of `value`."},
            },
            "required": ["value", "unit"],
            "additionalProperties": False,
        }]
    else:
        objects = [{
            "type": "object",
            "properties": {"value": number_schema(field, *bounds[unit]) | {"description": f"The number(s) in {unit}."},
                           "unit": {"const": unit, "description": "The unit of `value`."}},
            "required": ["value", "unit"],
            "additionalProperties": False,
        } for unit in field.dim.units]
    return {"oneOf": [*plain.get("oneOf", [plain]), *objects]}


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
        return {
            "type": "object",
            "properties": {
                name: {"type": "string", "enum": list(dim.units),
                       "description": f"{dim.description}; default {dim.default}."}
                for name, dim in ((n, units.DIMENSIONS[n]) for n in units.OUTPUT_DIMENSIONS)
            },
            "additionalProperties": False,
        }
    return {}
