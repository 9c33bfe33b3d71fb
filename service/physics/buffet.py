"""Buffet margins from a type's buffet-onset boundary, W/delta and the limits they set.

A type's buffet-onset boundary gives, for each Mach number, the lift coefficient at
which buffet starts. At a given Mach number the lift coefficient needed in 1 g
flight depends on the static pressure only:

.. math::

    C_L = \\frac{W}{q S}, \\qquad q = \\frac{\\gamma}{2} p M^2, \\qquad
    n_{buffet} = \\frac{C_{L,buffet}(M)}{C_L}, \\qquad
    \\frac{W}{\\delta} = \\frac{W p_0}{p}

so the margin to buffet, as a load factor, falls with ``W/delta``. Requiring a margin
``n_req`` (1.3 g is usual) bounds ``W/delta``; at a fixed Mach number that is a
highest pressure altitude at a given weight and a highest weight at a given altitude:

.. math::

    p_{min} = \\frac{n_{req} W}{\\frac{\\gamma}{2} M^2 S C_{L,buffet}(M)}, \\qquad
    W_{max} = \\frac{\\frac{\\gamma}{2} p M^2 S C_{L,buffet}(M)}{n_{req}}

References
----------
1. Anderson, J. D., *Introduction to Flight*, McGraw-Hill (lift equation, level turn).
2. NACA Report 1135, 1953 (q = (gamma/2) p M^2).
3. ICAO Doc 7488/3, 1993 (the standard pressure behind the pressure altitude).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .arrays import check_table, interp_inside, result
from .atmosphere import pressure_altitude
from .constants import GAMMA, P0

__all__ = ["BuffetMargins", "buffet_cl", "buffet_margins", "check_buffet_table"]


def check_buffet_table(table_mach, table_cl):
    """Check a buffet-onset table (CL against Mach) and return its columns as float arrays.

    Parameters
    ----------
    table_mach : array_like
        Mach numbers of the rows, positive and strictly increasing [-].
    table_cl : array_like
        Buffet-onset lift coefficient at each Mach number, positive [-].

    Returns
    -------
    table_mach, table_cl : ndarray
        The two columns as 1-D float arrays [-].

    Raises
    ------
    ValueError
        If a column is not 1-D, has fewer than 2 rows, the lengths differ, a value is
        not finite or not positive, or the Mach numbers do not strictly increase.

    Examples
    --------
    >>> m, cl = check_buffet_table([0.5, 0.7], [0.9, 0.7])
    >>> check_buffet_table([0.5, 0.5], [0.9, 0.7])
    Traceback (most recent call last):
    ...
    ValueError: buffet table mach must be strictly increasing (row 1: 0.5 after 0.5)

    References
    ----------
    1. Anderson, *Introduction to Flight* (the lift coefficient).
    """
    return check_table("buffet table", {"mach": table_mach, "cl": table_cl}, increasing=("mach",))


def buffet_cl(mach, table_mach, table_cl):
    """Buffet-onset lift coefficient at Mach ``mach``, linear in the table, never extrapolated.

    .. math::

        C_{L,buffet}(M) = C_{L,i} + (C_{L,i+1} - C_{L,i})
        \\frac{M - M_i}{M_{i+1} - M_i}, \\qquad M_i \\le M \\le M_{i+1}

    Parameters
    ----------
    mach : array_like
        Mach number [-].
    table_mach, table_cl : array_like
        The boundary, as checked by :func:`check_buffet_table` [-].

    Returns
    -------
    cl : ndarray or float
        Buffet-onset lift coefficient; NaN outside the table's Mach range [-].

    Examples
    --------
    >>> buffet_cl([0.6, 0.45, 0.8], [0.5, 0.7], [0.9, 0.7]).round(6).tolist()
    [0.8, nan, nan]

    References
    ----------
    1. Anderson, *Introduction to Flight* (the lift coefficient).
    """
    return interp_inside(mach, np.asarray(table_mach, dtype=float), table_cl)


class BuffetMargins(NamedTuple):
    """Result of :func:`buffet_margins`: arrays of the broadcast input shape."""

    #: Lift coefficient in 1 g flight [-].
    cl: np.ndarray
    #: Buffet-onset lift coefficient at the Mach number [-].
    buffet_cl: np.ndarray
    #: Load factor at which buffet starts, ``CL_buffet / CL`` [-].
    load_factor_to_buffet: np.ndarray
    #: Bank angle of the level turn that reaches buffet onset; NaN where the load
    #: factor to buffet is below 1 [rad].
    bank_to_buffet: np.ndarray
    #: Weight over the pressure ratio, ``W p0 / p`` [N].
    weight_over_delta: np.ndarray
    #: Highest ``W/delta`` that keeps the required margin [N] (NaN without a margin).
    maximum_weight_over_delta: np.ndarray
    #: Highest pressure altitude that keeps the required margin at this weight and
    #: Mach number; NaN without a margin or outside the atmosphere model [m].
    maximum_altitude: np.ndarray
    #: Highest weight that keeps the required margin at this pressure and Mach
    #: number [N] (NaN without a margin).
    maximum_weight: np.ndarray


def buffet_margins(weight, wing_area, mach, p, table_mach, table_cl, margin=None):
    """Margins to buffet onset at a weight, Mach number and static pressure.

    .. math::

        C_L = \\frac{W}{\\frac{\\gamma}{2} p M^2 S}, \\quad
        n_b = \\frac{C_{L,buffet}(M)}{C_L}, \\quad \\phi_b = \\arccos\\frac{1}{n_b}, \\quad
        \\left(\\frac{W}{\\delta}\\right)_{max} = \\frac{\\frac{\\gamma}{2} p_0 M^2 S
        C_{L,buffet}(M)}{n_{req}}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    mach : array_like
        Mach number [-].
    p : array_like
        Static pressure [Pa].
    table_mach, table_cl : array_like
        The buffet-onset boundary, as checked by :func:`check_buffet_table` [-].
    margin : array_like, optional
        Required margin to buffet onset, as a load factor (for example 1.3) [-].

    Returns
    -------
    BuffetMargins
        ``cl`` [-], ``buffet_cl`` [-], ``load_factor_to_buffet`` [-], ``bank_to_buffet``
        [rad], ``weight_over_delta`` [N], ``maximum_weight_over_delta`` [N],
        ``maximum_altitude`` (a pressure altitude) [m] and ``maximum_weight`` [N].
        Everything that needs the boundary is NaN where ``mach`` is outside the table;
        the three maxima are NaN without ``margin``.

    Notes
    -----
    The boundary is the type's 1 g buffet-onset lift coefficient against Mach number,
    linear between rows. At a fixed Mach number the lift coefficient depends on the
    static pressure alone, so the maximum altitude is the pressure altitude of
    :math:`p_0 / (W / \\delta)_{max}`, independent of the temperature.

    Examples
    --------
    22 t at Mach 0.74, FL350 (23 842 Pa), on 61 m2, with a boundary of CL 0.62 at that Mach:

    >>> b = buffet_margins(22_000 * 9.80665, 61.0, 0.74, 23_842.0, [0.6, 0.8], [0.76, 0.56], margin=1.3)
    >>> print(round(float(b.cl), 4), round(float(b.load_factor_to_buffet), 4))
    0.387 1.6021
    >>> print(round(float(np.degrees(b.bank_to_buffet)), 2), round(float(b.maximum_altitude), 1))
    51.38 11994.7

    References
    ----------
    1. NACA Report 1135, 1953 (q = (gamma/2) p M^2).
    2. ICAO Doc 7488/3, 1993 (pressure altitude).
    """
    weight = np.asarray(weight, dtype=float)
    mach = np.asarray(mach, dtype=float)
    p = np.asarray(p, dtype=float)
    q_over_p = 0.5 * GAMMA * mach * mach * np.asarray(wing_area, dtype=float)  # q S / p [m^2]
    cl = weight / (q_over_p * p)
    cl_b = buffet_cl(mach, table_mach, table_cl)
    n_b = cl_b / cl
    with np.errstate(invalid="ignore"):
        bank = np.where(n_b >= 1.0, np.arccos(1.0 / n_b), np.nan)
    if margin is None:
        wd_max = p_min = w_max = np.full(np.broadcast(cl, n_b).shape, np.nan)
    else:
        capacity = q_over_p * cl_b / np.asarray(margin, dtype=float)  # W/p at the margin [m^2]
        wd_max = capacity * P0
        p_min = weight / capacity
        w_max = capacity * p
    arrays = np.broadcast_arrays(cl, cl_b, n_b, bank, weight * P0 / p, wd_max, pressure_altitude(p_min), w_max)
    return BuffetMargins(*map(result, arrays))
