"""Boolean masks over the points of a request, as errors and warnings report them."""

from __future__ import annotations

import numpy as np

#: How many indices an error or a warning lists (the first ones).
MAX_REPORTED = 10


def any_true(mask) -> bool:
    """``mask.any()``, without NumPy's Python-level reduction wrapper for a 0-d mask (one point)."""
    if type(mask) is bool:
        return mask
    return bool(mask.any()) if mask.ndim else bool(mask)


def first_indices(mask) -> list[int]:
    """Up to the first MAX_REPORTED indices where ``mask`` is true (a 0-d mask gives [0] or [])."""
    mask = np.asarray(mask)
    if mask.ndim == 0:
        return [0] if bool(mask) else []
    return [int(i) for i in np.flatnonzero(mask)[:MAX_REPORTED]]
