"""Contracts every physics function keeps, whatever its formula (the modules' docstrings state them):

- "a scalar or an array of any shape": Python ints and lists of ints give the same float64 results as floats;
- values that do not exist are NaN, returned quietly (no RuntimeWarning: the service turns warnings into log noise
  and the suite into errors), on the single-point path and the array path.

Expected values come from the independent reference (tests/reference.py) where a value is checked.
"""

import math
import warnings

import numpy as np
import pytest

from service.physics import airspeed as asp
from service.physics import altimetry, buffet, drag, humidity, lift, properties, schedule, turn, wing
from service.physics import atmosphere as atm
from service.physics import total_temperature as tat
from tests import reference as ref


# Keyword-only arguments and fixed tables, as functions of the arguments the test varies.
def turn_by_bank(tas, bank_angle):
    return turn.level_turn(tas, bank_angle=bank_angle)


def turn_by_load_factor(tas, load_factor):
    return turn.level_turn(tas, load_factor=load_factor)


def turn_by_rate(tas, turn_rate):
    return turn.level_turn(tas, turn_rate=turn_rate)


def aerodrome_by_qnh(elevation, qnh):
    return altimetry.pressure_altitude_of_aerodrome(elevation, qnh=qnh)


def aerodrome_by_qfe(elevation, qfe):
    return altimetry.pressure_altitude_of_aerodrome(elevation, qfe=qfe)


CALIBRATION_IAS, CALIBRATION_CAS = (50, 100), (52, 101)  # a calibration table of whole numbers [m/s]


def cas_by_calibration(ias):
    return asp.ias_to_cas(ias, CALIBRATION_IAS, CALIBRATION_CAS)


def ias_by_calibration(cas):
    return asp.cas_to_ias(cas, CALIBRATION_IAS, CALIBRATION_CAS)


BUFFET_MACH, BUFFET_CL = (1, 2), (2, 1)  # a table of whole numbers: Mach 1 to 2, CL 2 to 1


def buffet_cl_at(mach):
    return buffet.buffet_cl(mach, BUFFET_MACH, BUFFET_CL)


def buffet_margins_at(weight, wing_area, mach, p, margin):
    return buffet.buffet_margins(weight, wing_area, mach, p, BUFFET_MACH, BUFFET_CL, margin)

#: (function, integral arguments): every public relation with arguments that are whole numbers.
INTEGRAL = [
    (atm.geopotential_altitude, (3000,)), (atm.geometric_altitude, (3000,)), (atm.standard_state, (3000,)),
    (atm.standard_temperature, (12000,)), (atm.standard_pressure, (25000,)), (atm.standard_density, (40000,)),
    (atm.density, (90000, 280)), (atm.speed_of_sound, (250,)), (atm.dynamic_viscosity, (250,)),
    (atm.kinematic_viscosity, (250, 1)), (atm.ratios, (50000, 250, 1)), (atm.pressure_altitude, (50000,)),
    (atm.density_altitude, (1,)), (atm.qnh_offset, (99000,)), (atm.temperature_from_deviation, (3000, 15)),
    (atm.pressure_level_height, (3000, 15)),
    (asp.impact_pressure_from_mach, (2, 30000)), (asp.mach_from_impact_pressure, (40000, 30000)),
    (asp.impact_pressure_from_cas, (150,)), (asp.cas_from_impact_pressure, (20000,)),
    (asp.mach_from_cas, (150, 30000)), (asp.cas_from_mach, (2, 30000)), (asp.tas_from_mach, (2, 250)),
    (asp.mach_from_tas, (300, 250)), (asp.eas_from_tas, (200, 1)), (asp.tas_from_eas, (200, 1)),
    (asp.dynamic_pressure, (1, 30000)), (asp.crossover_pressure, (150, 1)), (asp.crossover_altitude, (150, 1)),
    (lift.load_factor_from_bank, (1,)), (lift.bank_from_load_factor, (2,)),
    (lift.lift_coefficient, (200000, 2, 5000, 60)), (lift.required_dynamic_pressure, (200000, 2, 60, 1)),
    (lift.weight_supported, (5000, 60, 1, 2)), (lift.wing_area_required, (200000, 2, 5000, 1)),
    (lift.load_factor_supported, (5000, 60, 1, 200000)), (lift.eas_from_dynamic_pressure, (5000,)),
    (lift.dynamic_pressure_from_eas, (90,)), (lift.pressure_for_mach, (5000, 1)), (lift.density_for_tas, (5000, 90)),
    (lift.pressure_for_density, (1, 250)), (lift.pressure_altitude_for_density, (1, 10)),
    (lift.pressure_altitude_for_cas, (5000, 90)), (lift.stall_eas, (200000, 60, 2, 2)),
    (lift.scale_stall_eas, (50, 180000, 200000, 2)), (lift.stall_load_factor, (90, 60)), (lift.cl_fraction, (2,)),
    (wing.lift_slope, (8, 0, 0, 1)), (wing.kappa_from_section_slope, (6,)), (wing.cl_from_angle, (1, 5, 0)),
    (wing.angle_from_cl, (1, 5, 0)),
    (drag.induced_drag_factor, (11, 1)), (drag.drag_coefficient, (1, 0, 1)), (drag.lift_to_drag, (1, 1, 1)),
    (drag.aerodynamic_force, (5000, 60, 1)), (drag.power_required, (10000, 100)), (drag.minimum_drag_cl, (1, 4)),
    (drag.minimum_power_cl, (3, 1)), (drag.max_lift_to_drag, (1, 4)), (drag.glide_distance, (3000, 15)),
    (drag.flight_condition, (200000, 60, 5000, 90, 1, 1)), (drag.level_condition, (200000, 60, 1, 1, 1, 1)),
    (drag.minimum_drag, (200000, 60, 1, 1, 1)), (drag.minimum_power, (200000, 60, 1, 1, 1)),
    (drag.best_glide, (200000, 60, 1, 1, 1)),
    (humidity.saturation_vapour_pressure, (293,)), (humidity.vapour_pressure_from_dew_point, (283,)),
    (humidity.vapour_pressure_from_relative_humidity, (293, 1)), (humidity.virtual_temperature, (303, 4245, 101325)),
    (humidity.moist_air_density, (101325, 303, 4245)),
    (tat.total_air_temperature, (216, 1)), (tat.total_air_temperature, (216, 1, 1)),
    (tat.static_temperature_from_mach, (244, 1)), (tat.static_temperature_from_mach, (244, 1, 1)),
    (tat.ram_rise, (250,)), (tat.ram_rise, (250, 1)), (tat.static_temperature_from_tas, (250, 250)),
    (tat.static_temperature_from_tas, (250, 250, 1)),
    (properties.gravity, (10000,)), (properties.number_density, (101325, 288)),
    (properties.mean_particle_speed, (288,)),
    (properties.mean_free_path, (101325, 288)), (properties.collision_frequency, (101325, 288)),
    (properties.pressure_scale_height, (288, 10)), (properties.thermal_conductivity, (288,)),
    (altimetry.qfe_from_qnh, (500, 101325)), (altimetry.qnh_from_qfe, (500, 95000)),
    (altimetry.aerodrome_isa_deviation, (500, 280)), (altimetry.temperature_correction, (300, 0, 263)),
    (aerodrome_by_qnh, (500, 101325)), (aerodrome_by_qfe, (500, 95000)),
    (turn_by_bank, (100, 1)), (turn_by_load_factor, (100, 2)), (turn_by_rate, (100, 1)),
    (buffet_cl_at, (1,)), (buffet_margins_at, (200000, 60, 1, 30000, 1)),
    (schedule.limited_speed_schedule, (150, 1, 30000, 250, 1000, 128, 3048)),
    (cas_by_calibration, (75,)), (ias_by_calibration, (75,)),
]


