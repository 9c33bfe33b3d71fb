"""Water vapour in the air: saturation vapour pressure, vapour pressure, virtual temperature.

Pure NumPy, SI in and SI out; every function takes scalars or arrays of any shape (arguments
broadcast by NumPy rules) and returns ``np.float64`` for scalar input.

Saturation vapour pressure is Hardy's ITS-90 formulation over plane liquid water [1]_, valid
from -100 degC to +100 degC (:data:`T_SAT_MIN` .. :data:`T_SAT_MAX`); it reproduces the IAPWS
saturation pressures of water above 0 degC (to 3e-5) and Wexler's supercooled-water values below.
Over deeply supercooled water the data are sparse and formulations part: Murphy & Koop (2005)
give 0.6 % less at -40 degC and 18 % less at -100 degC, where the vapour pressure (under 20 Pa)
changes the density of the air by less than 1e-4. Dew
point and relative humidity are taken with respect to liquid water, as the WMO defines them
[2]_ (also below 0 degC). Moist air is treated as an ideal mixture of dry air and water
vapour: its density is that of dry air at the virtual temperature [3]_. The enhancement factor
of real moist air (about 1.004 at sea-level pressure) is not applied: the vapour pressure here
is that of pure water vapour over water.

Symbols: ``T`` temperature [K], ``Td`` dew point [K], ``e`` vapour pressure [Pa], ``es``
saturation vapour pressure [Pa], ``U`` relative humidity [-] (0 to 1), ``p`` static pressure
[Pa], ``Tv`` virtual temperature [K], ``epsilon`` the ratio of the molar masses of water and
dry air [-].

References
----------
.. [1] B. Hardy, "ITS-90 formulations for vapor pressure, frostpoint temperature, dewpoint
   temperature, and enhancement factors in the range -100 to +100 C", Proc. 3rd Int. Symp.
   on Humidity and Moisture, NPL, London, 1998, pp. 214-222.
.. [2] WMO, *Guide to Instruments and Methods of Observation* (WMO-No. 8), Vol. I, ch. 4 and
   annex 4.B (definitions of dew point and relative humidity with respect to water).
.. [3] J. M. Wallace, P. V. Hobbs, *Atmospheric Science*, 2nd ed., 2006, section 3.1.1
   (virtual temperature).
"""

from __future__ import annotations

import numpy as np

from .constants import M0, R_AIR

__all__ = [
    "EPSILON",
    "T_SAT_MAX",
    "T_SAT_MIN",
    "moist_air_density",
    "saturation_vapour_pressure",
    "vapour_pressure_from_dew_point",
    "vapour_pressure_from_relative_humidity",
    "virtual_temperature",
]

#: Coefficients g0..g7 of Hardy's ITS-90 saturation vapour pressure over water [1]:
#: ln(es / Pa) = sum_{i=0..6} g_i T^(i-2) + g_7 ln(T / K).
HARDY_G = (
    -2.8365744e3,
    -6.028076559e3,
    1.954263612e1,
    -2.737830188e-2,
    1.6261698e-5,
    7.0229056e-10,
    -1.8680009e-13,
    2.7150305,
)
#: Lowest temperature of the saturation formula's validity range [K] (-100 degC; Hardy 1998).
T_SAT_MIN = 173.15
#: Highest temperature of the saturation formula's validity range [K] (+100 degC; Hardy 1998).
T_SAT_MAX = 373.15
#: Molar mass of water [kg/mol] (IAPWS; CIPM-2007 equation for the density of moist air).
M_WATER = 18.01528e-3
#: Ratio of the molar masses of water and dry air, epsilon = Mw / M0 [-] (about 0.622; M0: constants).
EPSILON = M_WATER / M0


def saturation_vapour_pressure(T):
    r"""Saturation vapour pressure over plane liquid water (Hardy's ITS-90 formulation).

    .. math:: \ln e_s = \sum_{i=0}^{6} g_i\,T^{\,i-2} + g_7 \ln T

    Parameters
    ----------
    T : float or array_like
        Temperature [K]; the formulation holds from 173.15 K to 373.15 K (-100 to +100 degC).

    Returns
    -------
    es : np.float64 or ndarray
        Saturation vapour pressure with respect to liquid water [Pa].

    Notes
    -----
    Over water also below 0 degC (supercooled water), the reference of the WMO definitions of
    dew point and relative humidity. Within its range the formula agrees with the IAPWS
    saturation curve above 0 degC to a few parts in 10^5 [1]_; callers check the range (outside
    it the value is an extrapolation).

    Examples
    --------
    >>> print(f"{saturation_vapour_pressure(273.16):.2f}")
    611.66
    >>> print(f"{saturation_vapour_pressure(293.15):.1f}")
    2339.3

    References
    ----------
    .. [1] B. Hardy, ITS-90 formulations ..., Proc. 3rd Int. Symp. on Humidity and Moisture,
       1998, eq. 2 and table 1.
    """
    T = np.asarray(T, dtype=np.float64)
    g = HARDY_G
    inverse = np.reciprocal(T)
    # Horner form of g0 T^-2 + g1 T^-1 + g2 + g3 T + g4 T^2 + g5 T^3 + g6 T^4
    polynomial = ((((g[6] * T + g[5]) * T + g[4]) * T + g[3]) * T + g[2]) + (g[0] * inverse + g[1]) * inverse
    return np.exp(polynomial + g[7] * np.log(T))


