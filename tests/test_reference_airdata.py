"""The air-data outputs that landed after the first reference suite, against the independent reference
(tests/reference.py; nothing imported from the service):

- POST /v1/atmosphere: the U.S. Standard Atmosphere 1976 property set (gravity, pressure scale height, number
  density, mean particle speed, mean free path, collision frequency, thermal conductivity; constants of USSA 1976
  table 2), the water vapour (Hardy 1998's ITS-90 saturation formula) and the virtual temperature, with a dew point
  or a relative humidity, and the density and what follows from it in moist air;
- POST /v1/airspeed: the total air temperature and the ram rise (NACA Report 1135 eq. 43), and the total air
  temperature as an input (with a recovery factor), every speed kind;
- POST /v1/altimetry/pressure-settings (the ICAO Doc 7488/3 reduction) and /v1/altimetry/temperature-correction
  (ICAO Doc 8168 PANS-OPS, solved by brentq; its printed table from memory).

Each output on the single-point path and the array path, in every unit of its dimension (offset units included),
on standard and off-standard days, and the edges of each closed form. The reference itself is checked first against
ambiance, fluids, iapws and MetPy, and against values printed in the standards.
"""

import math

import pytest
from ambiance import Atmosphere
from fluids.atmosphere import ATMOSPHERE_1976

from tests import reference as ref
from tests.reference import UNITS, app_client, check, post_ok, to_unit

KT = 0.5144444444444445  # 1852 m / 3600 s (exact definition)
FT = 0.3048  # international foot (exact)
C0 = 273.15  # 0 degC in kelvin (definition of the Celsius scale)


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


# --- The reference against outside libraries and printed values -----------------------------------------------

@pytest.mark.parametrize("H", [-4000.0, 0.0, 5000.0, 11000.0, 20000.0, 32000.0, 47000.0, 60000.0, 75000.0])
def test_property_set_reference_against_ambiance(H):
    # ambiance implements the USSA 1976 property set with its own code; it starts each layer from ISO 2533's rounded
    # base pressures (3e-6, see test_reference_oracle.py) and converts heights its own way (4e-7 on the temperature
    # at -4 km); its thermal conductivity uses another form (not compared here).
    T, p = ref.std_tp(H)
    a = Atmosphere(ref.geometric(H))
    mine = ref.ussa_properties(p, T, ref.geometric(H))
    assert mine["gravity"] == pytest.approx(float(a.grav_accel[0]), rel=1e-12)
    for name in ("mean_particle_speed", "pressure_scale_height"):
        assert mine[name] == pytest.approx(float(getattr(a, name)[0]), rel=5e-6), name
    # ambiance's number density is 6.7e-5 above N_A p / (R* T) with table 2's constants (its own constants), and its
    # mean free path and collision frequency follow it: 1e-4.
    for name in ("number_density", "mean_free_path", "collision_frequency"):
        assert mine[name] == pytest.approx(float(getattr(a, name)[0]), rel=1e-4), name


@pytest.mark.parametrize("H", [0.0, 11000.0, 40000.0, 80000.0])
def test_thermal_conductivity_and_gravity_reference_against_fluids(H):
    T, p = ref.std_tp(H)
    mine = ref.ussa_properties(p, T, ref.geometric(H))
    assert mine["thermal_conductivity"] == pytest.approx(ATMOSPHERE_1976.thermal_conductivity(T), rel=1e-12)
    assert mine["gravity"] == pytest.approx(ATMOSPHERE_1976.gravity(ref.geometric(H)), rel=1e-12)


def test_property_set_reference_against_the_printed_sea_level_values():
    # USSA 1976 table I at 0 m (5 significant digits as printed; from memory of the table): H_P 8434.5 m,
    # n 2.5470e25 /m3, V 458.94 m/s, nu 6.9193e9 /s, L 6.6328e-8 m, k 2.5326e-2 W/(m K), g 9.8066 m/s2. The printed
    # L and nu part from the printed n by 7e-5 (the formulas tie them exactly; the table's own constants or rounding,
    # or a slip of memory): 1e-4 on those two.
    mine = ref.ussa_properties(ref.P0, ref.T0, 0.0)
    printed = {"pressure_scale_height": 8434.5, "number_density": 2.5470e25, "mean_particle_speed": 458.94,
               "collision_frequency": 6.9193e9, "mean_free_path": 6.6328e-8, "thermal_conductivity": 2.5326e-2,
               "gravity": 9.8066}
    for name, value in printed.items():
        assert mine[name] == pytest.approx(value, rel=1e-4 if name in ("mean_free_path", "collision_frequency")
                                           else 6e-5), name


@pytest.mark.parametrize("T", [273.16, 283.15, 293.15, 313.15, 333.15, 353.15, 373.15])
def test_saturation_reference_against_iapws(T):
    # IAPWS-IF97 saturation pressure of water (the iapws package), 0.01 to 100 degC: Hardy's ITS-90 fit reproduces
    # it to about 1e-4.
    from iapws.iapws97 import _PSat_T

    assert ref.saturation_vapour_pressure(T) == pytest.approx(_PSat_T(T) * 1e6, rel=2e-4)


@pytest.mark.parametrize("T", [233.15, 253.15, 273.15, 293.15, 303.15])
def test_saturation_reference_against_metpy(T):
    # MetPy's saturation vapour pressure over water (Ambaum 2020, its own formulation): within 0.5 %.
    import metpy.calc as mc
    from metpy.units import units

    theirs = mc.saturation_vapor_pressure(T * units.K).to("Pa").magnitude
    assert ref.saturation_vapour_pressure(T) == pytest.approx(float(theirs), rel=5e-3)


def test_saturation_reference_printed_values():
    # The triple point of water, 611.657 Pa at 273.16 K (IAPWS, from memory), and the normal boiling point,
    # 101 325 Pa at 373.124 K on ITS-90 (from memory): Hardy's formula to 1e-4.
    assert ref.saturation_vapour_pressure(273.16) == pytest.approx(611.657, rel=1e-5)
    assert ref.saturation_vapour_pressure(373.124) == pytest.approx(101_325.0, rel=1e-4)


