"""Further properties of the air by the U.S. Standard Atmosphere 1976: gravity, scale height,
kinetic-theory quantities and thermal conductivity.

Pure NumPy, SI in and SI out; every function takes scalars or arrays of any shape (arguments
broadcast by NumPy rules) and returns ``np.float64`` for scalar input. Each is a function of the
local state (temperature, pressure, geometric height) and so applies on off-standard days too.

The formulas and constants are those of the U.S. Standard Atmosphere 1976 [1]_ (section 1.3,
equations 17 and 52 to 56, and table 2): air is a perfect gas of mean molar mass ``M0`` whose
molecules are rigid spheres of effective collision diameter ``sigma``. Up to 80 km (geometric)
the molecular-scale temperature of the standard equals the kinetic temperature; from 80 to 86 km
the standard's kinetic temperature is lower by at most 0.04 %, which this model (like ICAO Doc
7488/3) does not distinguish.

Symbols: ``T`` temperature [K], ``p`` pressure [Pa], ``h`` geometric height [m], ``g``
acceleration of free fall [m/s^2], ``n`` number density [1/m^3], ``V`` mean particle speed [m/s],
``L`` mean free path [m], ``nu`` collision frequency [1/s], ``Hp`` pressure scale height [m],
``k`` thermal conductivity [W/(m K)].

References
----------
.. [1] NOAA, NASA, USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562, 1976.
"""

from __future__ import annotations

import math

import numpy as np

from .constants import EARTH_RADIUS, G0, M0

__all__ = [
    "AVOGADRO",
    "COLLISION_DIAMETER",
    "GAS_CONSTANT",
    "collision_frequency",
    "gravity",
    "mean_free_path",
    "mean_particle_speed",
    "number_density",
    "pressure_scale_height",
    "thermal_conductivity",
]

#: Avogadro constant [1/mol] (U.S. Standard Atmosphere 1976, table 2: 6.022169e26 /kmol).
AVOGADRO = 6.022169e23
#: Universal gas constant [J/(mol K)] (U.S. Standard Atmosphere 1976, table 2: 8.31432e3 J/(kmol K)).
GAS_CONSTANT = 8.31432
#: Effective collision diameter of an air molecule [m] (U.S. Standard Atmosphere 1976, table 2).
COLLISION_DIAMETER = 3.65e-10
#: Coefficient of the thermal-conductivity law [W/(m K^1.5)] (U.S. Standard Atmosphere 1976, eq. 53).
CONDUCTIVITY_BETA = 2.64638e-3
#: Constant of the thermal-conductivity law [K] (U.S. Standard Atmosphere 1976, eq. 53).
CONDUCTIVITY_S = 245.4
#: Exponent constant of the thermal-conductivity law [K] (U.S. Standard Atmosphere 1976, eq. 53: 10^(-12/T)).
CONDUCTIVITY_EXPONENT = 12.0

_CROSS_SECTION = math.sqrt(2.0) * math.pi * COLLISION_DIAMETER**2  # sqrt(2) pi sigma^2 [m^2]
_SPECIFIC_R = GAS_CONSTANT / M0  # R* / M0 [J/(kg K)]


def gravity(h):
    r"""Acceleration of free fall at a geometric height, by the inverse-square law.

    .. math:: g = g_0 \left(\frac{r_0}{r_0 + h}\right)^2

    Parameters
    ----------
    h : float or array_like
        Geometric height above mean sea level [m].

    Returns
    -------
    g : np.float64 or ndarray
        Acceleration of free fall [m/s^2].

    Notes
    -----
    ``g0 = 9.80665 m/s^2`` and the nominal Earth radius ``r0 = 6 356 766 m`` of the standard,
    which define geopotential altitude [1]_.

    Examples
    --------
    >>> print(f"{gravity(11_000.0):.4f}")
    9.7728

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 17.
    """
    ratio = np.divide(EARTH_RADIUS, np.add(h, EARTH_RADIUS))
    return G0 * ratio * ratio


def number_density(p, T):
    r"""Number of molecules per unit volume.

    .. math:: n = \frac{N_A\,p}{R^*\,T}

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Temperature [K].

    Returns
    -------
    n : np.float64 or ndarray
        Number density [1/m^3].

    Notes
    -----
    Perfect gas; ``N_A = 6.022169e23 /mol``, ``R* = 8.31432 J/(mol K)`` [1]_.

    Examples
    --------
    >>> print(f"{number_density(101_325.0, 288.15):.4e}")
    2.5470e+25

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 52 and table 2.
    """
    return np.divide(np.multiply(p, AVOGADRO / GAS_CONSTANT), T)


