"""The spec's request examples, set around our invented operator and aircraft.

Tavrenne Regional (an invented operator) flies the TQ-62 (an invented type): wing area 61 m2, aspect ratio
11, unswept, MTOW 23 000 kg, clean CLmax 1.6, a 290 kt / M0.76 climb. Its high airfield Quillon Ridge (also
invented) lies at 7,200 ft. Each endpoint's examples, taken together, give every numeric input at least once,
so that every field of the answers, the grid's `inputs` among them, has a computed example
(service.api.spec runs them through the service; nothing here is an answer).
"""

from __future__ import annotations

#: The TQ-62's airspeed calibration, IAS -> CAS [kt].
TQ62_CALIBRATION = {"ias": [120, 160, 200, 240, 280, 320], "cas": [123, 162, 201, 240, 278.5, 317], "unit": "kt"}
#: The TQ-62's wing for the lift curve: a cambered section of 0.105 per degree.
TQ62_WING = {"aspect_ratio": 11, "sweep_half_chord": 0, "airfoil_lift_slope": {"value": 0.105, "unit": "1/deg"},
              "zero_lift_angle": -2.5, "cl_max": 1.6}


def _examples(*items: tuple[str, str, dict]) -> dict:
    """OpenAPI named examples from (name, summary, request body)."""
    return {name: {"summary": summary, "value": value} for name, summary, value in items}


ATMOSPHERE = _examples(
    ("fl350-isa10", "FL350 on an ISA+10 day",
     {"altitude": {"value": 350, "unit": "FL"}, "isa_deviation": 10}),
    ("quillon-ridge-hot-day", "Density altitude at Quillon Ridge (7,200 ft) on a 32 degC day, QNH 1008 hPa, "
                              "to six significant digits",
     {"altitude": 7200, "qnh": 1008, "temperature": 32,
      "outputs": ["pressure_altitude", "density_altitude", "isa_deviation", "density"], "significant_digits": 6}),
    ("si-table", "A grid of geometric heights and ISA deviations, in SI units",
     {"altitude": {"value": [0, 3000, 6000], "unit": "m"}, "altitude_kind": "geometric", "isa_deviation": [-10, 15],
      "grid": True, "outputs": ["temperature", "pressure", "density"],
      "output_units": {"temperature": "K", "pressure": "Pa"}}),
    ("quillon-ridge-humid", "The same hot afternoon at Quillon Ridge with a dew point of 12 degC",
     {"altitude": 7200, "qnh": 1008, "temperature": 32, "dew_point": 12,
      "outputs": ["density_altitude", "density", "vapour_pressure", "virtual_temperature", "geometric_altitude"]}),
    ("humid-sea-level", "A tropical sea-level afternoon, 30 degC and 75 % relative humidity",
     {"altitude": 0, "temperature": 30, "relative_humidity": 75,
      "outputs": ["density", "density_altitude", "vapour_pressure", "virtual_temperature"]}),
    ("property-set", "The U.S. Standard Atmosphere 1976 property set (answered only when named) from sea level "
                     "to 80 km",
     {"altitude": {"value": [0, 20, 50, 80], "unit": "km"}, "altitude_kind": "geometric",
      "outputs": ["gravity", "pressure_scale_height", "number_density", "mean_particle_speed", "mean_free_path",
                  "collision_frequency", "thermal_conductivity"]}),
)

