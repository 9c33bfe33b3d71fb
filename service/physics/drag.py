"""The parabolic drag polar and the characteristic speeds that follow from it.

The drag is the same aerodynamic force relation as the lift, with the drag
coefficient of a parabolic polar:

.. math::

    D = q S C_D, \\qquad C_D = C_{D0} + k C_L^2, \\qquad k = \\frac{1}{\\pi A e}

with ``q`` the dynamic pressure, ``S`` the wing reference area, ``C_D0`` the
zero-lift (parasite) drag coefficient and ``k`` the induced drag factor, from the
aspect ratio ``A`` and the Oswald efficiency ``e`` when not given. In steady level
flight the thrust required equals the drag and the power required is ``D V`` with
``V`` the true airspeed. The conditions of minimum drag (maximum lift-to-drag
ratio), of minimum power and of the best glide in still air follow in closed form.

Notes
-----
The polar has no compressibility drag (no wave drag, no drag creep): it holds below
the Mach number at which the type's drag starts to rise. :data:`POLAR_MACH_LIMIT`
is the default bound above which a caller should warn. All inputs and outputs are
SI; the functions do not check their inputs (the API layer validates them:
positive weights, areas, coefficients and densities).

References
----------
1. Anderson, J. D., *Introduction to Flight*, McGraw-Hill, chapter 6 (drag polar,
   thrust and power required, gliding flight).
2. Anderson, J. D., *Aircraft Performance and Design*, WCB/McGraw-Hill, 1999,
   chapter 5.
3. Ruijgrok, G. J. J., *Elements of Airplane Performance*, Delft University Press
   (minimum drag and minimum power conditions).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from .arrays import result
from .lift import eas_from_dynamic_pressure, lift_coefficient, required_dynamic_pressure

__all__ = [
    "POLAR_MACH_LIMIT",
    "GlideCondition",
    "LevelCondition",
    "aerodynamic_force",
    "best_glide",
    "beyond_polar_range",
    "drag_coefficient",
    "glide_distance",
    "induced_drag_factor",
    "flight_condition",
    "level_condition",
    "lift_to_drag",
    "max_lift_to_drag",
    "minimum_drag",
    "minimum_drag_cl",
    "minimum_power",
    "minimum_power_cl",
    "power_required",
]

#: Default Mach number above which a parabolic polar without compressibility drag is
#: not to be trusted [-]. Common practice, no source: the drag of a subsonic transport
#: wing begins to creep up from about Mach 0.6; a caller with the type's own
#: drag-rise Mach passes that instead.
POLAR_MACH_LIMIT = 0.6


def _f(x):
    """``x`` as a float64 array (0-d for a scalar)."""
    return np.asarray(x, dtype=float)


def _tas_at(q, rho):
    """True airspeed of dynamic pressure ``q`` at density ``rho``, ``V = sqrt(2 q / rho)`` [m/s]."""
    return np.sqrt(2.0 * q / _f(rho))


# --- The polar ------------------------------------------------------------------------


def induced_drag_factor(aspect_ratio, oswald_efficiency):
    """Induced drag factor of a wing from its aspect ratio and Oswald efficiency.

    .. math:: k = \\frac{1}{\\pi A e}

    Parameters
    ----------
    aspect_ratio : array_like
        Wing aspect ratio ``A = b^2 / S`` [-].
    oswald_efficiency : array_like
        Oswald span efficiency factor ``e`` (0 < e <= 1) [-].

    Returns
    -------
    k : ndarray or float
        Induced drag factor [-].

    Examples
    --------
    >>> print(round(float(induced_drag_factor(11.0, 0.8)), 6))
    0.036172

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 5 (induced drag, span efficiency).
    """
    with np.errstate(divide="ignore"):
        return result(1.0 / (math.pi * _f(aspect_ratio) * _f(oswald_efficiency)))


def drag_coefficient(cl, cd0, k):
    """Drag coefficient of a parabolic polar at lift coefficient ``cl``.

    .. math:: C_D = C_{D0} + k C_L^2

    Parameters
    ----------
    cl : array_like
        Lift coefficient [-].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].

    Returns
    -------
    cd : ndarray or float
        Drag coefficient [-].

    Examples
    --------
    >>> print(round(float(drag_coefficient(0.5, 0.025, 0.04)), 6))
    0.035

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (the drag polar).
    """
    cl = _f(cl)
    return result(_f(cd0) + _f(k) * cl * cl)


def lift_to_drag(cl, cd0, k):
    """Lift-to-drag ratio of a parabolic polar at lift coefficient ``cl``.

    .. math:: \\frac{L}{D} = \\frac{C_L}{C_{D0} + k C_L^2}

    Parameters
    ----------
    cl : array_like
        Lift coefficient [-].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].

    Returns
    -------
    ratio : ndarray or float
        Lift-to-drag ratio [-].

    Examples
    --------
    >>> print(round(float(lift_to_drag(0.5, 0.025, 0.04)), 4))
    14.2857

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return result(_f(cl) / _f(drag_coefficient(cl, cd0, k)))


