"""The ICAO Standard Atmosphere: temperature, pressure and density against altitude.

Pure NumPy, SI in and SI out. Every public function is vectorised: it takes a scalar or an
array of any shape (arguments broadcast by NumPy rules) and returns ``np.float64`` for scalar
input, otherwise an ndarray of the broadcast shape.

The model is the ICAO Standard Atmosphere [1]_ (ISO 2533 [2]_; identical to the U.S. Standard
Atmosphere 1976 [3]_ in this range): seven layers of constant temperature gradient in
geopotential altitude ``H`` from ``H_MIN`` = -5 km to ``H_MAX`` = 84 852 m (86 km geometric),
a perfect gas in hydrostatic equilibrium. The layer bases and gradients are the named
constants of :mod:`service.physics.constants`; the base temperatures and pressures are derived
from ``T0`` and ``P0`` when this module is imported (:data:`LAYER_BASE_TEMPERATURES`,
:data:`LAYER_BASE_PRESSURES`), never typed in.

Range: the forward functions (altitude -> state) compute for any finite altitude, extending
the first layer downwards and the last upwards; callers must check inputs against ``H_MIN``
and ``H_MAX`` themselves (the HTTP layer does). The inverses (:func:`pressure_altitude`,
:func:`density_altitude`, :func:`qnh_offset`) return NaN for a value outside the model's
range.

Symbols: ``H`` geopotential altitude [m], ``h`` geometric altitude [m], ``T`` temperature [K],
``p`` pressure [Pa], ``rho`` density [kg/m^3], ``a`` speed of sound [m/s], ``mu`` dynamic
viscosity [Pa s], ``nu`` kinematic viscosity [m^2/s], ``L`` temperature gradient dT/dH [K/m],
subscript ``b`` the base of the layer holding the point.

References
----------
.. [1] ICAO, *Manual of the ICAO Standard Atmosphere (extended to 80 kilometres)*,
   Doc 7488/3, 3rd ed., 1993.
.. [2] ISO 2533:1975, *Standard Atmosphere*.
.. [3] NOAA, NASA, USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562, 1976.
"""

from __future__ import annotations

import math

import numpy as np

from . import single_point as one
from .arrays import flat, shaped
from .constants import (
    EARTH_RADIUS,
    G0,
    GAMMA,
    H_MAX,
    H_MIN,
    LAYER_BASES,
    LAYER_LAPSE_RATES,
    P0,
    R_AIR,
    RHO0,
    SUTHERLAND_BETA,
    SUTHERLAND_S,
    T0,
)

__all__ = [
    "LAYER_BASE_PRESSURES",
    "LAYER_BASE_TEMPERATURES",
    "P_MAX",
    "P_MIN",
    "RHO_MAX",
    "RHO_MIN",
    "density",
    "density_altitude",
    "dynamic_viscosity",
    "geometric_altitude",
    "geopotential_altitude",
    "kinematic_viscosity",
    "pressure_altitude",
    "pressure_altitude_at_height",
    "pressure_level_height",
    "qnh_offset",
    "ratios",
    "speed_of_sound",
    "standard_density",
    "standard_pressure",
    "standard_state",
    "standard_temperature",
    "temperature_from_deviation",
]


# --------------------------------------------------------------------------------------------
# Layer tables, derived once at import from T0, P0 and the layer constants.
# --------------------------------------------------------------------------------------------