AIRSPEED = _examples(
    ("tq62-ias", "The TQ-62 at 250 kt IAS (through its calibration) at FL330, ISA+15",
     {"ias": 250, "altitude": {"value": 330, "unit": "FL"}, "isa_deviation": 15, "calibration": TQ62_CALIBRATION}),
    ("cas-fl240", "250 kt CAS at FL240 on an ISA+12 day",
     {"cas": 250, "altitude": {"value": 240, "unit": "FL"}, "isa_deviation": 12}),
    ("cruise-mach-kmh", "Two cruise Mach numbers at two levels with the outside air temperature, speeds in km/h",
     {"mach": [0.72, 0.76], "altitude": {"value": [310, 350], "unit": "FL"}, "temperature": [-42, -51],
      "outputs": ["tas", "cas", "atmosphere"], "output_units": {"speed": "km/h"}}),
    ("flight-plan-tas", "A flight plan's TAS at FL280, -38 degC, as CAS and Mach",
     {"tas": 410, "altitude": {"value": 280, "unit": "FL"}, "temperature": -38, "outputs": ["cas", "mach", "eas"]}),
    ("eas-grid", "A grid of EAS and altitudes",
     {"eas": [150, 200], "altitude": [0, 10000], "grid": True, "outputs": ["cas", "tas"]}),
    ("tat-climb", "Climbing through FL240 at 250 kt CAS: the static temperature from the probe's TAT",
     {"cas": 250, "altitude": {"value": 240, "unit": "FL"}, "total_air_temperature": -18, "recovery_factor": 0.98,
      "dew_point": -45, "outputs": ["mach", "tas", "total_air_temperature", "ram_rise", "atmosphere"]}),
    ("humid-approach", "140 kt CAS at 3000 ft on a 28 degC, 80 % humidity afternoon",
     {"cas": 140, "altitude": 3000, "temperature": 28, "relative_humidity": 80,
      "outputs": ["eas", "tas", "ram_rise", "atmosphere"]}),
)

CROSSOVER = _examples(
    ("tq62-climb-options", "Three climb CAS options of the TQ-62 against its M0.78 limit",
     {"cas": [280, 300, 320], "mach": 0.78}),
    ("grid-in-metres", "A grid of CAS and Mach numbers, altitudes in metres",
     {"cas": [280, 300], "mach": [0.74, 0.78], "grid": True, "output_units": {"altitude": "m", "pressure": "inHg"}}),
)

SCHEDULE = _examples(
    ("tq62-climb", "The TQ-62's 290 kt / M0.76 climb on an ISA+10 day",
     {"cas": 290, "mach": 0.76, "altitude": {"value": [100, 200, 250, 300, 350], "unit": "FL"}, "isa_deviation": 10}),
    ("descent-with-oat", "A M0.74 / 280 kt descent with the outside air temperature at each level",
     {"cas": 280, "mach": 0.74, "altitude": {"value": [350, 300, 250, 200], "unit": "FL"},
      "temperature": [-50, -41, -31, -20], "outputs": ["governing", "cas", "mach", "tas"]}),
    ("climb-under-250-below-10000", "The TQ-62's 290 kt / M0.76 climb with the common 250 kt below 10,000 ft",
     {"cas": 290, "mach": 0.76, "altitude": [3000, 8000, 10000, 15000, 25000, 35000], "isa_deviation": 10,
      "speed_limit": {"cas": 250, "altitude": 10000}, "outputs": ["governing", "cas", "mach", "tas"]}),
    ("humid-low-levels", "The climb's low levels on a humid day: 28 degC at 2000 ft, dew point 20 degC",
     {"cas": 250, "mach": 0.76, "altitude": 2000, "temperature": 28, "dew_point": 20,
      "outputs": ["cas", "tas", "eas"]}),
    ("humid-rh", "The same with a relative humidity of 60 %",
     {"cas": 250, "mach": 0.76, "altitude": 2000, "temperature": 28, "relative_humidity": 60,
      "outputs": ["cas", "tas", "eas"]}),
)

