"""Total air temperature: the temperature a probe reads in the airflow, and the static (outside)
air temperature recovered from it.

Pure NumPy, SI in and SI out; every function takes scalars or arrays of any shape (arguments
broadcast by NumPy rules) and returns ``np.float64`` for scalar input.

Bringing the air adiabatically to rest raises its temperature from the static temperature ``T``
to the total (stagnation) temperature ``Tt``; a real probe recovers the fraction ``r`` (its
recovery factor) of that rise, and ``TAT`` here is the temperature the probe indicates:

    TAT = T + r (Tt - T) = T (1 + r (gamma - 1) / 2 M^2) = T + r V^2 / (2 cp)

The energy equation holds for any Mach number (also through a shock ahead of the probe, which
is adiabatic), so the relation needs no subsonic assumption. Each direction is a closed form,
given the Mach number or the true airspeed.

Symbols: ``T`` static air temperature [K], ``TAT`` indicated total air temperature [K], ``M``
Mach number [-], ``V`` true airspeed [m/s], ``r`` probe recovery factor [-] (1 for a probe
that recovers the whole rise), ``cp`` specific heat of dry air at constant pressure [J/(kg K)].

References
----------
.. [1] NACA Report 1135, *Equations, Tables, and Charts for Compressible Flow*, 1953, eq. 43.
.. [2] W. Gracey, *Measurement of Aircraft Speed and Altitude*, NASA RP-1046, 1980, ch. 13
   (total-temperature probes and their recovery factor).
"""

from __future__ import annotations

import numpy as np

from .constants import GAMMA, R_AIR

__all__ = [
    "CP",
    "ram_rise",
    "static_temperature_from_mach",
    "static_temperature_from_tas",
    "total_air_temperature",
]

#: Specific heat of dry air at constant pressure [J/(kg K)], cp = gamma R / (gamma - 1)
#: (perfect gas with ICAO Doc 7488/3's gamma and R: 1004.685).
CP = GAMMA * R_AIR / (GAMMA - 1.0)
_HALF_GAMMA_MINUS_1 = 0.5 * (GAMMA - 1.0)


def _recovered_ratio(M, r):
    """``TAT / T = 1 + r (gamma - 1) / 2 M^2`` [-]."""
    return 1.0 + np.multiply(r, _HALF_GAMMA_MINUS_1) * np.square(M)


def total_air_temperature(T, M, r=1.0):
    r"""Total air temperature a probe of recovery factor ``r`` reads at Mach ``M``.

    .. math:: TAT = T \left(1 + r\,\frac{\gamma - 1}{2} M^2\right)

    Parameters
    ----------
    T : float or array_like
        Static (outside) air temperature [K].
    M : float or array_like
        Mach number [-].
    r : float or array_like, optional
        Recovery factor of the probe [-]; 1 (default) gives the full stagnation temperature.

    Returns
    -------
    TAT : np.float64 or ndarray
        Indicated total air temperature [K].

    Notes
    -----
    Adiabatic stagnation of a perfect gas, ``gamma = 1.4`` [1]_; the recovery factor is defined
    by ``TAT = T + r (Tt - T)`` [2]_.

    Examples
    --------
    >>> print(f"{total_air_temperature(216.65, 0.8):.3f}")
    244.381
    >>> print(f"{total_air_temperature(216.65, 0.8, 0.95):.3f}")
    242.995

    References
    ----------
    .. [1] NACA Report 1135, eq. 43.
    .. [2] W. Gracey, NASA RP-1046, 1980, ch. 13.
    """
    return np.multiply(T, _recovered_ratio(M, r))


def static_temperature_from_mach(TAT, M, r=1.0):
    r"""Static air temperature from the total air temperature and the Mach number.

    .. math:: T = \frac{TAT}{1 + r\,\frac{\gamma - 1}{2} M^2}

    Parameters
    ----------
    TAT : float or array_like
        Indicated total air temperature [K].
    M : float or array_like
        Mach number [-] (from the impact and static pressures, which need no temperature).
    r : float or array_like, optional
        Recovery factor of the probe [-]; default 1.

    Returns
    -------
    T : np.float64 or ndarray
        Static (outside) air temperature [K].

    Notes
    -----
    The inverse of :func:`total_air_temperature`. A calibrated or equivalent airspeed with the
    static pressure gives the Mach number without any temperature, so this is closed form [1]_.

    Examples
    --------
    >>> print(f"{static_temperature_from_mach(244.3812, 0.8):.3f}")
    216.650

    References
    ----------
    .. [1] NACA Report 1135, eq. 43.
    """
    return np.divide(TAT, _recovered_ratio(M, r))


def ram_rise(V, r=1.0):
    r"""Ram temperature rise a probe reads at true airspeed ``V``: TAT minus static temperature.

    .. math:: \Delta T_{ram} = r\,\frac{V^2}{2\,c_p}

    Parameters
    ----------
    V : float or array_like
        True airspeed [m/s].
    r : float or array_like, optional
        Recovery factor of the probe [-]; default 1.

    Returns
    -------
    dT : np.float64 or ndarray
        Ram rise [K].

    Notes
    -----
    The energy equation ``cp Tt = cp T + V^2 / 2`` [1]_ with ``cp = 1004.685 J/(kg K)``.

    Examples
    --------
    >>> print(f"{ram_rise(250.0):.2f}")
    31.10

    References
    ----------
    .. [1] W. Gracey, NASA RP-1046, 1980, ch. 13.
    """
    return np.multiply(r, np.square(V)) / (2.0 * CP)


def static_temperature_from_tas(TAT, V, r=1.0):
    r"""Static air temperature from the total air temperature and the true airspeed.

    .. math:: T = TAT - r\,\frac{V^2}{2\,c_p}

    Parameters
    ----------
    TAT : float or array_like
        Indicated total air temperature [K].
    V : float or array_like
        True airspeed [m/s].
    r : float or array_like, optional
        Recovery factor of the probe [-]; default 1.

    Returns
    -------
    T : np.float64 or ndarray
        Static (outside) air temperature [K]; not positive when the ram rise exceeds the TAT
        (callers refuse such input).

    Notes
    -----
    Closed form: no iteration through the Mach number [1]_.

    Examples
    --------
    >>> print(f"{static_temperature_from_tas(250.0, 250.0):.2f}")
    218.90

    References
    ----------
    .. [1] W. Gracey, NASA RP-1046, 1980, ch. 13.
    """
    return np.subtract(TAT, ram_rise(V, r))
