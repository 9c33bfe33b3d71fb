"""Climb and descent schedules as flown: a CAS/Mach schedule under a speed limit below an altitude.

A schedule "fly CAS ``V_c`` until it reaches Mach ``M``, then hold ``M``" (see
:func:`service.physics.airspeed.speed_schedule`) is flown below a limiting altitude
at no more than a limiting CAS (the common example: 250 kt below 10 000 ft):

.. math::

    V_{c,sched} = \\begin{cases} \\min(V_c, V_{c,limit}) & h < h_{limit} \\\\
    V_c & h \\ge h_{limit} \\end{cases}

and then the CAS/Mach schedule of that CAS. At each altitude one of three governs:
the ``limit`` (the limiting CAS is flown), the ``cas`` (the scheduled CAS) or the
``mach`` (above the crossover altitude).

References
----------
1. NACA Report 1135, 1953 (the pitot relations behind the CAS/Mach crossover).
2. ICAO Doc 7488/3, 1993 (the standard atmosphere).
3. ICAO Annex 2 / Annex 11, airspace classes (speed limitations below 10 000 ft,
   the common 250 kt; local regulations govern).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .airspeed import speed_schedule
from .arrays import result

__all__ = ["GOVERNING", "LimitedSchedule", "limited_speed_schedule"]

#: Names of what governs, indexed by :attr:`LimitedSchedule.governing` [-].
GOVERNING = ("cas", "mach", "limit")


class LimitedSchedule(NamedTuple):
    """Result of :func:`limited_speed_schedule`: arrays of the broadcast input shape."""

    #: What governs at each point, an index into :data:`GOVERNING`: 0 the scheduled
    #: CAS, 1 the Mach number, 2 the speed limit [-].
    governing: np.ndarray
    #: Calibrated airspeed flown [m/s].
    cas: np.ndarray
    #: Mach number flown [-].
    mach: np.ndarray
    #: True airspeed [m/s].
    tas: np.ndarray
    #: Equivalent airspeed [m/s].
    eas: np.ndarray


def limited_speed_schedule(cas, mach, p, T, altitude, limit_cas, limit_altitude):
    """Speeds of a CAS/Mach schedule flown under a CAS limit below an altitude.

    .. math::

        V_{c,sched} = \\min(V_c, V_{c,limit}) \\ (h < h_{limit}), \\qquad
        M_{flown} = \\min(M(V_{c,sched}, p), M_{limit})

    Parameters
    ----------
    cas : array_like
        Scheduled calibrated airspeed [m/s].
    mach : array_like
        Scheduled (limiting) Mach number [-].
    p : array_like
        Static pressure at each point [Pa].
    T : array_like
        Static temperature at each point [K].
    altitude : array_like
        Altitude of each point, of the same kind as ``limit_altitude`` [m].
    limit_cas : array_like
        Highest CAS allowed below ``limit_altitude`` [m/s].
    limit_altitude : array_like
        Altitude below which the limit applies (strictly below: at the altitude
        itself the schedule's own CAS is flown) [m].

    Returns
    -------
    LimitedSchedule
        ``governing`` (index into :data:`GOVERNING`) [-], ``cas`` [m/s], ``mach`` [-],
        ``tas`` [m/s], ``eas`` [m/s].

    Notes
    -----
    The limit governs where it applies and is below the scheduled CAS, unless the
    Mach number of the limiting CAS is already above the scheduled Mach (then the
    Mach governs). The altitudes are compared as given: pass both as the same kind
    (pressure altitudes, or heights above mean sea level).

    Examples
    --------
    290 kt / M0.76 with 250 kt below 10 000 ft, at 5 000 ft, FL150 and FL350 of a
    standard day:

    >>> kt = 1852 / 3600
    >>> s = limited_speed_schedule(290 * kt, 0.76, [84_307.3, 57_182.0, 23_842.3], [278.24, 258.43, 218.81],
    ...                            [1_524.0, 4_572.0, 10_668.0], 250 * kt, 3_048.0)
    >>> [GOVERNING[i] for i in s.governing]
    ['limit', 'cas', 'mach']
    >>> print(np.round(s.cas / kt, 1))
    [250. 290. 257.]

    References
    ----------
    1. NACA Report 1135, 1953.
    2. ICAO Doc 7488/3, 1993.
    """
    cas = np.asarray(cas, dtype=float)
    limit_cas = np.asarray(limit_cas, dtype=float)
    limited = (np.asarray(altitude, dtype=float) < np.asarray(limit_altitude, dtype=float)) & (limit_cas < cas)
    flown = speed_schedule(np.where(limited, limit_cas, cas), mach, p, T)
    governing = np.where(flown.governing_mach, 1, np.where(limited, 2, 0))
    arrays = np.broadcast_arrays(governing, flown.cas, flown.mach, flown.tas, flown.eas)
    return LimitedSchedule(*map(result, arrays))