LIFT_SOLVE = _examples(
    ("cl-at-cruise", "The TQ-62's CL at cruise: 21 000 kg, Mach 0.45, FL250, ISA+5, with its wing's angle of attack",
     {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": 0.45, "altitude": {"value": 250, "unit": "FL"},
      "isa_deviation": 5, "wing": TQ62_WING}),
    ("speed-for-cl", "Every speed kind for CL 1.2 at 22 000 kg, 3000 ft, ISA+10",
     {"solve_for": "speed", "weight": 22000, "wing_area": 61, "cl": 1.2, "altitude": 3000, "isa_deviation": 10,
      "outputs": ["cas", "eas", "tas", "mach", "dynamic_pressure"]}),
    ("altitude-for-mach", "The pressure altitude where Mach 0.45 needs CL 0.6",
     {"solve_for": "altitude", "weight": 21000, "wing_area": 61, "mach": 0.45, "cl": 0.6, "isa_deviation": 5,
      "outputs": ["pressure_altitude", "density_altitude", "tas", "cas"]}),
    ("load-factor-over-quillon-ridge", "The load factor at 160 kt IAS and CL 1.3 over Quillon Ridge, QNH 1008 hPa",
     {"solve_for": "load_factor", "weight": 20000, "wing_area": 61, "cl": 1.3, "ias": 160,
      "calibration": TQ62_CALIBRATION, "altitude": 8200, "qnh": 1008, "temperature": 27,
      "outputs": ["load_factor", "bank_angle", "cas", "tas"]}),
    ("weight-in-a-turn", "The weight a 30 deg level turn at 180 kt TAS and CL 1.0 supports, in kN",
     {"solve_for": "weight", "wing_area": 61, "cl": 1.0, "tas": 180, "altitude": 5000, "temperature": 20,
      "bank_angle": 30, "outputs": ["weight", "lift", "load_factor", "cas"], "output_units": {"force": "kN"}}),
    ("cl-grid", "CL over a grid of weights (in tonnes) and EAS at 10 000 ft",
     {"solve_for": "cl", "weight": {"value": [18, 23], "unit": "t"}, "wing_area": 61, "eas": [140, 180, 220],
      "altitude": 10000, "load_factor": 1.0, "grid": True, "outputs": ["cl", "mach"]}),
    ("wing-area-for-cas", "The wing area that carries 23 000 kg at 125 kt CAS and CL 1.5 at sea level, in ft2",
     {"solve_for": "wing_area", "weight": 23000, "cl": 1.5, "cas": 125, "altitude": 0,
      "outputs": ["wing_area", "wing_loading"], "output_units": {"area": "ft2", "wing_loading": "kg/m2"}}),
    ("cl-from-tat", "The TQ-62's CL at Mach 0.45, FL250, with the probe's TAT and a dew point",
     {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": 0.45, "altitude": {"value": 250, "unit": "FL"},
      "total_air_temperature": -12, "recovery_factor": 0.98, "dew_point": -30,
      "outputs": ["cl", "tas", "total_air_temperature", "ram_rise", "density"]}),
    ("humid-circuit-speed", "Every speed for CL 1.2 at 22 000 kg over Quillon Ridge, 25 degC, 70 % humidity",
     {"solve_for": "speed", "weight": 22000, "wing_area": 61, "cl": 1.2, "altitude": 8200, "qnh": 1008,
      "temperature": 25, "relative_humidity": 70, "outputs": ["cas", "tas", "mach", "density"]}),
)

LIFT_STALL = _examples(
    ("turns-and-margins", "TQ-62 stall speeds in level turns, 1.13/1.23/1.3 of them, and the margins at 160 kt CAS",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "isa_deviation": 10,
      "bank_angle": [0, 30, 45, 60], "speed_factors": [1.13, 1.23, 1.3], "cas": 160}),
    ("flight-manual-reference", "A flight-manual stall speed (108 kt CAS at 22 000 kg) scaled to 19 000 kg",
     {"weight": 19000, "reference": {"stall_speed": 108, "weight": 22000, "altitude": 0}, "altitude": 5000,
      "isa_deviation": 10}),
    ("quillon-ridge-circuit", "In the circuit at Quillon Ridge: 8,200 ft on QNH 1008 hPa, 25 degC, 150 kt IAS",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 8200, "qnh": 1008, "temperature": 25,
      "load_factor": [1.0, 1.2], "ias": 150, "calibration": TQ62_CALIBRATION}),
    ("margins-eas-grid", "Stall margins at 140 kt EAS over a grid of weights and bank angles",
     {"weight": [18000, 22000], "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "bank_angle": [0, 30],
      "eas": 140, "grid": True, "outputs": ["stall", "margin"]}),
    ("cruise-mach", "The margin at Mach 0.45, FL250, ISA+5, in a 1.3 g manoeuvre",
     {"weight": 21000, "wing_area": 61, "cl_max": 1.3, "altitude": {"value": 250, "unit": "FL"}, "isa_deviation": 5,
      "load_factor": 1.3, "mach": 0.45}),
    ("hot-day-tas", "The margin at 170 kt TAS, 3000 ft, 30 degC",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "temperature": 30, "tas": 170,
      "outputs": ["stall", "margin"]}),
    ("quillon-ridge-humid", "Stall speeds at Quillon Ridge on a hot, humid afternoon (30 degC, dew point 18 degC)",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 7200, "qnh": 1008, "temperature": 30,
      "dew_point": 18, "outputs": ["stall"]}),
    ("tat-and-humidity", "Stall speeds and the margin at 160 kt CAS, 5000 ft, from the probe's TAT at 80 % humidity",
     {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 5000, "cas": 160, "total_air_temperature": 22,
      "recovery_factor": 0.98, "relative_humidity": 80, "outputs": ["stall", "margin"]}),
)

