"""Ranges: an array input written as ``{"start", "stop", "step", "unit"}``.

A range stands for the numbers ``start, start + step, start + 2 step, ...`` up to ``stop``: stop is
included when it falls on a step (within a relative tolerance of ``TOLERANCE`` steps, so that
``{"start": 0, "stop": 1, "step": 0.1}`` has 11 points), and the last number is then exactly ``stop``.
``unit`` is optional (the field's default unit) and only physical inputs take it.

Two functions, used by two callers:

- :func:`count` is the request's point count of a raw range (``api.request_body.count_points``): pure
  arithmetic on three numbers, nothing allocated, so a range of 10^12 points is refused by the point
  limit (413) before anything is built. A range it cannot count gives 1, and the field then says why.
- :func:`expand` is the field's loader (``api.fields``): it checks the range (422 with a pointer to
  the offending key: a zero step, a step of the wrong sign, a value that is not a finite number), checks
  the count against the point limit once more (ranges in nested blocks are not top-level axes), and only
  then allocates the array.
"""

from __future__ import annotations

import math

import marshmallow as ma
import numpy as np

from service.api.problems import Problem

#: The keys of a range; ``unit`` may be left out.
KEYS = ("start", "stop", "step", "unit")

#: stop is included when it lies within this fraction of a step of a whole number of steps from start
#: (plus the rounding error of the division, a few EPS relative).
TOLERANCE = 1e-9
EPS = float(np.finfo(np.float64).eps)


def is_range(raw) -> bool:
    """True when the raw input is written as a range (an object with a ``start``, ``stop`` or ``step``)."""
    return type(raw) is dict and ("start" in raw or "stop" in raw or "step" in raw)


def _number(raw):
    """A finite float from a JSON number, else None (booleans are not numbers)."""
    if type(raw) is not int and type(raw) is not float:
        return None
    try:
        value = float(raw)
    except OverflowError:
        return None
    return value if value - value == 0.0 else None


def _steps(start: float, stop: float, step: float) -> tuple[float, bool]:
    """(whole steps from start to stop, whether stop falls on a step); the count may be huge or infinite.

    stop falls on a step when (stop - start) / step is within ``TOLERANCE`` (plus the rounding of the
    division) of a whole number.
    """
    x = (stop - start) / step  # Python floats: an overflow gives inf, not an exception
    if not math.isfinite(x):
        return math.inf, False
    nearest = round(x)
    # (stop differs from start: within the tolerance of step 0 is not on a step, the range is start alone)
    on_step = nearest != 0 and abs(x - nearest) <= TOLERANCE + 8 * EPS * abs(x)
    return (nearest if on_step else math.floor(x)), on_step


def count(raw) -> int:
    """The number of points of a raw range, without building it; 1 when it is not a valid range.

    Examples
    --------
    >>> count({"start": 0, "stop": 40000, "step": 1000})
    41
    >>> count({"start": 0, "stop": 1, "step": 0.1})
    11
    >>> count({"start": 10, "stop": 0, "step": -3})
    4
    >>> count({"start": 0, "stop": 1e12, "step": 1})
    1000000000001
    >>> count({"start": 0, "stop": 1, "step": 0})
    1
    """
    start, stop, step = (_number(raw.get(key)) for key in ("start", "stop", "step"))
    if start is None or stop is None or step is None or step == 0.0:
        return 1
    if stop == start:
        return 1
    if (stop > start) != (step > 0):
        return 1
    steps, _ = _steps(start, stop, step)
    if steps == math.inf:
        return 1
    return steps + 1 if steps < 2**53 else float(steps)  # a float prints short: "1e+300 points"


def length(raw) -> int | float:
    """The number of points a raw (not yet loaded) input contributes: an array's length, a range's count,
    else 1. The point-limit check (``api.request_body.count_points``) calls it for every top-level input.

    >>> length([1, 2, 3]), length({"value": [1, 2], "unit": "ft"}), length({"start": 0, "stop": 9, "step": 1})
    (3, 2, 10)
    """
    kind = type(raw)
    if kind is list:
        return len(raw)
    if kind is np.ndarray:  # a column of a table body
        return raw.size
    if kind is dict:
        if is_range(raw):
            return count(raw)
        value = raw.get("value")
        if type(value) is list:
            return len(value)
        if type(value) is np.ndarray:
            return value.size
    return 1


