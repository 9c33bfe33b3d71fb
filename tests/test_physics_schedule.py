"""Schedules as flown: the CAS/Mach schedule under a speed limit below an altitude, against aerocalc3.

Unit constants are typed here (exact definitions), not imported from the service.
"""

import numpy as np
import pytest
from aerocalc3 import airspeed as ac
from aerocalc3 import std_atm

from service.physics.schedule import GOVERNING, limited_speed_schedule

KT = 1852.0 / 3600.0  # m/s, exact
FT = 0.3048  # m, exact
# aerocalc3's constants differ from ICAO's in the 7th digit (see tests/test_physics_airspeed.py): 5e-6 relative.
AEROCALC_RTOL = 5e-6

# The schedule of the example: 290 kt / M0.76, and the common limit of 250 kt below 10 000 ft
# (ICAO Annex 11, appendix 4: 250 kt IAS below 3 050 m (10 000 ft) AMSL in most airspace classes).
LEVELS_FT = np.array([1_000.0, 5_000.0, 9_999.0, 10_000.0, 15_000.0, 25_000.0, 35_000.0])


def _standard(levels_ft):
    """Standard pressure [Pa] and temperature [K] at pressure altitudes in ft, from aerocalc3."""
    p = np.array([std_atm.alt2press(h, alt_units="ft", press_units="pa") for h in levels_ft])
    t = np.array([std_atm.alt2temp(h, alt_units="ft", temp_units="K") for h in levels_ft])
    return p, t


def _flown(cas_kt=290.0, mach=0.76, limit_kt=250.0, limit_ft=10_000.0):
    p, t = _standard(LEVELS_FT)
    return limited_speed_schedule(cas_kt * KT, mach, p, t, LEVELS_FT * FT, limit_kt * KT, limit_ft * FT)


def test_governing_below_at_and_above_the_limit_altitude():
    s = _flown()
    assert [GOVERNING[i] for i in s.governing] == ["limit", "limit", "limit", "cas", "cas", "cas", "mach"]
    np.testing.assert_allclose(s.cas[:3] / KT, 250.0, rtol=1e-13)
    np.testing.assert_allclose(s.cas[3:6] / KT, 290.0, rtol=1e-13)
    np.testing.assert_allclose(s.mach[6], 0.76, rtol=1e-13)


def test_speeds_match_aerocalc3():
    # aerocalc3 0.10 (test-only reference library): cas_alt2mach below the crossover, mach_alt2cas above it,
    # mach2tas for the TAS on a standard day.
    s = _flown()
    cas_kt = [250.0, 250.0, 250.0, 290.0, 290.0, 290.0]
    expected_mach = [ac.cas_alt2mach(c, h, speed_units="kt", alt_units="ft")
                     for c, h in zip(cas_kt, LEVELS_FT[:6], strict=True)]
    np.testing.assert_allclose(s.mach[:6], expected_mach, rtol=AEROCALC_RTOL)
    np.testing.assert_allclose(s.cas[6] / KT, ac.mach_alt2cas(0.76, 35_000.0, alt_units="ft", speed_units="kt"),
                               rtol=AEROCALC_RTOL)
    expected_tas = [ac.mach2tas(m, altitude=h, alt_units="ft", speed_units="kt")
                    for m, h in zip(s.mach, LEVELS_FT, strict=True)]
    np.testing.assert_allclose(s.tas / KT, expected_tas, rtol=AEROCALC_RTOL)


def test_crossover_matches_aerocalc3():
    # Where the limited schedule changes from CAS to Mach: aerocalc3's cas_mach2alt for 290 kt / M0.76.
    crossover_ft = ac.cas_mach2alt(290.0, 0.76, speed_units="kt", alt_units="ft")
    levels = np.array([crossover_ft - 20.0, crossover_ft + 20.0])
    p, t = _standard(levels)
    s = limited_speed_schedule(290 * KT, 0.76, p, t, levels * FT, 250 * KT, 10_000 * FT)
    assert [GOVERNING[i] for i in s.governing] == ["cas", "mach"]


def test_limit_above_the_schedule_does_not_govern():
    # A 240 kt schedule is below the 250 kt limit: the schedule's own CAS governs everywhere below the crossover.
    s = _flown(cas_kt=240.0)
    assert [GOVERNING[i] for i in s.governing[:6]] == ["cas"] * 6
    np.testing.assert_allclose(s.cas[:6] / KT, 240.0, rtol=1e-13)


def test_limit_equal_to_the_schedule_does_not_govern():
    # The docstring's rule: the limit governs where it is below the scheduled CAS. A 250 kt schedule under the
    # 250 kt limit flies its own CAS, labelled so, at the same speed.
    s = _flown(cas_kt=250.0)
    assert [GOVERNING[i] for i in s.governing[:6]] == ["cas"] * 6
    np.testing.assert_allclose(s.cas[:6] / KT, 250.0, rtol=1e-13)


def test_without_a_limit_altitude_in_reach_it_is_the_plain_schedule():
    # A limit below the lowest level applies nowhere: the same speeds as without it.
    s = _flown(limit_ft=-1_000.0)
    assert GOVERNING[s.governing[0]] == "cas"
    np.testing.assert_allclose(s.cas[0] / KT, 290.0, rtol=1e-13)


@pytest.mark.parametrize("shape", [(), (4,), (2, 2)])
def test_shapes(shape):
    p = np.full(shape, 80_000.0)
    s = limited_speed_schedule(290 * KT, 0.76, p, 280.0, np.full(shape, 2_000.0), 250 * KT, 3_048.0)
    for value in s:
        assert np.shape(value) == shape
