"""The array convention of the physics modules, written once.

Every physics function takes numbers or NumPy arrays of any shape, broadcasts them, and returns the
broadcast shape; a 0-d result is returned as a NumPy scalar (``np.float64``, or ``np.bool_``), so that one
number in gives one number out. Use :func:`result` for that last step and :func:`any_true` for a cheap
"is any point concerned" test; do not write a module-local twin of either. Tabulated relations (a
calibration table, a buffet boundary) are checked by :func:`check_table` and read by :func:`interp_inside`.

>>> result(np.asarray(2.0)), result([1.0, 2.0])
(np.float64(2.0), array([1., 2.]))
>>> any_true(np.asarray(False)), any_true(np.array([False, True]))
(False, True)
"""

from __future__ import annotations

import numpy as np


def result(x):
    """``x`` as a NumPy array, or as a NumPy scalar when it is 0-d."""
    x = np.asarray(x)
    return x[()] if x.ndim == 0 else x


def any_true(mask) -> bool:
    """``mask.any()``, without NumPy's Python-level reduction wrapper for a 0-d mask (one point)."""
    if type(mask) is bool:
        return mask
    return bool(mask.any()) if mask.ndim else bool(mask)


def flat(x) -> tuple[np.ndarray, tuple[int, ...]]:
    """``x`` as a 1-D float64 array, and its shape (for :func:`shaped`)."""
    x = np.asarray(x, dtype=np.float64)
    return x.reshape(-1), x.shape


def shaped(x: np.ndarray, shape: tuple[int, ...]):
    """Undo :func:`flat`: ``x`` in ``shape`` (a NumPy scalar for a 0-d shape)."""
    return result(x.reshape(shape))


def check_table(what: str, columns: dict, *, increasing: tuple[str, ...] = ()) -> tuple[np.ndarray, ...]:
    """The columns of a table (name -> values) as 1-D float arrays, in order; ``ValueError`` naming ``what``
    and the column otherwise.

    Each column has at least 2 rows of finite, positive numbers; those named in ``increasing`` strictly
    increase (so the table can be read both ways); all have one length.

    >>> check_table("speed table", {"ias": [50, 60], "cas": [52.0, 61.0]}, increasing=("ias",))[1]
    array([52., 61.])
    >>> check_table("speed table", {"ias": [50, 40], "cas": [52.0, 61.0]}, increasing=("ias",))
    Traceback (most recent call last):
    ...
    ValueError: speed table ias must be strictly increasing (row 1: 40 after 50)
    """
    arrays = []
    for name, column in columns.items():
        a = np.asarray(column, dtype=float)
        if a.ndim != 1:
            raise ValueError(f"{what} {name} must be 1-D, got {a.ndim} dimensions")
        if a.size < 2:
            raise ValueError(f"{what} {name} needs at least 2 rows, got {a.size}")
        if not np.all(np.isfinite(a)):
            row = int(np.flatnonzero(~np.isfinite(a))[0])
            raise ValueError(f"{what} {name} must be finite (row {row}: {a[row]:g})")
        if not np.all(a > 0.0):
            row = int(np.flatnonzero(a <= 0.0)[0])
            raise ValueError(f"{what} {name} must be positive (row {row}: {a[row]:g})")
        if name in increasing and not np.all(np.diff(a) > 0.0):
            row = int(np.flatnonzero(np.diff(a) <= 0.0)[0]) + 1
            raise ValueError(f"{what} {name} must be strictly increasing (row {row}: {a[row]:g} after {a[row - 1]:g})")
        arrays.append(a)
    if len({a.size for a in arrays}) > 1:
        raise ValueError(f"{what} {' and '.join(columns)} must have the same length, got "
                         + " and ".join(str(a.size) for a in arrays))
    return tuple(arrays)


def interp_inside(x, xp, fp):
    """``np.interp`` of ``x`` in the table ``xp`` -> ``fp``, NaN outside [xp[0], xp[-1]] (never clamped).

    >>> interp_inside([0.5, 2.0], np.array([0.0, 1.0]), [10.0, 20.0])
    array([15., nan])
    """
    x = np.asarray(x, dtype=float)
    y = np.interp(x, xp, fp)
    return result(np.where((x >= xp[0]) & (x <= xp[-1]), y, np.nan))
