"""Humidity and total air temperature at the lift and drag endpoints: /v1/lift/solve, /v1/lift/stall, /v1/lift/turn,
/v1/lift/buffet, /v1/drag, /v1/drag/speeds.

Outside references, named beside each check: MetPy (moist-air density from a mixing ratio, test-only), NACA Report
1135 (the total temperature relations, typed here), the lift and drag equations in closed form, and the standard
atmosphere of tests/reference.py (ICAO Doc 7488/3, written independently of the service).
"""

from __future__ import annotations

import math

import pytest
from metpy import calc as mpcalc
from metpy.units import units

from tests import reference as ref
from tests.helpers import assert_problem, post

SOLVE, STALL, TURN, BUFFET = "/v1/lift/solve", "/v1/lift/stall", "/v1/lift/turn", "/v1/lift/buffet"
DRAG, DRAG_SPEEDS = "/v1/drag", "/v1/drag/speeds"
FT, KT, G0 = 0.3048, 1852.0 / 3600.0, 9.80665
CP = ref.KAPPA * ref.R / (ref.KAPPA - 1.0)  # specific heat at constant pressure of the ideal gas, 1004.685 J/(kg K)
W_KG, S = 21000.0, 61.0  # the TQ-62 (invented)
TQ62_BUFFET = {"mach": [0.30, 0.50, 0.70, 0.82], "cl": [1.30, 1.08, 0.76, 0.42]}


def value(doc, name):
    return doc[name]["value"]


def metpy_density(H: float, t_c: float, *, dew_point: float | None = None, rh: float | None = None) -> float:
    """Moist-air density [kg/m3] by MetPy at pressure altitude H [m] (static pressure from tests/reference.py):
    density(p, T, w) with the mixing ratio w from the dew point (its saturation vapour pressure at Td) or from the
    relative humidity. MetPy's Rd is 287.047 (ours 287.05287) and its saturation curve Ambaum 2020 (ours Hardy
    1998): they differ by a few 1e-5, hence the 1e-4 tolerances below."""
    p = ref.std_tp(H)[1] * units.Pa
    T = t_c * units.degC
    if dew_point is not None:
        w = mpcalc.mixing_ratio(mpcalc.saturation_vapor_pressure(dew_point * units.degC), p)
    else:
        w = mpcalc.mixing_ratio_from_relative_humidity(p, T, rh * units.percent)
    return mpcalc.density(p, T, w).to("kg/m^3").magnitude


# --- humidity: closed forms with the density from MetPy ------------------------------------------------------

@pytest.mark.parametrize("humidity", [{"dew_point": 22.0}, {"relative_humidity": 80.0}])
def test_moist_cl_at_a_tas_is_the_lift_equation_at_the_metpy_density(client, humidity):
    # CL = n W / (1/2 rho TAS^2 S), rho the moist density (MetPy) at 3000 ft, 30 degC.
    H, tas = 3000 * FT, 140.0
    doc = post(client, SOLVE, {"solve_for": "cl", "weight": W_KG, "wing_area": S, "tas": tas, "altitude": 3000,
                               "temperature": 30, **humidity, "outputs": ["cl", "density"]}).json
    rho = metpy_density(H, 30.0, dew_point=humidity.get("dew_point"), rh=humidity.get("relative_humidity"))
    assert value(doc, "density") == pytest.approx(rho, rel=1e-4)
    assert doc["cl"] == pytest.approx(W_KG * G0 / (0.5 * rho * (tas * KT) ** 2 * S), rel=1e-4)
    dry = post(client, SOLVE, {"solve_for": "cl", "weight": W_KG, "wing_area": S, "tas": tas, "altitude": 3000,
                               "temperature": 30, "outputs": ["cl"]}).json
    assert doc["cl"] > dry["cl"] * 1.005  # humid air is lighter: more CL at the same TAS (about 1 % here)


def test_moist_speed_solve_gives_the_tas_of_the_metpy_density(client):
    # TAS = sqrt(2 n W / (rho S CL)), rho the moist density (MetPy) at Quillon Ridge's circuit, 8200 ft, 25 degC.
    H = 8200 * FT
    doc = post(client, SOLVE, {"solve_for": "speed", "weight": 22000, "wing_area": S, "cl": 1.2, "altitude": 8200,
                               "temperature": 25, "dew_point": 15, "outputs": ["tas", "eas"]}).json
    rho = metpy_density(H, 25.0, dew_point=15.0)
    assert value(doc, "tas") * KT == pytest.approx(math.sqrt(2 * 22000 * G0 / (rho * S * 1.2)), rel=1e-4)
    assert value(doc, "eas") * KT == pytest.approx(math.sqrt(2 * 22000 * G0 / (ref.RHO0 * S * 1.2)), rel=1e-9)


