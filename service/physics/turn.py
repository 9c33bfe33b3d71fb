"""The level coordinated turn: radius, rate, time for a full turn, load factor and bank.

In a level, coordinated turn the vertical component of the lift carries the weight
and the horizontal component turns the flight path:

.. math::

    n = \\frac{1}{\\cos\\phi}, \\qquad
    \\tan\\phi = \\sqrt{n^2 - 1} = \\frac{\\omega V}{g_0}, \\qquad
    R = \\frac{V^2}{g_0 \\tan\\phi} = \\frac{V}{\\omega}, \\qquad
    t_{360} = \\frac{2\\pi}{\\omega}

with ``phi`` the bank angle, ``n`` the load factor, ``omega`` the rate of turn, ``V``
the true airspeed and ``R`` the radius. Any one of ``phi``, ``n`` and ``omega`` fixes
the turn at a given speed.

References
----------
1. Anderson, J. D., *Introduction to Flight*, McGraw-Hill, chapter 6 (the level turn).
2. ICAO, *Procedures for Air Navigation Services, Aircraft Operations* (PANS-OPS),
   Doc 8168, Volume II (rate of turn 3 deg/s; rate and radius of turn from the bank
   angle and the TAS).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from .arrays import result
from .constants import G0

__all__ = ["STANDARD_RATE", "LevelTurn", "level_turn"]

#: The trade's standard rate of turn ("rate one"), 3 degrees per second [rad/s]
#: (ICAO Doc 8168 Volume II: 3 deg/s).
STANDARD_RATE = math.radians(3.0)


class LevelTurn(NamedTuple):
    """A level coordinated turn: arrays of the broadcast input shape."""

    #: Bank angle [rad].
    bank_angle: np.ndarray
    #: Load factor [-].
    load_factor: np.ndarray
    #: Rate of turn [rad/s].
    turn_rate: np.ndarray
    #: Radius of the turn [m]; NaN with wings level (no turn).
    radius: np.ndarray
    #: Time for a full (360 degree) turn [s]; NaN with wings level (no turn).
    time_for_360: np.ndarray


def level_turn(tas, *, bank_angle=None, load_factor=None, turn_rate=None):
    """The level coordinated turn at true airspeed ``tas`` from one of bank, load factor or rate.

    .. math::

        \\tan\\phi = \\tan\\phi_{given} = \\sqrt{n^2 - 1} = \\frac{\\omega V}{g_0}, \\quad
        n = \\sqrt{1 + \\tan^2\\phi}, \\quad \\omega = \\frac{g_0 \\tan\\phi}{V}, \\quad
        R = \\frac{V^2}{g_0 \\tan\\phi}, \\quad t_{360} = \\frac{2\\pi}{\\omega}

    Parameters
    ----------
    tas : array_like
        True airspeed, positive [m/s].
    bank_angle : array_like, optional
        Bank angle, its magnitude in [0, pi/2) [rad].
    load_factor : array_like, optional
        Load factor, at least 1 [-].
    turn_rate : array_like, optional
        Rate of turn, its magnitude [rad/s]; :data:`STANDARD_RATE` is the trade's
        standard rate.

    Returns
    -------
    LevelTurn
        ``bank_angle`` [rad], ``load_factor`` [-], ``turn_rate`` [rad/s], ``radius`` [m]
        and ``time_for_360`` [s], of the broadcast shape of ``tas`` and the given input.
        Every output is NaN where the given input admits no level turn (a bank outside
        [0, pi/2), a load factor below 1, a negative rate); ``radius`` and
        ``time_for_360`` are NaN with wings level (bank 0, load factor 1, rate 0).

    Raises
    ------
    ValueError
        Unless exactly one of ``bank_angle``, ``load_factor`` and ``turn_rate`` is given.

    Notes
    -----
    Level (no climb or descent), coordinated (no sideslip) and steady turn; the
    lift is perpendicular to the flight path, ``g0`` the standard acceleration of
    free fall.

    Examples
    --------
    Rate and radius at 60 deg of bank and 100 m/s; the bank of a standard-rate turn at
    150 kt:

    >>> t = level_turn(100.0, bank_angle=np.radians(60.0))
    >>> print(round(float(t.load_factor), 6), round(float(t.radius), 2), round(float(t.time_for_360), 2))
    2.0 588.73 36.99
    >>> print(round(float(np.degrees(level_turn(150 * 1852 / 3600, turn_rate=STANDARD_RATE).bank_angle)), 2))
    22.39

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (the level turn).
    2. ICAO Doc 8168 Volume II (rate of turn and radius of turn).
    """
    given = [x is not None for x in (bank_angle, load_factor, turn_rate)]
    if sum(given) != 1:
        raise ValueError("give exactly one of bank_angle, load_factor and turn_rate")
    tas = np.asarray(tas, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if bank_angle is not None:
            phi = np.asarray(bank_angle, dtype=float)
            tan_phi = np.where((phi >= 0.0) & (phi < 0.5 * np.pi), np.tan(phi), np.nan)
        elif load_factor is not None:
            n = np.asarray(load_factor, dtype=float)
            tan_phi = np.where(n >= 1.0, np.sqrt(n * n - 1.0), np.nan)
        else:
            omega = np.asarray(turn_rate, dtype=float)
            tan_phi = np.where(omega >= 0.0, omega * tas / G0, np.nan)
        omega = G0 * tan_phi / tas
        turning = omega > 0.0
        radius = np.where(turning, tas / omega, np.nan)
        time_for_360 = np.where(turning, 2.0 * np.pi / omega, np.nan)
    arrays = np.broadcast_arrays(np.arctan(tan_phi), np.hypot(1.0, tan_phi), omega, radius, time_for_360)
    return LevelTurn(*map(result, arrays))
