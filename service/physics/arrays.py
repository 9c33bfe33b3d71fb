"""The array convention of the physics modules, written once.

Every physics function takes numbers or NumPy arrays of any shape, broadcasts them, and returns the
broadcast shape; a 0-d result is returned as a NumPy scalar (``np.float64``, or ``np.bool_``), so that one
number in gives one number out. Use :func:`result` for that last step and :func:`any_true` for a cheap
"is any point concerned" test; do not write a module-local twin of either.

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
