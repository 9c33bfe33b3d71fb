"""Wing lift-curve slope from planform geometry, and lift coefficient <-> angle of attack.

The subsonic lift-curve slope of a straight-tapered wing is the semi-empirical
relation of Helmbold, extended to swept wings by Diederich and Polhamus and
adopted by the USAF Stability and Control DATCOM:

.. math::

    C_{L_\\alpha} = \\frac{2 \\pi A}
        {2 + \\sqrt{4 + \\left(\\frac{A \\beta}{\\kappa}\\right)^2
        \\left(1 + \\frac{\\tan^2 \\Lambda_{c/2}}{\\beta^2}\\right)}},
    \\qquad \\beta = \\sqrt{1 - M^2}, \\quad \\kappa = \\frac{c_{l_\\alpha}}{2\\pi}

All angles are in radians and slopes per radian.

References
----------
1. Finck, R. D., *USAF Stability and Control DATCOM*, AFWAL-TR-83-3048, 1978,
   section 4.1.3.2 (wing lift-curve slope, subsonic).
2. Helmbold, H. B., "Der unverwundene Ellipsenflügel als tragende Wirbelfläche",
   *Jahrbuch 1942 der Deutschen Luftfahrtforschung*, 1942.
3. Polhamus, E. C., "A simple method of estimating the subsonic lift and damping
   in roll of sweptback wings", NACA TN 1862, 1949.
4. Diederich, F. W., "A plan-form parameter for correlating certain aerodynamic
   characteristics of swept wings", NACA TN 2335, 1951.
5. Jones, R. T., "Properties of low-aspect-ratio pointed wings at speeds below
   and above the speed of sound", NACA Report 835, 1946.
6. Anderson, J. D., *Aircraft Performance and Design*, WCB/McGraw-Hill, 1999,
   chapter 2 (Helmbold's equation; lift of finite wings).
"""

from __future__ import annotations

import numpy as np

from .arrays import result

__all__ = ["angle_from_cl", "cl_from_angle", "kappa_from_section_slope", "lift_slope"]

#: Thin-airfoil section lift-curve slope, 2 pi per radian [1/rad].
_THIN_AIRFOIL_SLOPE = 2.0 * np.pi


def lift_slope(aspect_ratio, sweep_half_chord, mach, kappa=1.0):
    """Subsonic lift-curve slope of a wing (DATCOM, Helmbold-Diederich-Polhamus).

    .. math::

        C_{L_\\alpha} = \\frac{2 \\pi A}
            {2 + \\sqrt{4 + \\left(\\frac{A \\beta}{\\kappa}\\right)^2
            \\left(1 + \\frac{\\tan^2 \\Lambda_{c/2}}{\\beta^2}\\right)}},
        \\qquad \\beta = \\sqrt{1 - M^2}

    Parameters
    ----------
    aspect_ratio : array_like
        Aspect ratio ``A = b^2 / S``, non-negative [-].
    sweep_half_chord : array_like
        Sweep of the half-chord line ``Lambda_c/2``, ``|Lambda| < pi/2`` [rad].
    mach : array_like
        Free-stream Mach number, ``0 <= M < 1`` [-].
    kappa : array_like, optional
        Section lift-curve slope divided by 2 pi (1 for a thin airfoil), positive;
        see :func:`kappa_from_section_slope` [-].

    Returns
    -------
    cl_alpha : ndarray or float
        Wing lift-curve slope; NaN where ``M`` is outside [0, 1), ``A < 0``,
        ``kappa <= 0`` or ``|Lambda| >= pi/2`` [1/rad].

    Notes
    -----
    Subsonic, attached flow, linear range of the lift curve; the caller checks
    ``M < 1`` (and in practice keeps below the drag-divergence Mach number, where
    the relation stops being useful well before ``M = 1``). It is computed as
    ``2 pi A / (2 + sqrt(4 + (A / kappa)^2 (beta^2 + tan^2 Lambda)))``, the same
    expression without the division by ``beta``.

    DATCOM defines ``kappa`` as the section slope at the Mach number divided by
    ``2 pi / beta``; with the section slope following Prandtl-Glauert this equals
    the low-speed section slope divided by ``2 pi``.

    Limits: as ``A -> infinity`` the slope tends to
    ``2 pi kappa / sqrt(beta^2 + tan^2 Lambda)``, i.e. the Prandtl-Glauert section
    slope ``2 pi kappa / beta`` for an unswept wing and ``2 pi kappa cos Lambda`` at
    ``M = 0``; as ``A -> 0`` it tends to the slender-wing value ``pi A / 2`` [3],
    whatever the Mach number and sweep. For ``M = 0`` and no sweep it is Helmbold's
    equation [2, 4].

    Examples
    --------
    >>> import numpy as np
    >>> print(round(float(lift_slope(6.0, 0.0, 0.0)), 4))
    4.5287
    >>> print(np.round(lift_slope(8.0, np.radians([0.0, 30.0]), [0.5, 0.8]), 4))
    [5.4571 5.6131]

    References
    ----------
    1. DATCOM section 4.1.3.2.
    2. Helmbold 1942; Polhamus, NACA TN 1862; Diederich, NACA TN 2335.
    3. Jones, NACA Report 835 (slender wings).
    4. Anderson, *Aircraft Performance and Design*, chapter 2.
    """
    A = np.asarray(aspect_ratio, dtype=float)
    sweep = np.asarray(sweep_half_chord, dtype=float)
    M = np.asarray(mach, dtype=float)
    kappa = np.asarray(kappa, dtype=float)
    valid = (M >= 0.0) & (M < 1.0) & (A >= 0.0) & (kappa > 0.0) & (np.abs(sweep) < 0.5 * np.pi)
    with np.errstate(invalid="ignore", divide="ignore"):
        beta_sq = 1.0 - M**2
        root = np.sqrt(4.0 + (A / kappa) ** 2 * (beta_sq + np.tan(sweep) ** 2))
        cl_alpha = 2.0 * np.pi * A / (2.0 + root)
    return result(np.where(valid, cl_alpha, np.nan))