def aerodynamic_force(q, area, coefficient):
    """Aerodynamic force of coefficient ``coefficient`` on reference area ``area``.

    .. math:: F = q S C_F

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    area : array_like
        Reference area [m^2].
    coefficient : array_like
        Force coefficient (``C_D`` for the drag, ``C_L`` for the lift) [-].

    Returns
    -------
    force : ndarray or float
        Force [N].

    Examples
    --------
    >>> print(round(float(aerodynamic_force(5000.0, 61.0, 0.03)), 6))
    9150.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 5 (force coefficients).
    """
    return result(_f(q) * _f(area) * _f(coefficient))


def power_required(drag, tas):
    """Power required to fly at true airspeed ``tas`` against drag ``drag``.

    .. math:: P_R = D V

    Parameters
    ----------
    drag : array_like
        Drag, equal to the thrust required in steady level flight [N].
    tas : array_like
        True airspeed [m/s].

    Returns
    -------
    power : ndarray or float
        Power required [W].

    Examples
    --------
    >>> print(round(float(power_required(10_000.0, 100.0)), 3))
    1000000.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (power required).
    """
    return result(_f(drag) * _f(tas))


def beyond_polar_range(mach, mach_limit=POLAR_MACH_LIMIT):
    """Where a Mach number is beyond the range of a polar without compressibility drag.

    Parameters
    ----------
    mach : array_like
        Mach number of the point [-].
    mach_limit : array_like, optional
        Highest Mach number at which the polar holds [-]; :data:`POLAR_MACH_LIMIT`
        by default.

    Returns
    -------
    beyond : ndarray of bool or bool
        True where ``mach > mach_limit`` [-].

    Examples
    --------
    >>> beyond_polar_range([0.4, 0.6, 0.78]).tolist()
    [False, False, True]

    References
    ----------
    1. Anderson, *Aircraft Performance and Design*, chapter 2 (drag divergence).
    """
    return result(_f(mach) > _f(mach_limit))


# --- Characteristic conditions ----------------------------------------------------------


def minimum_drag_cl(cd0, k):
    """Lift coefficient of minimum drag (maximum lift-to-drag ratio).

    .. math:: C_{L,md} = \\sqrt{C_{D0} / k}

    The induced drag equals the zero-lift drag there, so ``C_D = 2 C_D0``.

    Parameters
    ----------
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].

    Returns
    -------
    cl : ndarray or float
        Lift coefficient [-].

    Examples
    --------
    >>> print(round(float(minimum_drag_cl(0.025, 0.04)), 6))
    0.790569

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (conditions for minimum thrust
       required).
    """
    with np.errstate(divide="ignore", invalid="ignore"):  # no value (NaN) for a negative ratio
        return result(np.sqrt(_f(cd0) / _f(k)))


def minimum_power_cl(cd0, k):
    """Lift coefficient of minimum power required (and of minimum sink in a glide).

    .. math:: C_{L,mp} = \\sqrt{3 C_{D0} / k}

    The induced drag is three times the zero-lift drag there, so ``C_D = 4 C_D0``.

    Parameters
    ----------
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].

    Returns
    -------
    cl : ndarray or float
        Lift coefficient [-].

    Examples
    --------
    >>> print(round(float(minimum_power_cl(0.025, 0.04)), 6))
    1.369306

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (conditions for minimum power
       required).
    """
    with np.errstate(divide="ignore", invalid="ignore"):  # no value (NaN) for a negative ratio
        return result(np.sqrt(3.0 * _f(cd0) / _f(k)))


def max_lift_to_drag(cd0, k):
    """Maximum lift-to-drag ratio of a parabolic polar.

    .. math:: \\left(\\frac{L}{D}\\right)_{max} = \\frac{1}{2\\sqrt{C_{D0} k}}

    Parameters
    ----------
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].

    Returns
    -------
    ratio : ndarray or float
        Maximum lift-to-drag ratio [-].

    Examples
    --------
    >>> print(round(float(max_lift_to_drag(0.025, 0.04)), 4))
    15.8114

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6.
    """
    with np.errstate(divide="ignore", invalid="ignore"):  # no value (NaN) for a negative product
        return result(0.5 / np.sqrt(_f(cd0) * _f(k)))