def _derive_layer_bases() -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Base temperature and pressure of each layer by the textbook per-layer formulas.

    Gradient layer: T = Tb + L (H - Hb), p = pb (T / Tb)^(-g0 / (R L));
    isothermal layer: p = pb exp(-g0 (H - Hb) / (R Tb)). A loop over the seven layers.
    """
    temperatures, pressures = [T0], [P0]
    for base, top, lapse in zip(LAYER_BASES[:-1], LAYER_BASES[1:], LAYER_LAPSE_RATES[:-1], strict=True):
        t_base, p_base = temperatures[-1], pressures[-1]
        t_top = t_base + lapse * (top - base)
        if lapse == 0.0:
            p_top = p_base * math.exp(-G0 * (top - base) / (R_AIR * t_base))
        else:
            p_top = p_base * (t_top / t_base) ** (-G0 / (R_AIR * lapse))
        temperatures.append(t_top)
        pressures.append(p_top)
    return tuple(temperatures), tuple(pressures)


def _frozen(values) -> np.ndarray:
    array = np.array(values, dtype=np.float64)
    array.flags.writeable = False
    return array


_BASE_T, _BASE_P = _derive_layer_bases()

#: Standard temperature at each layer base [K], derived from T0 (288.15, 216.65, ... K).
LAYER_BASE_TEMPERATURES = _frozen(_BASE_T)
#: Standard pressure at each layer base [Pa], derived from P0 (101 325, 22 632.0, ... Pa).
LAYER_BASE_PRESSURES = _frozen(_BASE_P)

_HB = _frozen(LAYER_BASES)
_L = _frozen(LAYER_LAPSE_RATES)
_TB = LAYER_BASE_TEMPERATURES
_PB = LAYER_BASE_PRESSURES
_RHOB = _frozen(np.divide(_PB, np.multiply(_TB, R_AIR)))
_ISOTHERMAL = _L == 0.0
_L_SAFE = np.where(_ISOTHERMAL, 1.0, _L)  # only ever used where the layer has a gradient
_G0_R = G0 / R_AIR

# Forward: ln(p / pb) = K_LOG ln(T / Tb) + K_LIN (H - Hb); exactly one of K_LOG, K_LIN is 0.
# ln(pb / P0) = -(g0 / R) * (integral of dH / T from 0 to Hb), for the off-standard-day height.
_LN_PB_P0 = _frozen(np.log(_PB / P0))
_K_LOG = _frozen(np.where(_ISOTHERMAL, 0.0, -_G0_R / _L_SAFE))
_K_LIN = _frozen(np.where(_ISOTHERMAL, -_G0_R / _TB, 0.0))

# Inverses: with y = ln(q / qb) (q = p or rho), H = Hb + C_EXP expm1(M y) + C_LIN y.
_C_EXP = _frozen(np.where(_ISOTHERMAL, 0.0, _TB / _L_SAFE))
_C_LIN = _frozen(np.where(_ISOTHERMAL, -_TB / _G0_R, 0.0))
_M_PRESSURE = _frozen(-_L / _G0_R)  # p / pb = (T / Tb)^(-g0/(R L))
_M_DENSITY = _frozen(-_L / (_G0_R + _L))  # rho / rhob = (T / Tb)^(-g0/(R L) - 1)


def _build_layer_lookup() -> tuple[float, np.ndarray]:
    """Layer index of each ``step``-wide bucket of altitude from H_MIN up to past H_MAX.

    The layer bases and H_MIN are whole metres, so their greatest common divisor ``step``
    (1 km) splits the altitude axis into buckets that never straddle a base; the layer of a
    point is then a table lookup of ``floor((H - H_MIN) / step)`` instead of a binary search.
    """
    edges = (H_MIN, *LAYER_BASES)
    if any(edge != round(edge) for edge in edges):
        raise ValueError("layer bases and H_MIN must be whole metres for the layer lookup")
    step = float(math.gcd(*(int(round(edge - H_MIN)) for edge in edges)))
    count = math.ceil((H_MAX - H_MIN) / step) + 1
    starts = H_MIN + step * np.arange(count)
    layers = np.searchsorted(_HB, starts, side="right") - 1
    return step, np.clip(layers, 0, len(LAYER_BASES) - 1)


_LUT_STEP, _LUT_LAYER = _build_layer_lookup()
_LUT_LAST = float(len(_LUT_LAYER) - 1)
# Per-bucket copies of the layer coefficients, so one gather per coefficient finds them.
_LUT_HB, _LUT_TB, _LUT_L, _LUT_PB, _LUT_LN_PB_P0, _LUT_K_LOG, _LUT_K_LIN = (
    _frozen(table[_LUT_LAYER]) for table in (_HB, _TB, _L, _PB, _LN_PB_P0, _K_LOG, _K_LIN)
)


def _layer_index(H: np.ndarray) -> np.ndarray:
    """Layer lookup bucket of each point of a 1-D float array (NaN goes to bucket 0)."""
    k = np.subtract(H, H_MIN)
    k /= _LUT_STEP
    np.fmax(k, 0.0, out=k)  # fmax/fmin map NaN to the bound: the cast below stays defined
    np.fmin(k, _LUT_LAST, out=k)
    return k.astype(np.intp)


def _temperature_log_pressure(H: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Standard T [K], ln(p / pb) and the lookup bucket of a 1-D float array H.

    Each formula runs once over the whole array with the layer coefficients gathered per
    point: ln(p / pb) = K_LOG ln(T / Tb) + K_LIN (H - Hb). H itself is not written to.
    """
    k = _layer_index(H)
    dH = np.subtract(H, _LUT_HB.take(k))
    tb = _LUT_TB.take(k)
    T = _LUT_L.take(k)
    T *= dH
    T += tb
    log_p = np.divide(T, tb, out=tb)
    np.log(log_p, out=log_p)
    log_p *= _LUT_K_LOG.take(k)
    dH *= _LUT_K_LIN.take(k)
    log_p += dH
    return T, log_p, k