def test_moist_stall_tas_is_the_eas_at_the_metpy_density(client):
    # Vs(EAS) = sqrt(2 W / (rho0 S CLmax)) whatever the air; its TAS = EAS sqrt(rho0 / rho), rho moist (MetPy).
    H = 7200 * FT
    doc = post(client, STALL, {"weight": 22000, "wing_area": S, "cl_max": 1.6, "altitude": 7200, "temperature": 30,
                               "dew_point": 18, "outputs": ["stall"]}).json
    eas = math.sqrt(2 * 22000 * G0 / (ref.RHO0 * S * 1.6))
    rho = metpy_density(H, 30.0, dew_point=18.0)
    assert value(doc["stall"], "eas") * KT == pytest.approx(eas, rel=1e-9)
    assert value(doc["stall"], "tas") * KT == pytest.approx(eas * math.sqrt(ref.RHO0 / rho), rel=1e-4)


def test_moist_drag_at_a_tas_is_the_polar_at_the_metpy_density(client):
    # q = 1/2 rho TAS^2 (rho moist, MetPy), CL = W / (q S), D = q S (CD0 + k CL^2).
    H, tas, cd0, k = 2000 * FT, 200.0, 0.024, 0.0371
    doc = post(client, DRAG, {"weight": W_KG, "wing_area": S, "cd0": cd0, "induced_drag_factor": k, "tas": tas,
                              "altitude": 2000, "temperature": 32, "relative_humidity": 75,
                              "outputs": ["cl", "drag"]}).json
    q = 0.5 * metpy_density(H, 32.0, rh=75.0) * (tas * KT) ** 2
    cl = W_KG * G0 / (q * S)
    assert doc["cl"] == pytest.approx(cl, rel=1e-4)
    assert value(doc, "drag") == pytest.approx(q * S * (cd0 + k * cl * cl), rel=1e-4)


def test_moist_minimum_drag_speed_is_the_eas_at_the_metpy_density(client):
    # Minimum drag at CL = sqrt(CD0 / k): EAS = sqrt(2 W / (rho0 S CL)), TAS = EAS sqrt(rho0 / rho), rho moist.
    cd0, k = 0.024, 0.0371
    doc = post(client, DRAG_SPEEDS, {"weight": W_KG, "wing_area": S, "cd0": cd0, "induced_drag_factor": k,
                                     "altitude": 5000, "temperature": 20, "dew_point": 10,
                                     "outputs": ["minimum_drag"]}).json
    eas = math.sqrt(2 * W_KG * G0 / (ref.RHO0 * S * math.sqrt(cd0 / k)))
    rho = metpy_density(5000 * FT, 20.0, dew_point=10.0)
    assert value(doc["minimum_drag"], "tas") * KT == pytest.approx(eas * math.sqrt(ref.RHO0 / rho), rel=1e-4)


def test_moist_turn_at_an_eas(client):
    # r = TAS^2 / (g tan(bank)), TAS = EAS sqrt(rho0 / rho), rho moist (MetPy).
    doc = post(client, TURN, {"eas": 180, "altitude": 4000, "temperature": 28, "relative_humidity": 90,
                              "bank_angle": 30, "outputs": ["tas", "radius"], "output_units": {"distance": "m"}}).json
    tas = 180 * KT * math.sqrt(ref.RHO0 / metpy_density(4000 * FT, 28.0, rh=90.0))
    assert value(doc, "tas") * KT == pytest.approx(tas, rel=1e-4)
    assert value(doc, "radius") == pytest.approx(tas ** 2 / (G0 * math.tan(math.radians(30))), rel=2e-4)


def test_moist_altitude_solve_at_a_mach_number(client):
    # p = W / ((gamma/2) M^2 S CL): the pressure altitude needs neither temperature nor humidity; the density there
    # is the moist one (MetPy) at the ISA+10 temperature of that altitude.
    mach, cl = 0.45, 0.6
    doc = post(client, SOLVE, {"solve_for": "altitude", "weight": W_KG, "wing_area": S, "cl": cl, "mach": mach,
                               "isa_deviation": 10, "relative_humidity": 60,
                               "outputs": ["pressure_altitude", "density"], "output_units": {"altitude": "m"}}).json
    H = ref.pressure_altitude(W_KG * G0 / (0.5 * ref.KAPPA * mach ** 2 * S * cl))
    assert value(doc, "pressure_altitude") == pytest.approx(H, abs=1e-3)
    t_c = ref.std_tp(H)[0] + 10.0 - 273.15
    assert value(doc, "density") == pytest.approx(metpy_density(H, t_c, rh=60.0), rel=1e-4)


