"""The performance endpoints that landed after the first reference suite, against the independent reference
(tests/reference.py; nothing imported from the service):

- POST /v1/drag and /v1/drag/speeds: the parabolic polar CD = CD0 + k CL^2, k = 1 / (pi A e), D = q S CD, P = D V,
  minimum drag at CL = sqrt(CD0 / k), minimum power at CL = sqrt(3 CD0 / k), the best glide at (L/D)max with
  L = W cos(gamma) (Anderson, Introduction to Flight, ch. 6), the speeds through NACA Report 1135 and the ICAO
  atmosphere; the closed forms themselves checked against numeric minima (scipy);
- POST /v1/lift/turn: n = 1 / cos(bank), R = V^2 / (g0 tan(bank)), omega = V / R, t = 2 pi / omega (Anderson ch. 6;
  ICAO Doc 8168's rate-of-turn formula, from memory, as a typed check);
- POST /v1/lift/buffet: CL = W / (q S) with q = 1/2 rho V^2, the boundary interpolated by hand, W/delta, the
  limits for a margin by scaling (the lift equation: at a fixed Mach number CL goes as W / p);
- POST /v1/airspeed/schedule with `speed_limit`: min(CAS, limit) below the limit's altitude, then the CAS/Mach
  schedule.

Each output on the single-point path and the array path, in every unit of its dimension, on standard and
off-standard days, and the edges of each closed form. Only the public HTTP contract is used.
"""

import math

import pytest
from scipy.optimize import brentq, minimize_scalar

from tests import reference as ref
from tests.reference import UNITS, app_client, check, post_ok, to_unit

KT = 0.5144444444444445  # 1852 m / 3600 s (exact definition)
FT = 0.3048  # international foot (exact)
G0 = 9.80665  # standard acceleration of free fall (exact, ICAO Doc 7488/3)


@pytest.fixture(scope="module")
def client():
    """One test client for the module."""
    return app_client()


def _air(H, dT=0.0, T=None):
    """(p, T) at pressure altitude H [m] with an ISA deviation or a temperature."""
    T_std, p = ref.std_tp(H)
    return p, (T_std + dT) if T is None else T


def _columns(rows, single):
    """Reference rows -> one row (single point) or a dict of lists (array), nested dicts followed."""
    if single:
        return rows[0]
    return {k: (_columns([r[k] for r in rows], False) if isinstance(rows[0][k], dict) else [r[k] for r in rows])
            for k in rows[0]}


# --- The reference's closed forms against numeric optima --------------------------------------------------------

@pytest.mark.parametrize(("cd0", "k", "rho"), [(0.024, 0.0371, 1.225), (0.018, 0.045, 0.4), (0.05, 0.08, 0.9)])
def test_polar_closed_forms_against_numeric_minima(cd0, k, rho):
    # D(V) = 1/2 rho V^2 S CD0 + k (n W)^2 / (1/2 rho V^2 S) and P(V) = D(V) V, minimised numerically (Brent):
    # their minima lie at the closed forms' CL (Anderson ch. 6).
    W, S = 21000 * G0, 61.0

    def drag(V):
        q = 0.5 * rho * V * V
        return q * S * cd0 + k * W * W / (q * S)

    d = ref.drag_speeds(W, S, cd0, k)
    for name, f in (("minimum_drag", drag), ("minimum_power", lambda V: drag(V) * V)):
        V = minimize_scalar(f, bounds=(10.0, 400.0), method="bounded", options={"xatol": 1e-9}).x
        assert W / (0.5 * rho * V * V * S) == pytest.approx(d[name]["cl"], rel=1e-5), name
        assert V * math.sqrt(rho / ref.RHO0) == pytest.approx(d[name]["eas"], rel=1e-5), name
    # The flattest glide: the CL that minimises CD / CL, and the speed of the equilibrium L = W cos(gamma).
    cl = minimize_scalar(lambda c: (cd0 + k * c * c) / c, bounds=(0.01, 5.0), method="bounded",
                         options={"xatol": 1e-10}).x
    assert cl == pytest.approx(d["best_glide"]["cl"], rel=1e-5)
    gamma = math.atan((cd0 + k * cl * cl) / cl)
    assert gamma == pytest.approx(d["best_glide"]["glide_angle"], rel=1e-9)
    V = brentq(lambda v: 0.5 * ref.RHO0 * v * v * S * d["best_glide"]["cl"] - W * math.cos(gamma), 1.0, 500.0)
    assert V == pytest.approx(d["best_glide"]["eas"], rel=1e-12)
    assert d["minimum_drag"]["lift_to_drag"] == pytest.approx(1.0 / (2.0 * math.sqrt(cd0 * k)), rel=1e-15)


def test_polar_typed_values():
    # CD0 0.025, k 0.04 (worked by hand): CL_md = sqrt(0.625) = 0.790569, (L/D)max = 1 / (2 sqrt(0.001)) = 15.8114,
    # CL_mp = sqrt(1.875) = 1.369306; k of A 11, e 0.8: 1 / (pi 8.8) = 0.0361715.
    d = ref.drag_speeds(1.0, 1.0, 0.025, 0.04)
    assert d["minimum_drag"]["cl"] == pytest.approx(0.790569, abs=1e-6)
    assert d["minimum_drag"]["lift_to_drag"] == pytest.approx(15.8114, abs=1e-4)
    assert d["minimum_power"]["cl"] == pytest.approx(1.369306, abs=1e-6)
    assert 1 / (math.pi * 11 * 0.8) == pytest.approx(0.0361715, abs=1e-7)


# --- POST /v1/drag ----------------------------------------------------------------------------------------------

DRAG_OUTPUTS = {"cl": None, "cd": None, "drag": "force", "lift_to_drag": None, "thrust_required": "force",
                "power_required": "power", "cas": "speed", "eas": "speed", "tas": "speed", "mach": None,
                "dynamic_pressure": "pressure", "pressure_altitude": "altitude", "density_altitude": "altitude",
                "density": "density"}