LIFT_CURVE = _examples(
    ("angle-for-cl", "The TQ-62 wing's angle of attack for CL 0.9 at Mach 0.3",
     {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3, "airfoil_lift_slope": {"value": 0.105, "unit": "1/deg"},
      "zero_lift_angle": -2.5, "cl": 0.9, "cl_max": 1.6}),
    ("cl-at-angles", "CL at three angles of attack for two aspect ratios, slope per degree",
     {"aspect_ratio": [9, 11], "sweep_half_chord": {"value": 0, "unit": "deg"}, "mach": 0.3,
      "airfoil_efficiency": 0.95, "angle_of_attack": [0, 4, 8], "grid": True, "output_units": {"lift_slope": "1/deg"}}),
)

# --- Drag, performance speeds, turns and buffet (invented TQ-62 data: for demos only, never a reference) ---

#: The TQ-62's clean drag polar (invented): CD = 0.024 + k CL^2 with A = 11, e = 0.78.
TQ62_POLAR = {"cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78}
#: The TQ-62's 1 g buffet-onset boundary, CL against Mach (invented).
TQ62_BUFFET = {"mach": [0.30, 0.40, 0.50, 0.60, 0.66, 0.70, 0.74, 0.78, 0.82],
                "cl": [1.30, 1.20, 1.08, 0.94, 0.84, 0.76, 0.66, 0.55, 0.42]}

DRAG = _examples(
    ("tq62-cruise", "The TQ-62's drag at 21 000 kg, Mach 0.45, FL250, ISA+5",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "mach": 0.45, "altitude": {"value": 250, "unit": "FL"},
      "isa_deviation": 5}),
    ("holding-turn", "In a 25 deg holding turn at 210 kt IAS, 10 000 ft, with k given directly, forces in kN",
     {"weight": 22000, "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.0371, "ias": 210,
      "calibration": TQ62_CALIBRATION, "altitude": 10000, "temperature": -5, "bank_angle": 25,
      "outputs": ["cl", "cd", "drag", "lift_to_drag", "power_required", "cas", "tas"],
      "output_units": {"force": "kN", "power": "hp"}}),
    ("polar-sweep", "The polar swept over CL at 3000 ft on a QNH day (the speeds follow from the CL)",
     {"weight": 20000, "wing_area": 61, **TQ62_POLAR, "cl": [0.3, 0.5, 0.8, 1.1], "altitude": 3000, "qnh": 1008,
      "load_factor": 1.0, "mach_limit": 0.7, "outputs": ["cd", "lift_to_drag", "drag", "eas", "mach"]}),
    ("tas-eas-grid", "A grid of TAS and weights at 5000 m geometric height",
     {"weight": {"value": [18, 23], "unit": "t"}, "wing_area": 61, **TQ62_POLAR, "tas": [220, 260, 300],
      "altitude": {"value": 5000, "unit": "m"}, "altitude_kind": "geometric", "grid": True,
      "outputs": ["drag", "thrust_required", "power_required"]}),
    ("eas-at-fl180", "At 200 kt EAS, FL180",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "eas": 200, "altitude": {"value": 180, "unit": "FL"},
      "outputs": ["drag", "dynamic_pressure", "density"]}),
    ("cas-in-the-climb", "In the 290 kt climb at FL150 and FL250 on a -5 degC and a -25 degC day",
     {"weight": 22500, "wing_area": 61, **TQ62_POLAR, "cas": 290, "altitude": {"value": [150, 250], "unit": "FL"},
      "temperature": [-5, -25], "outputs": ["cl", "drag", "power_required", "mach"]}),
    ("beyond-the-polar", "At Mach 0.74, FL370: beyond the polar's default Mach limit, with the warning",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "mach": [0.55, 0.74], "altitude": {"value": 370, "unit": "FL"},
      "outputs": ["cl", "cd", "drag", "lift_to_drag"]}),
    ("tat-humid-climb", "In the 250 kt climb at 10 000 ft: the static temperature from the TAT, 70 % humidity",
     {"weight": 22000, "wing_area": 61, **TQ62_POLAR, "cas": 250, "altitude": 10000, "total_air_temperature": 12,
      "recovery_factor": 0.98, "relative_humidity": 70, "outputs": ["drag", "power_required", "tas", "density"]}),
    ("quillon-ridge-approach-cl", "CL 1.2 on approach to Quillon Ridge (QNH 1008 hPa): the TAT read at the speed "
                                  "the lift gives, dew point 14 degC",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "cl": 1.2, "altitude": 8200, "qnh": 1008,
      "total_air_temperature": 27, "dew_point": 14, "outputs": ["drag", "cas", "tas", "density"]}),
)

