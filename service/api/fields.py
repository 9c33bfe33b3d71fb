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

from typing import NamedTuple

import marshmallow as ma
import numpy as np

from service import units

_NUMBER_TYPES = {int, float}
_MAX_REPORTED = 10


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
            if len(errors) >= _MAX_REPORTED:
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
                 exclusive_maximum=False, allow_array=True, **kwargs):
        super().__init__(**kwargs)
        self.minimum = minimum
        self.maximum = maximum
        self.exclusive_minimum = exclusive_minimum
        self.exclusive_maximum = exclusive_maximum
        self.allow_array = allow_array

    dimension: str | None = None

    def _check_range(self, array, si_min, si_max, unit_text=""):
        """Refuse values outside [si_min, si_max]; messages name the bound in the given unit."""
        bad = None
        if si_min is not None:
            bad = array <= si_min if self.exclusive_minimum else array < si_min
        if si_max is not None:
            over = array >= si_max if self.exclusive_maximum else array > si_max
            bad = over if bad is None else bad | over
        if bad is None or not bad.any():
            return
        message = self.range_message(unit_text)
        if array.ndim == 0:
            raise ma.ValidationError(message)
        indices = np.flatnonzero(bad)[:_MAX_REPORTED]
        raise ma.ValidationError({int(i): [message] for i in indices})

    def range_message(self, unit_text="") -> str:
        lo = hi = None
        if self.minimum is not None:
            lo = f"{'above' if self.exclusive_minimum else 'at least'} {self._show(self.minimum, unit_text)}"
        if self.maximum is not None:
            hi = f"{'below' if self.exclusive_maximum else 'at most'} {self._show(self.maximum, unit_text)}"
        return "Must be " + " and ".join(x for x in (lo, hi) if x) + "."

    @staticmethod
    def _show(bound, unit_text):
        text = f"{bound:g}"
        return f"{text} {unit_text}".strip()

    def _deserialize(self, value, attr, data, **kwargs):
        array, is_array = parse_numbers(value, allow_array=self.allow_array)
        if self.minimum is not None or self.maximum is not None:
            self._check_range(array, self.minimum, self.maximum)
        return Value(array, None, None, is_array)


class Quantity(Number):
    """A physical input of one dimension (see service.units), loaded to SI.

    ``minimum``/``maximum`` are given in the field's default unit and checked in SI.
    """

    def __init__(self, dimension: str, **kwargs):
        super().__init__(**kwargs)
        self.dimension = dimension
        self.dim = units.DIMENSIONS[dimension]
        self.default_unit = self.dim.default

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
            if unit not in self.dim.units:
                raise ma.ValidationError({"unit": [str(units.UnitError(self.dimension, unit))]})
            try:
                array, is_array = parse_numbers(value["value"], allow_array=self.allow_array)
            except ma.ValidationError as err:
                raise ma.ValidationError({"value": err.messages}) from None
        else:
            array, is_array = parse_numbers(value, allow_array=self.allow_array)
        si = units.to_si(array, self.dimension, unit)
        if self.minimum is not None or self.maximum is not None:
            to_si = units.to_si
            lo = None if self.minimum is None else to_si(self.minimum, self.dimension, self.default_unit)
            hi = None if self.maximum is None else to_si(self.maximum, self.dimension, self.default_unit)
            try:
                self._check_range(si, lo, hi, self.default_unit)
            except ma.ValidationError as err:
                if type(value) is dict:
                    raise ma.ValidationError({"value": err.messages}) from None
                raise
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

def _bounded(schema: dict, field: Number) -> dict:
    if field.minimum is not None:
        schema["exclusiveMinimum" if field.exclusive_minimum else "minimum"] = field.minimum
    if field.maximum is not None:
        schema["exclusiveMaximum" if field.exclusive_maximum else "maximum"] = field.maximum
    return schema


def number_schema(field: Number) -> dict:
    """OpenAPI 3.1 schema of a bare number or flat array of numbers, with bounds if any."""
    number = _bounded({"type": "number"}, field)
    if not field.allow_array:
        return number
    return {"oneOf": [number, {"type": "array", "items": number, "minItems": 1}]}


def quantity_schema(field: Quantity) -> dict:
    """OpenAPI schema of a Quantity: number, array, or {value, unit}."""
    plain = number_schema(field)
    free = Number(allow_array=field.allow_array)
    obj = {
        "type": "object",
        "properties": {
            "value": number_schema(free) | {"description": "The number or numbers, in `unit`."},
            "unit": {"type": "string", "enum": list(field.dim.units), "description": "The unit of `value`."},
        },
        "required": ["value", "unit"],
        "additionalProperties": False,
    }
    return {"oneOf": [*plain.get("oneOf", [plain]), obj]}


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
