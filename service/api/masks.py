"""Boolean masks over the points of a request, as errors and warnings report them (``any_true`` is the
physics' own, service.physics.arrays)."""

from __future__ import annotations

import numpy as np

from service.physics.arrays import any_true

__all__ = ["MAX_REPORTED", "any_true", "at_points", "first_indices"]

#: How many indices an error or a warning lists (the first ones).
MAX_REPORTED = 10


def first_indices(mask) -> list[int]:
    """Up to the first MAX_REPORTED indices where ``mask`` is true (a 0-d mask gives [0] or [])."""
    mask = np.asarray(mask)
    if mask.ndim == 0:
        return [0] if bool(mask) else []
    return [int(i) for i in np.flatnonzero(mask)[:MAX_REPORTED]]


def at_points(mask) -> str:
    """" at points [...]" (the first indices where ``mask`` is true) for an array mask, "" for a 0-d one."""
    return f" at points {first_indices(mask)}" if np.ndim(mask) else ""