POLAR_A = {"aspect_ratio": 11.0, "oswald_efficiency": 0.78}
POLAR_K = {"induced_drag_factor": 0.0371}

#: Our invented TQ-62 (61 m2): every speed kind and a CL, a level turn and a load factor, both polar forms, cold,
#: standard and hot days, both ends of the model's altitudes.
DRAGS = [
    {"mass": 21000.0, "cd0": 0.024, "polar": POLAR_A, "kind": "mach", "speed": 0.45, "H": 7620.0, "dT": 5.0},
    {"mass": 22000.0, "cd0": 0.024, "polar": POLAR_K, "kind": "cas", "speed": 210.0, "H": 3048.0, "dT": -15.0,
     "bank": 25.0},
    {"mass": 19000.0, "cd0": 0.030, "polar": POLAR_A, "kind": "tas", "speed": 280.0, "H": 6000.0, "dT": 20.0,
     "n": 1.5},
    {"mass": 21000.0, "cd0": 0.024, "polar": POLAR_K, "kind": "eas", "speed": 180.0, "H": 0.0, "dT": 0.0},
    {"mass": 21000.0, "cd0": 0.024, "polar": POLAR_A, "kind": "cl", "speed": 0.55, "H": 5000.0, "dT": -10.0},
    {"mass": 23000.0, "cd0": 0.026, "polar": POLAR_K, "kind": "cl", "speed": 1.2, "H": -5000.0, "dT": 30.0,
     "bank": 40.0},
    {"mass": 21000.0, "cd0": 0.024, "polar": POLAR_K, "kind": "mach", "speed": 4.0, "H": 84852.0, "dT": 0.0},
]


def _k(polar):
    if "induced_drag_factor" in polar:
        return polar["induced_drag_factor"]
    return 1.0 / (math.pi * polar["aspect_ratio"] * polar["oswald_efficiency"])  # Anderson ch. 5


def _n(case):
    return 1.0 / math.cos(math.radians(case["bank"])) if "bank" in case else case.get("n", 1.0)


def _drag_expected(case):
    W, S, n = case["mass"] * G0, 61.0, _n(case)
    p, T = _air(case["H"], case["dT"])
    kind, value = case["kind"], case["speed"]
    if kind == "cl":  # the speed from the lift: q = n W / (S CL), then its EAS
        sp = ref.speeds("eas", math.sqrt(2.0 * n * W / (S * value) / ref.RHO0), p, T)
    else:
        sp = ref.speeds(kind, value if kind == "mach" else value * KT, p, T)
    out = ref.polar_point(W, S, case["cd0"], _k(case["polar"]), sp["dynamic_pressure"], sp["tas"], n)
    rho = p / (ref.R * T)
    out.update({name: sp[name] for name in ("cas", "eas", "tas", "mach")})
    out.update({"pressure_altitude": case["H"], "density_altitude": ref.density_altitude(rho), "density": rho})
    return out


def _drag_body(case):
    body = {"weight": case["mass"], "wing_area": 61, "cd0": case["cd0"], **case["polar"],
            case["kind"]: case["speed"], "altitude": {"value": case["H"], "unit": "m"}, "isa_deviation": case["dT"]}
    if "bank" in case:
        body["bank_angle"] = case["bank"]
    if "n" in case:
        body["load_factor"] = case["n"]
    return body


def _compare_drag(answer, expected, units=None):
    units = units or {}
    for name, dim in DRAG_OUTPUTS.items():
        abs_si = 1e-6 if name in ("pressure_altitude", "density_altitude") else 0.0
        check(answer[name], expected[name], dim, units.get(dim) if dim else None, abs_si=abs_si)


@pytest.mark.parametrize("case", DRAGS, ids=lambda c: f"{c['kind']}{c['speed']:g}@{c['H']:g}m{c['dT']:+g}K")
def test_drag_single_point(client, case):
    _compare_drag(post_ok(client, "/v1/drag", _drag_body(case)), _drag_expected(case))


@pytest.mark.parametrize("kind", ["mach", "cas", "tas", "eas", "cl"])
def test_drag_array(client, kind):
    base = next(c for c in DRAGS if c["kind"] == kind)
    cases = [dict(base, speed=base["speed"] * f, dT=d) for f, d in ((1.0, -20.0), (1.1, 0.0), (1.25, 25.0))]
    body = _drag_body(base) | {kind: [c["speed"] for c in cases], "isa_deviation": [c["dT"] for c in cases]}
    _compare_drag(post_ok(client, "/v1/drag", body), _columns([_drag_expected(c) for c in cases], False))