def expand(raw: dict, *, limit: int, unit_allowed: bool, number=float) -> tuple[np.ndarray, str | None]:
    """The numbers of a range and its unit (None when not given: the field checks it).

    Raises ma.ValidationError keyed by the range's keys (422 with pointers such as /altitude/step), or the
    413 Problem of the point limit.

    Parameters
    ----------
    raw : dict
        The range as the request gives it.
    limit : int
        The point limit (QBAR_MAX_POINTS): a longer range is a 413, before anything is allocated.
    unit_allowed : bool
        Whether the field is physical (takes a ``unit``).
    number : callable
        Reads one of start, stop, step: returns a float or raises ma.ValidationError with the message (the
        field's own number parser, so that a boolean or 1e400 gets the same words as anywhere else).

    Examples
    --------
    >>> values, unit = expand({"start": 0, "stop": 1, "step": 0.25, "unit": "FL"}, limit=100, unit_allowed=True)
    >>> values.tolist(), unit
    ([0.0, 0.25, 0.5, 0.75, 1.0], 'FL')
    >>> expand({"start": 0.5, "stop": 0.8, "step": 0.1}, limit=100, unit_allowed=False)[0].tolist()
    [0.5, 0.6, 0.7, 0.8]
    >>> expand({"start": 5, "stop": 0, "step": -2}, limit=100, unit_allowed=False)[0].tolist()
    [5.0, 3.0, 1.0]
    >>> expand({"start": 64, "stop": 65, "step": 1e300}, limit=100, unit_allowed=False)[0].tolist()
    [64.0]
    """
    allowed = KEYS if unit_allowed else KEYS[:3]
    errors: dict[str, list[str]] = {}
    for key in raw.keys() - set(allowed):
        if key == "unit":
            errors[key] = ["A dimensionless input takes no unit."]
        elif key == "value":
            errors[key] = ["Give either a range (start, stop, step) or a value, not both."]
        else:
            errors[key] = [f"Unknown field; a range has {', '.join(allowed)}."]
    numbers = {}
    for key in ("start", "stop", "step"):
        if key not in raw:
            errors[key] = ["Missing data for required field."]
            continue
        try:
            numbers[key] = float(number(raw[key]))
        except ma.ValidationError as err:
            errors[key] = err.messages if isinstance(err.messages, list) else [str(err.messages)]
    if "step" in numbers and numbers["step"] == 0.0:
        errors["step"] = ["The step must not be zero."]
    if errors:
        raise ma.ValidationError(errors)
    start, stop, step = numbers["start"], numbers["stop"], numbers["step"]
    if stop != start and (stop > start) != (step > 0):
        direction = "above" if stop > start else "below"
        sign = "positive" if stop > start else "negative"
        raise ma.ValidationError({"step": [f"stop is {direction} start, so the step must be {sign}."]})
    steps, on_step = (0, True) if stop == start else _steps(start, stop, step)
    if steps == math.inf:
        raise ma.ValidationError({"step": ["The range has too many steps to count; give a larger step."]})
    n = steps + 1
    if n > limit:
        raise too_many_points(n, limit)
    values = start + np.arange(n, dtype=np.float64) * step
    if on_step:
        values[-1] = stop  # exactly stop, whatever the rounding of start + k step
    if not np.isfinite(values[-1]):
        raise ma.ValidationError({"stop": ["The range leaves the floating-point range."]})
    return values, (raw.get("unit") if unit_allowed else None)


DESCRIPTION = ("A range: start, start + step, ... up to stop (stop included when it falls on a step, within "
               f"{TOLERANCE:g} of a step); start and stop within the field's range, step not zero and of the sign "
               "of stop - start. Counted against the point limit before anything is built.")


def schema(bounded: dict, unit: str | list[str] | None = None) -> dict:
    """The OpenAPI schema of the range form: ``bounded`` is the schema of one number of the field (with its
    bounds in ``unit``); ``unit`` a const (one unit), an enum (a list) or None (no unit key).

    >>> schema({"type": "number", "minimum": 0})["required"]
    ['start', 'stop', 'step']
    """
    properties = {"start": bounded | {"description": "The first number."},
                  "stop": bounded | {"description": "The last number, when it falls on a step."},
                  "step": {"type": "number", "not": {"const": 0}, "description": "The step: not zero."}}
    required = ["start", "stop", "step"]
    if isinstance(unit, dict):  # a named unit schema: the unit is optional (the field's default unit)
        properties["unit"] = unit | {"description": "The unit of start, stop and step; the field's default "
                                                    "unit when left out."}
    elif isinstance(unit, str):
        properties["unit"] = {"const": unit, "description": "The unit of start, stop and step."}
        required.append("unit")
    elif unit is not None:
        properties["unit"] = {"type": "string", "enum": list(unit), "description": "The unit of start, stop and step."}
        required.append("unit")
    return {"type": "object", "description": DESCRIPTION, "properties": properties,
            "required": required, "additionalProperties": False}


def too_many_points(points: int | float, limit: int) -> Problem:
    """The 413 of a range longer than the point limit (the same problem as any request over it)."""
    return Problem("payload-too-large", f"The range has {points} points; the limit is {limit} points per request "
                                        "(QBAR_MAX_POINTS).", extra={"limit": limit})