# --------------------------------------------------------------------------------------------
# Altitude conversions
# --------------------------------------------------------------------------------------------

def geopotential_altitude(h):
    r"""Geopotential altitude of a geometric altitude.

    .. math:: H = \frac{r\,h}{r + h}

    Parameters
    ----------
    h : float or array_like
        Geometric altitude above mean sea level [m].

    Returns
    -------
    H : np.float64 or ndarray
        Geopotential altitude [m].

    Notes
    -----
    ``r`` is the nominal Earth radius 6 356 766 m of the standard, with g0 taken as constant
    at its standard value [1]_. Callers check the range (``h < -r`` is meaningless).

    Examples
    --------
    >>> print(f"{geopotential_altitude(86_000.0):.2f}")
    84852.05

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), eq. for geopotential altitude; U.S. Standard Atmosphere
       1976, eq. 18.
    """
    h = np.asarray(h, dtype=np.float64)
    H = np.multiply(h, EARTH_RADIUS)
    H /= h + EARTH_RADIUS
    return H


def geometric_altitude(H):
    r"""Geometric altitude of a geopotential altitude, the inverse of
    :func:`geopotential_altitude`.

    .. math:: h = \frac{r\,H}{r - H}

    Parameters
    ----------
    H : float or array_like
        Geopotential altitude [m].

    Returns
    -------
    h : np.float64 or ndarray
        Geometric altitude above mean sea level [m].

    Notes
    -----
    ``r`` is the nominal Earth radius 6 356 766 m [1]_. Callers check the range
    (``H >= r`` is meaningless).

    Examples
    --------
    >>> print(f"{geometric_altitude(84_852.0):.2f}")
    85999.95

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993); U.S. Standard Atmosphere 1976, eq. 19.
    """
    H = np.asarray(H, dtype=np.float64)
    h = np.multiply(H, EARTH_RADIUS)
    h /= EARTH_RADIUS - H
    return h


# --------------------------------------------------------------------------------------------
# The standard state
# --------------------------------------------------------------------------------------------

def standard_state(H):
    r"""Standard temperature and pressure at a geopotential altitude, in one pass.

    .. math::

        T = T_b + L\,(H - H_b), \qquad
        p = p_b \left(\frac{T}{T_b}\right)^{-g_0/(R L)} \ (L \ne 0), \qquad
        p = p_b \exp\!\left(-\frac{g_0 (H - H_b)}{R\,T_b}\right) \ (L = 0)

    Parameters
    ----------
    H : float or array_like
        Geopotential (pressure) altitude [m]; callers check ``H_MIN <= H <= H_MAX``.

    Returns
    -------
    T : np.float64 or ndarray
        Standard temperature [K].
    p : np.float64 or ndarray
        Standard pressure [Pa].

    Notes
    -----
    Both layer forms are evaluated as one formula over all points,
    ``p = pb exp(K_log ln(T / Tb) + K_lin (H - Hb))`` with ``K_log = -g0 / (R L)``,
    ``K_lin = 0`` in a gradient layer and ``K_log = 0``, ``K_lin = -g0 / (R Tb)`` in an
    isothermal one (there ``T == Tb`` exactly, so the logarithm is exactly 0: no 0/0 and no
    series); at a layer base the exponent is exactly 0, so ``p == pb`` there and
    ``p(0) == P0``. The layer of each point comes from a table lookup on a 1 km grid. Below
    ``H_MIN`` the first layer is extended, above ``H_MAX`` the last; NaN gives NaN.

    Examples
    --------
    >>> T, p = standard_state(11_000.0)
    >>> print(f"{T:.2f} K, {p:.1f} Pa")
    216.65 K, 22632.0 Pa
    >>> T, p = standard_state([[0.0], [-5_000.0]])
    >>> p.shape, np.round(T, 2).tolist()
    ((2, 1), [[288.15], [320.65]])

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), eqs. for T and p in a layer; U.S. Standard Atmosphere
       1976, eqs. 23, 33a, 33b.
    """
    if type(H) is float or type(H) is np.float64:
        return one.standard_state(float(H))
    H, shape = flat(H)
    T, log_p, k = _temperature_log_pressure(H)
    p = np.exp(log_p, out=log_p)
    p *= _LUT_PB.take(k)
    return shaped(T, shape), shaped(p, shape)


#: The lookup table as Python tuples (hb, tb, L, pb, K_log, K_lin) for the single-point path.
_SCALAR_LAYERS = tuple(zip(*(table.tolist() for table in (_LUT_HB, _LUT_TB, _LUT_L, _LUT_PB, _LUT_K_LOG, _LUT_K_LIN)),
                           strict=True))


