"""POST /v1/lift/solve, /v1/lift/stall and /v1/lift/curve against the independent reference (tests/reference.py:
L = n W = q S CL with q = 1/2 rho V^2 (Anderson, Introduction to Flight), the level turn n = 1 / cos(bank), the
pitot relations of NACA Report 1135, the ICAO atmosphere, the DATCOM lift-curve slope; constants typed from the
texts, never imported from the service).

Every output, single point and array, every unit of every dimension (weight as a mass or a force, wing loading
as N/m2, kg/m2, lb/ft2, lift slope per rad and per deg), standard and off-standard days. Only the public HTTP
contract is used.
"""

import math

import pytest
from scipy.optimize import brentq

from tests import reference as ref
from tests.reference import UNITS, app_client, check, post_ok, to_unit

KT = 0.5144444444444445  # 1852 m / 3600 s (exact definition)
FT = 0.3048  # international foot (exact)
G0 = 9.80665  # standard gravity (exact, ICAO Doc 7488/3)


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


SOLVE_OUTPUTS = {"lift": "force", "weight": "force", "load_factor": None, "bank_angle": "angle", "cl": None,
                 "wing_area": "area", "wing_loading": "wing_loading", "dynamic_pressure": "pressure",
                 "cas": "speed", "eas": "speed", "tas": "speed", "mach": None, "pressure_altitude": "altitude",
                 "density_altitude": "altitude", "density": "density"}
WING_OUTPUTS = {"angle_of_attack": "angle", "beyond_stall": None}


def _air(H, dT):
    T_std, p = ref.std_tp(H)
    return p, T_std + dT


def _density_off_standard(H, dT):
    p, T = _air(H, dT)
    return p / (ref.R * T)


def _solve_expected(case):
    """Every solve output [SI] for a case: dict with solve_for, mass [kg], S [m2], cl, kind, speed (kt or Mach),
    H [m], dT [K], n or bank [deg], wing (aspect, sweep [deg], kappa, cl_max, alpha0 [deg])."""
    unknown = case["solve_for"]
    W = case.get("mass", 0.0) * G0
    S, cl = case.get("S"), case.get("cl")
    n = 1.0 / math.cos(math.radians(case["bank"])) if "bank" in case else case.get("n", 1.0)
    kind, value = case.get("kind"), case.get("speed")
    si = None if kind is None else (value if kind == "mach" else value * KT)
    H, dT = case.get("H"), case.get("dT", 0.0)
    if unknown in ("speed", "altitude"):
        q = n * W / (S * cl)
        if unknown == "speed":
            p, T = _air(H, dT)
            sp = ref.speeds("eas", math.sqrt(2.0 * q / ref.RHO0), p, T)
        else:
            if kind == "mach":
                H = ref.pressure_altitude(q / (0.7 * si * si))  # q = (kappa / 2) p M^2, kappa = 1.4
            elif kind == "tas":
                rho = 2.0 * q / (si * si)
                H = brentq(lambda h: _density_off_standard(h, dT) - rho, -5000.0, 84852.0, xtol=1e-10)
            else:  # cas
                H = brentq(lambda h: ref.speeds("cas", si, *_air(h, dT))["dynamic_pressure"] - q, -5000.0, 84852.0,
                           xtol=1e-10)
            p, T = _air(H, dT)
            sp = ref.speeds(kind, si, p, T)
    else:
        p, T = _air(H, dT)
        sp = ref.speeds(kind, si, p, T)
        q = sp["dynamic_pressure"]
        if unknown == "cl":
            cl = n * W / (q * S)
        elif unknown == "weight":
            W = q * S * cl / n
        elif unknown == "wing_area":
            S = n * W / (q * cl)
        elif unknown == "load_factor":
            n = q * S * cl / W
    rho = p / (ref.R * T)
    out = {"lift": n * W, "weight": W, "load_factor": n, "bank_angle": math.acos(1.0 / n) if n >= 1.0 else None,
           "cl": cl, "wing_area": S, "wing_loading": W / S, "dynamic_pressure": q, "cas": sp["cas"], "eas": sp["eas"],
           "tas": sp["tas"], "mach": sp["mach"], "pressure_altitude": H, "density_altitude": ref.density_altitude(rho),
           "density": rho}
    if "wing" in case:
        w = case["wing"]
        slope = ref.datcom_slope(w["aspect"], math.radians(w["sweep"]), sp["mach"], w.get("kappa", 1.0))
        out["angle_of_attack"] = cl / slope + math.radians(w.get("alpha0", 0.0))
        out["beyond_stall"] = cl > w["cl_max"]
    return out


