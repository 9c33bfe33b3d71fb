"""The lift equation and what follows from it: load factor, stall speeds, solves.

Steady flight with the lift vector carrying the weight times the load factor:

.. math::

    L = n W = q S C_L, \\qquad
    q = \\tfrac12 \\rho V^2 = \\tfrac12 \\rho_0 V_E^2 = \\tfrac{\\gamma}{2} p M^2

with ``W`` the weight (a force), ``n`` the load factor, ``S`` the wing reference
area, ``C_L`` the lift coefficient and ``q`` the dynamic pressure, written with the
true airspeed ``V`` and the density ``rho``, with the equivalent airspeed ``V_E``
and the sea-level standard density ``rho_0``, or with the Mach number ``M`` and the
static pressure ``p``. Every function here is one algebraic solve of that relation
or a vectorised root find in the standard atmosphere; all inputs and outputs are SI.

The algebraic solves do not check their inputs: the caller passes positive weights,
areas, dynamic pressures and lift coefficients (the API layer validates them).
Functions whose answer may not exist return NaN at those points.

References
----------
1. Anderson, J. D., *Introduction to Flight*, McGraw-Hill (lift equation, level
   turn, stalling speed).
2. Anderson, J. D., *Aircraft Performance and Design*, WCB/McGraw-Hill, 1999.
3. ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
4. Ames Research Staff, *Equations, Tables, and Charts for Compressible Flow*,
   NACA Report 1135, 1953 (q = (gamma/2) p M^2).
"""

from __future__ import annotations

import math

import numpy as np

from .airspeed import dynamic_pressure, mach_from_cas
from .arrays import result
from .atmosphere import density, standard_pressure, standard_state
from .constants import G0, GAMMA, H_MAX, H_MIN, LAYER_BASES, LAYER_LAPSE_RATES, R_AIR, RHO0

__all__ = [
    "bank_from_load_factor",
    "cl_fraction",
    "density_for_tas",
    "dynamic_pressure_from_eas",
    "eas_from_dynamic_pressure",
    "lift_coefficient",
    "load_factor_from_bank",
    "load_factor_supported",
    "pressure_altitude_for_cas",
    "pressure_altitude_for_density",
    "pressure_for_mach",
    "required_dynamic_pressure",
    "scale_stall_eas",
    "stall_eas",
    "stall_load_factor",
    "weight_supported",
    "wing_area_required",
]

#: Width of the final bracket of the altitude root finds [m].
_ALTITUDE_TOLERANCE = 1e-6
#: Bisection steps that shrink the bracket [H_MIN, H_MAX] to _ALTITUDE_TOLERANCE [-].
_BISECTION_STEPS = math.ceil(math.log2((H_MAX - H_MIN) / _ALTITUDE_TOLERANCE))


def _altitude_where_decreasing(func, target, *params):
    """Pressure altitude ``H`` in [H_MIN, H_MAX] with ``func(H, *params) == target``.

    ``func`` must decrease with ``H``. ``target`` and ``params`` are broadcast and
    flattened, and ``func`` is evaluated on whole 1-D arrays (a fixed number of
    bisection steps, no loop over points). NaN where ``func`` at the ends of the
    range does not bracket the target (or is NaN). Returns the broadcast shape.
    """
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (target, *params)))
    shape = arrays[0].shape
    target, *params = (x.reshape(-1) for x in arrays)
    lo = np.full(target.shape, H_MIN)
    hi = np.full(target.shape, H_MAX)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        bracketed = (func(lo, *params) >= target) & (func(hi, *params) <= target)
        for _ in range(_BISECTION_STEPS):
            mid = 0.5 * (lo + hi)
            below_root = func(mid, *params) > target
            lo = np.where(below_root, mid, lo)
            hi = np.where(below_root, hi, mid)
    return result(np.where(bracketed, 0.5 * (lo + hi), np.nan).reshape(shape))


# --- Load factor and bank angle ----------------------------------------------------