def mean_particle_speed(T):
    r"""Arithmetic mean speed of the air molecules (Maxwell distribution).

    .. math:: \bar V = \sqrt{\frac{8\,R^*\,T}{\pi\,M_0}}

    Parameters
    ----------
    T : float or array_like
        Temperature [K].

    Returns
    -------
    V : np.float64 or ndarray
        Mean particle speed [m/s].

    Notes
    -----
    ``M0 = 28.9644 g/mol`` [1]_.

    Examples
    --------
    >>> print(f"{mean_particle_speed(288.15):.2f}")
    458.94

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 54.
    """
    return np.sqrt(np.multiply(T, 8.0 * _SPECIFIC_R / math.pi))


def mean_free_path(p, T, n=None):
    r"""Mean distance a molecule travels between collisions.

    .. math:: L = \frac{1}{\sqrt{2}\,\pi\,\sigma^2\,n}

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Temperature [K].
    n : float or array_like, optional
        The number density at ``p`` and ``T`` when the caller has it already (:func:`number_density`).

    Returns
    -------
    L : np.float64 or ndarray
        Mean free path [m].

    Notes
    -----
    Rigid spheres of effective collision diameter ``sigma = 3.65e-10 m``; ``n`` from
    :func:`number_density` [1]_.

    Examples
    --------
    >>> print(f"{mean_free_path(101_325.0, 288.15):.4e}")
    6.6332e-08

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 55.
    """
    return np.reciprocal(np.multiply(number_density(p, T) if n is None else n, _CROSS_SECTION))


def collision_frequency(p, T, speed=None, path=None):
    r"""Mean number of collisions per second of one molecule: mean speed over mean free path.

    .. math:: \nu = \frac{\bar V}{L} = 4 N_A \sigma^2 \sqrt{\frac{\pi}{R^* M_0}}\,\frac{p}{\sqrt{T}}

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Temperature [K].
    speed, path : float or array_like, optional
        The mean particle speed and mean free path at ``p`` and ``T`` when the caller has them already.

    Returns
    -------
    nu : np.float64 or ndarray
        Collision frequency [1/s].

    Notes
    -----
    From :func:`mean_particle_speed` and :func:`mean_free_path` [1]_.

    Examples
    --------
    >>> print(f"{collision_frequency(101_325.0, 288.15):.4e}")
    6.9189e+09

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 56.
    """
    return np.divide(mean_particle_speed(T) if speed is None else speed, mean_free_path(p, T) if path is None else path)


def pressure_scale_height(T, g):
    r"""Pressure scale height: the height over which the pressure falls by a factor e in an
    isothermal column.

    .. math:: H_p = \frac{R^*\,T}{M_0\,g}

    Parameters
    ----------
    T : float or array_like
        Temperature [K].
    g : float or array_like
        Local acceleration of free fall [m/s^2] (:func:`gravity` at the geometric height).

    Returns
    -------
    Hp : np.float64 or ndarray
        Pressure scale height [m].

    Notes
    -----
    With the local gravity, as the standard tabulates it [1]_.

    Examples
    --------
    >>> print(f"{pressure_scale_height(288.15, 9.80665):.1f}")
    8434.5

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 52 and table I (column Hp).
    """
    return np.divide(np.multiply(T, _SPECIFIC_R), g)


def thermal_conductivity(T):
    r"""Coefficient of thermal conductivity of air.

    .. math:: k = \frac{\beta\,T^{3/2}}{T + S \cdot 10^{-12/T}}

    Parameters
    ----------
    T : float or array_like
        Temperature [K].

    Returns
    -------
    k : np.float64 or ndarray
        Thermal conductivity [W/(m K)].

    Notes
    -----
    ``beta = 2.64638e-3 W/(m K^1.5)``, ``S = 245.4 K`` [1]_. ICAO Doc 7488/3 writes the same law
    with ``beta = 2.648151e-3`` (0.07 % higher).

    Examples
    --------
    >>> print(f"{thermal_conductivity(288.15):.4e}")
    2.5326e-02

    References
    ----------
    .. [1] U.S. Standard Atmosphere 1976, eq. 53.
    """
    T = np.asarray(T, dtype=np.float64)
    denominator = T + CONDUCTIVITY_S * np.power(10.0, np.divide(-CONDUCTIVITY_EXPONENT, T))
    return CONDUCTIVITY_BETA * T * np.sqrt(T) / denominator