def test_humidity_changes_no_buffet_margin(client):
    # At a given Mach number CL = W / ((gamma/2) p M^2 S): the static pressure alone, dry or moist.
    body = {"weight": W_KG, "wing_area": S, "mach": 0.5, "altitude": 5000, "temperature": 25, "buffet": TQ62_BUFFET}
    dry, moist = post(client, BUFFET, body).json, post(client, BUFFET, {**body, "relative_humidity": 70}).json
    assert moist == dry


# --- total air temperature: NACA Report 1135's relations typed here -------------------------------------------

def naca_static_from_mach(tat_c: float, mach: float, r: float) -> float:
    """NACA Report 1135 eq. 43 with a recovery factor: TAT = T (1 + r (gamma-1)/2 M^2) [degC in, K out]."""
    return (tat_c + 273.15) / (1.0 + r * 0.5 * (ref.KAPPA - 1.0) * mach ** 2)


def naca_static_from_tas(tat_c: float, tas_ms: float, r: float) -> float:
    """NACA Report 1135 (energy equation): TAT = T + r V^2 / (2 cp) [degC in, K out]."""
    return tat_c + 273.15 - r * tas_ms ** 2 / (2.0 * CP)


def test_tat_lift_solve_at_a_mach_number(client):
    # CL = W / ((gamma/2) p M^2 S) needs no temperature; the TAS is M sqrt(gamma R T) at the static temperature
    # the TAT gives (NACA 1135), and the density p / (R T).
    H, mach, r = 25000 * FT, 0.45, 0.98
    doc = post(client, SOLVE, {"solve_for": "cl", "weight": W_KG, "wing_area": S, "mach": mach,
                               "altitude": {"value": 250, "unit": "FL"}, "total_air_temperature": -12,
                               "recovery_factor": r,
                               "outputs": ["cl", "tas", "density", "total_air_temperature", "ram_rise"]}).json
    p = ref.std_tp(H)[1]
    T = naca_static_from_mach(-12.0, mach, r)
    assert doc["cl"] == pytest.approx(W_KG * G0 / (0.5 * ref.KAPPA * p * mach ** 2 * S), rel=1e-9)
    assert value(doc, "tas") * KT == pytest.approx(mach * math.sqrt(ref.KAPPA * ref.R * T), rel=1e-9)
    assert value(doc, "density") == pytest.approx(p / (ref.R * T), rel=1e-9)
    assert value(doc, "total_air_temperature") == pytest.approx(-12.0, abs=1e-9)
    assert value(doc, "ram_rise") == pytest.approx(-12.0 + 273.15 - T, abs=1e-9)


def test_tat_lift_solve_at_a_tas(client):
    # T = TAT - r V^2 / (2 cp) (NACA 1135, closed form with a TAS); CL = W / (1/2 p / (R T) V^2 S).
    H, tas, r = 10000 * FT, 230.0, 1.0
    doc = post(client, SOLVE, {"solve_for": "cl", "weight": W_KG, "wing_area": S, "tas": tas, "altitude": 10000,
                               "total_air_temperature": 5, "outputs": ["cl", "ram_rise"]}).json
    T = naca_static_from_tas(5.0, tas * KT, r)
    rho = ref.std_tp(H)[1] / (ref.R * T)
    assert doc["cl"] == pytest.approx(W_KG * G0 / (0.5 * rho * (tas * KT) ** 2 * S), rel=1e-9)
    assert value(doc, "ram_rise") == pytest.approx(5.0 + 273.15 - T, abs=1e-9)


def test_tat_speed_solve(client):
    # The lift fixes the EAS (1/2 rho0 EAS^2 = W / (S CL)), so the Mach number at the static pressure,
    # M = EAS / sqrt(gamma p / rho0), and the static temperature from the TAT (NACA 1135).
    H, r = 6000 * FT, 0.95
    doc = post(client, SOLVE, {"solve_for": "speed", "weight": 22000, "wing_area": S, "cl": 1.2, "altitude": 6000,
                               "total_air_temperature": 22, "recovery_factor": r, "outputs": ["mach", "tas"]}).json
    p = ref.std_tp(H)[1]
    eas = math.sqrt(2 * 22000 * G0 / (ref.RHO0 * S * 1.2))
    mach = eas / math.sqrt(ref.KAPPA * p / ref.RHO0)
    T = naca_static_from_mach(22.0, mach, r)
    assert doc["mach"] == pytest.approx(mach, rel=1e-9)
    assert value(doc, "tas") * KT == pytest.approx(mach * math.sqrt(ref.KAPPA * ref.R * T), rel=1e-9)