def _floats(args):
    return tuple(float(a) for a in args)


def _flat(result):
    parts = result if isinstance(result, tuple) else (result,)
    return [np.asarray(p) for p in parts]


@pytest.mark.parametrize(("fn", "args"), INTEGRAL, ids=[f.__module__.rsplit(".", 1)[1] + "." + f.__name__
                                                        for f, _ in INTEGRAL])
def test_int_inputs_give_the_float_results(fn, args):
    expected = _flat(fn(*_floats(args)))
    for given in (args, tuple([a, a] for a in args), tuple(np.array([a, a]) for a in args)):
        got = _flat(fn(*given))
        assert len(got) == len(expected)
        for g, e in zip(got, expected, strict=True):
            # float64, or what the float arguments give (an index: schedule's governing)
            assert g.dtype == e.dtype and e.dtype in (np.float64, np.int64), (fn.__name__, g.dtype, e.dtype)
            np.testing.assert_allclose(g.reshape(-1), np.broadcast_to(e, g.shape).reshape(-1), rtol=1e-15)


def test_int_inputs_check_a_value():
    # One value by the independent reference, so the comparison above is not of two wrong answers.
    assert asp.tas_from_mach(2, 250) == pytest.approx(2 * math.sqrt(ref.KAPPA * ref.R * 250), rel=1e-15)
    assert lift.pressure_for_density(1, 250) == pytest.approx(ref.R * 250, rel=1e-15)
    assert lift.cl_fraction(2) == 0.25 and lift.stall_load_factor(90, 60) == 2.25