def standard_temperature(H):
    """Standard temperature at a geopotential altitude.

    ``T = Tb + L (H - Hb)`` in the layer holding ``H``; see :func:`standard_state`.

    Parameters
    ----------
    H : float or array_like
        Geopotential (pressure) altitude [m]; callers check the range.

    Returns
    -------
    T : np.float64 or ndarray
        Standard temperature [K].

    Notes
    -----
    Computes the pressure too; use :func:`standard_state` when both are needed.

    Examples
    --------
    >>> print(f"{standard_temperature(-5_000.0):.2f}")
    320.65

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    return standard_state(H)[0]


def standard_pressure(H):
    """Standard pressure at a geopotential altitude (see :func:`standard_state`).

    Parameters
    ----------
    H : float or array_like
        Geopotential (pressure) altitude [m]; callers check the range.

    Returns
    -------
    p : np.float64 or ndarray
        Standard pressure [Pa].

    Notes
    -----
    Hydrostatic equilibrium of a perfect gas with g = g0 (geopotential altitude).

    Examples
    --------
    >>> print(f"{standard_pressure(0.0):.1f}")
    101325.0

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    return standard_state(H)[1]


def standard_density(H):
    """Standard density at a geopotential altitude, ``rho = p / (R T)``.

    Parameters
    ----------
    H : float or array_like
        Geopotential (pressure) altitude [m]; callers check the range.

    Returns
    -------
    rho : np.float64 or ndarray
        Standard density [kg/m^3].

    Notes
    -----
    From :func:`standard_state` and :func:`density`.

    Examples
    --------
    >>> print(f"{standard_density(0.0):.4f}")
    1.2250

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    T, p = standard_state(H)
    return density(p, T)


# --------------------------------------------------------------------------------------------
# Properties of the gas
# --------------------------------------------------------------------------------------------

def density(p, T):
    r"""Density of dry air from the perfect-gas law.

    .. math:: \rho = \frac{p}{R\,T}

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Static temperature [K].

    Returns
    -------
    rho : np.float64 or ndarray
        Density [kg/m^3].

    Notes
    -----
    Dry air, ``R = 287.05287 J/(kg K)``. On an off-standard day use the standard pressure of
    the pressure altitude and the day's temperature.

    Examples
    --------
    >>> print(f"{density(101_325.0, 288.15):.4f}")
    1.2250

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), equation of state.
    """
    return np.divide(p, np.multiply(T, R_AIR))


def speed_of_sound(T):
    r"""Speed of sound in dry air as a perfect gas.

    .. math:: a = \sqrt{\gamma R T}

    Parameters
    ----------
    T : float or array_like
        Static temperature [K].

    Returns
    -------
    a : np.float64 or ndarray
        Speed of sound [m/s].

    Notes
    -----
    ``gamma = 1.4`` and ``R`` of dry air [1]_.

    Examples
    --------
    >>> print(f"{speed_of_sound(288.15):.3f}")
    340.294

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    a = np.multiply(T, GAMMA * R_AIR)
    return np.sqrt(a, out=a) if type(a) is np.ndarray else np.sqrt(a)


def dynamic_viscosity(T):
    r"""Dynamic viscosity of air by Sutherland's law.

    .. math:: \mu = \frac{\beta_s\,T^{3/2}}{T + S}

    Parameters
    ----------
    T : float or array_like
        Static temperature [K].

    Returns
    -------
    mu : np.float64 or ndarray
        Dynamic viscosity [Pa s].

    Notes
    -----
    ``beta_s = 1.458e-6 kg/(m s K^0.5)``, ``S = 110.4 K`` [1]_; ``T^{3/2}`` is computed as
    ``T sqrt(T)``. The law is the standard's; it is poor at very low temperatures.

    Examples
    --------
    >>> print(f"{dynamic_viscosity(288.15):.4e}")
    1.7894e-05

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993); U.S. Standard Atmosphere 1976, eq. 51.
    """
    T = np.asarray(T, dtype=np.float64)
    mu = np.sqrt(T)
    mu *= T
    mu *= SUTHERLAND_BETA
    mu /= T + SUTHERLAND_S
    return mu