def test_tat_altitude_solve_at_a_tas(client):
    # rho = 2 W / (TAS^2 S CL); T from the TAT and the TAS (NACA 1135); p = rho R T; the pressure altitude of p.
    tas, cl = 260.0, 0.6
    doc = post(client, SOLVE, {"solve_for": "altitude", "weight": W_KG, "wing_area": S, "cl": cl, "tas": tas,
                               "total_air_temperature": -12, "outputs": ["pressure_altitude"],
                               "output_units": {"altitude": "m"}}).json
    rho = 2 * W_KG * G0 / ((tas * KT) ** 2 * S * cl)
    p = rho * ref.R * naca_static_from_tas(-12.0, tas * KT, 1.0)
    assert value(doc, "pressure_altitude") == pytest.approx(ref.pressure_altitude(p), abs=1e-3)


def test_tat_altitude_solve_at_a_mach_number(client):
    # p = W / ((gamma/2) M^2 S CL) needs no temperature; the TAS then follows from the TAT (NACA 1135).
    mach, cl, r = 0.45, 0.6, 0.98
    doc = post(client, SOLVE, {"solve_for": "altitude", "weight": W_KG, "wing_area": S, "cl": cl, "mach": mach,
                               "total_air_temperature": -12, "recovery_factor": r,
                               "outputs": ["pressure_altitude", "tas"], "output_units": {"altitude": "m"}}).json
    p = W_KG * G0 / (0.5 * ref.KAPPA * mach ** 2 * S * cl)
    assert value(doc, "pressure_altitude") == pytest.approx(ref.pressure_altitude(p), abs=1e-3)
    T = naca_static_from_mach(-12.0, mach, r)
    assert value(doc, "tas") * KT == pytest.approx(mach * math.sqrt(ref.KAPPA * ref.R * T), rel=1e-9)


def test_tat_stall_reads_the_temperature_at_the_given_speed(client):
    # The static temperature comes from the TAT at the margin's CAS (NACA 1135 at its Mach number), and the stall
    # speeds are converted in that air: the same answer as from that outside air temperature.
    body = {"weight": 22000, "wing_area": S, "cl_max": 1.6, "altitude": 5000, "cas": 160, "outputs": ["stall"]}
    doc = post(client, STALL, {**body, "total_air_temperature": 22, "recovery_factor": 0.98}).json
    H = 5000 * FT
    p = ref.std_tp(H)[1]
    mach = ref.mach_of_ratio(ref.qc_of_cas(160 * KT) / p)
    T = naca_static_from_mach(22.0, mach, 0.98)
    oat = post(client, STALL, {**body, "temperature": T - 273.15}).json
    assert value(doc["stall"], "tas") == pytest.approx(value(oat["stall"], "tas"), rel=1e-12)


def test_tat_turn_and_buffet(client):
    # Turn at a TAS: T from the TAT (NACA 1135) does not change the TAS, so the radius is TAS^2 / (g tan bank);
    # buffet at a Mach number: the TAS is M sqrt(gamma R T) with T from the TAT.
    turn = post(client, TURN, {"tas": 200, "altitude": 8000, "total_air_temperature": 10, "bank_angle": 25,
                               "outputs": ["radius"], "output_units": {"distance": "m"}}).json
    assert value(turn, "radius") == pytest.approx((200 * KT) ** 2 / (G0 * math.tan(math.radians(25))), rel=1e-12)
    doc = post(client, BUFFET, {"weight": W_KG, "wing_area": S, "mach": 0.74, "altitude": {"value": 370, "unit": "FL"},
                                "total_air_temperature": -28, "recovery_factor": 0.98, "buffet": TQ62_BUFFET,
                                "outputs": ["tas"]}).json
    T = naca_static_from_mach(-28.0, 0.74, 0.98)
    assert value(doc, "tas") * KT == pytest.approx(0.74 * math.sqrt(ref.KAPPA * ref.R * T), rel=1e-9)