_DRAG_UNITS = [(d, u) for d in ("force", "power", "speed", "pressure", "altitude", "density") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _DRAG_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_drag_every_output_unit(client, dim, unit, array):
    case = DRAGS[1]  # 210 kt CAS in a 25 deg turn, ISA-15
    cases = [case, dict(case, speed=250.0, bank=0.0)][: 2 if array else 1]
    body = _drag_body(case) | {"output_units": {dim: unit}}
    if array:
        body |= {"cas": [c["speed"] for c in cases], "bank_angle": [c["bank"] for c in cases]}
    _compare_drag(post_ok(client, "/v1/drag", body), _columns([_drag_expected(c) for c in cases], not array),
                  {dim: unit})


@pytest.mark.parametrize(("dim", "unit"), [(d, u) for d in ("weight", "area", "speed", "angle") for u in UNITS[d]])
@pytest.mark.parametrize("array", [False, True])
def test_drag_every_input_unit(client, dim, unit, array):
    # The weight as a mass or a force, the wing area, the speed (a TAS) and the bank in each unit.
    cases = [{"mass": 21000.0, "cd0": 0.024, "polar": POLAR_A, "kind": "tas", "speed": v, "H": 4000.0, "dT": 8.0,
              "bank": b} for v, b in ((250.0, 30.0), (300.0, 0.0))][: 2 if array else 1]

    def value(values):
        return values if array else values[0]

    body = _drag_body(cases[0])
    W, S = [21000 * G0] * len(cases), 61.0
    if dim == "weight":
        body["weight"] = {"value": value(to_unit(W, "weight", unit)), "unit": unit}
    elif dim == "area":
        body["wing_area"] = {"value": to_unit(S, "area", unit), "unit": unit}
    elif dim == "speed":
        body["tas"] = {"value": value(to_unit([c["speed"] * KT for c in cases], "speed", unit)), "unit": unit}
    else:
        body["bank_angle"] = {"value": value(to_unit([math.radians(c["bank"]) for c in cases], "angle", unit)),
                              "unit": unit}
    if array:  # the other array input, so that both points differ
        body.setdefault("tas", [c["speed"] for c in cases])
        if dim != "angle":
            body["bank_angle"] = [c["bank"] for c in cases]
        if dim != "speed":
            body["tas"] = [c["speed"] for c in cases]
    _compare_drag(post_ok(client, "/v1/drag", body), _columns([_drag_expected(c) for c in cases], not array))


def test_drag_with_temperature_and_qnh(client):
    # OAT -5 degC at indicated 10 000 ft on QNH 1008: pressure altitude 10 000 ft + H(1008 hPa).
    H = 10000 * FT + ref.pressure_altitude(100_800.0)
    dT = 268.15 - ref.std_tp(H)[0]
    answer = post_ok(client, "/v1/drag", {"weight": 22000, "wing_area": 61, "cd0": 0.024, **POLAR_K, "cas": 210,
                                          "altitude": 10000, "qnh": 1008, "temperature": -5})
    _compare_drag(answer, _drag_expected({"mass": 22000.0, "cd0": 0.024, "polar": POLAR_K, "kind": "cas",
                                          "speed": 210.0, "H": H, "dT": dT}))


def test_drag_at_the_characteristic_cls(client):
    # At CL = sqrt(CD0 / k) the drag coefficient is 2 CD0 and L/D the maximum, 1 / (2 sqrt(CD0 k)); at
    # sqrt(3 CD0 / k) it is 4 CD0 (Anderson ch. 6).
    cd0, k = 0.024, 0.0371
    answer = post_ok(client, "/v1/drag", {"weight": 21000, "wing_area": 61, "cd0": cd0, "induced_drag_factor": k,
                                          "cl": [math.sqrt(cd0 / k), math.sqrt(3 * cd0 / k)], "altitude": 10000})
    assert answer["cd"] == pytest.approx([2 * cd0, 4 * cd0], rel=1e-13)
    assert answer["lift_to_drag"][0] == pytest.approx(1 / (2 * math.sqrt(cd0 * k)), rel=1e-13)


def test_drag_beyond_the_polar_mach_limit_warns_exactly(client):
    # Above mach_limit (default 0.6; here also 0.65) a warning on cd names the points; at the limit itself none.
    body = {"weight": 21000, "wing_area": 61, "cd0": 0.024, **POLAR_K, "altitude": 30000, "outputs": ["cd"]}
    answer = post_ok(client, "/v1/drag", body | {"mach": [0.5, 0.6, 0.61, 0.4, 0.8]})
    assert [(w["field"], w["count"], w["indices"]) for w in answer["warnings"]] == [("cd", 2, [2, 4])]
    limited = post_ok(client, "/v1/drag", body | {"mach": [0.6, 0.65, 0.66], "mach_limit": 0.65})
    assert [(w["field"], w["count"], w["indices"]) for w in limited["warnings"]] == [("cd", 1, [2])]
    single = post_ok(client, "/v1/drag", body | {"mach": 0.6})
    assert single["warnings"] == []


# --- POST /v1/drag/speeds ---------------------------------------------------------------------------------------

CONDITIONS = {
    "minimum_drag": {"eas": "speed", "cas": "speed", "tas": "speed", "mach": None, "cl": None, "drag": "force",
                     "lift_to_drag": None},
    "minimum_power": {"eas": "speed", "cas": "speed", "tas": "speed", "mach": None, "cl": None, "power": "power",
                      "drag": "force"},
    "best_glide": {"eas": "speed", "cas": "speed", "tas": "speed", "mach": None, "cl": None, "glide_ratio": None,
                   "glide_angle": "angle", "sink_rate": "vertical_speed", "glide_distance": "distance"},
}

#: (mass [kg], CD0, polar, pressure altitude [m], ISA deviation [K], height to glide [m] or None).
SPEEDS = [(21000.0, 0.024, POLAR_A, 7620.0, 5.0, 7620.0), (19000.0, 0.024, POLAR_K, 0.0, 0.0, 2438.4),
          (23000.0, 0.030, POLAR_K, 3000.0, -25.0, None), (21000.0, 0.020, POLAR_A, -5000.0, 30.0, 100.0),
          (21000.0, 0.024, POLAR_K, 84852.0, 0.0, 84852.0), (22000.0, 0.028, POLAR_A, 11000.0, 15.0, 3048.0)]


def _speeds_expected(mass, cd0, polar, H, dT, height):
    W, S = mass * G0, 61.0
    p, T = _air(H, dT)
    d = ref.drag_speeds(W, S, cd0, _k(polar))
    out = {}
    for name, cond in d.items():
        sp = ref.speeds("eas", cond["eas"], p, T)
        row = {key: sp[key] for key in ("eas", "cas", "tas", "mach")} | {"cl": cond["cl"]}
        if name == "minimum_drag":
            row |= {"drag": cond["drag"], "lift_to_drag": cond["lift_to_drag"]}
        elif name == "minimum_power":
            drag = W * cond["cd"] / cond["cl"]  # D = W / (L/D) in level flight
            row |= {"drag": drag, "power": drag * sp["tas"]}
        else:
            row |= {"glide_ratio": cond["glide_ratio"], "glide_angle": cond["glide_angle"],
                    "sink_rate": sp["tas"] * math.sin(cond["glide_angle"])}
            if height is not None:
                row["glide_distance"] = height * cond["glide_ratio"]
        out[name] = row
    return out


def _speeds_body(mass, cd0, polar, H, dT, height):
    body = {"weight": mass, "wing_area": 61, "cd0": cd0, **polar, "altitude": {"value": H, "unit": "m"},
            "isa_deviation": dT}
    if height is not None:
        body["height"] = {"value": height, "unit": "m"}
    return body


def _compare_speeds(answer, expected, units=None):
    units = units or {}
    for cond, outputs in CONDITIONS.items():
        for name, dim in outputs.items():
            if name == "glide_distance" and name not in expected[cond]:
                assert name not in answer[cond]
                continue
            check(answer[cond][name], expected[cond][name], dim, units.get(dim) if dim else None)


@pytest.mark.parametrize("case", SPEEDS, ids=lambda c: f"{c[3]:g}m{c[4]:+g}K")
def test_drag_speeds_single_point(client, case):
    _compare_speeds(post_ok(client, "/v1/drag/speeds", _speeds_body(*case)), _speeds_expected(*case))


def test_drag_speeds_array(client):
    cases = [c for c in SPEEDS if c[5] is not None and c[2] is POLAR_K]
    body = _speeds_body(*cases[0]) | {
        "weight": [c[0] for c in cases], "cd0": [c[1] for c in cases],
        "altitude": {"value": [c[3] for c in cases], "unit": "m"}, "isa_deviation": [c[4] for c in cases],
        "height": {"value": [c[5] for c in cases], "unit": "m"}}
    _compare_speeds(post_ok(client, "/v1/drag/speeds", body), _columns([_speeds_expected(*c) for c in cases], False))


_SPEEDS_UNITS = [(d, u) for d in ("speed", "force", "power", "angle", "vertical_speed", "distance") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _SPEEDS_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_drag_speeds_every_output_unit(client, dim, unit, array):
    cases = [SPEEDS[0], (21000.0, 0.024, POLAR_A, 3000.0, -12.0, 1500.0)][: 2 if array else 1]
    body = _speeds_body(*cases[0]) | {"output_units": {dim: unit}}
    if array:
        body |= {"altitude": {"value": [c[3] for c in cases], "unit": "m"}, "isa_deviation": [c[4] for c in cases],
                 "height": {"value": [c[5] for c in cases], "unit": "m"}}
    _compare_speeds(post_ok(client, "/v1/drag/speeds", body),
                    _columns([_speeds_expected(*c) for c in cases], not array), {dim: unit})


@pytest.mark.parametrize("unit", [u for u in UNITS["altitude"] if u != "FL"])  # FL is a pressure altitude: a 422
def test_drag_speeds_height_in_every_unit(client, unit):
    heights = [3048.0, 7620.0]  # 10 000 and 25 000 ft
    for array in (False, True):
        value = to_unit(heights if array else heights[0], "altitude", unit)
        answer = post_ok(client, "/v1/drag/speeds", {"weight": 21000, "wing_area": 61, "cd0": 0.024, **POLAR_K,
                                                     "altitude": 20000, "height": {"value": value, "unit": unit},
                                                     "outputs": ["best_glide"]})
        ld = ref.drag_speeds(21000 * G0, 61.0, 0.024, 0.0371)["best_glide"]["glide_ratio"]
        check(answer["best_glide"]["glide_distance"], [h * ld for h in heights] if array else heights[0] * ld,
              "distance")


def test_drag_speeds_typed_values(client):
    # The EAS of each condition does not depend on the altitude or the day; the TAS does (EAS sqrt(rho0 / rho)).
    body = {"weight": 21000, "wing_area": 61, "cd0": 0.024, **POLAR_K, "altitude": [0, 20000, 40000],
            "isa_deviation": [0, 10, -10]}
    answer = post_ok(client, "/v1/drag/speeds", body)
    for cond in CONDITIONS:
        eas = answer[cond]["eas"]["value"]
        assert eas == pytest.approx([eas[0]] * 3, rel=1e-13), cond
    assert answer["minimum_drag"]["drag"]["value"] == pytest.approx([answer["minimum_drag"]["drag"]["value"][0]] * 3,
                                                                    rel=1e-13)


def test_drag_speeds_beyond_the_polar_mach_limit_warns_per_condition(client):
    # At 84 852 m the speeds are supersonic: a warning on each condition, on every point of it.
    answer = post_ok(client, "/v1/drag/speeds", {"weight": 21000, "wing_area": 61, "cd0": 0.024, **POLAR_K,
                                                 "altitude": {"value": [0, 84852], "unit": "m"}})
    assert sorted((w["field"], w["count"], w["indices"]) for w in answer["warnings"]) == [
        ("best_glide", 1, [1]), ("minimum_drag", 1, [1]), ("minimum_power", 1, [1])]


# --- POST /v1/lift/turn -----------------------------------------------------------------------------------------

TURN_OUTPUTS = {"radius": "distance", "turn_rate": "angular_rate", "time_for_360": "time", "load_factor": None,
                "bank_angle": "angle", "tas": "speed"}
#: (speed kind, value, pressure altitude [m], ISA deviation [K], turn input, its value (deg, -, deg/s)).
TURNS = [("tas", 150.0, 1524.0, 0.0, "bank_angle", 30.0), ("cas", 210.0, 3048.0, -20.0, "bank_angle", 25.0),
         ("eas", 180.0, 0.0, 15.0, "load_factor", 2.0), ("mach", 0.5, 7620.0, 10.0, "turn_rate", 3.0),
         ("cas", 250.0, 9000.0, 0.0, "turn_rate", 1.5), ("tas", 300.0, 0.0, 0.0, "bank_angle", 89.9),
         ("tas", 60.0, 0.0, 0.0, "turn_rate", 100.0), ("cas", 140.0, -5000.0, 30.0, "load_factor", 1.0001)]


def _bank(tas, given, value):
    """The bank [rad] from the given turn input: acos(1 / n), or tan(bank) = omega V / g0."""
    if given == "bank_angle":
        return math.radians(value)
    if given == "load_factor":
        return math.acos(1.0 / value)
    return math.atan(math.radians(value) * tas / G0)


def _turn_expected(kind, speed, H, dT, given, value):
    p, T = _air(H, dT)
    tas = ref.speeds(kind, speed if kind == "mach" else speed * KT, p, T)["tas"]
    return ref.level_turn(tas, _bank(tas, given, value)) | {"tas": tas}


def _compare_turn(answer, expected, units=None):
    units = units or {}
    for name, dim in TURN_OUTPUTS.items():
        check(answer[name], expected[name], dim, units.get(dim) if dim else None, abs_si=1e-12)


@pytest.mark.parametrize("case", TURNS, ids=lambda c: f"{c[0]}{c[1]:g}-{c[4]}{c[5]:g}")
def test_turn_single_point(client, case):
    kind, speed, H, dT, given, value = case
    answer = post_ok(client, "/v1/lift/turn", {kind: speed, "altitude": {"value": H, "unit": "m"},
                                               "isa_deviation": dT, given: value})
    _compare_turn(answer, _turn_expected(*case))


@pytest.mark.parametrize("given", ["bank_angle", "load_factor", "turn_rate"])
def test_turn_array(client, given):
    cases = [("cas", v, 3000.0, d, given, x) for v, d, x in
             ((160.0, -10.0, {"bank_angle": 20.0, "load_factor": 1.2, "turn_rate": 2.0}[given]),
              (220.0, 0.0, {"bank_angle": 45.0, "load_factor": 1.5, "turn_rate": 3.0}[given]),
              (300.0, 25.0, {"bank_angle": 60.0, "load_factor": 3.0, "turn_rate": 4.5}[given]))]
    answer = post_ok(client, "/v1/lift/turn", {"cas": [c[1] for c in cases], "altitude": {"value": 3000, "unit": "m"},
                                               "isa_deviation": [c[3] for c in cases], given: [c[5] for c in cases]})
    _compare_turn(answer, _columns([_turn_expected(*c) for c in cases], False))


_TURN_UNITS = [(d, u) for d in ("distance", "angular_rate", "time", "angle", "speed") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _TURN_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_turn_every_unit_in_and_out(client, dim, unit, array):
    # The outputs in the unit, and where the dimension is an input's (rate, bank, speed), that input in it too.
    cases = [("tas", 200.0, 1000.0, 7.0, "turn_rate", 3.0), ("tas", 260.0, 1000.0, 7.0, "turn_rate", 2.0)]
    cases = cases if array else cases[:1]

    def value(values):
        return values if array else values[0]

    body = {"tas": value([c[1] for c in cases]), "altitude": {"value": 1000, "unit": "m"}, "isa_deviation": 7,
            "turn_rate": value([c[5] for c in cases]), "output_units": {dim: unit}}
    if dim == "angular_rate":
        body["turn_rate"] = {"value": value(to_unit([math.radians(c[5]) for c in cases], dim, unit)), "unit": unit}
    elif dim == "speed":
        body["tas"] = {"value": value(to_unit([c[1] * KT for c in cases], dim, unit)), "unit": unit}
    elif dim == "angle":  # the bank as the input instead, the rate follows
        cases = [c[:4] + ("bank_angle", b) for c, b in zip(cases, (30.0, 50.0), strict=False)]
        body.pop("turn_rate")
        body["bank_angle"] = {"value": value(to_unit([math.radians(c[5]) for c in cases], dim, unit)), "unit": unit}
    _compare_turn(post_ok(client, "/v1/lift/turn", body), _columns([_turn_expected(*c) for c in cases], not array),
                  {dim: unit})


def test_turn_wings_level_is_null_with_its_warnings_exactly(client):
    # Bank 0, load factor 1, rate 0: no turn; radius and time null at those points, a warning each, rate 0 and
    # load factor 1 exactly.
    for given, level, turning in (("bank_angle", 0, 30), ("load_factor", 1, 1.5), ("turn_rate", 0, 3)):
        answer = post_ok(client, "/v1/lift/turn", {"tas": 200, "altitude": 5000,
                                                   given: [level, turning, level, turning, level]})
        assert [v is None for v in answer["radius"]["value"]] == [True, False, True, False, True]
        assert [v is None for v in answer["time_for_360"]["value"]] == [True, False, True, False, True]
        assert answer["turn_rate"]["value"][0] == 0.0 and answer["load_factor"][0] == 1.0
        assert [(w["field"], w["count"], w["indices"]) for w in answer["warnings"]] == [
            ("radius", 3, [0, 2, 4]), ("time_for_360", 3, [0, 2, 4])]
        single = post_ok(client, "/v1/lift/turn", {"tas": 200, "altitude": 5000, given: level})
        assert single["radius"]["value"] is None and single["time_for_360"]["value"] is None
        assert [(w["count"], w["indices"]) for w in single["warnings"]] == [(1, [0]), (1, [0])]


def test_turn_typed_values(client):
    # Rate one (standard rate, 3 deg/s; ICAO Doc 8168): 360 deg in 2 minutes exactly, whatever the speed. 60 deg of
    # bank: n = 2. ICAO Doc 8168's rate of turn R = 3431 tan(bank) / (pi V) deg/s with V in kt, and its radius
    # r = V / (20 pi R) NM (from memory): to the formula's 4 digits.
    rate_one = post_ok(client, "/v1/lift/turn", {"tas": [120, 250, 400], "altitude": 5000,
                                                 "turn_rate": {"value": 1, "unit": "standard_rate"},
                                                 "output_units": {"time": "min"}})
    assert rate_one["time_for_360"]["value"] == pytest.approx([2.0] * 3, rel=1e-13)
    v = 180.0
    answer = post_ok(client, "/v1/lift/turn", {"tas": v, "altitude": 0, "bank_angle": [25, 60]})
    assert answer["load_factor"][1] == pytest.approx(2.0, rel=1e-13)
    R = [3431 * math.tan(math.radians(b)) / (math.pi * v) for b in (25, 60)]
    assert answer["turn_rate"]["value"] == pytest.approx(R, rel=2e-4)
    assert answer["radius"]["value"] == pytest.approx([v / (20 * math.pi * r) for r in R], rel=2e-4)


# --- POST /v1/lift/buffet ---------------------------------------------------------------------------------------

BUFFET_OUTPUTS = {"cl": None, "buffet_cl": None, "load_factor_to_buffet": None, "bank_to_buffet": "angle",
                  "weight_over_delta": "mass", "maximum_weight_over_delta": "mass", "maximum_altitude": "altitude",
                  "maximum_weight": "mass", "cas": "speed", "tas": "speed"}
TABLE = {"mach": [0.5, 0.6, 0.7, 0.8], "cl": [0.9, 0.82, 0.7, 0.52]}
#: (mass [kg], Mach, pressure altitude [m], ISA deviation [K], margin or None): both table ends, beyond buffet in
#: 1 g (n < 1), a maximum altitude beyond the model.
BUFFETS = [(21000.0, 0.74, 11277.6, 0.0, 1.3), (22000.0, 0.5, 9000.0, -15.0, 1.5), (23000.0, 0.8, 12500.0, 10.0, 1.3),
           (18000.0, 0.65, 7000.0, 20.0, None), (23000.0, 0.78, 14000.0, -5.0, 1.3),
           (21000.0, 0.7, 3000.0, 0.0, 1.0)]


def _buffet_expected(mass, mach, H, dT, margin):
    W, S = mass * G0, 61.0
    p, T = _air(H, dT)
    sp = ref.speeds("mach", mach, p, T)
    cl = W / (sp["dynamic_pressure"] * S)  # q = 1/2 rho V^2 from the speeds, not (gamma/2) p M^2
    cl_b = ref.interpolate(mach, TABLE["mach"], TABLE["cl"])
    n_b = cl_b / cl
    out = {"cl": cl, "buffet_cl": cl_b, "load_factor_to_buffet": n_b,
           "bank_to_buffet": math.acos(1.0 / n_b) if n_b >= 1.0 else None,
           "weight_over_delta": mass * ref.P0 / p, "cas": sp["cas"], "tas": sp["tas"]}
    if margin is not None:
        # CL goes as W / p at a fixed Mach number: the margin is kept up to W n_b / margin, or down to the pressure
        # p margin / n_b.
        p_min = p * margin / n_b
        top = ref.pressure_altitude(p_min) if ref.std_tp(ref.H_TOP)[1] <= p_min <= ref.std_tp(ref.H_LOW)[1] else None
        out |= {"maximum_weight_over_delta": mass * ref.P0 / p * n_b / margin, "maximum_altitude": top,
                "maximum_weight": mass * n_b / margin}
    return out


def _buffet_body(mass, mach, H, dT, margin):
    body = {"weight": mass, "wing_area": 61, "mach": mach, "altitude": {"value": H, "unit": "m"},
            "isa_deviation": dT, "buffet": TABLE}
    return body if margin is None else body | {"margin": margin}


def _compare_buffet(answer, expected, units=None):
    units = units or {}
    for name, dim in BUFFET_OUTPUTS.items():
        if name not in expected:
            assert name not in answer, name
            continue
        abs_si = 1e-6 if name == "maximum_altitude" else 0.0
        rel = 1e-7 if name == "maximum_altitude" else ref.REL  # a root in the service and in brentq here
        check(answer[name], expected[name], dim, units.get(dim) if dim else None, rel=rel, abs_si=abs_si)


@pytest.mark.parametrize("case", BUFFETS, ids=lambda c: f"M{c[1]:g}@{c[2]:g}m{c[3]:+g}K-n{c[4]}")
def test_buffet_single_point(client, case):
    _compare_buffet(post_ok(client, "/v1/lift/buffet", _buffet_body(*case)), _buffet_expected(*case))


def test_buffet_array(client):
    cases = [c for c in BUFFETS if c[4] == 1.3]
    body = _buffet_body(*cases[0]) | {"weight": [c[0] for c in cases], "mach": [c[1] for c in cases],
                                      "altitude": {"value": [c[2] for c in cases], "unit": "m"},
                                      "isa_deviation": [c[3] for c in cases]}
    answer = post_ok(client, "/v1/lift/buffet", body)
    _compare_buffet(answer, _columns([_buffet_expected(*c) for c in cases], False))


_BUFFET_UNITS = [(d, u) for d in ("mass", "angle", "altitude", "speed") for u in UNITS[d]]


@pytest.mark.parametrize(("dim", "unit"), _BUFFET_UNITS)
@pytest.mark.parametrize("array", [False, True])
def test_buffet_every_output_unit(client, dim, unit, array):
    cases = [BUFFETS[0], (20000.0, 0.72, 12000.0, 0.0, 1.3)][: 2 if array else 1]
    body = _buffet_body(*cases[0]) | {"output_units": {dim: unit}}
    if array:
        body |= {"weight": [c[0] for c in cases], "mach": [c[1] for c in cases],
                 "altitude": {"value": [c[2] for c in cases], "unit": "m"}}
    _compare_buffet(post_ok(client, "/v1/lift/buffet", body), _columns([_buffet_expected(*c) for c in cases],
                                                                        not array), {dim: unit})


@pytest.mark.parametrize("unit", list(UNITS["weight"]))
def test_buffet_weight_in_every_unit(client, unit):
    masses = [19000.0, 22500.0]
    answer = post_ok(client, "/v1/lift/buffet", _buffet_body(21000.0, 0.74, 11000.0, 0.0, 1.3) | {
        "weight": {"value": to_unit([m * G0 for m in masses], "weight", unit), "unit": unit}})
    _compare_buffet(answer, _columns([_buffet_expected(m, 0.74, 11000.0, 0.0, 1.3) for m in masses], False))


def test_buffet_temperature_changes_only_the_tas(client):
    # At a fixed Mach number CL depends on the static pressure only: cold and hot days differ in the TAS alone.
    body = _buffet_body(21000.0, 0.74, 11277.6, 0.0, 1.3) | {"isa_deviation": [-30, 0, 30]}
    answer = post_ok(client, "/v1/lift/buffet", body)
    for name in BUFFET_OUTPUTS:
        if name != "tas":
            values = answer[name]["value"] if isinstance(answer[name], dict) else answer[name]
            assert values == pytest.approx([values[1]] * 3, rel=1e-12), name


def test_buffet_edges_and_warnings_exactly(client):
    # Mach at the table's ends answers; beyond them a 422 on /mach. Beyond buffet in 1 g (n < 1): bank null with its
    # warning; below the margin: a warning on the load factor; a maximum altitude beyond the model: null, warned.
    ends = post_ok(client, "/v1/lift/buffet", _buffet_body(21000.0, 0.5, 9000.0, 0.0, None) | {"mach": [0.5, 0.8]})
    assert ends["buffet_cl"] == pytest.approx([0.9, 0.52], rel=1e-15)
    for mach in (0.4999, 0.8001):
        response = client.post("/v1/lift/buffet", json=_buffet_body(21000.0, mach, 9000.0, 0.0, None))
        assert response.status_code == 422 and response.get_json()["errors"][0]["pointer"] == "/mach"
    # 23 t at M0.78 at 14 km is beyond buffet in 1 g; 22.5 t at M0.74, 11.3 km holds 1.44 g, short of the 1.5 g
    # margin but with a level turn to buffet; 100 g at M0.5 at 3 km
    # keeps a 1.5 g margin above the model's top (a pressure of 0.15 Pa).
    cases = [(23000.0, 0.78, 14000.0), (22500.0, 0.74, 11277.6), (0.1, 0.5, 3000.0), (23000.0, 0.78, 14000.0)]
    answer = post_ok(client, "/v1/lift/buffet", {
        "weight": [c[0] for c in cases], "wing_area": 61, "mach": [c[1] for c in cases],
        "altitude": {"value": [c[2] for c in cases], "unit": "m"}, "buffet": TABLE, "margin": 1.5})
    expected = [_buffet_expected(*c, 0.0, 1.5) for c in cases]
    _compare_buffet(answer, _columns(expected, False))
    assert [e["bank_to_buffet"] is None for e in expected] == [True, False, False, True]
    assert [e["maximum_altitude"] is None for e in expected] == [False, False, True, False]
    assert sorted((w["field"], w["count"], w["indices"]) for w in answer["warnings"]) == [
        ("bank_to_buffet", 2, [0, 3]), ("load_factor_to_buffet", 3, [0, 1, 3]), ("maximum_altitude", 1, [2])]


# --- POST /v1/airspeed/schedule with speed_limit ------------------------------------------------------------------

SCHEDULE_OUTPUTS = {"cas": "speed", "mach": None, "tas": "speed", "eas": "speed", "crossover_altitude": "altitude"}
#: (CAS [kt], Mach, pressure altitude [ft], ISA deviation [K], limit CAS [kt], limit altitude [ft]): below, at and
#: above the limit's altitude; a limit above the schedule's CAS; a limit whose Mach number is above the schedule's.
LIMITED = [(290.0, 0.76, 5000.0, 10.0, 250.0, 10000.0), (290.0, 0.76, 10000.0, 10.0, 250.0, 10000.0),
           (290.0, 0.76, 9999.0, -10.0, 250.0, 10000.0), (290.0, 0.76, 35000.0, 0.0, 250.0, 10000.0),
           (240.0, 0.76, 5000.0, 0.0, 250.0, 10000.0), (320.0, 0.70, 30000.0, 15.0, 300.0, 36000.0),
           (290.0, 0.76, -1000.0, 30.0, 200.0, 3000.0), (290.0, 0.76, 20000.0, -20.0, 250.0, 10000.0)]


def _limited_expected(cas_kt, mach, alt_ft, dT, limit_kt, limit_ft, T=None):
    p, T = _air(alt_ft * FT, dT, T)
    limited = alt_ft < limit_ft and limit_kt < cas_kt
    scheduled = min(cas_kt, limit_kt) if limited else cas_kt
    at_cas = ref.speeds("cas", scheduled * KT, p, T)
    governing = "mach" if at_cas["mach"] > mach else ("limit" if limited else "cas")
    flown = ref.speeds("mach", mach, p, T) if governing == "mach" else at_cas
    return {"governing": governing, "crossover_altitude": ref.crossover(cas_kt * KT, mach)[1],
            **{k: flown[k] for k in ("cas", "mach", "tas", "eas")}}


def _compare_limited(answer, rows, units=None, single=False):
    units = units or {}
    assert answer["governing"] == (rows[0]["governing"] if single else [r["governing"] for r in rows])
    for name, dim in SCHEDULE_OUTPUTS.items():
        want = [r[name] for r in rows]
        check(answer[name], want[0] if single else want, dim, units.get(dim) if dim else None, abs_si=1e-7)


@pytest.mark.parametrize("case", LIMITED, ids=lambda c: f"{c[0]:g}kt-M{c[1]:g}@{c[2]:g}ft{c[3]:+g}K-lim{c[4]:g}")
def test_schedule_speed_limit_single_point(client, case):
    cas, mach, alt, dT, limit, limit_alt = case
    answer = post_ok(client, "/v1/airspeed/schedule", {"cas": cas, "mach": mach, "altitude": alt, "isa_deviation": dT,
                                                       "speed_limit": {"cas": limit, "altitude": limit_alt}})
    _compare_limited(answer, [_limited_expected(*case)], single=True)


def test_schedule_speed_limit_array_and_governing(client):
    cases = [c for c in LIMITED if c[4:] == (250.0, 10000.0) and c[:2] == (290.0, 0.76)]
    answer = post_ok(client, "/v1/airspeed/schedule", {
        "cas": 290, "mach": 0.76, "altitude": [c[2] for c in cases], "isa_deviation": [c[3] for c in cases],
        "speed_limit": {"cas": 250, "altitude": 10000}})
    rows = [_limited_expected(*c) for c in cases]
    _compare_limited(answer, rows)
    assert [r["governing"] for r in rows] == ["limit", "cas", "limit", "mach", "cas"]
    for i, row in enumerate(rows):  # the limit is flown exactly where it governs
        if row["governing"] == "limit":
            assert answer["cas"]["value"][i] == 250.0


@pytest.mark.parametrize(("dim", "unit"), [(d, u) for d in ("speed", "altitude") for u in UNITS[d]])
@pytest.mark.parametrize("array", [False, True])
def test_schedule_speed_limit_every_unit(client, dim, unit, array):
    # The limit's CAS or altitude in the unit (FL too: a pressure altitude, as `altitude` is), and the outputs.
    cases = [LIMITED[0], LIMITED[7]] if array else [LIMITED[0]]
    limit = {"cas": 250, "altitude": 10000}
    if dim == "speed":
        limit["cas"] = {"value": to_unit(250 * KT, "speed", unit), "unit": unit}
    else:
        limit["altitude"] = {"value": to_unit(10000 * FT, "altitude", unit), "unit": unit}
    alts = [c[2] for c in cases]
    body = {"cas": 290, "mach": 0.76, "altitude": alts if array else alts[0], "speed_limit": limit,
            "isa_deviation": [c[3] for c in cases] if array else cases[0][3], "output_units": {dim: unit}}
    _compare_limited(post_ok(client, "/v1/airspeed/schedule", body), [_limited_expected(*c) for c in cases],
                     {dim: unit}, single=not array)


@pytest.mark.parametrize("unit", list(UNITS["temperature"]))
def test_schedule_speed_limit_with_outside_air_temperature(client, unit):
    T = [300.15, 268.15]
    alts = [3000.0, 12000.0]
    answer = post_ok(client, "/v1/airspeed/schedule", {
        "cas": 290, "mach": 0.76, "altitude": alts, "temperature": {"value": to_unit(T, "temperature", unit),
                                                                    "unit": unit},
        "speed_limit": {"cas": 250, "altitude": 10000}})
    rows = [_limited_expected(290.0, 0.76, a, 0.0, 250.0, 10000.0, T=t) for a, t in zip(alts, T, strict=True)]
    _compare_limited(answer, rows)
    assert answer["governing"] == ["limit", "cas"]


def test_schedule_moist_air_eas(client):
    # With a relative humidity the EAS is TAS sqrt(rho / rho0) at the moist density (partial densities, Hardy's
    # vapour pressure); CAS, Mach and TAS are those of dry air at the day's temperature.
    alts, dT, rh = [2000.0, 8000.0], 20.0, 90.0
    answer = post_ok(client, "/v1/airspeed/schedule", {"cas": 290, "mach": 0.76, "altitude": alts,
                                                       "isa_deviation": dT, "relative_humidity": rh,
                                                       "speed_limit": {"cas": 250, "altitude": 10000}})
    rows = []
    for a in alts:
        row = _limited_expected(290.0, 0.76, a, dT, 250.0, 10000.0)
        p, T = _air(a * FT, dT)
        rho = ref.moist_density(p, T, rh / 100.0 * ref.saturation_vapour_pressure(T))
        row["eas"] = row["tas"] * math.sqrt(rho / ref.RHO0)
        rows.append(row)
    _compare_limited(answer, rows)


# --- Other forms of the inputs: an IAS through a calibration table, a temperature, a QNH -------------------------

#: IAS -> CAS by linear interpolation (kt): IAS 210 lies a tenth of the way from 200 -> 201 to 300 -> 298, so
#: CAS = 201 + 0.1 * 97 = 210.7 kt (by hand).
CALIBRATION = {"ias": [100, 200, 300], "cas": [102, 201, 298]}


def test_drag_and_turn_from_an_ias(client):
    case = {"mass": 22000.0, "cd0": 0.024, "polar": POLAR_K, "kind": "cas", "speed": 210.7, "H": 3048.0, "dT": -5.0,
            "bank": 25.0}
    body = {"weight": 22000, "wing_area": 61, "cd0": 0.024, **POLAR_K, "ias": [210, 210], "calibration": CALIBRATION,
            "altitude": 10000, "isa_deviation": -5, "bank_angle": [25, 0]}
    answer = post_ok(client, "/v1/drag", body)
    _compare_drag(answer, _columns([_drag_expected(case), _drag_expected(dict(case, bank=0.0))], False))
    turn = post_ok(client, "/v1/lift/turn", {"ias": 210, "calibration": CALIBRATION, "altitude": 10000,
                                             "isa_deviation": -5, "bank_angle": 25})
    _compare_turn(turn, _turn_expected("cas", 210.7, 3048.0, -5.0, "bank_angle", 25.0))


@pytest.mark.parametrize("unit", list(UNITS["temperature"]))
def test_speeds_turn_and_buffet_with_a_temperature_and_qnh(client, unit):
    # OAT 27 degC and -2 degC at indicated 15 200 ft on QNH 1008 (our invented Quillon Ridge): pressure altitude
    # 15 200 ft + H(1008 hPa); the ISA deviation follows from the OAT there.
    H = 15200 * FT + ref.pressure_altitude(100_800.0)
    T = [300.15, 271.15]
    temperature = {"value": to_unit(T, "temperature", unit), "unit": unit}
    air = {"altitude": 15200, "qnh": 1008, "temperature": temperature}
    dT = [t - ref.std_tp(H)[0] for t in T]
    speeds = post_ok(client, "/v1/drag/speeds", {"weight": 21000, "wing_area": 61, "cd0": 0.024, **POLAR_K,
                                                 "height": 8000, **air})
    _compare_speeds(speeds, _columns([_speeds_expected(21000.0, 0.024, POLAR_K, H, d, 8000 * FT) for d in dT], False))
    turn = post_ok(client, "/v1/lift/turn", {"cas": 200, "turn_rate": 3, **air})
    _compare_turn(turn, _columns([_turn_expected("cas", 200.0, H, d, "turn_rate", 3.0) for d in dT], False))
    buffet = post_ok(client, "/v1/lift/buffet", {"weight": 21000, "wing_area": 61, "mach": 0.6, "buffet": TABLE,
                                                 "margin": 1.3, **air})
    _compare_buffet(buffet, _columns([_buffet_expected(21000.0, 0.6, H, d, 1.3) for d in dT], False))