def kinematic_viscosity(T, rho, mu=None):
    r"""Kinematic viscosity, dynamic viscosity over density.

    .. math:: \nu = \frac{\mu(T)}{\rho}

    Parameters
    ----------
    T : float or array_like
        Static temperature [K].
    rho : float or array_like
        Density [kg/m^3].
    mu : float or array_like, optional
        The dynamic viscosity at ``T`` when the caller has it already (:func:`dynamic_viscosity`).

    Returns
    -------
    nu : np.float64 or ndarray
        Kinematic viscosity [m^2/s].

    Notes
    -----
    ``mu`` from :func:`dynamic_viscosity` (Sutherland's law).

    Examples
    --------
    >>> print(f"{kinematic_viscosity(288.15, 1.225):.4e}")
    1.4607e-05

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    return np.divide(dynamic_viscosity(T) if mu is None else mu, rho)


def ratios(p, T, rho):
    r"""Pressure, temperature and density ratios to the sea-level standard values.

    .. math:: \delta = p / p_0, \quad \theta = T / T_0, \quad \sigma = \rho / \rho_0

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].
    T : float or array_like
        Static temperature [K].
    rho : float or array_like
        Density [kg/m^3].

    Returns
    -------
    delta : np.float64 or ndarray
        Pressure ratio [-].
    theta : np.float64 or ndarray
        Temperature ratio [-].
    sigma : np.float64 or ndarray
        Density ratio [-].

    Notes
    -----
    ``rho0 = p0 / (R T0)`` (1.225 kg/m^3). Provided so every caller uses the same reference
    values; each ratio is one division.

    Examples
    --------
    >>> delta, theta, sigma = ratios(101_325.0, 288.15, 1.225)
    >>> print(f"{delta:.3f} {theta:.3f} {sigma:.5f}")
    1.000 1.000 1.00000

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), sea-level values.
    """
    return np.divide(p, P0), np.divide(T, T0), np.divide(rho, RHO0)


# --------------------------------------------------------------------------------------------
# Inverses
# --------------------------------------------------------------------------------------------

#: Below this many points a layer lookup is one call (searchsorted), above it a comparison per layer.
_FEW = 64


def _invert(q, q_bases: np.ndarray, q_lo: float, q_hi: float, m: np.ndarray):
    """Altitude where the standard profile of q (p or rho, falling with H) equals q.

    With y = ln(q / qb): H = Hb + C_EXP expm1(m y) + C_LIN y, one formula for all layers.
    NaN where q is outside [q_lo, q_hi], the model's range.
    """
    q, shape = flat(q)
    inside = (q >= q_lo) & (q <= q_hi)
    q = np.clip(q, q_lo, q_hi)  # keeps log() quiet for q <= 0; those points become NaN
    # The layer: how many bases are at or above q, less one. For many points, counted by one comparison per
    # base (twice as fast as searchsorted over the handful of layers); for a few, one searchsorted call.
    if q.size > _FEW:
        i = np.zeros(q.shape, dtype=np.intp)
        for base in q_bases:
            i += q <= base
        i -= 1
    else:
        i = (-q_bases).searchsorted(-q, side="right") - 1
    np.clip(i, 0, len(q_bases) - 1, out=i)
    y = np.divide(q, q_bases.take(i))
    np.log(y, out=y)
    H = np.multiply(m.take(i), y)
    np.expm1(H, out=H)
    H *= _C_EXP.take(i)
    y *= _C_LIN.take(i)
    H += y
    H += _HB.take(i)
    np.clip(H, H_MIN, H_MAX, out=H)
    H[~inside] = np.nan
    return shaped(H, shape)


#: Standard pressure at H_MAX, the lowest pressure the model covers [Pa].
P_MIN = float(standard_pressure(H_MAX))
#: Standard pressure at H_MIN, the highest pressure the model covers [Pa].
P_MAX = float(standard_pressure(H_MIN))
#: Standard density at H_MAX, the lowest density the model covers [kg/m^3].
RHO_MIN = float(standard_density(H_MAX))
#: Standard density at H_MIN, the highest density the model covers [kg/m^3].
RHO_MAX = float(standard_density(H_MIN))


def pressure_altitude(p):
    r"""Pressure altitude: the geopotential altitude whose standard pressure is ``p``.

    .. math::

        H = H_b + \frac{T_b}{L}\left[\left(\frac{p}{p_b}\right)^{-R L/g_0} - 1\right]
        \ (L \ne 0), \qquad
        H = H_b - \frac{R\,T_b}{g_0}\ln\frac{p}{p_b} \ (L = 0)

    Parameters
    ----------
    p : float or array_like
        Static pressure [Pa].

    Returns
    -------
    H : np.float64 or ndarray
        Pressure altitude (geopotential) [m]; NaN where ``p`` is outside
        [``P_MIN``, ``P_MAX``], i.e. the altitude would be outside [``H_MIN``, ``H_MAX``].

    Notes
    -----
    Closed form in the layer holding ``p``, found by a binary search on the base pressures.
    The gradient form is evaluated as ``(Tb / L) expm1(-(R L / g0) ln(p / pb))``, accurate
    near the base.

    Examples
    --------
    >>> print(f"{pressure_altitude(22_632.04):.1f}")
    11000.0
    >>> pressure_altitude([101_325.0, 0.1]).tolist()
    [0.0, nan]

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993); U.S. Standard Atmosphere 1976, eqs. 33a, 33b solved for H.
    """
    return _invert(p, _PB, P_MIN, P_MAX, _M_PRESSURE)


def density_altitude(rho):
    r"""Density altitude: the geopotential altitude whose standard density is ``rho``.

    .. math::

        H = H_b + \frac{T_b}{L}\left[\left(\frac{\rho}{\rho_b}\right)^{-R L/(g_0 + R L)}
        - 1\right] \ (L \ne 0), \qquad
        H = H_b - \frac{R\,T_b}{g_0}\ln\frac{\rho}{\rho_b} \ (L = 0)

    Parameters
    ----------
    rho : float or array_like
        Density [kg/m^3].

    Returns
    -------
    H : np.float64 or ndarray
        Density altitude (geopotential) [m]; NaN where ``rho`` is outside
        [``RHO_MIN``, ``RHO_MAX``].

    Notes
    -----
    In a gradient layer ``rho / rhob = (T / Tb)^(-g0/(R L) - 1)``; the standard density falls
    monotonically with altitude, so the inverse is unique. ``rhob = pb / (R Tb)``.

    Examples
    --------
    >>> print(f"{density_altitude(1.225):.1f}")
    0.0
    >>> print(f"{density_altitude(standard_density(3_000.0)):.6f}")
    3000.000000

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993); U.S. Standard Atmosphere 1976.
    """
    return _invert(rho, _RHOB, RHO_MIN, RHO_MAX, _M_DENSITY)


def qnh_offset(qnh):
    r"""Altimeter-setting offset: the standard pressure altitude of the pressure ``qnh``.

    .. math:: H_p = H_{ind} + H(\mathrm{QNH})

    where ``H(p)`` is :func:`pressure_altitude`.

    Parameters
    ----------
    qnh : float or array_like
        Altimeter setting (QNH) [Pa].

    Returns
    -------
    offset : np.float64 or ndarray
        Pressure altitude minus indicated altitude [m]; NaN outside the model's range.

    Notes
    -----
    An altimeter shows the standard-atmosphere height from the set pressure down to the
    static pressure, ``H_ind = H(p) - H(QNH)``; hence the relation above. A QNH below
    1013.25 hPa gives a positive offset.

    Examples
    --------
    >>> print(f"{qnh_offset(101_325.0):.1f}")
    0.0
    >>> print(f"{qnh_offset(100_000.0):.1f}")
    110.9

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), pressure-altitude relation.
    """
    return pressure_altitude(qnh)


# --------------------------------------------------------------------------------------------
# Off-standard days
# --------------------------------------------------------------------------------------------

def temperature_from_deviation(H, dT, T_std=None):
    """Temperature on a day with ISA deviation ``dT``: standard temperature plus ``dT``.

    Parameters
    ----------
    H : float or array_like
        Pressure altitude (geopotential) [m]; callers check the range.
    dT : float or array_like
        ISA deviation [K].
    T_std : float or array_like, optional
        The standard temperature at ``H`` when the caller has it already [K] (the layers are then not
        evaluated again).

    Returns
    -------
    T : np.float64 or ndarray
        Static temperature [K].

    Notes
    -----
    Off-standard days keep the standard pressure at a pressure altitude and shift the
    temperature; density then follows from :func:`density`.

    Examples
    --------
    >>> print(f"{temperature_from_deviation(0.0, 10.0):.2f}")
    298.15

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993).
    """
    return np.add(standard_temperature(H) if T_std is None else T_std, dT)


def pressure_level_height(H, dT, p=None, datum=None):
    r"""Geometric height of the pressure level of pressure altitude ``H`` on a day with
    ISA deviation ``dT``, above a datum: the standard-pressure level, or the level where the
    pressure is ``datum`` (mean sea level when ``datum`` is the QNH).

    The hypsometric relation stretches every layer by ``(T_std + dT) / T_std``:

    .. math::

        Z = \int_{H_d}^H \frac{T_{std}(H') + \Delta T}{T_{std}(H')}\,dH'
          = H - H_d + \Delta T \int_{H_d}^H \frac{dH'}{T_{std}(H')}, \qquad
        h = \frac{r Z}{r - Z}

    with, per layer, :math:`\int dH/T = \ln(T_{top}/T_{bottom}) / L` (gradient) or
    :math:`\Delta H / T_b` (isothermal).

    Parameters
    ----------
    H : float or array_like
        Pressure altitude (geopotential) [m]; negative below the datum. Callers check the
        range.
    dT : float or array_like
        ISA deviation, constant from the datum up [K].
    p : float or array_like, optional
        The standard pressure at ``H`` [Pa], when the caller has it already (from
        :func:`standard_state`): the layers are then not evaluated a second time.
    datum : float or array_like, optional
        Pressure at the datum [Pa], for example the QNH (whose level is mean sea level);
        default ``P0``, the standard-pressure level. ``H_d`` is its pressure altitude.

    Returns
    -------
    h : np.float64 or ndarray
        Geometric height of the pressure level above the datum [m] (above mean sea level when
        ``datum`` is the QNH); NaN where ``datum`` is outside the model's pressure range.

    Notes
    -----
    Assumptions: hydrostatic equilibrium of dry air, the day's temperature is
    ``T_std(H) + dT`` at every pressure level between the datum and ``H`` (one constant
    deviation), and the geopotential thickness ``Z`` is converted with the same nominal
    Earth radius as the standard. The layer integrals summed from the datum are exactly the
    exponent of the standard pressure, so ``int_0^H dH'/T_std = (R / g0) ln(P0 / p_std(H))``
    is how it is evaluated; from a datum of pressure ``p_d``, ``int_{H_d}^H dH'/T_std =
    (R / g0) ln(p_d / p_std(H))``. With ``dT = 0`` and no datum the result is
    ``geometric_altitude(H)`` exactly. Without a datum the height is above the
    standard-pressure level, not above mean sea level (they differ unless QNH is 1013.25 hPa).
    :func:`pressure_altitude_at_height` is the inverse.

    Examples
    --------
    >>> print(f"{pressure_level_height(3_000.0, 0.0):.2f}")
    3001.42
    >>> print(f"{pressure_level_height(3_000.0, 15.0):.1f}")
    3163.3
    >>> print(f"{pressure_level_height(3_000.0 + qnh_offset(100_000.0), 15.0, datum=100_000.0):.1f}")
    3163.7

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), hydrostatic equation; U.S. Standard Atmosphere 1976.
    """
    H = np.asarray(H, dtype=np.float64)
    if p is None:
        _, log_p, k = _temperature_log_pressure(H.reshape(-1))
        log_p += _LUT_LN_PB_P0.take(k)  # now ln(p / P0)
        log_p = shaped(log_p, H.shape)
    else:
        log_p = np.log(np.divide(p, P0))
    integral = np.divide(log_p, -_G0_R)
    if datum is None:
        return geometric_altitude(H + np.multiply(dT, integral))
    # From the datum: subtract its pressure altitude and its share of the integral.
    integral = integral + np.divide(np.log(np.divide(datum, P0)), _G0_R)
    return geometric_altitude(H - pressure_altitude(datum) + np.multiply(dT, integral))


#: Iteration cap of :func:`pressure_altitude_at_height` (safeguarded Newton; it converges in 3 to 6
#: steps, bisection steps only where a Newton step leaves the bracket).
HEIGHT_MAX_ITER = 100
#: Convergence tolerance of that solve: a Newton step below ``HEIGHT_RTOL |H|`` or ``HEIGHT_ATOL``.
HEIGHT_RTOL = 1e-12
#: Absolute floor of the tolerance [m] (the residual's rounding is about 1e-10 m).
HEIGHT_ATOL = 1e-9


def pressure_altitude_at_height(h, dT=None, T=None, datum=None):
    r"""Pressure altitude of the pressure level at geometric height ``h`` above a datum on an
    off-standard day: the inverse of :func:`pressure_level_height`.

    Solves for ``H``

    .. math::

        \frac{r\,h}{r + h} = H - H_d + \Delta T(H)\,\frac{R}{g_0}\ln\frac{p_d}{p_{std}(H)},
        \qquad \Delta T(H) = \Delta T \ \text{or} \ T - T_{std}(H)

    Parameters
    ----------
    h : float or array_like
        Geometric height above the datum [m].
    dT : float or array_like, optional
        ISA deviation, constant from the datum up [K].
    T : float or array_like, optional
        Instead of ``dT``: the temperature at the pressure level sought [K]; the deviation is
        then ``T - T_std(H)`` at that level, as when the forward relation is given ``T``.
        Neither: a standard day.
    datum : float or array_like, optional
        Pressure at the datum [Pa] (the QNH for a height above mean sea level); default
        ``P0``.

    Returns
    -------
    H : np.float64 or ndarray
        Pressure altitude (geopotential) [m]; NaN where it would lie outside
        [``H_MIN``, ``H_MAX``] or the datum outside the model's pressure range.

    Notes
    -----
    The right-hand side is :func:`pressure_level_height`'s geopotential thickness ``Z``, so
    ``pressure_level_height(pressure_altitude_at_height(h, dT), dT) == h`` to rounding, and with
    ``T`` given the same holds with ``dT = T - standard_temperature(H)``. It increases
    monotonically with ``H`` (its derivative is ``T / T_std`` for a given deviation, and
    ``T / T_std - L (R/g0) ln(p_d / p_std)`` for a given temperature, positive in the model's
    range for deviations within +-100 K), so the root is unique. Newton's method runs on all
    points at once inside the bracket [``H_MIN``, ``H_MAX``], bisecting where a step would leave
    it; points not converged after ``HEIGHT_MAX_ITER`` steps are NaN. On a standard day without
    a datum this is :func:`geopotential_altitude`.

    Examples
    --------
    >>> print(f"{pressure_altitude_at_height(3163.28, 15.0):.2f}")
    3000.00
    >>> H = pressure_altitude_at_height(10_000.0, 20.0)
    >>> print(f"{H:.1f} {pressure_level_height(H, 20.0):.6f}")
    9263.1 10000.000000

    References
    ----------
    .. [1] ICAO Doc 7488/3 (1993), hydrostatic equation; U.S. Standard Atmosphere 1976, eqs. 18
       and 33.
    """
    if dT is not None and T is not None:
        raise ValueError("give at most one of dT and T")
    given_T = T is not None
    arrays = [np.asarray(h, dtype=np.float64),
              np.asarray(0.0 if dT is None and T is None else (T if given_T else dT), dtype=np.float64),
              np.asarray(P0 if datum is None else datum, dtype=np.float64)]
    h, deviation, p_d = np.broadcast_arrays(*arrays)
    shape = h.shape
    h, deviation, p_d = (x.reshape(-1).copy() for x in (h, deviation, p_d))
    Z_target = geopotential_altitude(h)
    if datum is None and not given_T and not deviation.any():
        # A standard day from the standard datum: the root is the geopotential altitude itself, where the
        # iteration below starts and stops at once (its residual there is exactly 0), clipped to the range
        # within the slack; the same numbers without evaluating the atmosphere three times.
        slack = np.maximum(HEIGHT_RTOL * np.abs(Z_target), HEIGHT_ATOL)
        H = np.clip(Z_target + 0.0, H_MIN, H_MAX)  # + 0.0 as below: -0.0 becomes 0.0
        H[~((H_MIN - Z_target <= slack) & (H_MAX - Z_target >= -slack))] = np.nan
        return H[0] if not shape else H.reshape(shape)
    H_d = pressure_altitude(p_d) if datum is not None else np.zeros_like(h)
    log_p_d = np.log(p_d)

    def residual(H):
        T_std, p = standard_state(H)
        integral = (log_p_d - np.log(p)) / _G0_R  # int_{H_d}^{H} dH' / T_std  [m/K]
        dev = deviation - T_std if given_T else deviation
        slope = 1.0 + dev / T_std
        if given_T:
            layer = np.clip(np.searchsorted(_HB, H, side="right") - 1, 0, len(_HB) - 1)
            slope = slope - _L.take(layer) * integral
        return H - H_d + dev * integral - Z_target, slope

    lo = np.full_like(h, H_MIN)
    hi = np.full_like(h, H_MAX)
    f_lo, _ = residual(lo)
    f_hi, _ = residual(hi)
    slack = np.maximum(HEIGHT_RTOL * np.abs(Z_target), HEIGHT_ATOL)  # rounding at the range's ends
    outside = ~((f_lo <= slack) & (f_hi >= -slack))  # also NaN inputs
    # Start from the standard-day relation, inside the bracket.
    H = np.clip(Z_target + np.where(np.isfinite(H_d), H_d, 0.0), H_MIN, H_MAX)
    H[outside] = 0.0
    done = outside.copy()
    for _ in range(HEIGHT_MAX_ITER):
        f, slope = residual(H)
        lo = np.where(f < 0.0, H, lo)
        hi = np.where(f > 0.0, H, hi)
        H_next = H - f / slope
        bisect = ~((H_next >= lo) & (H_next <= hi))
        H_next = np.where(bisect, 0.5 * (lo + hi), H_next)
        H_next = np.where(f == 0.0, H, H_next)
        step = np.abs(H_next - H)
        H = np.where(done, H, H_next)
        done |= step <= np.maximum(HEIGHT_RTOL * np.abs(H), HEIGHT_ATOL)
        if done.all():
            break
    H[outside | ~done] = np.nan
    return H[0] if not shape else H.reshape(shape)
