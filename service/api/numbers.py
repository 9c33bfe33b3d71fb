"""JSON numbers to NumPy: a bare number or a flat array of numbers to float64, with pointers to bad elements.

Arrays are checked with one pass of C-level work (``set(map(type, ...))`` and ``np.isfinite``), never a
Python call per element: booleans, strings, nulls and nested arrays are refused with a pointer to the first
offending elements; numbers beyond the float range (1e400) are refused the same way. The request fields
(api.fields) and the tables inside a request (the calibration, the buffet boundary) read their numbers here.
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api.masks import MAX_REPORTED
from service.units import UnitError, canonical

_NUMBER_TYPES = {int, float}


def first_bad(items, message_for) -> list[tuple[int, str]]:
    """(index, message) of the first items (at most MAX_REPORTED) that ``message_for`` finds a fault in
    (the error path only: a Python loop is fine there)."""
    found = []
    for index, item in enumerate(items):
        message = message_for(item)
        if message:
            found.append((index, message))
            if len(found) >= MAX_REPORTED:
                break
    return found


def _element_error(items: list) -> dict:
    """Error messages keyed by index for the elements of ``items`` that are not finite numbers."""
    return {index: [message] for index, message in first_bad(items, _describe_bad)}


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
            raise ma.ValidationError(_element_error(raw))
        try:
            array = np.array(raw, dtype=np.float64)
        except OverflowError:
            raise ma.ValidationError(_element_error(raw)) from None
        if not np.isfinite(array).all():
            raise ma.ValidationError(_element_error(raw))
        return array, True
    message = _describe_bad(raw) or "Not a number."
    if allow_array and message == "Not a number.":
        message = "Not a number or an array of numbers."
    raise ma.ValidationError(message)


def one_number(raw) -> float:
    """One of a range's start, stop and step, with the words of any other number field."""
    return float(parse_numbers(raw, allow_array=False)[0])


def table_columns(value, columns: tuple[str, ...], items: str, unit: tuple[str, str] | None = None):
    """The columns of a table inside a request, an object of arrays (``{"ias": [...], "cas": [...]}``, with
    ``unit``: (dimension, default) a ``"unit"`` member too): ``(arrays by name, canonical unit or None)``.

    Every fault at once, keyed by member (unknown members, the unit, missing columns, a column that is not an
    array of numbers: "Give an array of at least two ``items``."), as one ma.ValidationError.
    """
    shape = ", ".join([f'"{key}": [...]' for key in columns] + ([f'"unit": "{unit[1]}"'] if unit else []))
    if type(value) is not dict:
        raise ma.ValidationError(f"Give an object {{{shape}}}.")
    errors = {key: ["Unknown field."] for key in sorted(value.keys() - {*columns, *(("unit",) if unit else ())})}
    found_unit = None
    if unit:
        try:
            found_unit = canonical(unit[0], value.get("unit", unit[1]))
        except UnitError as err:
            errors["unit"] = [str(err)]
    arrays = {}
    for key in columns:
        if key not in value:
            errors[key] = ["Missing data for required field."]
            continue
        try:
            column, is_array = parse_numbers(value[key])
        except ma.ValidationError as err:
            errors[key] = err.messages
            continue
        if not is_array:
            errors[key] = [f"Give an array of at least two {items}."]
            continue
        arrays[key] = column
    if errors:
        raise ma.ValidationError(errors)
    return arrays, found_unit