def _solve_body(case):
    body = {"solve_for": case["solve_for"]}
    if "mass" in case and case["solve_for"] != "weight":
        body["weight"] = case["mass"]
    if "S" in case and case["solve_for"] != "wing_area":
        body["wing_area"] = case["S"]
    if "cl" in case and case["solve_for"] != "cl":
        body["cl"] = case["cl"]
    if case.get("kind") and case["solve_for"] != "speed":
        body[case["kind"]] = case["speed"]
    if case["solve_for"] != "altitude":
        body["altitude"] = {"value": case["H"], "unit": "m"}
    if case.get("dT"):
        body["isa_deviation"] = case["dT"]
    if "bank" in case:
        body["bank_angle"] = case["bank"]
    elif "n" in case and case["solve_for"] != "load_factor":
        body["load_factor"] = case["n"]
    if "wing" in case:
        w = case["wing"]
        body["wing"] = {"aspect_ratio": w["aspect"], "sweep_half_chord": w["sweep"], "cl_max": w["cl_max"]}
        if "kappa" in w:
            body["wing"]["airfoil_efficiency"] = w["kappa"]
        if "alpha0" in w:
            body["wing"]["zero_lift_angle"] = w["alpha0"]
    return body


WING = {"aspect": 11.0, "sweep": 5.0, "kappa": 0.95, "cl_max": 1.6, "alpha0": -2.0}
#: Our invented demo type NR-200 (61 m2), in every solve, speed kind and turn.
SOLVES = [
    {"solve_for": "cl", "mass": 21000.0, "S": 61.0, "kind": "mach", "speed": 0.45, "H": 7620.0, "dT": 5.0},
    {"solve_for": "cl", "mass": 22000.0, "S": 61.0, "kind": "cas", "speed": 140.0, "H": 900.0, "bank": 45.0,
     "wing": WING},
    {"solve_for": "cl", "mass": 18000.0, "S": 61.0, "kind": "tas", "speed": 260.0, "H": 6000.0, "dT": -12.0},
    {"solve_for": "cl", "mass": 18000.0, "S": 61.0, "kind": "eas", "speed": 200.0, "H": 3000.0, "n": 1.5},
    {"solve_for": "speed", "mass": 22000.0, "S": 61.0, "cl": 1.2, "H": 914.4, "dT": 10.0},
    {"solve_for": "speed", "mass": 20000.0, "S": 61.0, "cl": 0.5, "H": 10000.0, "dT": -20.0, "bank": 30.0,
     "wing": WING},
    {"solve_for": "weight", "S": 61.0, "cl": 1.1, "kind": "cas", "speed": 150.0, "H": 1500.0, "dT": 3.0},
    {"solve_for": "wing_area", "mass": 21000.0, "cl": 0.9, "kind": "tas", "speed": 240.0, "H": 4000.0},
    {"solve_for": "load_factor", "mass": 21000.0, "S": 61.0, "cl": 1.2, "kind": "cas", "speed": 250.0, "H": 3000.0},
    {"solve_for": "load_factor", "mass": 21000.0, "S": 61.0, "cl": 1.2, "kind": "cas", "speed": 100.0, "H": 7620.0},
    {"solve_for": "altitude", "mass": 21000.0, "S": 61.0, "cl": 0.6, "kind": "mach", "speed": 0.45, "dT": 5.0},
    {"solve_for": "altitude", "mass": 21000.0, "S": 61.0, "cl": 0.6, "kind": "tas", "speed": 270.0, "dT": -7.0},
    {"solve_for": "altitude", "mass": 21000.0, "S": 61.0, "cl": 0.6, "kind": "cas", "speed": 190.0, "dT": 12.0},
]