def load_factor_from_bank(phi):
    """Load factor of a level, coordinated turn at bank angle ``phi``.

    .. math:: n = \\frac{1}{\\cos\\phi}, \\qquad 0 \\le \\phi < \\pi/2

    Parameters
    ----------
    phi : array_like
        Bank angle, its magnitude [rad].

    Returns
    -------
    n : ndarray or float
        Load factor; NaN where ``phi`` is outside [0, pi/2) [-].

    Notes
    -----
    Level, coordinated turn: the vertical component of lift equals the weight.

    Examples
    --------
    >>> import numpy as np
    >>> print(np.round(load_factor_from_bank(np.radians([0.0, 30.0, 60.0])), 4))
    [1.     1.1547 2.    ]

    References
    ----------
    1. Anderson, *Introduction to Flight*, the level turn.
    """
    phi = np.asarray(phi, dtype=float)
    inside = (phi >= 0.0) & (phi < 0.5 * np.pi)
    with np.errstate(invalid="ignore", divide="ignore"):
        n = np.where(inside, 1.0 / np.cos(phi), np.nan)
    return result(n)


def bank_from_load_factor(n):
    """Bank angle of the level, coordinated turn that has load factor ``n``.

    .. math:: \\phi = \\arccos(1 / n), \\qquad n \\ge 1

    Parameters
    ----------
    n : array_like
        Load factor [-].

    Returns
    -------
    phi : ndarray or float
        Bank angle; NaN where ``n < 1`` (no level turn has that load factor) [rad].

    Notes
    -----
    Inverse of :func:`load_factor_from_bank`.

    Examples
    --------
    >>> import numpy as np
    >>> print(np.round(np.degrees(bank_from_load_factor([1.0, 2.0, 0.5])), 6))
    [ 0. 60. nan]

    References
    ----------
    1. Anderson, *Introduction to Flight*, the level turn.
    """
    n = np.asarray(n, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        phi = np.where(n >= 1.0, np.arccos(1.0 / n), np.nan)
    return result(phi)


# --- Algebraic solves of n W = q S CL ------------------------------------------------


def _lift_over(weight, load_factor, a, b):
    """``n W / (a b)``: the term of ``q S C_L`` that is not ``a`` or ``b``."""
    return result(np.asarray(load_factor, dtype=float) * np.asarray(weight, dtype=float)
                  / (np.asarray(a, dtype=float) * np.asarray(b, dtype=float)))


def _lift_per(q, wing_area, cl, term):
    """``q S C_L / term``: the lift per unit load factor (the weight) or per unit weight (the load factor)."""
    return result(np.asarray(q, dtype=float) * np.asarray(wing_area, dtype=float) * np.asarray(cl, dtype=float)
                  / np.asarray(term, dtype=float))


def lift_coefficient(weight, load_factor, q, wing_area):
    """Lift coefficient that carries ``n W`` at dynamic pressure ``q``.

    .. math:: C_L = \\frac{n W}{q S}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    load_factor : array_like
        Load factor [-].
    q : array_like
        Dynamic pressure [Pa].
    wing_area : array_like
        Wing reference area [m^2].

    Returns
    -------
    cl : ndarray or float
        Lift coefficient [-].

    Notes
    -----
    Inputs are positive (checked by the caller).

    Examples
    --------
    >>> print(round(float(lift_coefficient(10_000.0, 1.0, 2_000.0, 10.0)), 6))
    0.5

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    return _lift_over(weight, load_factor, q, wing_area)


def required_dynamic_pressure(weight, load_factor, wing_area, cl):
    """Dynamic pressure at which lift coefficient ``cl`` carries ``n W``.

    .. math:: q = \\frac{n W}{S C_L}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    load_factor : array_like
        Load factor [-].
    wing_area : array_like
        Wing reference area [m^2].
    cl : array_like
        Lift coefficient [-].

    Returns
    -------
    q : ndarray or float
        Dynamic pressure [Pa].

    Notes
    -----
    Inputs are positive (checked by the caller).

    Examples
    --------
    >>> print(round(float(required_dynamic_pressure(10_000.0, 1.0, 10.0, 0.5)), 6))
    2000.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    return _lift_over(weight, load_factor, wing_area, cl)


def weight_supported(q, wing_area, cl, load_factor):
    """Weight that lift coefficient ``cl`` carries at ``q`` and load factor ``n``.

    .. math:: W = \\frac{q S C_L}{n}

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    wing_area : array_like
        Wing reference area [m^2].
    cl : array_like
        Lift coefficient [-].
    load_factor : array_like
        Load factor [-].

    Returns
    -------
    weight : ndarray or float
        Weight (a force) [N].

    Notes
    -----
    Inputs are positive (checked by the caller).

    Examples
    --------
    >>> print(round(float(weight_supported(2_000.0, 10.0, 0.5, 2.0)), 6))
    5000.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    return _lift_per(q, wing_area, cl, load_factor)


def wing_area_required(weight, load_factor, q, cl):
    """Wing area on which lift coefficient ``cl`` carries ``n W`` at ``q``.

    .. math:: S = \\frac{n W}{q C_L}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    load_factor : array_like
        Load factor [-].
    q : array_like
        Dynamic pressure [Pa].
    cl : array_like
        Lift coefficient [-].

    Returns
    -------
    wing_area : ndarray or float
        Wing reference area [m^2].

    Notes
    -----
    Inputs are positive (checked by the caller).

    Examples
    --------
    >>> print(round(float(wing_area_required(10_000.0, 1.0, 2_000.0, 0.5)), 6))
    10.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    return _lift_over(weight, load_factor, q, cl)


def load_factor_supported(q, wing_area, cl, weight):
    """Load factor at which lift coefficient ``cl`` is reached at ``q``.

    .. math:: n = \\frac{q S C_L}{W}

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    wing_area : array_like
        Wing reference area [m^2].
    cl : array_like
        Lift coefficient [-].
    weight : array_like
        Weight (a force) [N].

    Returns
    -------
    n : ndarray or float
        Load factor [-].

    Notes
    -----
    Inputs are positive (checked by the caller). With ``cl`` the maximum lift
    coefficient this is the highest load factor the wing can pull at ``q``.

    Examples
    --------
    >>> print(round(float(load_factor_supported(2_000.0, 10.0, 1.5, 10_000.0)), 6))
    3.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation and the V-n diagram.
    """
    return _lift_per(q, wing_area, cl, weight)


# --- Dynamic pressure and equivalent airspeed ---------------------------------------


def eas_from_dynamic_pressure(q):
    """Equivalent airspeed of dynamic pressure ``q``.

    .. math:: V_E = \\sqrt{2 q / \\rho_0}

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].

    Returns
    -------
    eas : ndarray or float
        Equivalent airspeed; NaN where ``q < 0`` [m/s].

    Notes
    -----
    ``rho_0`` is the sea-level standard density, so the result does not depend on
    altitude: EAS is the speed that gives the same ``q`` at sea level.

    Examples
    --------
    >>> print(round(float(eas_from_dynamic_pressure(6125.0)), 3))
    100.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, equivalent airspeed.
    """
    q = np.asarray(q, dtype=float)
    with np.errstate(invalid="ignore"):
        eas = np.where(q >= 0.0, np.sqrt(2.0 * q / RHO0), np.nan)
    return result(eas)


def dynamic_pressure_from_eas(eas):
    """Dynamic pressure at equivalent airspeed ``eas``.

    .. math:: q = \\tfrac12 \\rho_0 V_E^2

    Parameters
    ----------
    eas : array_like
        Equivalent airspeed [m/s].

    Returns
    -------
    q : ndarray or float
        Dynamic pressure [Pa].

    Notes
    -----
    Inverse of :func:`eas_from_dynamic_pressure` for ``eas >= 0``.

    Examples
    --------
    >>> print(round(float(dynamic_pressure_from_eas(100.0)), 3))
    6125.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, equivalent airspeed.
    2. ICAO Doc 7488/3 (rho_0 = 1.225 kg/m^3).
    """
    eas = np.asarray(eas, dtype=float)
    return result(0.5 * RHO0 * eas**2)


# --- Altitude solves ------------------------------------------------------------------


def pressure_for_mach(q, mach):
    """Static pressure at which Mach number ``mach`` gives dynamic pressure ``q``.

    .. math:: p = \\frac{q}{(\\gamma / 2) M^2}

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    mach : array_like
        Mach number, positive [-].

    Returns
    -------
    p : ndarray or float
        Static pressure [Pa].

    Notes
    -----
    The pressure altitude follows from
    :func:`service.physics.atmosphere.pressure_altitude` (NaN outside the model's
    range). Temperature does not enter: at a given Mach number ``q`` depends on the
    static pressure only.

    Examples
    --------
    >>> print(round(float(pressure_for_mach(17_731.875, 0.5)), 6))
    101325.0

    References
    ----------
    1. NACA Report 1135 (q = (gamma/2) p M^2).
    """
    q = np.asarray(q, dtype=float)
    mach = np.asarray(mach, dtype=float)
    return result(q / (0.5 * GAMMA * mach**2))


def density_for_tas(q, tas):
    """Air density at which true airspeed ``tas`` gives dynamic pressure ``q``.

    .. math:: \\rho = \\frac{2 q}{V^2}

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    tas : array_like
        True airspeed, positive [m/s].

    Returns
    -------
    rho : ndarray or float
        Air density [kg/m^3].

    Notes
    -----
    With the ISA deviation known, :func:`pressure_altitude_for_density` turns the
    density into a pressure altitude.

    Examples
    --------
    >>> print(round(float(density_for_tas(6125.0, 100.0)), 6))
    1.225

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    q = np.asarray(q, dtype=float)
    tas = np.asarray(tas, dtype=float)
    return result(2.0 * q / tas**2)


def pressure_for_density(rho, T):
    """Static pressure of air with density ``rho`` at temperature ``T`` (the gas law).

    .. math:: p = \\rho R T

    Parameters
    ----------
    rho : array_like
        Air density [kg/m^3].
    T : array_like
        Outside (static) air temperature [K].

    Returns
    -------
    p : ndarray or float
        Static pressure [Pa].

    Notes
    -----
    With the outside air temperature known (rather than the ISA deviation), the density a
    TAS needs fixes the static pressure directly, and so the pressure altitude
    (``atmosphere.pressure_altitude(p)``); no iteration is needed.

    Examples
    --------
    >>> print(round(float(pressure_for_density(1.225, 288.15))))
    101325

    References
    ----------
    1. ICAO Doc 7488/3 (1993), the equation of state of the standard atmosphere.
    """
    rho = np.asarray(rho, dtype=float)
    T = np.asarray(T, dtype=float)
    return result(rho * R_AIR * T)


def pressure_altitude_for_density(rho, isa_deviation):
    """Pressure altitude at which the air has density ``rho`` on a day ``dT`` off ISA.

    Solves, for the pressure altitude ``H``,

    .. math:: \\rho = \\frac{p_s(H)}{R\\,(T_s(H) + \\Delta T)}

    with ``p_s`` and ``T_s`` the standard pressure and temperature (ICAO Doc 7488/3)
    and ``Delta T`` the ISA deviation, taken constant with height.

    Parameters
    ----------
    rho : array_like
        Air density [kg/m^3].
    isa_deviation : array_like
        ISA deviation ``Delta T`` [K].

    Returns
    -------
    H : ndarray or float
        Pressure altitude (geopotential); NaN where no altitude in
        [H_MIN, H_MAX] has that density, or where ``Delta T`` is so low (about
        -175 K) that the density would no longer fall with height [m].

    Notes
    -----
    Off-standard days keep the standard pressure at a pressure altitude and shift
    the temperature (the gas law gives the density). For a fixed ``Delta T`` the
    density falls monotonically with ``H`` in every layer as long as
    ``T_s + Delta T > R |dT/dH| T_s / g_0`` in the layers where the temperature
    falls with height; that holds over the whole model for ``Delta T`` above about
    -175 K (the bound is derived from the constants; below it the result is NaN).
    The root is found by a fixed number of
    bisection steps over the whole model range, on whole arrays, to 1e-6 m.
    With ``Delta T = 0`` this is the density altitude.

    Examples
    --------
    >>> import numpy as np
    >>> print(np.round(pressure_altitude_for_density([1.225, 0.9, 0.9, 0.0], [0, 0, 15, 0]), 1))
    [   0.  3097.8 2573.4    nan]

    References
    ----------
    1. ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
    """
    dT = np.asarray(isa_deviation, dtype=float)
    rho = np.where(dT > _lowest_monotone_deviation(), np.asarray(rho, dtype=float), np.nan)
    return _altitude_where_decreasing(_density_off_standard, rho, dT)


def _lowest_monotone_deviation():
    """ISA deviation above which the density falls with ``H`` over the whole model [K].

    In a layer of gradient ``L``, ``d ln rho / dH = -g0 / (R T_s) - L / (T_s + dT)``,
    negative wherever ``T_s + dT > T_s R max(-L, 0) / g0``; the bound is taken at the
    coldest point of each layer (its base or its top).
    """
    bases = np.array([H_MIN, *LAYER_BASES[1:]])
    tops = np.array([*LAYER_BASES[1:], H_MAX])
    T_coldest = np.minimum(standard_state(bases)[0], standard_state(tops)[0])
    share = R_AIR * np.maximum(-np.array(LAYER_LAPSE_RATES), 0.0) / G0
    return float(np.max(-(1.0 - share) * T_coldest))


def _density_off_standard(H, dT):
    """Density at pressure altitude ``H`` on a day ``dT`` off standard [kg/m^3]."""
    T, p = standard_state(H)
    return density(p, T + dT)


def pressure_altitude_for_cas(q, cas):
    """Pressure altitude at which calibrated airspeed ``cas`` gives dynamic pressure ``q``.

    Solves, for the pressure altitude ``H``,

    .. math::

        q = \\frac{\\gamma}{2}\\, p_s(H)\\, M^2, \\qquad M = M(V_C, p_s(H))

    with ``p_s`` the standard pressure and ``M(V_C, p)`` the Mach number at that
    calibrated airspeed and static pressure
    (:func:`service.physics.airspeed.mach_from_cas`).

    Parameters
    ----------
    q : array_like
        Dynamic pressure [Pa].
    cas : array_like
        Calibrated airspeed [m/s].

    Returns
    -------
    H : ndarray or float
        Pressure altitude (geopotential); NaN where no altitude in
        [H_MIN, H_MAX] fits [m].

    Notes
    -----
    Temperature does not enter: CAS fixes the impact pressure, and impact pressure
    and static pressure fix the Mach number, so ``q`` is a function of ``H`` alone
    and no ISA deviation is needed.

    The answer is sensitive to its inputs. At a fixed CAS the impact pressure is
    fixed, and ``q`` differs from it only by compressibility
    (``q_c / q = 1 + M^2/4 + M^4/40 + ...`` subsonic), so ``q`` falls only slowly
    with altitude; at low Mach numbers ``q`` hardly changes at all. A small error in
    ``q`` or CAS therefore moves the altitude a long way: at 250 kt CAS ``q`` falls
    by only 7 % from sea level to 30 000 ft, and 1 % less ``q`` moves the answer up
    by about 7 000 ft from sea level or 2 100 ft from 30 000 ft (at 120 kt:
    21 000 ft and 7 000 ft). A ``q`` slightly above the value at ``H_MIN`` has no
    answer. Prefer a solve with Mach or TAS where those are known.

    ``q`` decreases monotonically with ``H`` (the ratio ``q_c / q`` grows with Mach,
    subsonic and supersonic), so the root is found by a fixed number of bisection
    steps over the whole model range, on whole arrays, to 1e-6 m.

    Examples
    --------
    The dynamic pressure of 150 m/s CAS at 9000 m, and back:

    >>> p = standard_pressure(9_000.0)
    >>> q = dynamic_pressure(mach_from_cas(150.0, p), p)
    >>> print(round(float(pressure_altitude_for_cas(q, 150.0)), 3))
    9000.0

    References
    ----------
    1. NACA Report 1135 (isentropic and Rayleigh pitot relations).
    2. ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
    """
    return _altitude_where_decreasing(_dynamic_pressure_at_cas, q, cas)


def _dynamic_pressure_at_cas(H, cas):
    """Dynamic pressure at calibrated airspeed ``cas`` and pressure altitude ``H`` [Pa]."""
    p = standard_pressure(H)
    return dynamic_pressure(mach_from_cas(cas, p), p)


# --- Stall ---------------------------------------------------------------------------


def stall_eas(weight, wing_area, cl_max, load_factor=1.0):
    """Stalling speed (EAS) at load factor ``n``.

    .. math:: V_{S,E} = \\sqrt{\\frac{2 n W}{\\rho_0 S C_{L,max}}}

    Parameters
    ----------
    weight : array_like
        Weight (a force) [N].
    wing_area : array_like
        Wing reference area [m^2].
    cl_max : array_like
        Maximum lift coefficient [-].
    load_factor : array_like, optional
        Load factor, 1 by default [-].

    Returns
    -------
    eas : ndarray or float
        Stalling speed as an equivalent airspeed [m/s].

    Notes
    -----
    Incompressible lift: ``C_L,max`` is taken independent of Mach and Reynolds
    number. As an EAS the stalling speed does not depend on altitude.

    Examples
    --------
    >>> print(round(float(stall_eas(12_000.0, 10.0, 1.5)), 2))
    36.14
    >>> print(round(float(stall_eas(12_000.0, 10.0, 1.5, load_factor=2.0)), 2))
    51.11

    References
    ----------
    1. Anderson, *Introduction to Flight*, stalling speed.
    """
    n_w = np.asarray(load_factor, dtype=float) * np.asarray(weight, dtype=float)
    area_cl = np.asarray(wing_area, dtype=float) * np.asarray(cl_max, dtype=float)
    with np.errstate(invalid="ignore"):
        return result(np.sqrt(2.0 * n_w / (RHO0 * area_cl)))


def scale_stall_eas(ref_eas, weight, ref_weight, load_factor=1.0):
    """Stalling speed at another weight and load factor from a reference one.

    .. math:: V_S = V_{S,ref} \\sqrt{W / W_{ref}} \\sqrt{n}

    Parameters
    ----------
    ref_eas : array_like
        Stalling speed (EAS) at ``ref_weight`` and 1 g [m/s].
    weight : array_like
        Weight (a force) [N].
    ref_weight : array_like
        Weight at which ``ref_eas`` holds (a force) [N].
    load_factor : array_like, optional
        Load factor, 1 by default [-].

    Returns
    -------
    eas : ndarray or float
        Stalling speed (EAS) [m/s].

    Notes
    -----
    Same configuration (same ``C_L,max``); the weights may equally be masses, only
    their ratio enters.

    Examples
    --------
    >>> print(round(float(scale_stall_eas(30.0, 8_100.0, 10_000.0)), 9))
    27.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, stalling speed.
    """
    ratio = np.asarray(weight, dtype=float) / np.asarray(ref_weight, dtype=float) * np.asarray(load_factor, dtype=float)
    with np.errstate(invalid="ignore"):
        return result(np.asarray(ref_eas, dtype=float) * np.sqrt(ratio))


def stall_load_factor(eas, stall_eas_1g):
    """Load factor at which equivalent airspeed ``eas`` is the stalling speed.

    .. math:: n = (V_E / V_{S1g,E})^2

    Parameters
    ----------
    eas : array_like
        Equivalent airspeed [m/s].
    stall_eas_1g : array_like
        Stalling speed (EAS) at 1 g, same weight and configuration [m/s].

    Returns
    -------
    n : ndarray or float
        Load factor that stalls the wing at that speed [-].

    Notes
    -----
    The highest load factor available at ``eas`` (the stall boundary of the V-n
    diagram), before any structural limit.

    Examples
    --------
    >>> print(round(float(stall_load_factor(60.0, 30.0)), 9))
    4.0

    References
    ----------
    1. Anderson, *Introduction to Flight*, the V-n diagram.
    """
    ratio = np.asarray(eas, dtype=float) / np.asarray(stall_eas_1g, dtype=float)
    return result(ratio**2)


def cl_fraction(speed_factor):
    """Fraction of the maximum lift coefficient in use at ``k`` times the stalling speed.

    .. math:: C_L / C_{L,max} = 1 / k^2

    Parameters
    ----------
    speed_factor : array_like
        Speed as a multiple ``k`` of the stalling speed at the same weight and load
        factor [-].

    Returns
    -------
    fraction : ndarray or float
        ``C_L / C_L,max`` [-].

    Notes
    -----
    At constant lift ``C_L`` varies as ``1 / V_E^2``.

    Examples
    --------
    >>> print(round(float(cl_fraction(1.3)), 4))
    0.5917

    References
    ----------
    1. Anderson, *Introduction to Flight*, the lift equation.
    """
    k = np.asarray(speed_factor, dtype=float)
    return result(1.0 / k**2)