class LevelCondition(NamedTuple):
    """Steady level flight at one lift coefficient: arrays of the broadcast input shape."""

    #: Lift coefficient [-].
    cl: np.ndarray
    #: Drag coefficient [-].
    cd: np.ndarray
    #: Lift-to-drag ratio [-].
    lift_to_drag: np.ndarray
    #: Dynamic pressure [Pa].
    q: np.ndarray
    #: Equivalent airspeed [m/s].
    eas: np.ndarray
    #: True airspeed [m/s].
    tas: np.ndarray
    #: Drag, equal to the thrust required [N].
    drag: np.ndarray
    #: Power required [W].
    power: np.ndarray


def flight_condition(weight, wing_area, q, tas, cd0, k, load_factor=1.0):
    """Steady flight (level, or a level turn) at dynamic pressure ``q`` and true airspeed ``tas``.

    .. math::

        C_L = \\frac{n W}{q S}, \\quad C_D = C_{D0} + k C_L^2, \\quad
        D = q S C_D, \\quad P_R = D V, \\quad V_E = \\sqrt{\\frac{2 q}{\\rho_0}}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    q : array_like
        Dynamic pressure [Pa].
    tas : array_like
        True airspeed [m/s].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].
    load_factor : array_like, optional
        Load factor ``n`` (1 in straight flight) [-].

    Returns
    -------
    LevelCondition
        ``cl`` [-], ``cd`` [-], ``lift_to_drag`` [-], ``q`` [Pa], ``eas`` [m/s],
        ``tas`` [m/s], ``drag`` [N] (the thrust required) and ``power`` [W], each of the
        broadcast input shape.

    Notes
    -----
    Steady flight: thrust equals drag, lift equals ``n W``; the thrust line is taken
    along the flight path. ``q`` and ``tas`` describe the same speed (``q = rho V^2 / 2``);
    the caller gets both from its speed conversions.

    Examples
    --------
    >>> c = flight_condition(200_000.0, 61.0, 6000.0, 110.0, 0.025, 0.04)
    >>> print(round(float(c.cl), 6), round(float(c.drag), 2), round(float(c.power) / 1e3, 2))
    0.546448 13521.58 1487.37

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (thrust and power required).
    """
    q, tas = _f(q), _f(tas)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):  # beyond the float range: inf or NaN
        cl = lift_coefficient(weight, load_factor, q, wing_area)
        cd = drag_coefficient(cl, cd0, k)
        drag = aerodynamic_force(q, wing_area, cd)
        arrays = np.broadcast_arrays(cl, cd, cl / cd, q, eas_from_dynamic_pressure(q), tas, drag,
                                     power_required(drag, tas))
    return LevelCondition(*map(result, arrays))


def level_condition(weight, wing_area, cl, cd0, k, rho, load_factor=1.0):
    """Steady flight (level, or a level turn) at lift coefficient ``cl``.

    .. math::

        q = \\frac{n W}{S C_L}, \\quad V = \\sqrt{\\frac{2 q}{\\rho}}

    and then :func:`flight_condition` at that ``q`` and ``V``.

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    cl : array_like
        Lift coefficient [-].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].
    rho : array_like
        Air density [kg/m^3].
    load_factor : array_like, optional
        Load factor ``n`` (1 in straight flight) [-].

    Returns
    -------
    LevelCondition
        See :func:`flight_condition`.

    Examples
    --------
    >>> c = level_condition(200_000.0, 61.0, 0.5, 0.025, 0.04, 0.9)
    >>> print(round(float(c.drag), 3), round(float(c.tas), 3))
    14000.0 120.714

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (thrust and power required).
    """
    with np.errstate(divide="ignore", over="ignore"):
        q = required_dynamic_pressure(weight, load_factor, wing_area, cl)
        tas = _tas_at(q, rho)
    return flight_condition(weight, wing_area, q, tas, cd0, k, load_factor)


def minimum_drag(weight, wing_area, cd0, k, rho):
    """Steady level flight at minimum drag: the maximum lift-to-drag ratio.

    .. math::

        C_L = \\sqrt{C_{D0}/k}, \\quad
        D_{min} = \\frac{W}{(L/D)_{max}} = 2 W \\sqrt{C_{D0} k}, \\quad
        V_{md} = \\sqrt{\\frac{2 W}{\\rho S}}\\left(\\frac{k}{C_{D0}}\\right)^{1/4}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].
    rho : array_like
        Air density [kg/m^3].

    Returns
    -------
    LevelCondition
        See :func:`level_condition`.

    Notes
    -----
    The minimum drag (thrust required) does not depend on the altitude; its EAS does
    not either, while the TAS grows as ``1/sqrt(rho)``.

    Examples
    --------
    >>> c = minimum_drag(200_000.0, 61.0, 0.025, 0.04, 1.225)
    >>> print(round(float(c.lift_to_drag), 4), round(float(c.drag), 2), round(float(c.eas), 3))
    15.8114 12649.11 82.286

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6.
    2. Ruijgrok, *Elements of Airplane Performance*, minimum drag.
    """
    return level_condition(weight, wing_area, minimum_drag_cl(cd0, k), cd0, k, rho)


