"""The values of an answer before they are written: the unit chosen for each output dimension, rounding to
significant digits, and the 422 of a primary result that does not exist at some points (api.outputs writes the
answer with them; the endpoints call :func:`require` and :func:`no_solution`)."""

from __future__ import annotations

import numpy as np

from service import units
from service.api.masks import any_true, first_indices
from service.api.problems import Problem, invalid, pointer


def chosen_by(dimension: str, chosen: dict) -> str | None:
    """The ``output_units`` key that sets the unit of an output of ``dimension``; None for its default.

    A weight is written as a mass when ``output_units`` names a mass unit (weight / g0: kg, t, lb),
    else as a force (``output_units.force``, default N); the ``weight`` dimension holds both kinds of unit.
    """
    if dimension == "weight":
        return "mass" if "mass" in chosen else "force" if "force" in chosen else None
    return dimension if dimension in chosen else None


def unit_for(dimension: str, chosen: dict) -> str:
    """The output unit of ``dimension``: the caller's choice or the default (a weight: N)."""
    key = chosen_by(dimension, chosen)
    if key is not None:
        return chosen[key]
    return units.DIMENSIONS["force" if dimension == "weight" else dimension].default


def no_solution(field: str, mask, reason: str) -> Problem:
    """The 422 for a primary result that does not exist at some points."""
    mask = np.asarray(mask)
    count = int(np.count_nonzero(mask))
    where = first_indices(mask)
    at = "" if mask.ndim == 0 else f" at {count} point(s), first indices {where}"
    return Problem("no-solution", f"No {field}{at}: {reason}",
                   errors=[{"pointer": pointer(field), "message": reason}],
                   extra={"field": field, "count": count, "indices": where})


def require(field: str, values, reason: str):
    """``values``, or the no-solution 422 naming ``field`` where they are not finite (a primary result)."""
    kind = type(values)
    if (kind is float or kind is np.float64) and values - values == 0.0:  # one finite number, without a ufunc
        return values
    bad = ~np.isfinite(values)
    if any_true(bad):
        raise no_solution(field, bad, reason)
    return values


#: 10**k is exact in float64 up to k = 22: the scale of a rounding within that range is exact.
_EXACT_POWERS_OF_TEN = 22


def round_significant(value, digits: int):
    """``value`` (a float, None, or an array of them; other kinds as they are) to ``digits`` significant digits.

    One point: Python's own decimal rounding. Arrays: vectorised, x scaled by an exact power of ten,
    rounded to an integer (half to even) and scaled back, so the result is the double nearest to the
    rounded decimal (it prints with at most ``digits`` digits); where the scaled value is itself
    rounded (15 digits and more), the last digit can differ by one from a decimal rounding.

    >>> round_significant(58.999999999999986, 6), round_significant(None, 3)
    (59.0, None)
    >>> round_significant(np.array([278385.8267716535, 1.48764e-05, 0.0, -44.342, np.nan, 2.557977936e25]), 3).tolist()
    [278000.0, 1.49e-05, 0.0, -44.3, nan, 2.56e+25]
    """
    if type(value) is float:
        return float(f"{value:.{digits}g}") if value - value == 0.0 else value
    if type(value) is not np.ndarray or value.dtype.kind != "f":
        return value
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        k = (digits - 1) - np.floor(np.log10(np.abs(value)))
        exact = np.isfinite(k) & (np.abs(k) <= _EXACT_POWERS_OF_TEN)
        k = np.where(exact, k, 0.0)
        scale = np.power(10.0, np.abs(k))
        rounded = np.where(k >= 0, np.round(value * scale) / scale, np.round(value / scale) * scale)
    rounded = np.where(exact, rounded, value)
    # Beyond the exact powers of ten (magnitudes past about 1e22, or below 1e-7 at 17 digits, e.g. a number
    # density of 2.5e25 per m3): decimal formatting, as one NumPy string operation over those elements only.
    far = ~exact & np.isfinite(value) & (value != 0.0)
    if far.any():
        rounded[far] = np.char.mod(f"%.{digits}g", value[far]).astype(np.float64)
    return rounded


#: How the 422 for an unused output_units key names the dimension.
_A_DIMENSION = {"mass": "a mass or a weight", "force": "a force or a weight",
                "altitude": "an altitude", "angle": "an angle", "area": "an area"}


def refuse_unused_units(output_units: dict, used: set) -> None:
    """The 422 for ``output_units`` keys that apply to no output written (nothing is silently ignored)."""
    unused = [key for key in output_units if key not in used]
    if unused:
        raise invalid([{"pointer": pointer("output_units", key),
                        "message": f"No output of this answer is {_A_DIMENSION.get(key, 'a ' + key.replace('_', ' '))}"
                                   ": leave it out, or ask for an output it applies to (`outputs`)."}
                       for key in unused])
