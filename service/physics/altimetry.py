"""Altimetry: pressure settings (QNH, QFE) and the PANS-OPS cold-temperature correction.

Pure NumPy, SI in and SI out; every function takes scalars or arrays of any shape (arguments
broadcast by NumPy rules) and returns ``np.float64`` for scalar input.

A pressure altimeter shows the standard-atmosphere height between the pressure set on its
sub-scale and the static pressure outside: ``H_ind = H(p) - H(setting)`` with ``H(p)`` the
standard pressure altitude of ``p`` [1]_. QNH is the setting at which it reads the aerodrome
elevation on the ground, QFE the setting at which it reads zero (QFE is the pressure at the
aerodrome). Both are reductions through the standard atmosphere, whatever the day's
temperature.

On a day colder than standard the air column is shorter than the standard one, so an altimeter
set to QNH over-reads: the aircraft is lower than indicated. The ICAO PANS-OPS method [2]_
gives the correction to add to a published minimum altitude so that the true height above the
aerodrome is at least the published one; its assumptions are an ISA deviation measured at the
aerodrome, constant with height, and the standard lapse rate of the first layer of the ISA.

Symbols: ``elevation`` aerodrome elevation [m], ``qnh``, ``qfe`` pressure settings [Pa],
``H`` pressure altitude [m], ``dT`` ISA deviation at the aerodrome [K], ``L0`` the ISA
temperature gradient of the first layer [K/m], ``T0`` the ISA sea-level temperature [K].

References
----------
.. [1] ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993 (the pressure-altitude
   relation); ICAO Annex 3 and Doc 8896 (QNH and QFE as reported pressure settings).
.. [2] ICAO, *Procedures for Air Navigation Services - Aircraft Operations* (PANS-OPS),
   Doc 8168, Vol. I, Part III, Section 1, Chapter 4, "Altimeter corrections" (temperature
   correction equation and table).
"""

from __future__ import annotations

import numpy as np

from .arrays import result
from .atmosphere import pressure_altitude, standard_pressure
from .constants import LAYER_LAPSE_RATES, T0

__all__ = [
    "CORRECTION_MAX_ITER",
    "aerodrome_isa_deviation",
    "pressure_altitude_of_aerodrome",
    "qfe_from_qnh",
    "qnh_from_qfe",
    "temperature_correction",
]

#: ISA temperature gradient of the first layer [K/m] (ICAO Doc 7488/3; PANS-OPS's L0).
L0 = LAYER_LAPSE_RATES[0]
#: Iteration cap of the temperature correction's Newton solve (it converges in 3 to 5 steps).
CORRECTION_MAX_ITER = 30
#: Convergence tolerance of that solve [m].
CORRECTION_TOL = 1e-9


def qfe_from_qnh(elevation, qnh):
    r"""QFE, the pressure at the aerodrome, from the aerodrome elevation and QNH.

    .. math:: \mathrm{QFE} = p_{std}\big(h_{elev} + H(\mathrm{QNH})\big)

    Parameters
    ----------
    elevation : float or array_like
        Aerodrome elevation [m].
    qnh : float or array_like
        QNH [Pa].

    Returns
    -------
    qfe : np.float64 or ndarray
        QFE [Pa]; NaN where the QNH lies outside the standard atmosphere's range.

    Notes
    -----
    With QNH set the altimeter reads the elevation on the ground, so the aerodrome's pressure
    altitude is ``elevation + H(QNH)`` and QFE is the standard pressure there [1]_. The
    elevation enters as an altimeter reading (the standard atmosphere's altitude scale).

    Examples
    --------
    >>> print(f"{qfe_from_qnh(304.8, 101_325.0):.1f}")
    97716.6
    >>> print(f"{qfe_from_qnh(0.0, 99_800.0):.1f}")
    99800.0

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), pressure-altitude relation.
    """
    return standard_pressure(pressure_altitude_of_aerodrome(elevation, qnh=qnh))


def qnh_from_qfe(elevation, qfe):
    r"""QNH from the aerodrome elevation and QFE: the inverse of :func:`qfe_from_qnh`.

    .. math:: \mathrm{QNH} = p_{std}\big(H(\mathrm{QFE}) - h_{elev}\big)

    Parameters
    ----------
    elevation : float or array_like
        Aerodrome elevation [m].
    qfe : float or array_like
        QFE, the pressure at the aerodrome [Pa].

    Returns
    -------
    qnh : np.float64 or ndarray
        QNH [Pa]; NaN where the QFE lies outside the standard atmosphere's range.

    Notes
    -----
    The setting at which an altimeter on the ground at the aerodrome reads its elevation [1]_.

    Examples
    --------
    >>> print(f"{qnh_from_qfe(304.8, 97_716.6):.1f}")
    101325.0

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), pressure-altitude relation.
    """
    return standard_pressure(np.subtract(pressure_altitude(qfe), elevation))