DRAG_SPEEDS = _examples(
    ("tq62-fl250", "The TQ-62's characteristic speeds at 21 000 kg, FL250, ISA+5, gliding from 25 000 ft",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "altitude": {"value": 250, "unit": "FL"},
      "isa_deviation": 5, "height": 25000}),
    ("engine-out-glide", "Best glide from 8000 ft above Quillon Ridge (QNH 1008 hPa, 27 degC) at two weights",
     {"weight": [19000, 23000], "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.0371, "altitude": 15200,
      "qnh": 1008, "temperature": 11, "height": {"value": 8000, "unit": "ft"}, "mach_limit": 0.65,
      "outputs": ["best_glide"], "output_units": {"distance": "km", "vertical_speed": "m/s"}}),
    ("altitude-grid", "Minimum drag and minimum power over a grid of weights and geometric heights, power in hp",
     {"weight": [18000, 23000], "wing_area": 61, **TQ62_POLAR, "altitude": {"value": [0, 6000], "unit": "m"},
      "altitude_kind": "geometric", "grid": True, "outputs": ["minimum_drag", "minimum_power"],
      "output_units": {"power": "hp"}}),
    ("humid-quillon-ridge", "Minimum power over Quillon Ridge on a 30 degC afternoon, 60 % humidity",
     {"weight": 22000, "wing_area": 61, **TQ62_POLAR, "altitude": 9000, "qnh": 1008, "temperature": 26,
      "relative_humidity": 60, "outputs": ["minimum_power"]}),
    ("dew-point-glide", "Best glide from FL100 with a dew point of -5 degC",
     {"weight": 21000, "wing_area": 61, **TQ62_POLAR, "altitude": {"value": 100, "unit": "FL"}, "temperature": 0,
      "dew_point": -5, "height": 10000, "outputs": ["best_glide"]}),
)

TURN = _examples(
    ("standard-rate", "A standard-rate turn (3 deg/s) at 210 kt IAS, 5000 ft, ISA+10",
     {"ias": 210, "calibration": TQ62_CALIBRATION, "altitude": 5000, "isa_deviation": 10, "turn_rate": 3}),
    ("holding-bank", "25 deg of bank at three TAS, radius in NM and time in minutes",
     {"tas": [180, 230, 280], "altitude": 14000, "temperature": -10, "bank_angle": 25,
      "output_units": {"time": "min"}}),
    ("load-factor-cas", "A 1.5 g level turn at 250 kt CAS over Quillon Ridge, QNH 1008 hPa, radius in m",
     {"cas": 250, "altitude": 9000, "qnh": 1008, "load_factor": 1.5, "output_units": {"distance": "m"}}),
    ("rate-half-mach-grid", "Rate one and rate half over two Mach numbers at FL200 (grid)",
     {"mach": [0.4, 0.5], "altitude": {"value": 200, "unit": "FL"}, "turn_rate": {"value": [1, 0.5],
      "unit": "standard_rate"}, "grid": True, "outputs": ["bank_angle", "radius", "turn_rate"]}),
    ("eas-geometric", "At 200 kt EAS, 3000 m geometric height",
     {"eas": 200, "altitude": {"value": 3000, "unit": "m"}, "altitude_kind": "geometric", "bank_angle": 30}),
    ("tat-humid", "A 30 deg turn at 180 kt EAS, 6000 ft: the static temperature from the TAT, dew point 8 degC",
     {"eas": 180, "altitude": 6000, "total_air_temperature": 18, "recovery_factor": 0.98, "dew_point": 8,
      "bank_angle": 30}),
    ("humid-rh", "Rate one at 160 kt CAS, 3000 ft, 28 degC, 75 % humidity",
     {"cas": 160, "altitude": 3000, "temperature": 28, "relative_humidity": 75, "turn_rate": 3}),
)