def test_virtual_temperature_reference_against_metpy():
    # MetPy's virtual temperature from the mixing ratio w = eps e / (p - e), Tv = T (w + eps) / (eps (1 + w)), with
    # its own molar masses (eps 0.62196): within 1e-6 of the partial-density form at 30 hPa of vapour.
    import metpy.calc as mc
    from metpy.units import units

    p, T, e = 95_000.0, 300.0, 3000.0
    w = mc.mixing_ratio(e * units.Pa, p * units.Pa)
    theirs = mc.virtual_temperature(T * units.K, w).to("K").magnitude
    assert ref.virtual_temperature(p, T, e) == pytest.approx(float(theirs), rel=1e-6)
    # and the textbook approximation Tv ~ T (1 + 0.61 q) (Wallace & Hobbs 3.1.1, from memory), q ~ eps e / p
    q = ref.M_WATER / ref.M0 * e / p
    assert ref.virtual_temperature(p, T, e) == pytest.approx(T * (1 + 0.608 * q), rel=2e-4)


# --- POST /v1/atmosphere: the property set and the water vapour -------------------------------------------------

#: The outputs this module adds beside tests/test_reference_atmosphere.py's, and the density-derived ones that moist
#: air changes: output -> dimension.
NEW = {"gravity": "acceleration", "pressure_scale_height": "length", "number_density": "number_density",
       "mean_particle_speed": "speed", "mean_free_path": "length", "collision_frequency": "frequency",
       "thermal_conductivity": "thermal_conductivity", "vapour_pressure": "pressure",
       "virtual_temperature": "temperature"}
MOIST = {"density": "density", "density_ratio": None, "kinematic_viscosity": "kinematic_viscosity",
         "density_altitude": "altitude", "temperature": "temperature", "pressure": "pressure",
         "geometric_altitude": "altitude"}
OUTPUTS = NEW | MOIST
ABS = {"density_altitude": 1e-6, "geometric_altitude": 1e-6, "vapour_pressure": 1e-12}

#: (pressure altitude [m], ISA deviation [K], dew point [K] or None, relative humidity [%] or None): dry and moist,
#: standard and off-standard days, every layer and both ends of the model, saturated air and bone-dry air.
CASES = [(0.0, 0.0, None, None), (-5000.0, 0.0, None, None), (84852.0, 0.0, None, None), (11000.0, -20.0, None, None),
         (30000.0, 22.0, None, None), (60000.0, -10.0, None, None), (0.0, 15.0, None, 80.0),
         (1524.0, 20.0, 288.15, None), (9000.0, -17.0, None, 50.0), (-5000.0, 0.0, 320.65, None),
         (84852.0, 0.0, None, 100.0), (3000.0, 5.0, None, 0.0), (700.0, 30.0, 300.0, None)]


def _body(cases):
    def col(values):
        return values if len(values) > 1 else values[0]
    body = {"altitude": {"value": col([c[0] for c in cases]), "unit": "m"},
            "isa_deviation": col([c[1] for c in cases])}
    if cases[0][2] is not None:
        body["dew_point"] = {"value": col([c[2] for c in cases]), "unit": "K"}
    if cases[0][3] is not None:
        body["relative_humidity"] = col([c[3] for c in cases])
    return body | {"outputs": list(OUTPUTS)}


def _expected(cases):
    rows = [ref.humid_air(*c) for c in cases]
    return rows[0] if len(rows) == 1 else {name: [r[name] for r in rows] for name in OUTPUTS}


def _compare(answer, expected, units=None):
    for name, dim in OUTPUTS.items():
        unit = (units or {}).get(dim) if dim else None
        check(answer[name], expected[name], dim, unit, abs_si=ABS.get(name, 0.0))


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c[0]:g}m{c[1]:+g}K-dp{c[2]}-rh{c[3]}")
def test_atmosphere_single_point(client, case):
    answer = post_ok(client, "/v1/atmosphere", _body([case]))
    _compare(answer, _expected([case]))


@pytest.mark.parametrize("form", ["dry", "dew_point", "relative_humidity"])
def test_atmosphere_array(client, form):
    cases = [c for c in CASES if (c[2] is not None, c[3] is not None) == (form == "dew_point",
                                                                            form == "relative_humidity")]
    assert len(cases) >= 3
    answer = post_ok(client, "/v1/atmosphere", _body(cases))
    _compare(answer, _expected(cases))


_UNIT_CASES = [(dim, unit) for dim in dict.fromkeys(d for d in OUTPUTS.values() if d) for unit in UNITS[dim]]


@pytest.mark.parametrize(("dim", "unit"), _UNIT_CASES)
@pytest.mark.parametrize("array", [False, True])
def test_atmosphere_every_output_unit(client, dim, unit, array):
    cases = [(9000.0, -17.0, None, 50.0), (20.0, 12.0, None, 95.0), (40000.0, 25.0, None, 10.0)]
    cases = cases if array else cases[:1]
    answer = post_ok(client, "/v1/atmosphere", _body(cases) | {"output_units": {dim: unit}})
    _compare(answer, _expected(cases), {dim: unit})


@pytest.mark.parametrize("unit", list(UNITS["temperature"]))
@pytest.mark.parametrize("array", [False, True])
def test_dew_point_in_every_unit(client, unit, array):
    # Dew points of -40 (the same number in degC and degF) and +18 degC on an ISA+20 day at 1000 ft.
    Td = [233.15, 291.15]
    value = to_unit(Td, "temperature", unit)
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 1000, "isa_deviation": 20, "outputs": list(OUTPUTS),
                                                "dew_point": {"value": value if array else value[1], "unit": unit}})
    rows = [ref.humid_air(304.8, 20.0, dew_point=t) for t in Td]
    _compare(answer, {name: [r[name] for r in rows] for name in OUTPUTS} if array else rows[1])