#: (function, arguments where the value does not exist): the result is NaN, without a warning.
NO_VALUE = [
    (atm.pressure_altitude, (0.01,)), (atm.pressure_altitude, (-5.0,)), (atm.density_altitude, (0.0,)),
    (atm.density_altitude, (10.0,)), (atm.qnh_offset, (1.0e6,)),
    (asp.mach_from_impact_pressure, (-1.0, 30000.0)), (asp.impact_pressure_from_mach, (-0.5, 30000.0)),
    (asp.cas_from_impact_pressure, (-1.0,)), (asp.impact_pressure_from_cas, (-1.0,)),
    (asp.crossover_altitude, (0.5, 0.9)), (asp.crossover_pressure, (100.0, 0.0)),
    (lift.bank_from_load_factor, (0.5,)), (lift.eas_from_dynamic_pressure, (-1.0,)),
    (lift.scale_stall_eas, (50.0, -180000.0, 200000.0, 1.0)), (lift.pressure_altitude_for_density, (10.0, 0.0)),
    (lift.pressure_altitude_for_density, (1.0, -200.0)), (lift.pressure_altitude_for_cas, (1.0e7, 50.0)),
    (wing.lift_slope, (8.0, 0.0, 1.0, 1.0)), (wing.lift_slope, (8.0, 0.0, 1.5, 1.0)),
    (drag.minimum_drag_cl, (-0.02, 0.04)), (drag.minimum_power_cl, (0.02, -0.04)),
    (drag.max_lift_to_drag, (-0.02, 0.04)),
    (lift.bank_from_load_factor, (0.0,)),  # 1 / n divides by zero where the value does not exist
    (lift.pressure_altitude_for_cas, (1.0e5, math.inf)),  # no altitude for an infinite speed
    (drag.lift_to_drag, (0.0, 0.0, 0.04)),  # CL / CD = 0 / 0
    (asp.mach_from_impact_pressure, (1000.0, 0.0)),  # no Mach number without a static pressure
]


@pytest.mark.parametrize(("fn", "args"), NO_VALUE, ids=[f"{f.__name__}{a}" for f, a in NO_VALUE])
def test_no_value_is_a_quiet_nan(fn, args):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        single = fn(*args)
        array = fn(*(np.array([a, a]) for a in args))
    assert np.isnan(single) and np.all(np.isnan(array)), (single, array)


#: (function, arguments at the edge of its closed form, output, the limit the closed form gives there): infinite
#: values come quietly too (no RuntimeWarning), on both paths.
LIMITS = [
    (drag.induced_drag_factor, (0.0, 0.8), None, math.inf),  # k = 1 / (pi A e), A -> 0
    (drag.lift_to_drag, (1.0, -0.04, 0.04), None, math.inf),  # CL / (CD0 + k CL^2), the denominator 0
    (drag.minimum_power_cl, (0.02, 0.0), None, math.inf),  # sqrt(3 CD0 / k), k -> 0
    (drag.max_lift_to_drag, (0.0, 0.04), None, math.inf),  # 1 / (2 sqrt(CD0 k)), CD0 -> 0
    (drag.flight_condition, (200000.0, 60.0, 0.0, 0.0, 0.02, 0.04), "cl", math.inf),  # CL = n W / (q S), q = 0
    (drag.flight_condition, (1e300, 60.0, 1e-300, 1.0, 0.02, 0.04), "cl", math.inf),  # beyond the float range
    # gamma = arctan(1 / (L/D)): an infinite CD0 gives L/D = 0, a vertical glide
    (drag.best_glide, (200000.0, 60.0, math.inf, 0.04, 1.2), "glide_angle", math.pi / 2),
]


@pytest.mark.parametrize(("fn", "args", "field", "limit"), LIMITS, ids=[f"{f.__name__}{a}" for f, a, _, _ in LIMITS])
def test_limits_are_quiet(fn, args, field, limit):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        single = fn(*args)
        array = fn(*(np.array([a, a]) for a in args))
    if field is not None:
        single, array = getattr(single, field), getattr(array, field)
    assert single == limit and np.all(array == limit), (single, array)


def test_documented_defaults():
    # Defaults the docstrings state: zero-lift angle 0, load factor 1, airfoil efficiency kappa 1.
    assert wing.cl_from_angle(0.1, 5.0) == pytest.approx(0.5, rel=1e-15)
    assert wing.angle_from_cl(0.5, 5.0) == pytest.approx(0.1, rel=1e-15)
    assert wing.lift_slope(6.0, 0.0, 0.0) == pytest.approx(ref.datcom_slope(6.0, 0.0, 0.0), rel=1e-14)
    assert lift.stall_eas(200000.0, 60.0, 2.0) == pytest.approx(ref.stall_eas(200000.0, 60.0, 2.0), rel=1e-14)
    assert lift.scale_stall_eas(50.0, 180000.0, 200000.0) == pytest.approx(50.0 * math.sqrt(0.9), rel=1e-15)


@pytest.mark.parametrize(("ias", "cas", "message"), [
    ([50.0, math.nan, 70.0], [52.0, 60.0, 71.0], "calibration table_ias must be finite (row 1: nan)"),
    ([50.0, 60.0], [52.0, math.inf], "calibration table_cas must be finite (row 1: inf)"),
    ([50.0, 0.0], [52.0, 60.0], "calibration table_ias must be positive (row 1: 0)"),
    ([50.0, 60.0, 70.0], [52.0, 60.0], "calibration table_ias and table_cas must have the same length, got 3 and 2"),
    ([50.0], [52.0], "calibration table_ias needs at least 2 rows, got 1"),
    ([50.0, 60.0], [52.0, 51.0], "calibration table_cas must be strictly increasing (row 1: 51 after 52)"),
])
def test_calibration_table_messages(ias, cas, message):
    # The messages name the column and the row (the API turns them into its own wording, so they are a contract).
    with pytest.raises(ValueError) as err:
        asp.check_calibration(ias, cas)
    assert str(err.value) == message