def _compare_solve(answer, expected, units=None):
    units = units or {}
    for name, dim in (SOLVE_OUTPUTS | WING_OUTPUTS).items():
        if name not in expected or (name in WING_OUTPUTS and name not in answer):
            continue
        want = expected[name]
        if name == "beyond_stall":
            assert answer[name] == want
            continue
        tol = 1e-5 if name in ("pressure_altitude", "density_altitude") else 1e-9
        rel = 1e-7 if expected.get("_root") else ref.REL
        check(answer[name], want, dim, units.get(dim) if dim else None, rel=rel, abs_si=tol)


@pytest.mark.parametrize("case", SOLVES, ids=lambda c: f"{c['solve_for']}-{c.get('kind')}")
def test_solve_single_point(client, case):
    answer = post_ok(client, "/v1/lift/solve", _solve_body(case))
    expected = _solve_expected(case)
    assert answer["solved_for"] == case["solve_for"]
    if case["solve_for"] == "altitude" and case["kind"] == "cas":
        expected["_root"] = True  # a root find in the service and here: 1e-7
    _compare_solve(answer, expected)
    assert ("angle_of_attack" in answer) == ("wing" in case)


def test_solve_null_bank_angle_warning_exactly(client):
    # Load factors below 1 have no level-turn bank angle: null, with one warning naming the points.
    answer = post_ok(client, "/v1/lift/solve", {"solve_for": "load_factor", "weight": 21000, "wing_area": 61,
                                                "cl": 1.2, "cas": [100, 250, 120, 300], "altitude": 10000})
    assert [v is None for v in answer["bank_angle"]["value"]] == [True, False, True, False]
    assert answer["warnings"] == [{"field": "bank_angle", "message": answer["warnings"][0]["message"], "count": 2,
                                   "indices": [0, 2]}]


@pytest.mark.parametrize("solve_for", ["cl", "speed", "weight", "wing_area", "load_factor", "altitude"])
def test_solve_array(client, solve_for):
    base = next(c for c in SOLVES if c["solve_for"] == solve_for and "wing" not in c)
    # Three points: vary the speed (or CL for speed) and the ISA deviation.
    cases = []
    for i, dT in enumerate((-10.0, 0.0, 15.0)):
        case = dict(base, dT=dT)
        if "speed" in base and solve_for != "speed":
            case["speed"] = base["speed"] * (1.0 + 0.1 * i)
        else:
            case["cl"] = base["cl"] * (1.0 + 0.2 * i)
        cases.append(case)
    body = _solve_body(cases[0])
    body["isa_deviation"] = [c["dT"] for c in cases]
    if solve_for == "speed":
        body["cl"] = [c["cl"] for c in cases]
    else:
        body[base["kind"]] = [c["speed"] for c in cases]
    answer = post_ok(client, "/v1/lift/solve", body)
    rows = [_solve_expected(c) for c in cases]
    expected = {name: [r[name] for r in rows] for name in SOLVE_OUTPUTS}
    if solve_for == "altitude" and base["kind"] == "cas":
        expected["_root"] = True
    _compare_solve(answer, expected)