def vapour_pressure_from_dew_point(Td):
    r"""Vapour pressure of the air from its dew point: the saturation pressure at the dew point.

    .. math:: e = e_s(T_d)

    Parameters
    ----------
    Td : float or array_like
        Dew point (with respect to water) [K]; 173.15 K to 373.15 K.

    Returns
    -------
    e : np.float64 or ndarray
        Partial pressure of the water vapour [Pa].

    Notes
    -----
    The dew point is the temperature to which the air must be cooled at constant pressure to
    saturate it with respect to water [1]_. Callers check ``Td <= T`` and ``e < p``.

    Examples
    --------
    >>> print(f"{vapour_pressure_from_dew_point(283.15):.1f}")
    1228.1

    References
    ----------
    .. [1] WMO-No. 8, Vol. I, annex 4.B.
    """
    return saturation_vapour_pressure(Td)


def vapour_pressure_from_relative_humidity(T, U):
    r"""Vapour pressure of the air from its temperature and relative humidity.

    .. math:: e = U\,e_s(T)

    Parameters
    ----------
    T : float or array_like
        Temperature [K]; 173.15 K to 373.15 K.
    U : float or array_like
        Relative humidity with respect to water, as a fraction [-] (0 to 1).

    Returns
    -------
    e : np.float64 or ndarray
        Partial pressure of the water vapour [Pa].

    Notes
    -----
    The WMO defines relative humidity with respect to water at all temperatures [1]_ (the
    ratio of vapour pressures, the enhancement factor cancelling).

    Examples
    --------
    >>> print(f"{vapour_pressure_from_relative_humidity(293.15, 0.5):.1f}")
    1169.6

    References
    ----------
    .. [1] WMO-No. 8, Vol. I, annex 4.B.
    """
    return np.multiply(U, saturation_vapour_pressure(T))


def virtual_temperature(T, e, p):
    r"""Virtual temperature: the temperature at which dry air has the density of the moist air.

    .. math:: T_v = \frac{T}{1 - \dfrac{e}{p}\,(1 - \varepsilon)}

    Parameters
    ----------
    T : float or array_like
        Static temperature [K].
    e : float or array_like
        Vapour pressure [Pa]; callers check ``0 <= e < p``.
    p : float or array_like
        Static (total) pressure of the moist air [Pa].

    Returns
    -------
    Tv : np.float64 or ndarray
        Virtual temperature [K]; ``Tv >= T``, equal for dry air.

    Notes
    -----
    Moist air as an ideal mixture of dry air and water vapour, ``epsilon = Mw / Md`` (0.62198)
    [1]_. The density of the moist air is then ``p / (R Tv)`` with the dry-air gas constant
    (:func:`moist_air_density`).

    Examples
    --------
    >>> print(f"{virtual_temperature(303.15, 4245.0, 101_325.0):.2f}")
    308.03

    References
    ----------
    .. [1] J. M. Wallace, P. V. Hobbs, *Atmospheric Science*, 2nd ed., 2006, eq. 3.16.
    """
    ratio = np.divide(e, p)
    return np.divide(T, 1.0 - ratio * (1.0 - EPSILON))


def moist_air_density(p, T, e):
    r"""Density of moist air, by the gas law at the virtual temperature.

    .. math:: \rho = \frac{p}{R\,T_v} = \frac{p - (1 - \varepsilon)\,e}{R\,T}

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Static temperature [K].
    e : float or array_like
        Vapour pressure [Pa].

    Returns
    -------
    rho : np.float64 or ndarray
        Density of the moist air [kg/m^3]; lower than dry air's at the same p and T.

    Notes
    -----
    ``R`` is the gas constant of dry air (287.05287 J/(kg K)) [1]_.

    Examples
    --------
    >>> print(f"{moist_air_density(101_325.0, 303.15, 4245.0):.4f}")
    1.1459

    References
    ----------
    .. [1] J. M. Wallace, P. V. Hobbs, *Atmospheric Science*, 2nd ed., 2006, eq. 3.15.
    """
    return np.divide(p, np.multiply(virtual_temperature(T, e, p), R_AIR))