def test_atmosphere_moist_air_from_a_temperature_and_a_qnh(client):
    # OAT 30 degC at indicated 2000 ft on QNH 995 hPa, 70 % humidity: the geometric altitude (so the gravity and
    # the scale height) above mean sea level.
    qnh = 99_500.0
    H = 2000 * FT + ref.pressure_altitude(qnh)
    dT = 303.15 - ref.std_tp(H)[0]
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 2000, "qnh": 995, "temperature": 30,
                                                "relative_humidity": 70, "outputs": list(OUTPUTS)})
    expected = ref.humid_air(H, dT, rh=70.0)
    expected["geometric_altitude"] = ref.level_height(H, dT, ref.pressure_altitude(qnh))
    expected.update(ref.ussa_properties(expected["pressure"], 303.15, expected["geometric_altitude"]))
    _compare(answer, expected)


def test_atmosphere_geometric_height_gravity(client):
    # On a standard day a geometric height gives g at that height itself: g0 (r0 / (r0 + h))^2.
    h = [0.0, 10000.0, 85999.0]  # the model's top is 85 999.95 m geometric
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": h, "unit": "m"}, "altitude_kind": "geometric",
                                                "outputs": ["gravity", "pressure_scale_height"]})
    check(answer["gravity"], [ref.gravity(x) for x in h], "acceleration")
    T = [ref.std_tp(ref.geopotential(x))[0] for x in h]
    check(answer["pressure_scale_height"], [ref.RSTAR * t / (ref.M0 * ref.gravity(x)) for t, x in zip(T, h,
                                                                                                      strict=True)],
          "length")


# --- Edges of the moist-air relations -----------------------------------------------------------------------------

def test_relative_humidity_zero_is_dry_air_exactly(client):
    dry = post_ok(client, "/v1/atmosphere", {"altitude": [0, 20000], "isa_deviation": 10})
    zero = post_ok(client, "/v1/atmosphere", {"altitude": [0, 20000], "isa_deviation": 10, "relative_humidity": 0,
                                              "outputs": [*(k for k in dry if k != "warnings"), "vapour_pressure",
                                                          "virtual_temperature"]})
    assert zero["vapour_pressure"]["value"] == [0.0, 0.0]
    assert zero["virtual_temperature"] == zero["temperature"]
    for name in ("density", "density_ratio", "kinematic_viscosity", "density_altitude"):
        assert zero[name] == dry[name], name


def test_dew_point_at_the_temperature_is_saturation(client):
    # Dew point = temperature: the vapour pressure is es(T), the same as 100 % relative humidity.
    body = {"altitude": 0, "isa_deviation": 10, "outputs": ["vapour_pressure", "virtual_temperature", "density"]}
    at_t = post_ok(client, "/v1/atmosphere", body | {"dew_point": 25})
    full = post_ok(client, "/v1/atmosphere", body | {"relative_humidity": 100})
    check(at_t["vapour_pressure"], ref.saturation_vapour_pressure(298.15), "pressure")
    for name in body["outputs"]:
        assert at_t[name]["value"] == pytest.approx(full[name]["value"], rel=1e-12), name


@pytest.mark.parametrize(("dew_c", "H", "dT"), [(-100.0, 0.0, 0.0), (100.0, -5000.0, 52.5)])
def test_dew_point_range_ends(client, dew_c, H, dT):
    # Hardy's range, -100 to +100 degC: both ends answer (+100 degC needs a day at least that warm: 373.15 K at
    # -5000 m is ISA+52.5).
    answer = post_ok(client, "/v1/atmosphere", {"altitude": {"value": H, "unit": "m"}, "isa_deviation": dT,
                                                "dew_point": dew_c, "outputs": list(OUTPUTS)})
    _compare(answer, ref.humid_air(H, dT, dew_point=dew_c + C0))


def test_beyond_the_dew_point_range_is_a_422(client):
    for dew_c in (-100.01, 100.01):
        response = client.post("/v1/atmosphere", json={"altitude": {"value": -5000, "unit": "m"},
                                                        "isa_deviation": 60, "dew_point": dew_c})
        assert response.status_code == 422, dew_c


def test_vapour_pressure_typed_values(client):
    # 20 degC saturated: 2339 Pa (IAPWS steam tables, from memory: 2.3393 kPa); 0 degC: 611.2 Pa (from memory).
    answer = post_ok(client, "/v1/atmosphere", {"altitude": 0, "temperature": [20, 0], "relative_humidity": 100,
                                                "outputs": ["vapour_pressure"], "output_units": {"pressure": "Pa"}})
    assert answer["vapour_pressure"]["value"] == pytest.approx([2339.3, 611.2], rel=2e-4)


# --- POST /v1/airspeed: total air temperature and ram rise --------------------------------------------------------

SPEED_OUTPUTS = {"cas": "speed", "eas": "speed", "tas": "speed", "mach": None, "impact_pressure": "pressure",
                 "dynamic_pressure": "pressure", "total_air_temperature": "temperature",
                 "ram_rise": "temperature_difference"}
AIR_OUTPUTS = {"pressure": "pressure", "temperature": "temperature", "density": "density", "speed_of_sound": "speed"}

#: (kind, value in kt or Mach, pressure altitude [ft], ISA deviation [K]): subsonic and supersonic, cold and hot.
TAT_CASES = [("cas", 250.0, 10000.0, 12.0), ("cas", 900.0, 30000.0, 5.0), ("eas", 150.0, 5000.0, -30.0),
             ("tas", 480.0, 35000.0, 10.0), ("mach", 0.78, 37000.0, 0.0), ("mach", 2.2, 55000.0, -5.0),
             ("mach", 4.9, 80000.0, 0.0), ("mach", 0.05, -1000.0, 40.0)]


