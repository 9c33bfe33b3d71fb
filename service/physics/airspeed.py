r"""Compressible airspeed conversions: CAS, EAS, TAS, Mach, impact and dynamic pressure.

Pure NumPy, SI in and SI out: speeds [m/s], pressures [Pa], temperatures [K],
densities [kg/m^3], Mach number [-]. Every function takes scalars or arrays of any
shape (NumPy broadcasting); a scalar input gives a NumPy scalar, an array input an
array of the broadcast shape.

The pitot measures the impact pressure :math:`q_c = p_t - p`. Below Mach 1 the flow
reaches the pitot isentropically (Saint-Venant):

.. math::

    \frac{q_c}{p} = \left(1 + \frac{\gamma - 1}{2} M^2\right)^{\gamma/(\gamma-1)} - 1

Above Mach 1 a normal shock stands ahead of the pitot, and the Rayleigh pitot formula
gives the pressure behind it,

.. math::

    \frac{q_c}{p} = K \frac{M^{2\gamma/(\gamma-1)}}{(c M^2 - 1)^{1/(\gamma-1)}} - 1,
    \quad c = \frac{2\gamma}{\gamma-1},
    \quad K = \left(\frac{(\gamma+1)^2}{2(\gamma-1)}\right)^{\gamma/(\gamma-1)}
              \frac{\gamma-1}{\gamma+1},

which for :math:`\gamma = 1.4` is the familiar
:math:`166.9216\,M^7 / (7M^2 - 1)^{2.5} - 1`. Both are written here from ``GAMMA``;
they join continuously at :math:`M = 1`, where :math:`q_c/p = 1.2^{3.5} - 1 = 0.8929`.
The ratio :math:`q_c/p` depends on the Mach number only.

Calibrated airspeed (CAS) is the speed that gives the measured impact pressure at
sea-level standard conditions (:math:`p_0`, :math:`a_0`): the same two relations with
:math:`M = V_c / a_0` and :math:`p = p_0`, so the Rayleigh branch applies for CAS
above :math:`a_0` (661.48 kt). Equivalent airspeed (EAS) is the speed at sea-level
standard density with the same dynamic pressure :math:`\tfrac12 \rho V^2`.

The supersonic inverses are solved by a vectorised Newton iteration on
:math:`\ln(1 + q_c/p)` as a function of Mach, started from the large-Mach
asymptote, with a fixed relative tolerance ``NEWTON_RTOL`` and a fixed cap of
``NEWTON_MAX_ITER`` iterations (it needs at most 5 over Mach 1 to 50).

Assumptions: dry air as a perfect gas with constant :math:`\gamma`; isentropic flow
to the pitot below Mach 1, a normal shock ahead of it above; no position error
(IAS <-> CAS goes through a calibration table, see :func:`ias_to_cas`).

References
----------
.. [1] Ames Research Staff, *Equations, Tables, and Charts for Compressible Flow*,
   NACA Report 1135, 1953 (isentropic and Rayleigh pitot relations; normal-shock table).
.. [2] ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993 (p0, rho0, a0, gamma).
.. [3] J. D. Anderson, *Fundamentals of Aerodynamics*, McGraw-Hill, the section on
   measuring velocity in compressible flow (cited from memory).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from . import single_point as one
from .arrays import any_true, check_table, interp_inside, result
from .atmosphere import density, pressure_altitude, speed_of_sound
from .constants import A0, GAMMA, P0, RHO0

__all__ = [
    "NEWTON_MAX_ITER",
    "NEWTON_RTOL",
    "SpeedSchedule",
    "cas_from_impact_pressure",
    "cas_from_mach",
    "cas_to_ias",
    "check_calibration",
    "crossover_altitude",
    "crossover_pressure",
    "dynamic_pressure",
    "eas_from_tas",
    "ias_to_cas",
    "impact_pressure_from_cas",
    "impact_pressure_from_mach",
    "mach_from_cas",
    "mach_from_impact_pressure",
    "mach_from_tas",
    "speed_schedule",
    "tas_from_eas",
    "tas_from_mach",
]

#: Relative tolerance on the Mach step at which the supersonic Newton iteration stops [-].
NEWTON_RTOL = 1e-12
#: Iteration cap of the supersonic Newton iteration; points not converged by then are NaN.
NEWTON_MAX_ITER = 20

# Coefficients of the pitot relations, derived from GAMMA (module docstring):
#: Isentropic exponent gamma / (gamma - 1) [-] (3.5 for gamma = 1.4).
_E = GAMMA / (GAMMA - 1.0)
#: (gamma - 1) / 2 [-] (0.2 for gamma = 1.4).
_HALF_GM1 = 0.5 * (GAMMA - 1.0)
#: c = 2 gamma / (gamma - 1) [-] (7 for gamma = 1.4).
_C = 2.0 * GAMMA / (GAMMA - 1.0)
#: Rayleigh pitot coefficient K [-] (166.9216 for gamma = 1.4).
_K = ((GAMMA + 1.0) ** 2 / (2.0 * (GAMMA - 1.0))) ** _E * (GAMMA - 1.0) / (GAMMA + 1.0)
_LN_K = math.log(_K)
#: qc/p at Mach 1, where the two relations meet [-] (1.2**3.5 - 1 = 0.8929).
_RATIO_SONIC = math.expm1(_E * math.log1p(_HALF_GM1))
#: Large-Mach asymptote of the Rayleigh relation, 1 + qc/p ~ (K / c**(E-1)) M^2,
#: used as the Newton starting point (it lies above the root).
_ASYMPTOTE = _K / _C ** (_E - 1.0)


def _nan_where(mask, x):
    """``x`` with NaN where ``mask`` is True (only pays for np.where when needed)."""
    return np.where(mask, np.nan, x) if any_true(mask) else x


def _ratio_from_mach(M):
    """Impact pressure over static pressure, qc/p, for Mach M [-] (NaN for M < 0)."""
    M = np.asarray(M, dtype=float)
    M2 = M * M
    r = np.expm1(_E * np.log1p(_HALF_GM1 * M2))
    sup = M > 1.0
    if any_true(sup):
        M2s = np.maximum(M2, 1.0)  # keeps the unused branch finite and warning-free
        rayleigh = _K * M2s**_E / (_C * M2s - 1.0) ** (_E - 1.0) - 1.0
        r = np.where(sup, rayleigh, r)
    return _nan_where(M < 0.0, r)


def _mach_from_ratio(r):
    """Mach number [-] for qc/p [-]: closed form below Mach 1, Newton above.

    NaN for r < 0 or r not finite.
    """
    r = np.asarray(r, dtype=float)
    r = _nan_where(~((r >= 0.0) & (r < np.inf)), r)
    sup = r > _RATIO_SONIC
    if not any_true(sup):
        return np.sqrt(np.expm1(np.log1p(r) / _E) / _HALF_GM1)
    M = np.asarray(np.sqrt(np.expm1(np.log1p(np.minimum(r, _RATIO_SONIC)) / _E) / _HALF_GM1))
    M[sup] = _newton_supersonic(r[sup])
    return M


def _newton_step(M, target, log):
    """Newton step h / h' for h(M) = 2E ln M - (E - 1) ln(c M^2 - 1) - target.

    ``log`` is ``np.log`` for arrays or ``math.log`` for a single float (same formula).
    """
    d = _C * M * M - 1.0
    h = 2.0 * _E * log(M) - (_E - 1.0) * log(d) - target
    return h / (2.0 * _E / M - 2.0 * (_E - 1.0) * _C * M / d)


def _newton_supersonic(r):
    """Solve the Rayleigh pitot relation for Mach >= 1, given 1-D qc/p values above sonic.

    Newton on h(M) = 2E ln M - (E - 1) ln(c M^2 - 1) - ln((1 + r) / K), which increases
    with M for M >= 1, from the large-Mach asymptote M = sqrt((1 + r) / (K c^(1-E))),
    which lies above the root. Each step is clamped at M = 1; points whose last step
    is still above ``NEWTON_RTOL * M`` after ``NEWTON_MAX_ITER`` steps are NaN. A single
    point runs the same iteration on a Python float (service.physics.single_point).
    """
    if r.size == 1:
        return np.array([one.newton_supersonic(float(r[0]))])
    target = np.log1p(r) - _LN_K
    M = np.maximum(np.sqrt((1.0 + r) / _ASYMPTOTE), 1.0)
    converged = np.zeros(M.shape, dtype=bool)
    for _ in range(NEWTON_MAX_ITER):
        M_new = np.maximum(M - _newton_step(M, target, np.log), 1.0)
        converged = np.abs(M_new - M) <= NEWTON_RTOL * M_new
        M = M_new
        if converged.all():
            break
    return np.where(converged, M, np.nan)


def impact_pressure_from_mach(mach, p):
    r"""Impact pressure (pitot minus static) at Mach ``mach`` and static pressure ``p``.

    .. math::

        q_c = p\left[\left(1 + \tfrac{\gamma-1}{2}M^2\right)^{\gamma/(\gamma-1)} - 1\right]
        \quad (M \le 1),
        \qquad
        q_c = p\left[K \frac{M^{2\gamma/(\gamma-1)}}{(cM^2 - 1)^{1/(\gamma-1)}} - 1\right]
        \quad (M > 1)

    with :math:`c = 2\gamma/(\gamma-1)` and :math:`K` as in the module docstring
    (:math:`166.9216\,M^7/(7M^2-1)^{2.5}` for :math:`\gamma = 1.4`).

    Parameters
    ----------
    mach : array_like
        Flight Mach number [-].
    p : array_like
        Static pressure [Pa].

    Returns
    -------
    qc : ndarray or numpy scalar
        Impact pressure :math:`p_t - p` [Pa]; NaN where ``mach < 0``.

    Notes
    -----
    Isentropic compression of dry air below Mach 1; above Mach 1 the Rayleigh pitot
    formula (normal shock ahead of the pitot, isentropic behind it).

    Examples
    --------
    >>> print(f"{impact_pressure_from_mach(0.5, 101325.0):.1f}")
    18868.0
    >>> print(f"{impact_pressure_from_mach(2.0, 1.0) + 1:.3f}")  # p02/p1 at M 2 [1]
    5.640

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    .. [2] ICAO Doc 7488/3, 1993.
    """
    if one.is_one(mach, p):
        return np.float64(one.ratio_from_mach(float(mach)) * float(p))
    return result(_ratio_from_mach(mach) * np.asarray(p, dtype=float))


def mach_from_impact_pressure(qc, p):
    r"""Mach number from impact pressure and static pressure (inverse of the pitot relations).

    .. math::

        M = \sqrt{\frac{2}{\gamma-1}\left[\left(\frac{q_c}{p} + 1\right)^{(\gamma-1)/\gamma}
            - 1\right]} \quad \left(\frac{q_c}{p} \le \left(\tfrac{\gamma+1}{2}\right)^
            {\gamma/(\gamma-1)} - 1\right)

    and above that (Mach above 1) the root of the Rayleigh pitot formula, found by a
    vectorised Newton iteration to the relative tolerance ``NEWTON_RTOL`` in at most
    ``NEWTON_MAX_ITER`` iterations.

    Parameters
    ----------
    qc : array_like
        Impact pressure :math:`p_t - p` [Pa].
    p : array_like
        Static pressure [Pa].

    Returns
    -------
    mach : ndarray or numpy scalar
        Flight Mach number [-]; NaN where ``qc < 0``, ``p <= 0`` or not finite.

    Notes
    -----
    Isentropic below Mach 1, Rayleigh pitot above. Newton runs on
    :math:`\ln(1 + q_c/p)`, which rises monotonically with Mach above 1, from the
    large-Mach asymptote.

    Examples
    --------
    >>> print(f"{mach_from_impact_pressure(18868.0, 101325.0):.4f}")
    0.5000
    >>> print(f"{mach_from_impact_pressure(4.6404, 1.0):.4f}")
    2.0000

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    """
    if one.is_one(qc, p):
        return np.float64(one.mach_from_ratio(float(qc) / float(p)) if p > 0.0 else math.nan)
    p = np.asarray(p, dtype=float)
    return result(_mach_from_ratio(np.asarray(qc, dtype=float) / np.where(p > 0.0, p, np.nan)))


def impact_pressure_from_cas(cas):
    r"""Impact pressure measured at calibrated airspeed ``cas``.

    .. math::

        q_c = p_0\left[\left(1 + 0.2\left(\frac{V_c}{a_0}\right)^2\right)^{3.5} - 1\right]
        \quad (V_c \le a_0),
        \qquad
        q_c = p_0\left[\frac{166.9216\,(V_c/a_0)^7}{(7(V_c/a_0)^2 - 1)^{2.5}} - 1\right]
        \quad (V_c > a_0)

    shown for :math:`\gamma = 1.4`; the code uses the general forms of
    :func:`impact_pressure_from_mach` with :math:`M = V_c/a_0` and :math:`p = p_0`.

    Parameters
    ----------
    cas : array_like
        Calibrated airspeed :math:`V_c` [m/s].

    Returns
    -------
    qc : ndarray or numpy scalar
        Impact pressure [Pa]; NaN where ``cas < 0``.

    Notes
    -----
    CAS is defined at sea-level standard conditions, :math:`p_0 = 101325` Pa and
    :math:`a_0 = 340.294` m/s (ICAO Doc 7488/3). Isentropic up to :math:`a_0`
    (661.48 kt), Rayleigh pitot above.

    Examples
    --------
    >>> print(f"{impact_pressure_from_cas(300 * 1852 / 3600):.1f}")  # 300 kt
    15354.7

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    .. [2] ICAO Doc 7488/3, 1993.
    """
    if one.is_one(cas):
        return np.float64(one.ratio_from_mach(float(cas) / A0) * P0)
    return result(_ratio_from_mach(np.asarray(cas, dtype=float) / A0) * P0)


def cas_from_impact_pressure(qc):
    r"""Calibrated airspeed for impact pressure ``qc`` (inverse of :func:`impact_pressure_from_cas`).

    .. math::

        V_c = a_0\sqrt{5\left[\left(\frac{q_c}{p_0} + 1\right)^{2/7} - 1\right]}
        \quad (q_c \le 0.8929\,p_0)

    in closed form (shown for :math:`\gamma = 1.4`), and above it the root of the
    Rayleigh pitot formula by Newton iteration (see :func:`mach_from_impact_pressure`).

    Parameters
    ----------
    qc : array_like
        Impact pressure [Pa].

    Returns
    -------
    cas : ndarray or numpy scalar
        Calibrated airspeed [m/s]; NaN where ``qc < 0`` or not finite.

    Notes
    -----
    Sea-level standard reference (p0, a0); isentropic up to CAS = a0, Rayleigh pitot above.

    Examples
    --------
    >>> print(f"{cas_from_impact_pressure(15354.7) * 3600 / 1852:.2f}")  # kt
    300.00

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    .. [2] ICAO Doc 7488/3, 1993.
    """
    if one.is_one(qc):
        return np.float64(A0 * one.mach_from_ratio(float(qc) / P0))
    return result(A0 * _mach_from_ratio(np.asarray(qc, dtype=float) / P0))


def mach_from_cas(cas, p):
    r"""Mach number at static pressure ``p`` for calibrated airspeed ``cas``.

    .. math::

        M = M\!\left(q_c(V_c) / p\right)

    the composition of :func:`impact_pressure_from_cas` and
    :func:`mach_from_impact_pressure`.

    Parameters
    ----------
    cas : array_like
        Calibrated airspeed [m/s].
    p : array_like
        Static pressure [Pa].

    Returns
    -------
    mach : ndarray or numpy scalar
        Flight Mach number [-].

    Notes
    -----
    Does not depend on the temperature: qc/p fixes the Mach number.

    Examples
    --------
    >>> print(f"{mach_from_cas(300 * 1852 / 3600, 30089.6):.3f}")  # 300 kt, FL300 (ISA)
    0.791

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    """
    return mach_from_impact_pressure(impact_pressure_from_cas(cas), p)


def cas_from_mach(mach, p):
    r"""Calibrated airspeed for Mach ``mach`` at static pressure ``p``.

    .. math::

        V_c = V_c\!\left(q_c(M, p)\right)

    the composition of :func:`impact_pressure_from_mach` and
    :func:`cas_from_impact_pressure`.

    Parameters
    ----------
    mach : array_like
        Flight Mach number [-].
    p : array_like
        Static pressure [Pa].

    Returns
    -------
    cas : ndarray or numpy scalar
        Calibrated airspeed [m/s].

    Notes
    -----
    At sea-level standard pressure CAS equals TAS at standard temperature:
    ``cas_from_mach(M, P0) == M * A0``.

    Examples
    --------
    >>> print(f"{cas_from_mach(1.0, 101325.0):.3f}")
    340.294

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    """
    return cas_from_impact_pressure(impact_pressure_from_mach(mach, p))


def tas_from_mach(mach, T):
    r"""True airspeed for Mach ``mach`` at static temperature ``T``.

    .. math::

        V = M a = M\sqrt{\gamma R T}

    Parameters
    ----------
    mach : array_like
        Flight Mach number [-].
    T : array_like
        Static (outside air) temperature [K].

    Returns
    -------
    tas : ndarray or numpy scalar
        True airspeed [m/s].

    Notes
    -----
    Dry air, perfect gas (``speed_of_sound`` of the atmosphere module).

    Examples
    --------
    >>> print(f"{tas_from_mach(0.78, 228.714):.2f}")  # M 0.78 at FL300, ISA
    236.48

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993.
    """
    return result(np.asarray(mach, dtype=float) * speed_of_sound(T))


def mach_from_tas(tas, T):
    r"""Mach number for true airspeed ``tas`` at static temperature ``T``.

    .. math::

        M = \frac{V}{\sqrt{\gamma R T}}

    Parameters
    ----------
    tas : array_like
        True airspeed [m/s].
    T : array_like
        Static (outside air) temperature [K].

    Returns
    -------
    mach : ndarray or numpy scalar
        Flight Mach number [-].

    Notes
    -----
    Dry air, perfect gas.

    Examples
    --------
    >>> print(f"{mach_from_tas(340.294, 288.15):.4f}")
    1.0000

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993.
    """
    return result(np.asarray(tas, dtype=float) / speed_of_sound(T))


def eas_from_tas(tas, rho):
    r"""Equivalent airspeed for true airspeed ``tas`` at density ``rho``.

    .. math::

        V_e = V\sqrt{\rho / \rho_0}

    Parameters
    ----------
    tas : array_like
        True airspeed [m/s].
    rho : array_like
        Air density [kg/m^3].

    Returns
    -------
    eas : ndarray or numpy scalar
        Equivalent airspeed [m/s].

    Notes
    -----
    EAS gives the same dynamic pressure :math:`\tfrac12\rho V^2` at the sea-level
    standard density :math:`\rho_0` = 1.225 kg/m^3 (ICAO Doc 7488/3).

    Examples
    --------
    >>> print(f"{eas_from_tas(200.0, 1.225 / 4):.2f}")
    100.00

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993.
    """
    return result(np.asarray(tas, dtype=float) * np.sqrt(np.asarray(rho, dtype=float) / RHO0))


def tas_from_eas(eas, rho):
    r"""True airspeed for equivalent airspeed ``eas`` at density ``rho``.

    .. math::

        V = V_e\sqrt{\rho_0 / \rho}

    Parameters
    ----------
    eas : array_like
        Equivalent airspeed [m/s].
    rho : array_like
        Air density [kg/m^3].

    Returns
    -------
    tas : ndarray or numpy scalar
        True airspeed [m/s].

    Notes
    -----
    Inverse of :func:`eas_from_tas`.

    Examples
    --------
    >>> print(f"{tas_from_eas(100.0, 1.225 / 4):.2f}")
    200.00

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993.
    """
    return result(np.asarray(eas, dtype=float) * np.sqrt(RHO0 / np.asarray(rho, dtype=float)))


def dynamic_pressure(mach, p):
    r"""Dynamic pressure from Mach number and static pressure.

    .. math::

        q = \tfrac{\gamma}{2}\,p\,M^2 = \tfrac12\rho V^2

    (the two are equal because :math:`a^2 = \gamma p/\rho`).

    Parameters
    ----------
    mach : array_like
        Flight Mach number [-].
    p : array_like
        Static pressure [Pa].

    Returns
    -------
    q : ndarray or numpy scalar
        Dynamic pressure [Pa].

    Notes
    -----
    Perfect gas; not the impact pressure (which a pitot measures and which exceeds
    q as soon as compressibility matters).

    Examples
    --------
    >>> print(f"{dynamic_pressure(0.5, 101325.0):.1f}")
    17731.9

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    """
    M = np.asarray(mach, dtype=float)
    return result(0.5 * GAMMA * np.asarray(p, dtype=float) * M * M)


def crossover_pressure(cas, mach):
    r"""Static pressure at which calibrated airspeed ``cas`` and Mach ``mach`` are the same speed.

    .. math::

        p_x = \frac{q_c(V_c)}{(q_c/p)(M)}

    Parameters
    ----------
    cas : array_like
        Calibrated airspeed [m/s].
    mach : array_like
        Flight Mach number [-].

    Returns
    -------
    p : ndarray or numpy scalar
        Crossover static pressure [Pa]; NaN where ``mach <= 0`` or ``cas < 0``.

    Notes
    -----
    The ratio :math:`q_c/p` depends on the Mach number only, and CAS fixes
    :math:`q_c`, so the crossover is a pressure (a pressure altitude) and does not
    depend on the temperature. Isentropic below Mach 1 (CAS below a0), Rayleigh
    pitot above.

    Examples
    --------
    >>> print(f"{crossover_pressure(300 * 1852 / 3600, 0.78):.0f}")  # 300 kt / M 0.78
    31041

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    """
    ratio = _ratio_from_mach(mach)
    qc = impact_pressure_from_cas(cas)
    return result(np.asarray(qc / np.where(ratio > 0.0, ratio, np.nan)))


def crossover_altitude(cas, mach):
    r"""Pressure altitude at which calibrated airspeed ``cas`` and Mach ``mach`` coincide.

    .. math::

        H_x = H_p\!\left(p_x\right), \qquad p_x = \frac{q_c(V_c)}{(q_c/p)(M)}

    with :math:`H_p` the standard pressure altitude of a pressure
    (``pressure_altitude`` of the atmosphere module).

    Parameters
    ----------
    cas : array_like
        Calibrated airspeed [m/s].
    mach : array_like
        Flight Mach number [-].

    Returns
    -------
    H : ndarray or numpy scalar
        Crossover pressure altitude (geopotential) [m]; NaN where the crossover
        pressure lies outside the atmosphere model's range.

    Notes
    -----
    Independent of the temperature (see :func:`crossover_pressure`). Below the
    crossover the CAS is the lower speed of the two (the one a climb schedule flies),
    above it the Mach number.

    Examples
    --------
    >>> print(f"{crossover_altitude(300 * 1852 / 3600, 0.78) / 0.3048:.0f}")  # ft
    29314

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    .. [2] ICAO Doc 7488/3, 1993.
    """
    return result(np.asarray(pressure_altitude(crossover_pressure(cas, mach))))


def check_calibration(table_ias, table_cas):
    """Check an IAS -> CAS calibration table and return it as float arrays.

    Parameters
    ----------
    table_ias : array_like
        Indicated airspeeds of the table rows [m/s].
    table_cas : array_like
        Calibrated airspeeds of the same rows [m/s].

    Returns
    -------
    table_ias, table_cas : ndarray
        The two columns as 1-D float arrays [m/s].

    Raises
    ------
    ValueError
        If a column is not 1-D, the lengths differ or are below 2, or a column is not
        finite, not positive or not strictly increasing.

    Notes
    -----
    Strictly increasing columns make the table invertible, so IAS -> CAS and
    CAS -> IAS are both single-valued.

    Examples
    --------
    >>> ias, cas = check_calibration([50.0, 100.0], [52.0, 101.0])
    >>> check_calibration([50.0, 40.0], [52.0, 60.0])
    Traceback (most recent call last):
    ...
    ValueError: calibration table_ias must be strictly increasing (row 1: 40 after 50)

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993 (for the CAS it leads to).
    """
    return check_table("calibration", {"table_ias": table_ias, "table_cas": table_cas},
                       increasing=("table_ias", "table_cas"))


def ias_to_cas(ias, table_ias, table_cas):
    r"""Calibrated airspeed from indicated airspeed through a calibration table.

    .. math::

        V_c = V_{c,i} + (V_i - V_{i,i})\frac{V_{c,i+1} - V_{c,i}}{V_{i,i+1} - V_{i,i}},
        \quad V_{i,i} \le V_i \le V_{i,i+1}

    Parameters
    ----------
    ias : array_like
        Indicated airspeed [m/s].
    table_ias : array_like
        Table column of indicated airspeeds, 1-D, strictly increasing [m/s].
    table_cas : array_like
        Table column of calibrated airspeeds, same length, strictly increasing [m/s].

    Returns
    -------
    cas : ndarray or numpy scalar
        Calibrated airspeed [m/s]; NaN where ``ias`` lies outside the table (nothing
        is extrapolated).

    Raises
    ------
    ValueError
        If the table fails :func:`check_calibration`.

    Notes
    -----
    Linear interpolation between rows (the table corrects the position and
    instrument error of a particular airspeed system, as a flight manual gives it).

    Examples
    --------
    >>> print(ias_to_cas([45.0, 75.0, 120.0], [50.0, 100.0], [52.0, 101.0]))
    [ nan 76.5  nan]

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993 (for the CAS it leads to).
    """
    table_ias, table_cas = check_calibration(table_ias, table_cas)
    return interp_inside(ias, table_ias, table_cas)


def cas_to_ias(cas, table_ias, table_cas):
    r"""Indicated airspeed from calibrated airspeed through a calibration table.

    The inverse of :func:`ias_to_cas`: linear interpolation of IAS against CAS.

    Parameters
    ----------
    cas : array_like
        Calibrated airspeed [m/s].
    table_ias : array_like
        Table column of indicated airspeeds, 1-D, strictly increasing [m/s].
    table_cas : array_like
        Table column of calibrated airspeeds, same length, strictly increasing [m/s].

    Returns
    -------
    ias : ndarray or numpy scalar
        Indicated airspeed [m/s]; NaN where ``cas`` lies outside the table.

    Raises
    ------
    ValueError
        If the table fails :func:`check_calibration`.

    Notes
    -----
    Both columns are strictly increasing, so the piecewise-linear map is invertible
    and ``cas_to_ias(ias_to_cas(v))`` returns ``v`` inside the table.

    Examples
    --------
    >>> print(f"{cas_to_ias(76.5, [50.0, 100.0], [52.0, 101.0]):.2f}")
    75.00

    References
    ----------
    .. [1] ICAO Doc 7488/3, 1993 (for the CAS it leads to).
    """
    table_ias, table_cas = check_calibration(table_ias, table_cas)
    return interp_inside(cas, table_cas, table_ias)


class SpeedSchedule(NamedTuple):
    """Result of :func:`speed_schedule`: arrays of the broadcast input shape."""

    #: True where the Mach number governs (above the crossover) [-].
    governing_mach: np.ndarray
    #: Calibrated airspeed flown [m/s].
    cas: np.ndarray
    #: Mach number flown [-].
    mach: np.ndarray
    #: True airspeed [m/s].
    tas: np.ndarray
    #: Equivalent airspeed [m/s].
    eas: np.ndarray


def speed_schedule(cas, mach, p, T):
    r"""Speeds of a climb or descent schedule "fly CAS ``cas`` until it reaches ``mach``, then hold ``mach``".

    .. math::

        M_{flown} = \min\left(M(V_c, p),\ M_{limit}\right), \qquad
        V_{c,flown} = V_c(M_{flown}, p), \qquad
        V = M_{flown}\sqrt{\gamma R T}, \qquad V_e = V\sqrt{\rho(p, T)/\rho_0}

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

    Returns
    -------
    SpeedSchedule
        NamedTuple of arrays of the broadcast shape: ``governing_mach`` (bool, True
        where the Mach of the scheduled CAS exceeds the Mach limit, i.e. above the
        crossover) [-], ``cas`` [m/s], ``mach`` [-], ``tas`` [m/s], ``eas`` [m/s].

    Notes
    -----
    Which of the two governs depends on the pressure only (see
    :func:`crossover_pressure`); the temperature enters the TAS and EAS. Where the
    CAS governs the CAS flown is the scheduled one exactly; where the Mach governs the
    Mach flown is the scheduled one exactly.

    Examples
    --------
    300 kt / M 0.78 at FL100 and FL390 of a standard day:

    >>> s = speed_schedule(300 * 1852 / 3600, 0.78, [69681.6, 19677.3], [268.338, 216.65])
    >>> s.governing_mach
    array([False,  True])
    >>> print(np.round(s.mach, 3), np.round(s.cas * 3600 / 1852, 1))
    [0.541 0.78 ] [300. 241.]

    References
    ----------
    .. [1] NACA Report 1135, 1953.
    .. [2] ICAO Doc 7488/3, 1993.
    """
    cas, mach, p, T = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (cas, mach, p, T))
    )
    mach_of_cas = mach_from_cas(cas, p)
    governing_mach = mach_of_cas > mach
    mach_flown = np.where(governing_mach, mach, mach_of_cas)
    cas_flown = np.where(governing_mach, cas_from_mach(mach, p), cas)
    tas = tas_from_mach(mach_flown, T)
    eas = eas_from_tas(tas, density(p, T))
    return SpeedSchedule(
        result(governing_mach), result(cas_flown), result(mach_flown), result(np.asarray(tas)),
        result(np.asarray(eas)),
    )