def test_tat_drag_at_a_cl(client):
    # The CL fixes the EAS (no temperature needed), its Mach number at the static pressure gives the static
    # temperature from the TAT (NACA 1135); drag = W CD / CL whatever the air, TAS = M sqrt(gamma R T).
    cd0, k, cl = 0.024, 0.0371, 0.5
    doc = post(client, DRAG, {"weight": W_KG, "wing_area": S, "cd0": cd0, "induced_drag_factor": k, "cl": cl,
                              "altitude": 10000, "total_air_temperature": 10, "outputs": ["drag", "tas"]}).json
    p = ref.std_tp(10000 * FT)[1]
    eas = math.sqrt(2 * W_KG * G0 / (ref.RHO0 * S * cl))
    mach = eas / math.sqrt(ref.KAPPA * p / ref.RHO0)
    T = naca_static_from_mach(10.0, mach, 1.0)
    assert value(doc, "drag") == pytest.approx(W_KG * G0 * (cd0 + k * cl * cl) / cl, rel=1e-9)
    assert value(doc, "tas") * KT == pytest.approx(mach * math.sqrt(ref.KAPPA * ref.R * T), rel=1e-9)


# --- refusals, each with its pointer --------------------------------------------------------------------------

_SOLVE_ALT = {"solve_for": "altitude", "weight": W_KG, "wing_area": S, "cl": 0.6, "tas": 260}
_POLAR = {"weight": W_KG, "wing_area": S, "cd0": 0.024, "induced_drag_factor": 0.0371}


@pytest.mark.parametrize(("path", "body", "pointer", "why"), [
    (SOLVE, {**_SOLVE_ALT, "dew_point": -20}, "/dew_point", "Solving for altitude from a TAS takes dry air"),
    (SOLVE, {**_SOLVE_ALT, "relative_humidity": 50}, "/relative_humidity",
     "Solving for altitude from a TAS takes dry air"),
    (STALL, {"weight": 22000, "wing_area": S, "cl_max": 1.6, "altitude": 5000, "total_air_temperature": 20},
     "/total_air_temperature", "give that speed"),
    (DRAG_SPEEDS, {**_POLAR, "altitude": 5000, "total_air_temperature": 20}, "/total_air_temperature",
     "this endpoint finds its speeds"),
    (DRAG_SPEEDS, {**_POLAR, "altitude": 5000, "recovery_factor": 0.9}, "/recovery_factor",
     "belongs to a total air temperature"),
    (TURN, {"cas": 200, "altitude": 5000, "bank_angle": 30, "total_air_temperature": 10, "temperature": 5},
     "/total_air_temperature", "Give one of temperature, isa_deviation or total_air_temperature"),
    (DRAG, {**_POLAR, "cas": 200, "altitude": 5000, "altitude_kind": "geometric", "total_air_temperature": 10},
     "/total_air_temperature", "needs the pressure altitude"),
    (BUFFET, {"weight": W_KG, "wing_area": S, "mach": 0.5, "altitude": 5000, "buffet": TQ62_BUFFET,
              "recovery_factor": 0.9}, "/recovery_factor", "belongs to a total air temperature"),
    (TURN, {"cas": 200, "altitude": 5000, "bank_angle": 30, "dew_point": 5, "relative_humidity": 40}, "/dew_point",
     "not both"),
    (STALL, {"weight": 22000, "wing_area": S, "cl_max": 1.6, "altitude": 5000, "temperature": 20, "dew_point": 21},
     "/dew_point", "above the temperature"),
    (DRAG, {**_POLAR, "tas": 200, "altitude": 5000, "total_air_temperature": 140}, "/total_air_temperature",
     "from the standard temperature"),
])
def test_refusals_say_why(client, path, body, pointer, why):
    response = post(client, path, body)
    assert_problem(response, 422, pointer)
    assert why in " ".join(e["message"] for e in response.json["errors"] if e["pointer"] == pointer)


def test_the_spec_states_the_refusals(client):
    # The rules are declarative: the published request schemas reject what the service refuses (jsonschema over
    # the spec's own schemas; the 422 above is the check of the same rule).
    import jsonschema

    spec = client.get("/openapi.json").json
    schemas = spec["components"]["schemas"]

    def valid(name, body):
        return jsonschema.Draft202012Validator({**schemas[name], "components": spec["components"]}).is_valid(body)

    assert not valid("LiftSolveRequest", {**_SOLVE_ALT, "dew_point": -20})
    at_mach = {key: v for key, v in _SOLVE_ALT.items() if key != "tas"} | {"mach": 0.45}
    assert valid("LiftSolveRequest", {**at_mach, "dew_point": -20})  # from the pressure alone: humidity applies
    assert valid("LiftSolveRequest", {**_SOLVE_ALT, "total_air_temperature": -12})
    assert not valid("LiftStallRequest", {"weight": 22000, "wing_area": S, "cl_max": 1.6, "altitude": 5000,
                                          "total_air_temperature": 20})
    assert not valid("DragSpeedsRequest", {**_POLAR, "altitude": 5000, "total_air_temperature": 20})
    assert valid("DragSpeedsRequest", {**_POLAR, "altitude": 5000, "dew_point": -20})
