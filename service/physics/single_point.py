"""Single-point twins of array relations: the same formulas on one Python float, written once here.

For one point NumPy's per-call overhead costs more than the arithmetic, and a single-point request is
what an EFB sends most: these twins save about a tenth of such a request (measured in-process with and
without them, alternating rounds). The array function dispatches here when every argument is one number
(:func:`is_one`); tests/test_physics_single_point.py checks that each twin agrees with its array function
to 1e-15 (relative) across its domain. They use the array modules' own constants and tables.

>>> T, p = standard_state(11_000.0)
>>> print(f"{T:.2f} K, {p:.1f} Pa")
216.65 K, 22632.0 Pa
"""

from __future__ import annotations

import math
import sys

import numpy as np

# The array modules import this one and use it while they load (atmosphere's own constants): each twin
# takes its module from sys.modules when called (dictionary lookups, no Python call).
_AIRSPEED, _ATMOSPHERE = __name__.replace("single_point", "airspeed"), __name__.replace("single_point", "atmosphere")


def is_one(*xs) -> bool:
    """True when every argument is one number (the single-point path: plain Python floats)."""
    return all(type(x) is float or type(x) is np.float64 for x in xs)


def ratio_from_mach(M: float) -> float:
    """airspeed._ratio_from_mach for one float: qc/p from the isentropic or the Rayleigh pitot relation."""
    _asp = sys.modules[_AIRSPEED]
    if not M >= 0.0:
        return math.nan
    M2 = M * M
    if M > 1.0:
        return _asp._K * M2**_asp._E / (_asp._C * M2 - 1.0) ** (_asp._E - 1.0) - 1.0
    return math.expm1(_asp._E * math.log1p(_asp._HALF_GM1 * M2))


def mach_from_ratio(r: float) -> float:
    """airspeed._mach_from_ratio for one float (the same closed form and Newton iteration)."""
    _asp = sys.modules[_AIRSPEED]
    if not (r >= 0.0 and r < math.inf):
        return math.nan
    if r > _asp._RATIO_SONIC:
        return newton_supersonic(r)
    return math.sqrt(math.expm1(math.log1p(r) / _asp._E) / _asp._HALF_GM1)


def newton_supersonic(r: float) -> float:
    """airspeed._newton_supersonic for one float (same start, step, clamp, tolerance and cap)."""
    _asp = sys.modules[_AIRSPEED]
    target = math.log1p(r) - _asp._LN_K
    M = max(math.sqrt((1.0 + r) / _asp._ASYMPTOTE), 1.0)
    for _ in range(_asp.NEWTON_MAX_ITER):
        M_new = max(M - _asp._newton_step(M, target, math.log), 1.0)
        if abs(M_new - M) <= _asp.NEWTON_RTOL * M_new:
            return M_new
        M = M_new
    return math.nan


def standard_state(H: float) -> tuple[np.float64, np.float64]:
    """atmosphere.standard_state for one point: the same layer formula in plain Python."""
    _atm = sys.modules[_ATMOSPHERE]
    if H != H:
        return np.float64(np.nan), np.float64(np.nan)
    k = min(max(int((H - _atm.H_MIN) / _atm._LUT_STEP), 0), int(_atm._LUT_LAST))
    hb, tb, lapse, pb, k_log, k_lin = _atm._SCALAR_LAYERS[k]
    dH = H - hb
    T = tb + lapse * dH
    if T <= 0.0:
        return np.float64(T), np.float64(np.nan)
    return np.float64(T), np.float64(pb * math.exp(k_log * math.log(T / tb) + k_lin * dH))