def minimum_power(weight, wing_area, cd0, k, rho):
    """Steady level flight at minimum power required.

    .. math::

        C_L = \\sqrt{3 C_{D0}/k}, \\quad
        V_{mp} = 3^{-1/4} V_{md}, \\quad
        \\frac{L}{D} = \\frac{\\sqrt3}{2}\\left(\\frac{L}{D}\\right)_{max}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].
    rho : array_like
        Air density [kg/m^3].

    Returns
    -------
    LevelCondition
        See :func:`level_condition`; ``power`` is the minimum power required [W].

    Notes
    -----
    For a propeller aircraft of constant propulsive efficiency this is the speed of
    maximum endurance; in a glide it is the speed of minimum sink (small angle).

    Examples
    --------
    >>> c = minimum_power(200_000.0, 61.0, 0.025, 0.04, 1.225)
    >>> print(round(float(c.eas), 3), round(float(c.power) / 1e3, 2))
    62.524 913.22

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6.
    2. Ruijgrok, *Elements of Airplane Performance*, minimum power.
    """
    return level_condition(weight, wing_area, minimum_power_cl(cd0, k), cd0, k, rho)


class GlideCondition(NamedTuple):
    """The best glide in still air: arrays of the broadcast input shape."""

    #: Glide ratio, horizontal distance per height lost, ``(L/D)max`` [-].
    glide_ratio: np.ndarray
    #: Glide path angle below the horizon [rad].
    glide_angle: np.ndarray
    #: Lift coefficient [-].
    cl: np.ndarray
    #: Equivalent airspeed along the path [m/s].
    eas: np.ndarray
    #: True airspeed along the path [m/s].
    tas: np.ndarray
    #: Rate of descent [m/s].
    sink_rate: np.ndarray


def best_glide(weight, wing_area, cd0, k, rho):
    """The flattest steady glide in still air, at the maximum lift-to-drag ratio.

    .. math::

        \\tan\\gamma = \\frac{1}{(L/D)_{max}}, \\quad
        V = \\sqrt{\\frac{2 W \\cos\\gamma}{\\rho S C_{L,md}}}, \\quad
        w = V \\sin\\gamma

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    cd0 : array_like
        Zero-lift drag coefficient [-].
    k : array_like
        Induced drag factor [-].
    rho : array_like
        Air density [kg/m^3].

    Returns
    -------
    GlideCondition
        ``glide_ratio`` [-], ``glide_angle`` [rad], ``cl`` [-], ``eas`` [m/s],
        ``tas`` [m/s], ``sink_rate`` [m/s].

    Notes
    -----
    Power off, still air, steady: ``L = W cos(gamma)`` and ``D = W sin(gamma)``, so the
    angle depends on the polar only and the speed on the wing loading and the density.
    The speed is exact (with ``cos(gamma)``), slightly below the level minimum drag
    speed at the same weight.

    Examples
    --------
    >>> g = best_glide(200_000.0, 61.0, 0.025, 0.04, 1.225)
    >>> print(round(float(np.degrees(g.glide_angle)), 4), round(float(g.sink_rate), 4))
    3.6189 5.1887

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (gliding flight).
    """
    cl = _f(minimum_drag_cl(cd0, k))
    ratio = _f(max_lift_to_drag(cd0, k))
    with np.errstate(divide="ignore", invalid="ignore"):
        gamma = np.arctan(1.0 / ratio)
        q = required_dynamic_pressure(weight, np.cos(gamma), wing_area, cl)  # L = W cos(gamma)
        tas = _tas_at(q, rho)
    arrays = np.broadcast_arrays(ratio, gamma, cl, eas_from_dynamic_pressure(q), tas, tas * np.sin(gamma))
    return GlideCondition(*map(result, arrays))


def glide_distance(height, glide_ratio):
    """Horizontal distance of a steady glide in still air from height ``height``.

    .. math:: R = h \\, \\frac{L}{D}

    Parameters
    ----------
    height : array_like
        Height to lose [m].
    glide_ratio : array_like
        Glide ratio (lift-to-drag ratio held) [-].

    Returns
    -------
    distance : ndarray or float
        Horizontal distance over the ground in still air [m].

    Notes
    -----
    Exact for a constant ratio: ``tan(gamma) = D / L``. The ratio at the maximum is
    independent of the density, so the distance from a height does not depend on the
    altitude band it is flown in.

    Examples
    --------
    >>> print(round(float(glide_distance(3048.0, 15.0)), 1))
    45720.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, chapter 6 (range in a glide).
    """
    return result(_f(height) * _f(glide_ratio))