BUFFET = _examples(
    ("tq62-cruise-margin", "The TQ-62 at 21 000 kg, Mach 0.74, FL370: margins and the 1.3 g limits",
     {"weight": 21000, "wing_area": 61, "mach": 0.74, "altitude": {"value": 370, "unit": "FL"},
      "buffet": TQ62_BUFFET, "margin": 1.3}),
    ("levels-and-weights", "Three levels at two weights (grid), W/delta in lb",
     {"weight": {"value": [18, 23], "unit": "t"}, "wing_area": 61, "mach": 0.72,
      "altitude": {"value": [330, 370, 410], "unit": "FL"}, "buffet": TQ62_BUFFET, "grid": True,
      "outputs": ["load_factor_to_buffet", "bank_to_buffet", "weight_over_delta"], "output_units": {"mass": "lb"}}),
    ("mach-sweep", "A Mach sweep at FL390 with a 1.5 g margin, altitudes in m",
     {"weight": 22000, "wing_area": 61, "mach": [0.6, 0.7, 0.78], "altitude": 39000, "isa_deviation": 10,
      "buffet": TQ62_BUFFET, "margin": 1.5, "output_units": {"altitude": "m"}}),
    ("quillon-ridge-departure", "Climbing out of Quillon Ridge: Mach 0.5 at 16 000 ft on QNH 1008 hPa, -2 degC",
     {"weight": 23000, "wing_area": 61, "mach": 0.5, "altitude": 16000, "qnh": 1008, "temperature": -2,
      "buffet": TQ62_BUFFET, "outputs": ["cl", "load_factor_to_buffet", "bank_to_buffet", "cas", "tas"]}),
    ("tat-cruise", "Mach 0.74 at FL370 with the probe's TAT (-28 degC) and a dew point of -60 degC",
     {"weight": 21000, "wing_area": 61, "mach": 0.74, "altitude": {"value": 370, "unit": "FL"},
      "total_air_temperature": -28, "recovery_factor": 0.98, "dew_point": -60, "buffet": TQ62_BUFFET,
      "outputs": ["load_factor_to_buffet", "cas", "tas"]}),
    ("humid-low-level", "Mach 0.5 at 5000 ft, 25 degC, 70 % humidity",
     {"weight": 23000, "wing_area": 61, "mach": 0.5, "altitude": 5000, "temperature": 25, "relative_humidity": 70,
      "buffet": TQ62_BUFFET, "outputs": ["load_factor_to_buffet", "tas"]}),
)

PRESSURE_SETTINGS = _examples(
    ("quillon-ridge-qnh", "Quillon Ridge (7,200 ft) with QNH 1008 hPa: its QFE and pressure altitude",
     {"elevation": 7200, "qnh": 1008}),
    ("qfe-to-qnh-inhg", "QNH from three QFE readings in inHg at Quillon Ridge (2,195 m)",
     {"elevation": {"value": 2195, "unit": "m"}, "qfe": {"value": [22.62, 22.79, 22.95], "unit": "inHg"}}),
)

TEMPERATURE_CORRECTION = _examples(
    ("quillon-ridge-cold-approach", "Quillon Ridge (7,200 ft) at -25 degC: the approach's minimum altitudes",
     {"elevation": 7200, "temperature": -25, "altitude": [9500, 8700, 7650]}),
    ("cold-grid", "A correction table: three temperatures by four minimum altitudes, sea-level aerodrome",
     {"elevation": 0, "temperature": [0, -20, -40], "altitude": [500, 1000, 2000, 5000], "grid": True,
      "outputs": ["correction"]}),
)
