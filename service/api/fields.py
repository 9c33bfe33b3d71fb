"""Request fields for physical quantities and plain numbers, parsed straight to NumPy.

A Quantity accepts a bare number, a bare 1-D array of numbers (both in the field's default
unit) or an object ``{"value": number | [numbers], "unit": "..."}``; it loads to a
:class:`Value` holding the SI array. A Number accepts a bare number or array only
(dimensionless inputs: Mach, CL, load factor, ratios).

The numbers are read by api.numbers (one C-level pass, pointers to bad elements); the fields' types
in the spec are api.field_schemas', registered with apispec by :func:`field_to_properties`.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import marshmallow as ma
import numpy as np
from flask import current_app

from service import units
from service.api import ranges
from service.api.field_schemas import number_schema, quantity_schema, ref
from service.api.masks import any_true, first_indices
from service.api.numbers import one_number, parse_numbers


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
                             number=one_number)

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
            if len(value) != 2 or "value" not in value or "unit" not in value:
                missing = {"value", "unit"} - value.keys()
                errors = {k: [_MISSING_IN_OBJECT[k].format(units=", ".join(self.dim.units))] for k in sorted(missing)}
                errors.update({k: ["Unknown field."] for k in sorted(value.keys() - {"value", "unit"})})
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
        clip_hi = si_hi is not None and not self.exclusive_maximum
        clip_lo = si_lo is not None and not self.exclusive_minimum
        if not is_array:  # one number: the same clip in plain Python (a NumPy ufunc costs a microsecond a call)
            si = float(si)
            if clip_hi and si > si_hi:
                si = si_hi
            if clip_lo and si < si_lo:
                si = si_lo
            return Value(np.float64(si), unit, self.dimension, False, array)
        if clip_hi:
            si = np.minimum(si, si_hi)
        if clip_lo:
            si = np.maximum(si, si_lo)
        return Value(np.asarray(si, dtype=np.float64), unit, self.dimension, True, array)


class OutputUnits(ma.fields.Field):
    """``output_units``: {dimension: unit} for the dimensions in service.units.OUTPUT_DIMENSIONS."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not dict:
            raise ma.ValidationError("Give an object of {dimension: unit}.")
        errors = {}
        chosen = {}
        for key, unit in value.items():
            if key not in units.OUTPUT_DIMENSIONS:  # the allowed ones listed once, in the first such entry
                listed = any(k not in units.OUTPUT_DIMENSIONS for k in errors)
                errors[key] = ["Unknown dimension." if listed else
                               f"Unknown dimension; allowed: {', '.join(units.OUTPUT_DIMENSIONS)}."]
            else:
                try:
                    chosen[key] = units.canonical(key, unit)
                except units.UnitError as err:
                    errors[key] = [str(err)]
        if errors:
            raise ma.ValidationError(errors)
        return chosen


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
    if field.metadata.get("title") == "AltitudeKind":  # api.air_fields.altitude_kind_field: one named enum
        return ref("AltitudeKind")
    return {}