def pressure_altitude_of_aerodrome(elevation, *, qnh=None, qfe=None):
    r"""Pressure altitude of an aerodrome from its elevation and QNH, or from its QFE.

    .. math:: H_{aerodrome} = h_{elev} + H(\mathrm{QNH}) = H(\mathrm{QFE})

    Parameters
    ----------
    elevation : float or array_like
        Aerodrome elevation [m] (broadcast against ``qfe`` when that is given).
    qnh, qfe : float or array_like
        Exactly one of them [Pa].

    Returns
    -------
    H : np.float64 or ndarray
        Pressure altitude (geopotential) of the aerodrome [m]; NaN where the pressure lies
        outside the model's range.

    Notes
    -----
    ``H(p)`` is :func:`service.physics.atmosphere.pressure_altitude` [1]_.

    Examples
    --------
    >>> print(f"{pressure_altitude_of_aerodrome(304.8, qnh=101_325.0):.1f}")
    304.8
    >>> print(f"{pressure_altitude_of_aerodrome(0.0, qfe=100_000.0):.1f}")
    110.9

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    if (qnh is None) == (qfe is None):
        raise ValueError("give exactly one of qnh and qfe")
    if qnh is not None:
        return np.add(elevation, pressure_altitude(qnh))
    H = pressure_altitude(qfe)
    return np.add(H, np.multiply(elevation, 0.0))  # broadcast to the shape of both


def aerodrome_isa_deviation(elevation, temperature):
    r"""ISA deviation at the aerodrome, as PANS-OPS takes it.

    .. math:: \Delta T_{std} = t_{aerodrome} - (T_0 + L_0\,h_{aerodrome})

    Parameters
    ----------
    elevation : float or array_like
        Aerodrome elevation [m].
    temperature : float or array_like
        Aerodrome (outside air) temperature [K].

    Returns
    -------
    dT : np.float64 or ndarray
        ISA deviation [K].

    Notes
    -----
    The standard temperature at the elevation, by the first layer's gradient [1]_.

    Examples
    --------
    >>> print(f"{aerodrome_isa_deviation(1000.0, 263.15):.2f}")
    -18.50

    References
    ----------
    .. [1] ICAO Doc 8168, Vol. I, Part III, Section 1, Chapter 4.
    """
    return np.subtract(temperature, T0 + np.multiply(L0, elevation))


def temperature_correction(height, elevation, temperature):
    r"""PANS-OPS temperature correction of a minimum height above the aerodrome.

    The correction ``dH`` is added to the published minimum altitude; the altimeter (set to
    QNH) then shows ``h_PAA = height + dH`` above the aerodrome when the true height is
    ``height``. It solves the ICAO Doc 8168 equation

    .. math::

        \Delta H = \frac{-\Delta T_{std}}{L_0}
            \ln\!\left[1 + \frac{L_0\,h_{PAA}}{T_0 + L_0\,h_{aerodrome}}\right],
        \qquad h_{PAA} = h + \Delta H

    which is implicit in ``h_PAA``; Newton's method finds it in a few steps.

    Parameters
    ----------
    height : float or array_like
        Minimum height above the aerodrome (the published altitude minus the elevation),
        uncorrected [m]; at or above 0.
    elevation : float or array_like
        Aerodrome elevation [m].
    temperature : float or array_like
        Aerodrome (outside air) temperature [K].

    Returns
    -------
    dH : np.float64 or ndarray
        Correction [m]: positive on a day colder than ISA, negative on a warmer one (operators
        usually apply only the cold correction).

    Notes
    -----
    Assumptions of the method [1]_: the ISA deviation ``dT_std`` is measured at the aerodrome
    (:func:`aerodrome_isa_deviation`) and is the same at every height; the temperature falls
    with the standard gradient ``L0 = -0.0065 K/m``; hydrostatic dry air; ``T0 = 288.15 K``.
    On a cold day the true height of an indicated height ``h_PAA`` is
    ``h_PAA + (dT_std / L0) ln[1 + L0 h_PAA / (T0 + L0 h_aerodrome)]`` (the hypsometric
    relation with a constant deviation), which is where the equation comes from. The
    correction is for heights within the first layer of the ISA (below about 11 km); callers
    check the range. ``d(h_PAA - dH)/dh_PAA = T / T_std > 0``, so the solution is unique.

    Examples
    --------
    >>> print(f"{temperature_correction(304.8, 0.0, 263.15) / 0.3048:.1f}")
    95.4
    >>> print(f"{temperature_correction(1524.0, 0.0, 223.15) / 0.3048:.0f}")
    1500

    References
    ----------
    .. [1] ICAO Doc 8168 (PANS-OPS), Vol. I, Part III, Section 1, Chapter 4, 4.3 (the equation
       and its assumptions) and Table III-1-4-1 (the values it gives at a sea-level aerodrome).
    """
    height, elevation, temperature = np.broadcast_arrays(
        *(np.asarray(x, dtype=np.float64) for x in (height, elevation, temperature)))
    dT = aerodrome_isa_deviation(elevation, temperature)
    t_std = T0 + L0 * elevation  # standard temperature at the aerodrome [K]
    scale = -dT / L0  # [m]
    # Start from the linear relation (the thickness ratio at the aerodrome), then Newton on
    # f(x) = x - scale ln(1 + L0 x / t_std) - height, f'(x) = (t_std + L0 x + dT) / (t_std + L0 x).
    x = height * t_std / np.where(t_std + dT > 0.0, t_std + dT, np.nan)
    for _ in range(CORRECTION_MAX_ITER):
        t_here = t_std + L0 * x
        f = x - scale * np.log(t_here / t_std) - height
        step = f * t_here / (t_here + dT)
        x = x - step
        if not np.any(np.abs(step) > CORRECTION_TOL):  # NaN steps stop it too; their x stays NaN
            break
    else:
        x = np.where(np.abs(step) > CORRECTION_TOL, np.nan, x)
    correction = x - height
    return result(correction)
