"""The single-point twins (service.physics.single_point) agree with their array functions to 1e-15.

The array functions are the reference here (their own tests check them against the standards); each twin is
called directly on Python floats and its array function on a 1-D array of many points (the array path).
"""

from __future__ import annotations

import numpy as np
import pytest

from service.physics import airspeed as asp
from service.physics import atmosphere as atm
from service.physics import single_point as one
from service.physics.constants import H_MAX, H_MIN

TOLERANCE = 1e-15  # relative
#: The supersonic inverse is a Newton iteration with logarithms: NumPy picks its log kernel by CPU (SIMD paths),
#: math.log is the C library's, and the two differ in the last bit on some machines; the iterations then stop
#: a few units in the last place apart (1.8e-15 seen). The closed forms keep 1e-15.
NEWTON_TOLERANCE = 1e-14


def _agree(twin_values, array_values, rtol=TOLERANCE):
    np.testing.assert_allclose(np.array(twin_values, dtype=float), array_values, rtol=rtol, atol=0.0)


def test_standard_state():
    H = np.concatenate([np.linspace(H_MIN, H_MAX, 4001), [0.0, 11_000.0, 20_000.0, 32_000.0, 47_000.0]])
    T, p = atm.standard_state(H)
    twins = [one.standard_state(float(h)) for h in H]
    _agree([t for t, _ in twins], T)
    _agree([q for _, q in twins], p)


@pytest.mark.parametrize("mach", [np.linspace(0.0, 1.0, 2001), np.linspace(1.0, 5.0, 2001)], ids=["sub", "super"])
def test_ratio_from_mach(mach):
    _agree([one.ratio_from_mach(float(m)) for m in mach], asp._ratio_from_mach(mach))


@pytest.mark.parametrize("ratio", [np.linspace(0.0, 0.89, 2001), np.linspace(0.9, 40.0, 2001)], ids=["sub", "super"])
def test_mach_from_ratio(ratio):
    _agree([one.mach_from_ratio(float(r)) for r in ratio], asp._mach_from_ratio(ratio),
           rtol=NEWTON_TOLERANCE if ratio[0] > asp._RATIO_SONIC else TOLERANCE)


def test_the_public_functions_take_the_twins_for_one_point():
    """One float in: the twin's value exactly (the dispatch); the same as the array path to 1e-15."""
    cas, p = 140.0, 30_000.0
    assert asp.impact_pressure_from_cas(cas) == np.float64(one.ratio_from_mach(cas / asp.A0) * asp.P0)
    _agree([asp.impact_pressure_from_cas(cas)], asp.impact_pressure_from_cas(np.array([cas, cas]))[:1])
    _agree([asp.mach_from_impact_pressure(1e4, p)], asp.mach_from_impact_pressure(np.array([1e4, 1e4]), p)[:1])