def _airspeed_row(kind, value, alt_ft, T, r=1.0):
    """Every /v1/airspeed output [SI] at static temperature T [K]."""
    p = ref.std_tp(alt_ft * FT)[1]
    si = value if kind == "mach" else value * KT
    out = ref.speeds(kind, si, p, T)
    tat = ref.total_air_temperature(T, out["mach"], r)
    out.update({"total_air_temperature": tat, "ram_rise": tat - T,
                "atmosphere": {"pressure": p, "temperature": T, "density": p / (ref.R * T),
                               "speed_of_sound": math.sqrt(ref.KAPPA * ref.R * T)}})
    return out


def _compare_airspeed(answer, rows, units=None):
    units = units or {}

    def pick(values):
        return values if len(rows) > 1 else values[0]

    for name, dim in SPEED_OUTPUTS.items():
        check(answer[name], pick([r[name] for r in rows]), dim, units.get(dim) if dim else None, abs_si=1e-12)
    for name, dim in AIR_OUTPUTS.items():
        check(answer["atmosphere"][name], pick([r["atmosphere"][name] for r in rows]), dim, units.get(dim))


def _static(case):
    kind, value, alt_ft, dT = case
    return ref.std_tp(alt_ft * FT)[0] + dT


@pytest.mark.parametrize("case", TAT_CASES, ids=lambda c: f"{c[0]}{c[1]:g}@{c[2]:g}ft{c[3]:+g}K")
def test_tat_and_ram_rise_outputs_single_point(client, case):
    kind, value, alt_ft, dT = case
    answer = post_ok(client, "/v1/airspeed", {kind: value, "altitude": alt_ft, "isa_deviation": dT})
    _compare_airspeed(answer, [_airspeed_row(kind, value, alt_ft, _static(case))])


def test_tat_and_ram_rise_outputs_array(client):
    cases = [c for c in TAT_CASES if c[0] == "mach"]
    answer = post_ok(client, "/v1/airspeed", {"mach": [c[1] for c in cases], "altitude": [c[2] for c in cases],
                                              "isa_deviation": [c[3] for c in cases]})
    _compare_airspeed(answer, [_airspeed_row("mach", c[1], c[2], _static(c)) for c in cases])


#: (kind, value, pressure altitude [ft], TAT [K], recovery factor or None): every speed kind, the recovery factor's
#: range ends (0.5 and 1), sub- and supersonic.
TAT_INPUTS = [("cas", 250.0, 10000.0, 280.0, None), ("cas", 320.0, 24000.0, 250.0, 0.98),
              ("eas", 150.0, 5000.0, 270.0, 0.5), ("eas", 400.0, 40000.0, 250.0, 1.0),
              ("tas", 480.0, 35000.0, 245.0, 0.95), ("tas", 1200.0, 50000.0, 330.0, None),
              ("mach", 0.78, 37000.0, 245.0, 0.98), ("mach", 2.2, 55000.0, 410.0, 0.5),
              ("ias", 250.0, 33000.0, 250.0, 0.9)]
CALIBRATION = {"ias": [100, 200, 300], "cas": [102, 201, 298]}  # IAS 250 -> CAS 249.5 kt (halfway, by hand)


def _tat_input_row(kind, value, alt_ft, tat, r):
    r = 1.0 if r is None else r
    if kind == "ias":
        kind, value = "cas", ref.interpolate(value, CALIBRATION["ias"], CALIBRATION["cas"])
    si = value if kind == "mach" else value * KT
    T = ref.static_from_tat(tat, kind, si, ref.std_tp(alt_ft * FT)[1], r)
    row = _airspeed_row(kind, value, alt_ft, T, r)
    assert row["total_air_temperature"] == pytest.approx(tat, rel=1e-12)  # the reference's own root
    return row


def _tat_body(case, unit="K"):
    kind, value, alt_ft, tat, r = case
    body = {kind: value, "altitude": alt_ft,
            "total_air_temperature": {"value": to_unit(tat, "temperature", unit), "unit": unit}}
    if r is not None:
        body["recovery_factor"] = r
    if kind == "ias":
        body["calibration"] = CALIBRATION
    return body


@pytest.mark.parametrize("case", TAT_INPUTS, ids=lambda c: f"{c[0]}{c[1]:g}@{c[2]:g}ft-TAT{c[3]:g}K-r{c[4]}")
def test_tat_input_single_point(client, case):
    answer = post_ok(client, "/v1/airspeed", _tat_body(case))
    _compare_airspeed(answer, [_tat_input_row(*case)])


@pytest.mark.parametrize("kind", ["cas", "eas", "tas", "mach"])
def test_tat_input_array(client, kind):
    cases = [c for c in TAT_INPUTS if c[0] == kind]
    r = [1.0 if c[4] is None else c[4] for c in cases]
    answer = post_ok(client, "/v1/airspeed", {kind: [c[1] for c in cases], "altitude": [c[2] for c in cases],
                                              "total_air_temperature": {"value": [c[3] for c in cases], "unit": "K"},
                                              "recovery_factor": r})
    _compare_airspeed(answer, [_tat_input_row(*c) for c in cases])


