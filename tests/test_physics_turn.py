"""The level coordinated turn: ICAO PANS-OPS formulas, closed forms, the trade's rules of thumb.

Unit constants are typed here (exact definitions), not imported from the service.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.physics.turn import STANDARD_RATE, level_turn

KT = 1852.0 / 3600.0  # m/s, exact
NM = 1852.0  # m, exact
G = 9.80665  # m/s^2, standard acceleration of free fall (exact by definition)

SHAPES = [(), (3,), (2, 3)]


def _filled(value, shape):
    """``value`` as a scalar for shape (), else an array of that shape."""
    return value if shape == () else np.full(shape, value)


# --- ICAO Doc 8168 (PANS-OPS) Volume II, turn area construction (formulas from memory) ---------------------------
# Rate of turn R [deg/s] = 3431 tan(bank) / (pi V), radius r [NM] = V / (20 pi R), V the TAS in kt.
# 3431 / pi = 1092.1 against the exact g / kt * 180 / pi = 1092.2: tolerance 1e-4 relative.
PANS_OPS_CASES = [(25.0, 150.0), (25.0, 240.0), (15.0, 120.0), (30.0, 200.0), (45.0, 300.0)]


@pytest.mark.parametrize(("bank_deg", "tas_kt"), PANS_OPS_CASES)
def test_pans_ops_rate_and_radius(bank_deg, tas_kt):
    t = level_turn(tas_kt * KT, bank_angle=math.radians(bank_deg))
    rate = 3431.0 * math.tan(math.radians(bank_deg)) / (math.pi * tas_kt)
    np.testing.assert_allclose(np.degrees(t.turn_rate), rate, rtol=1e-4)
    np.testing.assert_allclose(t.radius / NM, tas_kt / (20.0 * math.pi * rate), rtol=1e-4)


def test_standard_rate_is_a_two_minute_turn():
    # ICAO Doc 8168 Volume II: rate of turn 3 deg/s; a full turn at that rate takes 120 s at any speed.
    assert math.degrees(STANDARD_RATE) == pytest.approx(3.0, rel=1e-15)
    t = level_turn(np.array([90.0, 150.0, 250.0, 450.0]) * KT, turn_rate=STANDARD_RATE)
    np.testing.assert_allclose(t.time_for_360, 120.0, rtol=1e-13)
    # Radius at rate one: r [NM] = V / (20 pi 3) = V / 188.5 (PANS-OPS, from memory, as above).
    np.testing.assert_allclose(t.radius / NM, np.array([90.0, 150.0, 250.0, 450.0]) / (60.0 * math.pi), rtol=1e-12)


@pytest.mark.parametrize("tas_kt", [100.0, 120.0, 150.0, 180.0, 200.0])
def test_rule_of_thumb_standard_rate_bank(tas_kt):
    # Common practice, no source: the bank for a standard-rate turn is about TAS/10 + 7 deg, or about 15 % of
    # the TAS in kt; both hold within 2 deg from 100 to 200 kt.
    bank = np.degrees(level_turn(tas_kt * KT, turn_rate=STANDARD_RATE).bank_angle)
    assert abs(bank - (tas_kt / 10.0 + 7.0)) < 2.0
    assert abs(bank - 0.15 * tas_kt) < 2.0


@pytest.mark.parametrize(
    ("bank_deg", "n"),
    # FAA Pilot's Handbook of Aeronautical Knowledge (FAA-H-8083-25), the load factor chart, from memory:
    # 30 deg 1.154, 45 deg 1.414, 60 deg 2.000, 70 deg 2.923 (read as printed; tolerance 0.2 %).
    [(30.0, 1.154), (45.0, 1.414), (60.0, 2.0), (70.0, 2.923)],
)
def test_faa_load_factor_chart(bank_deg, n):
    t = level_turn(100.0, bank_angle=math.radians(bank_deg))
    np.testing.assert_allclose(t.load_factor, n, rtol=2e-3)
    back = level_turn(100.0, load_factor=t.load_factor)
    np.testing.assert_allclose(np.degrees(back.bank_angle), bank_deg, rtol=1e-12)


def test_closed_forms_60_deg_at_100_m_s():
    # Hand computation: tan 60 = 1.7320508; omega = 9.80665 * 1.7320508 / 100 = 0.1698562 rad/s;
    # R = 100 / omega = 588.7334 m; t = 2 pi / omega = 36.9912 s; n = 2.
    t = level_turn(100.0, bank_angle=math.radians(60.0))
    np.testing.assert_allclose(t.turn_rate, 0.1698562, rtol=1e-6)
    np.testing.assert_allclose(t.radius, 588.7334, rtol=1e-6)
    np.testing.assert_allclose(t.time_for_360, 36.9912, rtol=1e-6)
    np.testing.assert_allclose(t.load_factor, 2.0, rtol=1e-14)


@settings(max_examples=60, deadline=None)
@given(tas=st.floats(20.0, 400.0), bank=st.floats(0.01, 1.5))
def test_three_inputs_agree(tas, bank):
    # The same turn from its bank, its load factor and its rate; radius * rate = V; n cos(bank) = 1.
    a = level_turn(tas, bank_angle=bank)
    b = level_turn(tas, load_factor=a.load_factor)
    c = level_turn(tas, turn_rate=a.turn_rate)
    for x in (b, c):
        np.testing.assert_allclose(np.array(x), np.array(a), rtol=1e-9)
    np.testing.assert_allclose(a.radius * a.turn_rate, tas, rtol=1e-12)
    np.testing.assert_allclose(a.load_factor * math.cos(bank), 1.0, rtol=1e-12)
    np.testing.assert_allclose(a.radius, tas**2 / (G * math.tan(bank)), rtol=1e-12)


def test_no_turn_and_impossible_turns():
    # Wings level: no radius, no time for a full turn; a load factor below 1, a bank of 90 deg or more and a
    # negative rate have no level turn at all.
    level = level_turn(100.0, load_factor=1.0)
    assert level.bank_angle == 0.0 and level.turn_rate == 0.0
    assert np.isnan(level.radius) and np.isnan(level.time_for_360)
    for t in (level_turn(100.0, load_factor=0.9), level_turn(100.0, bank_angle=math.pi / 2),
              level_turn(100.0, turn_rate=-0.1)):
        assert all(np.isnan(x) for x in t)
    with pytest.raises(ValueError, match="exactly one"):
        level_turn(100.0, bank_angle=0.5, load_factor=1.2)
    with pytest.raises(ValueError, match="exactly one"):
        level_turn(100.0)


@pytest.mark.parametrize("shape", SHAPES)
def test_shapes(shape):
    t = level_turn(_filled(120.0, shape), turn_rate=STANDARD_RATE)
    for value in t:
        assert np.shape(value) == shape
    grid = level_turn([[60.0], [120.0]], bank_angle=np.radians([10.0, 20.0, 30.0]))
    assert grid.radius.shape == (2, 3)
