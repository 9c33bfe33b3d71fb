"""Array shapes of physics results: one convention for the modules of the performance family.

Results of the broadcast input shape; a NumPy scalar (not a 0-d array) when that shape is ``()``.
"""

from __future__ import annotations

import numpy as np

__all__ = ["broadcast_out"]


def broadcast_out(*arrays) -> tuple:
    """The arrays broadcast to one shape, each a NumPy scalar when the shape is ``()``.

    Parameters
    ----------
    *arrays : array_like
        Values of any shapes that broadcast together [any unit].

    Returns
    -------
    tuple
        One entry per argument, of the broadcast shape (read-only views where broadcast).

    Examples
    --------
    >>> a, b = broadcast_out(1.0, [2.0, 3.0])
    >>> a.tolist(), b.tolist()
    ([1.0, 1.0], [2.0, 3.0])
    >>> type(broadcast_out(1.0, 2.0)[0]).__name__
    'float64'

    References
    ----------
    1. NumPy documentation, broadcasting.
    """
    return tuple(a[()] for a in np.broadcast_arrays(*(np.asarray(x) for x in arrays)))