_TAT_UNITS = [(d, u) for d in ("temperature", "temperature_difference") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _TAT_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_tat_every_unit_in_and_out(client, dim, unit, array):
    # The TAT input in the unit (temperature units) and both new outputs in the unit of their dimension.
    cases = [("mach", 0.78, 37000.0, 245.0, 0.98), ("mach", 0.82, 39000.0, 250.0, 0.98)]
    cases = cases if array else cases[:1]
    in_unit = unit if dim == "temperature" else "degF"
    tats = to_unit([c[3] for c in cases], "temperature", in_unit)
    answer = post_ok(client, "/v1/airspeed", {
        "mach": [c[1] for c in cases] if array else cases[0][1], "altitude": [c[2] for c in cases] if array
        else cases[0][2], "recovery_factor": 0.98, "output_units": {dim: unit},
        "total_air_temperature": {"value": tats if array else tats[0], "unit": in_unit}})
    _compare_airspeed(answer, [_tat_input_row(*c) for c in cases], {dim: unit})


def test_tat_typed_values(client):
    # NACA 1135 table I (from memory): T / Tt = 0.8333 at Mach 1, 0.5556 at Mach 2. At 288.15 K static, Mach 1 reads
    # 345.78 K total (ram rise 57.63 K), Mach 2 518.67 K. Ram rise = V^2 / (2 cp), cp = 1004.7 J/(kg K) for air
    # (7/2 R, from memory): at 100 m/s, 4.977 K whatever the altitude.
    answer = post_ok(client, "/v1/airspeed", {"mach": [1.0, 2.0], "altitude": 0,
                                              "outputs": ["total_air_temperature", "ram_rise"],
                                              "output_units": {"temperature": "K"}})
    assert answer["total_air_temperature"]["value"] == pytest.approx([288.15 / 0.8333, 288.15 / 0.5556], rel=1e-4)
    assert answer["ram_rise"]["value"] == pytest.approx([57.63, 230.52], abs=0.01)
    # The zero end: at Mach 1e-6 the probe reads the static temperature (a rise of 0.2e-12 T; the rise is the
    # difference TAT - T, good to the last bit of T, 6e-14 K).
    slow = post_ok(client, "/v1/airspeed", {"mach": 1e-6, "altitude": 0, "outputs": ["total_air_temperature",
                                                                                   "ram_rise"]})
    check(slow["ram_rise"], 288.15 * 0.2e-12, "temperature_difference", abs_si=1e-13)
    check(slow["total_air_temperature"], 288.15, "temperature", abs_si=1e-12)
    tas = post_ok(client, "/v1/airspeed", {"tas": {"value": 100, "unit": "m/s"}, "altitude": [0, 30000],
                                           "isa_deviation": [0, -20], "outputs": ["ram_rise"]})
    assert tas["ram_rise"]["value"] == pytest.approx([100**2 / (2 * 1004.7)] * 2, rel=1e-4)


def test_tat_input_gives_itself_back_and_the_recovery_factor_scales_the_rise(client):
    # The TAT output is the input itself; at the same static temperature a probe of r = 0.5 reads half the rise.
    answer = post_ok(client, "/v1/airspeed", {"mach": 0.8, "altitude": 35000, "total_air_temperature": [-20, -30],
                                              "recovery_factor": [1.0, 0.5]})
    assert answer["total_air_temperature"]["value"] == pytest.approx([-20.0, -30.0], abs=1e-12)
    T = [t + C0 for t in answer["atmosphere"]["temperature"]["value"]]
    rise = answer["ram_rise"]["value"]
    assert rise[0] == pytest.approx(T[0] * 0.2 * 0.64, rel=1e-12)  # (kappa - 1) / 2 M^2 = 0.128
    assert rise[1] == pytest.approx(0.5 * T[1] * 0.128, rel=1e-12)


def test_tat_beyond_the_isa_deviation_limit_is_a_422(client):
    # A TAT that puts the static temperature more than 100 K from standard is refused, naming the TAT.
    response = client.post("/v1/airspeed", json={"mach": 0.5, "altitude": 0, "total_air_temperature": 180})
    assert response.status_code == 422
    assert [e["pointer"] for e in response.get_json()["errors"]] == ["/total_air_temperature"]


# --- POST /v1/airspeed in moist air (a dew point or a relative humidity) ------------------------------------------

#: (kind, value in kt or Mach, pressure altitude [ft], ISA deviation [K], humidity): each speed kind, both forms.
MOIST_SPEEDS = [("cas", 250.0, 2000.0, 20.0, {"relative_humidity": 90.0}),
                ("eas", 180.0, 0.0, 20.0, {"dew_point": 295.15}),
                ("tas", 300.0, 10000.0, 0.0, {"relative_humidity": 50.0}),
                ("mach", 0.5, 5000.0, 10.0, {"dew_point": 280.0}),
                ("eas", 320.0, 1000.0, 25.0, {"relative_humidity": 100.0})]


def _vapour(humidity):
    """The vapour pressure [Pa] as a function of the temperature, for a dew point [K] or a relative humidity [%]."""
    if "dew_point" in humidity:
        return lambda T: ref.saturation_vapour_pressure(humidity["dew_point"])
    return lambda T: humidity["relative_humidity"] / 100.0 * ref.saturation_vapour_pressure(T)


def _moist_row(kind, value, alt_ft, T, humidity, r=1.0):
    """Every /v1/airspeed output [SI] in moist air at static temperature T [K]."""
    p = ref.std_tp(alt_ft * FT)[1]
    e = _vapour(humidity)(T)
    out = ref.moist_speeds(kind, value if kind == "mach" else value * KT, p, T, e)
    tat = ref.total_air_temperature(T, out["mach"], r)
    out.update({"total_air_temperature": tat, "ram_rise": tat - T,
                "atmosphere": {"pressure": p, "temperature": T, "density": ref.moist_density(p, T, e),
                               "speed_of_sound": math.sqrt(ref.KAPPA * ref.R * T)}})
    return out


def _moist_body(cases, extra=None):
    def col(values):
        return values if len(values) > 1 else values[0]
    humidity = cases[0][4]
    body = {cases[0][0]: col([c[1] for c in cases]), "altitude": col([c[2] for c in cases])}
    if "dew_point" in humidity:
        body["dew_point"] = {"value": col([c[4]["dew_point"] for c in cases]), "unit": "K"}
    else:
        body["relative_humidity"] = col([c[4]["relative_humidity"] for c in cases])
    return body | (extra or {})


def _compare_moist(answer, rows, skip=("dynamic_pressure",)):
    """As _compare_airspeed, leaving out the dynamic pressure (its own test below)."""
    def pick(values):
        return values if len(rows) > 1 else values[0]

    for name, dim in SPEED_OUTPUTS.items():
        if name not in skip:
            check(answer[name], pick([r[name] for r in rows]), dim, abs_si=1e-12)
    for name, dim in AIR_OUTPUTS.items():
        check(answer["atmosphere"][name], pick([r["atmosphere"][name] for r in rows]), dim)


@pytest.mark.parametrize("case", MOIST_SPEEDS, ids=lambda c: f"{c[0]}{c[1]:g}-{next(iter(c[4]))}")
def test_moist_airspeed_single_point(client, case):
    kind, value, alt_ft, dT, humidity = case
    answer = post_ok(client, "/v1/airspeed", _moist_body([case], {"isa_deviation": dT}))
    _compare_moist(answer, [_moist_row(kind, value, alt_ft, ref.std_tp(alt_ft * FT)[0] + dT, humidity)])


@pytest.mark.parametrize("form", ["dew_point", "relative_humidity"])
def test_moist_airspeed_array(client, form):
    # Three points of one kind (an EAS: the moist density enters both ways) on three days.
    cases = [("eas", v, a, d, {form: h}) for v, a, d, h in
             ((150.0, 0.0, 10.0, 285.0 if form == "dew_point" else 40.0),
              (250.0, 8000.0, 20.0, 275.0 if form == "dew_point" else 70.0),
              (300.0, 20000.0, -5.0, 240.0 if form == "dew_point" else 100.0))]
    answer = post_ok(client, "/v1/airspeed", _moist_body(cases, {"isa_deviation": [c[3] for c in cases]}))
    _compare_moist(answer, [_moist_row(*c[:3], ref.std_tp(c[2] * FT)[0] + c[3], c[4]) for c in cases])


#: (kind, value, pressure altitude [ft], TAT [K], humidity, recovery factor): the static temperature from a TAT in
#: moist air; with an EAS the Mach number needs the moist density, itself depending on the temperature sought.
MOIST_TATS = [("eas", 200.0, 3000.0, 305.0, {"relative_humidity": 80.0}, 1.0),
              ("eas", 300.0, 0.0, 320.0, {"relative_humidity": 100.0}, 0.9),
              ("eas", 250.0, 5000.0, 300.0, {"dew_point": 285.0}, 0.98),
              ("cas", 250.0, 3000.0, 305.0, {"relative_humidity": 80.0}, 1.0),
              ("tas", 280.0, 2000.0, 310.0, {"dew_point": 290.0}, 0.95),
              ("mach", 0.45, 4000.0, 300.0, {"relative_humidity": 60.0}, 1.0)]


@pytest.mark.parametrize("case", MOIST_TATS, ids=lambda c: f"{c[0]}{c[1]:g}-{next(iter(c[4]))}-r{c[5]:g}")
def test_moist_tat_input_single_point(client, case):
    kind, value, alt_ft, tat, humidity, r = case
    p = ref.std_tp(alt_ft * FT)[1]
    T = ref.static_from_tat(tat, kind, value if kind == "mach" else value * KT, p, r, vapour=_vapour(humidity))
    answer = post_ok(client, "/v1/airspeed", _moist_body([case], {
        "total_air_temperature": {"value": tat, "unit": "K"}, "recovery_factor": r}))
    _compare_moist(answer, [_moist_row(kind, value, alt_ft, T, humidity, r)])


def test_moist_tat_input_array(client):
    cases = [c for c in MOIST_TATS if c[0] == "eas" and "relative_humidity" in c[4]]
    rows = []
    for kind, value, alt_ft, tat, humidity, r in cases:
        T = ref.static_from_tat(tat, kind, value * KT, ref.std_tp(alt_ft * FT)[1], r, vapour=_vapour(humidity))
        rows.append(_moist_row(kind, value, alt_ft, T, humidity, r))
    answer = post_ok(client, "/v1/airspeed", _moist_body(cases, {
        "total_air_temperature": {"value": [c[3] for c in cases], "unit": "K"},
        "recovery_factor": [c[5] for c in cases]}))
    _compare_moist(answer, rows)


def test_moist_dynamic_pressure_is_half_rho_v_squared(client):
    answer = post_ok(client, "/v1/airspeed", {"tas": {"value": 100, "unit": "m/s"}, "altitude": 0, "temperature": 35,
                                              "relative_humidity": 90, "output_units": {"pressure": "Pa",
                                                                                        "speed": "m/s"}})
    rho = answer["atmosphere"]["density"]["value"]
    check(answer["dynamic_pressure"], 0.5 * rho * 100.0**2, "pressure", "Pa")
    check(answer["dynamic_pressure"], 0.5 * ref.RHO0 * answer["eas"]["value"] ** 2, "pressure", "Pa")


# --- POST /v1/altimetry/pressure-settings -------------------------------------------------------------------------

SETTINGS = {"qnh": "pressure", "qfe": "pressure", "pressure_altitude": "altitude"}
#: (elevation [ft], QNH [hPa]): the range ends of both (-2000 and 20 000 ft; 800 and 1100 hPa), sea level, standard.
AERODROMES = [(0.0, 1013.25), (0.0, 990.0), (7200.0, 1008.0), (-2000.0, 1020.0), (20000.0, 800.0),
              (5430.0, 1030.0), (1200.0, 1013.25), (0.0, 1100.0)]


def _settings_row(elev_ft, qnh_hpa):
    elevation, qnh = elev_ft * FT, qnh_hpa * 100.0
    # the QFE rounded to 1e-6 Pa: at sea level with QNH 1100 hPa the root finder's last bit would put it beyond
    # the field's 1100 hPa
    return {"qnh": qnh, "qfe": round(ref.qfe_of_qnh(elevation, qnh), 6),
            "pressure_altitude": elevation + ref.pressure_altitude(qnh)}


def _compare_settings(answer, rows, units=None):
    units = units or {}
    for name, dim in SETTINGS.items():
        want = [r[name] for r in rows]
        check(answer[name], want if len(rows) > 1 else want[0], dim, units.get(dim), abs_si=1e-7)


#: The QFE path takes every aerodrome, the corners at the QNH bounds (800, 1100 hPa) included: the QNH a QFE gives
#: is checked against them to within 1 Pa (service.api.altimetry.QNH_CHECK_PA).
INSIDE = AERODROMES


@pytest.mark.parametrize(("elev", "qnh"), AERODROMES)
def test_settings_from_qnh_and_from_qfe_single_point(client, elev, qnh):
    row = _settings_row(elev, qnh)
    _compare_settings(post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": elev, "qnh": qnh}), [row])
    if (elev, qnh) in INSIDE:
        from_qfe = post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": elev,
                                                                       "qfe": {"value": row["qfe"], "unit": "Pa"}})
        check(from_qfe["qnh"], ref.qnh_of_qfe(elev * FT, row["qfe"]), "pressure")
        _compare_settings(from_qfe, [row])