def kappa_from_section_slope(a0):
    """Ratio ``kappa`` of a section lift-curve slope to the thin-airfoil value.

    .. math:: \\kappa = \\frac{a_0}{2 \\pi}

    Parameters
    ----------
    a0 : array_like
        Section (two-dimensional) lift-curve slope, low speed [1/rad].

    Returns
    -------
    kappa : ndarray or float
        ``a0 / 2 pi`` [-].

    Notes
    -----
    Thin-airfoil theory gives ``a0 = 2 pi`` per radian; real sections are a few per
    cent lower.

    Examples
    --------
    >>> import numpy as np
    >>> print(round(float(kappa_from_section_slope(2.0 * np.pi)), 12))
    1.0

    References
    ----------
    1. DATCOM section 4.1.3.2.
    """
    return result(np.asarray(a0, dtype=float) / _THIN_AIRFOIL_SLOPE)


def cl_from_angle(alpha, lift_slope, zero_lift_angle=0.0):
    """Lift coefficient at angle of attack ``alpha`` on the linear lift curve.

    .. math:: C_L = C_{L_\\alpha} (\\alpha - \\alpha_0)

    Parameters
    ----------
    alpha : array_like
        Angle of attack [rad].
    lift_slope : array_like
        Lift-curve slope [1/rad].
    zero_lift_angle : array_like, optional
        Angle of attack for zero lift ``alpha_0``, 0 by default [rad].

    Returns
    -------
    cl : ndarray or float
        Lift coefficient [-].

    Notes
    -----
    Linear range only: no stall is modelled.

    Examples
    --------
    >>> import numpy as np
    >>> print(round(float(cl_from_angle(np.radians(5.0), 2.0 * np.pi)), 4))
    0.5483

    References
    ----------
    1. Anderson, *Aircraft Performance and Design*, chapter 2.
    """
    alpha = np.asarray(alpha, dtype=float)
    alpha0 = np.asarray(zero_lift_angle, dtype=float)
    return result(np.asarray(lift_slope, dtype=float) * (alpha - alpha0))


def angle_from_cl(cl, lift_slope, zero_lift_angle=0.0):
    """Angle of attack at which the linear lift curve gives ``cl``.

    .. math:: \\alpha = \\alpha_0 + C_L / C_{L_\\alpha}

    Parameters
    ----------
    cl : array_like
        Lift coefficient [-].
    lift_slope : array_like
        Lift-curve slope, non-zero [1/rad].
    zero_lift_angle : array_like, optional
        Angle of attack for zero lift ``alpha_0``, 0 by default [rad].

    Returns
    -------
    alpha : ndarray or float
        Angle of attack [rad].

    Notes
    -----
    Inverse of :func:`cl_from_angle`; linear range only, the caller compares ``cl``
    with the maximum lift coefficient.

    Examples
    --------
    >>> import numpy as np
    >>> print(round(float(np.degrees(angle_from_cl(0.5, 5.0, np.radians(-2.0)))), 4))
    3.7296

    References
    ----------
    1. Anderson, *Aircraft Performance and Design*, chapter 2.
    """
    cl = np.asarray(cl, dtype=float)
    alpha0 = np.asarray(zero_lift_angle, dtype=float)
    return result(alpha0 + cl / np.asarray(lift_slope, dtype=float))