_SOLVE_UNITS = [(d, u) for d in ("force", "angle", "area", "wing_loading", "pressure", "speed", "altitude", "density")
                for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _SOLVE_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_solve_every_output_unit(client, dim, unit, array):
    case = SOLVES[1]  # CL at 140 kt CAS in a 45 deg turn, with the wing
    cases = [case, dict(case, speed=160.0, bank=20.0)]
    body = _solve_body(case) | {"output_units": {dim: unit}}
    if array:
        body["cas"], body["bank_angle"] = [140.0, 160.0], [45.0, 20.0]
    answer = post_ok(client, "/v1/lift/solve", body)
    rows = [_solve_expected(c) for c in cases]
    expected = {name: [r[name] for r in rows] for name in rows[0]} if array else rows[0]
    _compare_solve(answer, expected, {dim: unit})


@pytest.mark.parametrize("unit", list(UNITS["weight"]))
@pytest.mark.parametrize("array", [False, True])
def test_solve_weight_in_every_unit(client, unit, array):
    # The weight as a mass (kg, t, lb: times g0) or as a force (N, kN, lbf).
    W = [205_939.65, 180_000.0]  # N
    value = to_unit(W, "weight", unit)
    body = {"solve_for": "cl", "weight": {"value": value if array else value[0], "unit": unit}, "wing_area": 61,
            "mach": 0.45, "altitude": 25000}
    answer = post_ok(client, "/v1/lift/solve", body)
    rows = [_solve_expected({"solve_for": "cl", "mass": w / G0, "S": 61.0, "kind": "mach", "speed": 0.45,
                             "H": 7620.0}) for w in W]
    _compare_solve(answer, {k: [r[k] for r in rows] for k in rows[0]} if array else rows[0])


@pytest.mark.parametrize("unit", list(UNITS["area"]))
def test_solve_wing_area_and_bank_in_every_unit(client, unit):
    for angle_unit in UNITS["angle"]:
        body = {"solve_for": "cl", "weight": 21000, "wing_area": {"value": to_unit(61.0, "area", unit), "unit": unit},
                "cas": 200, "altitude": 5000,
                "bank_angle": {"value": to_unit([0.0, math.radians(60.0)], "angle", angle_unit), "unit": angle_unit}}
        answer = post_ok(client, "/v1/lift/solve", body)
        rows = [_solve_expected({"solve_for": "cl", "mass": 21000.0, "S": 61.0, "kind": "cas", "speed": 200.0,
                                 "H": 1524.0, "bank": b}) for b in (0.0, 60.0)]
        _compare_solve(answer, {k: [r[k] for r in rows] for k in rows[0]})


def test_wing_loading_typed_values(client):
    # 21 000 kg on 61 m2: 344.262 kg/m2 (mass over area), = 70.5110 lb/ft2 (21 000 / 0.45359237 lb over
    # 61 / 0.09290304 ft2), = 3376.06 N/m2 (times 9.80665).
    for unit, want in (("kg/m2", 21000 / 61), ("lb/ft2", (21000 / 0.45359237) / (61 / 0.09290304)),
                       ("N/m2", 21000 * 9.80665 / 61)):
        answer = post_ok(client, "/v1/lift/solve", {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": 0.4,
                                                    "altitude": 20000, "outputs": ["wing_loading"],
                                                    "output_units": {"wing_loading": unit}})
        assert answer["wing_loading"] == {"value": pytest.approx(want, rel=1e-13), "unit": unit}


# --- POST /v1/lift/stall ------------------------------------------------------------------------------------------

SPEEDS = {"eas": "speed", "cas": "speed", "tas": "speed", "mach": None}


def _stall_expected(W, S, cl_max, H, dT, n, factors=(), margin=None, vs_1g=None):
    p, T = _air(H, dT)
    vs_1g = vs_1g if vs_1g is not None else ref.stall_eas(W, S, cl_max)
    vs_n = vs_1g * math.sqrt(n)
    out = {"stall": ref.speeds("eas", vs_n, p, T),
           "multiples": [dict(ref.speeds("eas", k * vs_n, p, T), factor=k, cl_fraction=1.0 / k**2) for k in factors]}
    if margin is not None:
        eas = ref.speeds(margin[0], margin[1], p, T)["eas"]
        stall_n = (eas / vs_1g) ** 2
        out["margin"] = {"stall_load_factor": stall_n,
                         "max_bank_angle": math.acos(1.0 / stall_n) if stall_n >= 1.0 else None,
                         "cl_fraction": (vs_n / eas) ** 2}
    return out


def _compare_stall(answer, expected, units=None, array=False):
    units = units or {}

    def pick(values):
        return values if array else values[0]

    for name, dim in SPEEDS.items():
        check(answer["stall"][name], pick([e["stall"][name] for e in expected]), dim, units.get(dim) if dim else None)
    for i, got in enumerate(answer.get("multiples", [])):
        for name, dim in (SPEEDS | {"cl_fraction": None, "factor": None}).items():
            check(got[name], pick([e["multiples"][i][name] for e in expected]), dim,
                  units.get(dim) if dim else None)
    if "margin" in answer:
        m = answer["margin"]
        check(m["stall_load_factor"], pick([e["margin"]["stall_load_factor"] for e in expected]), None)
        check(m["cl_fraction"], pick([e["margin"]["cl_fraction"] for e in expected]), None)
        check(m["max_bank_angle"], pick([e["margin"]["max_bank_angle"] for e in expected]), "angle",
              units.get("angle"))


STALLS = [  # (mass [kg], S, CLmax, H [m], dT, n or bank, factors, margin speed)
    (22000.0, 61.0, 1.6, 914.4, 10.0, {"bank_angle": 45.0}, (1.3,), ("cas", 160 * KT)),
    (19000.0, 61.0, 2.4, 0.0, 0.0, {"load_factor": 2.5}, (1.13, 1.23), ("tas", 200 * KT)),
    (23000.0, 61.0, 1.45, 7620.0, -15.0, {}, (), ("mach", 0.5)),
    (22000.0, 61.0, 1.6, 3000.0, 25.0, {"bank_angle": 60.0}, (0.9, 1.3), ("eas", 150 * KT)),
]


def _stall_n(turn):
    return 1.0 / math.cos(math.radians(turn["bank_angle"])) if "bank_angle" in turn else turn.get("load_factor", 1.0)


@pytest.mark.parametrize("case", STALLS)
def test_stall_single_point(client, case):
    mass, S, cl_max, H, dT, turn, factors, (kind, speed) = case
    body = {"weight": mass, "wing_area": S, "cl_max": cl_max, "altitude": {"value": H, "unit": "m"},
            "isa_deviation": dT, **turn, kind: speed if kind == "mach" else speed / KT}
    if factors:
        body["speed_factors"] = list(factors)
    answer = post_ok(client, "/v1/lift/stall", body)
    expected = _stall_expected(mass * G0, S, cl_max, H, dT, _stall_n(turn), factors, (kind, speed))
    _compare_stall(answer, [expected])
    assert len(answer.get("multiples", [])) == len(factors)


def test_stall_array_and_every_unit(client):
    mass, S, cl_max = 22000.0, 61.0, 1.6
    banks, H, dT = [0.0, 30.0, 45.0, 75.0], 2000.0, -4.0
    expected = [_stall_expected(mass * G0, S, cl_max, H, dT, 1 / math.cos(math.radians(b)), (1.3, 1.0),
                                ("cas", 170 * KT)) for b in banks]
    for dim in ("speed", "angle"):
        for unit in UNITS[dim]:
            for array in (False, True):
                body = {"weight": {"value": mass / 1000, "unit": "t"},
                        "wing_area": {"value": to_unit(S, "area", "ft2"), "unit": "ft2"},
                        "cl_max": cl_max, "altitude": {"value": to_unit(H, "altitude", "km"), "unit": "km"},
                        "isa_deviation": {"value": to_unit(dT, "temperature_difference", "degF"), "unit": "degF"},
                        "bank_angle": banks if array else banks[0], "speed_factors": [1.3, 1.0],
                        "cas": {"value": to_unit(170 * KT, "speed", unit if dim == "speed" else "kt"),
                                "unit": unit if dim == "speed" else "kt"},
                        "output_units": {dim: unit}}
                answer = post_ok(client, "/v1/lift/stall", body)
                _compare_stall(answer, expected if array else expected[:1], {dim: unit}, array)


def test_stall_from_a_reference_speed(client):
    # 108 kt CAS at 22 000 kg at sea level, scaled by sqrt(W / W_ref) to 19 000 kg, at 5000 ft ISA+10: the CAS is
    # an EAS of the same impact pressure at the reference altitude (standard day), then every kind here.
    p_ref, T_ref = _air(0.0, 0.0)
    ref_eas = ref.speeds("cas", 108 * KT, p_ref, T_ref)["eas"]
    for alt_ref_ft in (0.0, 8000.0):
        p_ref, T_ref = _air(alt_ref_ft * FT, 0.0)
        ref_eas = ref.speeds("cas", 108 * KT, p_ref, T_ref)["eas"]
        answer = post_ok(client, "/v1/lift/stall", {
            "weight": 19000, "reference": {"stall_speed": 108, "weight": 22000, "altitude": alt_ref_ft},
            "altitude": 5000, "isa_deviation": 10, "load_factor": [1.0, 1.5]})
        expected = [_stall_expected(0, 0, 0, 1524.0, 10.0, n, vs_1g=ref_eas * math.sqrt(19000 / 22000))
                    for n in (1.0, 1.5)]
        _compare_stall(answer, expected, array=True)


def test_stall_margin_null_max_bank_below_the_1g_stall_speed(client):
    # Below the 1 g stall speed the stall load factor is under 1: no level turn (null, with its warning), and
    # CL/CLmax above 1 (a warning of its own, the same points).
    answer = post_ok(client, "/v1/lift/stall", {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 0,
                                                "eas": [100, 140, 90, 200]})
    vs = ref.stall_eas(22000 * G0, 61.0, 1.6) / KT  # 116.78 kt
    assert vs == pytest.approx(116.78, abs=0.01)
    assert [v is None for v in answer["margin"]["max_bank_angle"]["value"]] == [True, False, True, False]
    fields = {w["field"]: (w["count"], w["indices"]) for w in answer["warnings"]}
    assert fields == {"margin.max_bank_angle": (2, [0, 2]), "margin.cl_fraction": (2, [0, 2])}
    check(answer["margin"]["stall_load_factor"], [(v / vs) ** 2 for v in (100, 140, 90, 200)], None)


# --- POST /v1/lift/curve ------------------------------------------------------------------------------------------

CURVES = [  # aspect ratio, half-chord sweep [deg], Mach, kappa (or section slope [1/deg]), alpha0 [deg]
    (11.0, 0.0, 0.3, {"airfoil_lift_slope": {"value": 0.105, "unit": "1/deg"}}, -2.5),
    (8.0, 25.0, 0.78, {"airfoil_efficiency": 0.95}, 0.0),
    (3.0, 45.0, 0.0, {}, -1.0),
    (20.0, 0.0, 0.6, {"airfoil_lift_slope": {"value": 6.0, "unit": "1/rad"}}, 0.5),
]


def _kappa(extra):
    if "airfoil_efficiency" in extra:
        return extra["airfoil_efficiency"]
    if "airfoil_lift_slope" in extra:
        s = extra["airfoil_lift_slope"]
        per_rad = s["value"] * (180 / math.pi if s["unit"] == "1/deg" else 1.0)
        return per_rad / (2 * math.pi)  # kappa = section slope / 2 pi (DATCOM 4.1.3.2)
    return 1.0


@pytest.mark.parametrize("case", CURVES)
@pytest.mark.parametrize("unit", list(UNITS["lift_slope"]))
def test_curve_slope_and_cl_both_ways(client, case, unit):
    A, sweep, M, extra, alpha0 = case
    slope = ref.datcom_slope(A, math.radians(sweep), M, _kappa(extra))
    for angle_unit in UNITS["angle"]:
        alphas = [math.radians(a) for a in (-4.0, 0.0, 6.0, 12.0)]
        body = {"aspect_ratio": A, "sweep_half_chord": {"value": to_unit(math.radians(sweep), "angle", angle_unit),
                                                        "unit": angle_unit},
                "mach": M, **extra, "zero_lift_angle": alpha0, "cl_max": 1.0,
                "output_units": {"lift_slope": unit, "angle": angle_unit}}
        by_angle = post_ok(client, "/v1/lift/curve", body | {
            "angle_of_attack": {"value": to_unit(alphas, "angle", angle_unit), "unit": angle_unit}})
        cls = [slope * (a - math.radians(alpha0)) for a in alphas]
        check(by_angle["lift_slope"], [slope] * 4, "lift_slope", unit)
        check(by_angle["cl"], cls, None, abs_si=1e-12)
        assert by_angle["beyond_stall"] == [c > 1.0 for c in cls]
        by_cl = post_ok(client, "/v1/lift/curve", body | {"cl": 0.8})
        check(by_cl["angle_of_attack"], 0.8 / slope + math.radians(alpha0), "angle", angle_unit)
        check(by_cl["lift_slope"], slope, "lift_slope", unit)
        assert by_cl["beyond_stall"] is False


def test_curve_typed_values():
    # A = 6, unswept, incompressible, kappa = 1 gives CLa = 2 pi 6 / (2 + sqrt(36 + 4)) = 37.699 / 8.3246
    # = 4.5287 per rad (the formula worked by hand).
    assert ref.datcom_slope(6.0, 0.0, 0.0) == pytest.approx(2 * math.pi * 6 / (2 + math.sqrt(40)), rel=1e-15)
    assert ref.datcom_slope(6.0, 0.0, 0.0) == pytest.approx(4.5287, abs=1e-4)