def test_settings_array(client):
    rows = [_settings_row(*a) for a in AERODROMES]
    _compare_settings(post_ok(client, "/v1/altimetry/pressure-settings", {
        "elevation": [a[0] for a in AERODROMES], "qnh": [a[1] for a in AERODROMES]}), rows)
    rows = [_settings_row(*a) for a in INSIDE]
    _compare_settings(post_ok(client, "/v1/altimetry/pressure-settings", {
        "elevation": [a[0] for a in INSIDE], "qfe": {"value": [r["qfe"] for r in rows], "unit": "Pa"}}), rows)


_SETTINGS_UNITS = [(d, u) for d in ("pressure", "altitude") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _SETTINGS_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_settings_every_unit_in_and_out(client, dim, unit, array):
    # Inputs in the unit too: the QNH (pressure) or the elevation (altitude; not FL, a pressure altitude).
    cases = AERODROMES[1:4] if array else AERODROMES[2:3]
    rows = [_settings_row(*a) for a in cases]
    qnh = [a[1] * 100.0 for a in cases]
    elev = [a[0] * FT for a in cases]
    p_unit = unit if dim == "pressure" else "hPa"
    e_unit = unit if dim == "altitude" and unit != "FL" else "ft"
    body = {"qnh": {"value": to_unit(qnh if array else qnh[0], "pressure", p_unit), "unit": p_unit},
            "elevation": {"value": to_unit(elev if array else elev[0], "altitude", e_unit), "unit": e_unit},
            "output_units": {dim: unit}}
    _compare_settings(post_ok(client, "/v1/altimetry/pressure-settings", body), rows, {dim: unit})
    body.pop("qnh")
    qfe = [r["qfe"] for r in rows]
    body["qfe"] = {"value": to_unit(qfe if array else qfe[0], "pressure", p_unit), "unit": p_unit}
    _compare_settings(post_ok(client, "/v1/altimetry/pressure-settings", body), rows, {dim: unit})


def test_settings_edges(client):
    # At sea level QFE is QNH; at QNH 1013.25 the pressure altitude is the elevation; an elevation in FL, and a QFE
    # whose QNH is beyond 800..1100 hPa, are 422s.
    at_sea = post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": 0, "qnh": [950, 1013.25, 1050]})
    assert at_sea["qfe"]["value"] == pytest.approx([950.0, 1013.25, 1050.0], rel=1e-12)
    std = post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": [-2000, 0, 20000], "qnh": 1013.25})
    assert std["pressure_altitude"]["value"] == pytest.approx([-2000.0, 0.0, 20000.0], abs=1e-7)
    for body in ({"elevation": {"value": 50, "unit": "FL"}, "qnh": 1000}, {"elevation": 1000, "qfe": 1100},
                 {"elevation": 20000, "qfe": 350}):
        assert client.post("/v1/altimetry/pressure-settings", json=body).status_code == 422, body


def test_settings_typed_value(client):
    # Denver-like: elevation 5434 ft, QNH 30.12 inHg. The standard pressure at 5434 ft + H(1019.98 hPa) by the
    # rule of thumb, about 1 inHg per 1000 ft (common practice, no source): QFE near 24.7 inHg.
    answer = post_ok(client, "/v1/altimetry/pressure-settings", {
        "elevation": 5434, "qnh": {"value": 30.12, "unit": "inHg"}, "output_units": {"pressure": "inHg"}})
    assert answer["qfe"]["value"] == pytest.approx(24.7, abs=0.15)
    check(answer["qfe"], ref.qfe_of_qnh(5434 * FT, 30.12 * 3386.389), "pressure", "inHg")


# --- POST /v1/altimetry/temperature-correction --------------------------------------------------------------------

CORRECTION = {"correction": "altitude", "corrected_altitude": "altitude", "height_above_aerodrome": "altitude"}
#: (elevation [ft], aerodrome temperature [K], minimum altitudes [ft]): cold, standard and warm days, at sea level
#: and high; minimum altitude at the elevation itself (height 0).
CORRECTIONS = [(0.0, 223.15, [5000.0, 1000.0, 0.0]), (0.0, 288.15, [3000.0, 500.0]),
               (7200.0, 248.15, [9500.0, 8700.0, 7650.0, 7200.0]), (-2000.0, 260.0, [1000.0, 3000.0]),
               (20000.0, 213.15, [24000.0, 30000.0]), (1500.0, 300.0, [4000.0, 2500.0])]


def _correction_rows(elev_ft, T, altitudes_ft):
    rows = []
    for a in altitudes_ft:
        dH = ref.cold_correction((a - elev_ft) * FT, elev_ft * FT, T)
        rows.append({"correction": dH, "corrected_altitude": a * FT + dH, "height_above_aerodrome": (a - elev_ft) * FT})
    return rows


def _compare_correction(answer, rows, units=None, single=False):
    units = units or {}
    for name, dim in CORRECTION.items():
        want = [r[name] for r in rows]
        check(answer[name], want[0] if single else want, dim, units.get(dim), abs_si=1e-7)


@pytest.mark.parametrize("case", CORRECTIONS, ids=lambda c: f"{c[0]:g}ft-{c[1]:g}K")
def test_correction_array_and_single_point(client, case):
    elev, T, alts = case
    rows = _correction_rows(*case)
    body = {"elevation": elev, "temperature": {"value": T, "unit": "K"}}
    _compare_correction(post_ok(client, "/v1/altimetry/temperature-correction", body | {"altitude": alts}), rows)
    for a, row in zip(alts, rows, strict=True):
        single = post_ok(client, "/v1/altimetry/temperature-correction", body | {"altitude": a})
        _compare_correction(single, [row], single=True)


@pytest.mark.parametrize(("dim", "unit"), [("altitude", u) for u in UNITS["altitude"]]
                         + [("temperature", u) for u in UNITS["temperature"]])
@pytest.mark.parametrize("array", [False, True])
def test_correction_every_unit_in_and_out(client, dim, unit, array):
    elev, T, alts = CORRECTIONS[2]
    rows = _correction_rows(*CORRECTIONS[2])
    a_unit = unit if dim == "altitude" and unit != "FL" else "ft"  # a minimum altitude or an elevation is no FL
    t_unit = unit if dim == "temperature" else "degC"
    alts_si = [a * FT for a in alts]
    body = {"elevation": {"value": to_unit(elev * FT, "altitude", a_unit), "unit": a_unit},
            "temperature": {"value": to_unit(T, "temperature", t_unit), "unit": t_unit},
            "altitude": {"value": to_unit(alts_si if array else alts_si[0], "altitude", a_unit), "unit": a_unit},
            "output_units": {"altitude": unit} if dim == "altitude" else {}}
    answer = post_ok(client, "/v1/altimetry/temperature-correction", body)
    _compare_correction(answer, rows if array else rows[:1], {"altitude": unit} if dim == "altitude" else None,
                        single=not array)


# Doc 8168 Vol. I, Part III, Section 1, Chapter 4, Table III-1-4-1 (from memory of the table): values to add [ft] at
# a sea-level aerodrome, by aerodrome temperature [degC] and height above the aerodrome [ft]. They are the exact
# solution rounded up to 10 ft (two top entries of the -40 degC and -50 degC rows are a few feet below it, and the
# -30 degC, 700 ft entry as remembered, 140, is one step above the rounded 130: the table's or memory's slip).
PANS_OPS_HEIGHTS = [200, 300, 400, 500, 600, 700, 800, 900, 1000, 1500, 2000, 3000, 4000, 5000]
PANS_OPS_TABLE = {0: [20, 20, 30, 30, 40, 40, 50, 50, 60, 90, 120, 170, 230, 280],
                  -10: [20, 30, 40, 50, 60, 70, 80, 90, 100, 150, 200, 290, 390, 490],
                  -20: [30, 50, 60, 70, 90, 100, 120, 130, 140, 210, 280, 420, 570, 710],
                  -30: [40, 60, 80, 100, 120, 140, 150, 170, 190, 280, 380, 570, 760, 950],
                  -40: [50, 80, 100, 120, 150, 170, 190, 220, 240, 360, 480, 720, 970, 1210],
                  -50: [60, 90, 120, 150, 180, 210, 240, 270, 300, 450, 590, 890, 1190, 1500]}


def test_correction_against_the_pans_ops_table(client):
    for t_c, row in PANS_OPS_TABLE.items():
        answer = post_ok(client, "/v1/altimetry/temperature-correction", {
            "elevation": 0, "temperature": t_c, "altitude": PANS_OPS_HEIGHTS, "outputs": ["correction"]})
        for got, printed in zip(answer["correction"]["value"], row, strict=True):
            assert -4.0 <= printed - got <= 10.5, (t_c, got, printed)
        check(answer["correction"], [ref.cold_correction(h * FT, 0.0, t_c + C0) for h in PANS_OPS_HEIGHTS],
              "altitude", abs_si=1e-7)


def test_correction_edges_and_warning_exactly(client):
    # Height 0: no correction; a standard day (15 degC at sea level): none; a warm day, even by half a kelvin:
    # negative, with a warning naming exactly those points.
    elevation, t_c = [1000, 0, 1000, 1000, 1000, 0], [-20, 15, 30, -20, 40, 15.5]
    altitude = [1000, 5000, 5000, 3000, 2000, 3000]
    answer = post_ok(client, "/v1/altimetry/temperature-correction", {"elevation": elevation, "temperature": t_c,
                                                                     "altitude": altitude})
    check(answer["correction"], [ref.cold_correction((a - e) * FT, e * FT, t + C0)
                                 for e, t, a in zip(elevation, t_c, altitude, strict=True)], "altitude", abs_si=1e-7)
    values = answer["correction"]["value"]
    assert values[0] == 0.0 and values[1] == 0.0
    assert values[2] < 0 and values[4] < 0 and values[5] < 0 and values[3] > 0
    assert answer["warnings"] == [{"field": "correction", "message": answer["warnings"][0]["message"], "count": 3,
                                   "indices": [2, 4, 5]}]


def test_correction_refusals(client):
    # A minimum altitude below the elevation, and a corrected altitude beyond the first layer (11 km), are 422s.
    below = client.post("/v1/altimetry/temperature-correction",
                        json={"elevation": 5000, "temperature": -10, "altitude": [6000, 4000]})
    assert below.status_code == 422 and below.get_json()["errors"][0]["pointer"] == "/altitude"
    beyond = client.post("/v1/altimetry/temperature-correction",
                         json={"elevation": 0, "temperature": -60, "altitude": [1000, 35000]})
    assert beyond.status_code == 422
    doc = beyond.get_json()
    assert doc["type"] == "/problems/no-solution" and doc["indices"] == [1]


def test_settings_qfe_of_the_lowest_aerodrome_with_the_highest_qnh_reads_back(client):
    qfe = ref.qfe_of_qnh(-2000 * FT, 110_000.0)
    assert qfe / 100.0 == pytest.approx(1180.6, abs=0.1)
    answer = post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": -2000, "qfe": {"value": qfe,
                                                                                            "unit": "Pa"}})
    check(answer["qnh"], 110_000.0, "pressure")


def test_settings_sea_level_qfe_at_the_bound(client):
    answer = post_ok(client, "/v1/altimetry/pressure-settings", {"elevation": 0, "qfe": 1100})
    check(answer["qnh"], 110_000.0, "pressure")
