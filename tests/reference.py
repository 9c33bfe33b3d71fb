"""Independent reference values for the reference tests: the standards' formulas, constants typed from their text.

Nothing here imports ``service``. Every constant names where it is written. The algorithms are deliberately
plain and different from the service's: one point at a time, layer by layer from sea level, inverses by scipy's
``brentq`` root finder, the hypsometric integral by scipy's ``quad``, the Rayleigh pitot formula in the form
NACA Report 1135 prints it. So a slip in the service's vectorised closed forms is not repeated here.
``tests/test_reference_oracle.py`` checks this module against ambiance, fluids and aerocalc3 (and published
table values) before the endpoint tests rely on it; the later parts (the USSA 1976 property set, Hardy's saturation
formula, the moist density, the polar's closed forms) are checked at the top of ``tests/test_reference_airdata.py``
and ``tests/test_reference_performance.py`` (ambiance, fluids, iapws, MetPy, numeric optima, printed values).
"""

from __future__ import annotations

import json
import math

import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

# --- ICAO Doc 7488/3 (1993), table A and section 2 (identical values in ISO 2533:1975 and USSA 1976) ---------
G0 = 9.80665  # standard acceleration of free fall [m/s2] (exact by definition)
R = 287.05287  # specific gas constant of air, R* / M [J/(kg K)] (Doc 7488/3 gives 287.05287)
KAPPA = 1.4  # adiabatic index (ratio of specific heats) of air [-]
T0 = 288.15  # sea-level temperature [K]
P0 = 101_325.0  # sea-level pressure [Pa]
R_EARTH = 6_356_766.0  # nominal Earth radius for geopotential altitude [m] (Doc 7488/3; USSA 1976 r0)
SUTH_BETA = 1.458e-6  # Sutherland's beta_s [kg/(m s K^0.5)] (Doc 7488/3; USSA 1976 eq. 51)
SUTH_S = 110.4  # Sutherland's constant S [K] (Doc 7488/3; USSA 1976 eq. 51)
#: Layer bases (geopotential) [m] and temperature gradients [K/m]: Doc 7488/3 table D; USSA 1976 table 4.
LAYERS = ((0.0, -0.0065), (11_000.0, 0.0), (20_000.0, 0.0010), (32_000.0, 0.0028), (47_000.0, 0.0),
          (51_000.0, -0.0028), (71_000.0, -0.0020))
H_LOW = -5_000.0  # Doc 7488/3 tables start at -5 km (the first gradient extended downwards)
H_TOP = 84_852.0  # USSA 1976: 86 km geometric is 84 852 m geopotential (rounded to the metre)
#: Sea-level density and speed of sound from the standard's own relations rho = p / (R T), a = sqrt(kappa R T)
#: (Doc 7488/3 tabulates 1.225 kg/m3 and 340.294 m/s).
RHO0 = P0 / (R * T0)
A0 = math.sqrt(KAPPA * R * T0)

# --- Unit definitions to SI: NIST SP 811 (2008) appendix B.8/B.9; international foot, pound (1959) ----------------
#: dimension -> unit -> (factor, offset): SI = value * factor + offset. Typed from the definitions, with the
#: exact decimal expansion where the definition is a product (computed by hand with Python's decimal module).
UNITS = {
    "altitude": {"m": (1.0, 0.0), "ft": (0.3048, 0.0), "km": (1000.0, 0.0), "FL": (30.48, 0.0)},  # FL = 100 ft
    "speed": {"kt": (0.5144444444444445, 0.0),  # 1852 m / 3600 s
              "m/s": (1.0, 0.0), "km/h": (1 / 3.6, 0.0), "mph": (0.44704, 0.0),  # 5280 ft / 3600 s, exact
              "ft/s": (0.3048, 0.0)},
    "temperature": {"K": (1.0, 0.0), "degC": (1.0, 273.15),
                    "degF": (5 / 9, 255.37222222222222)},  # T/K = (t/degF + 459.67) * 5/9
    "temperature_difference": {"K": (1.0, 0.0), "degC": (1.0, 0.0), "degF": (5 / 9, 0.0)},
    "pressure": {"Pa": (1.0, 0.0), "hPa": (100.0, 0.0), "mbar": (100.0, 0.0),
                 "inHg": (3386.389, 0.0),  # conventional, 0 degC: NIST SP 811 B.8 3.386 389 E+03
                 "psi": (6894.757293168361, 0.0)},  # lbf/in2 = 0.45359237 * 9.80665 / 0.0254^2
    "density": {"kg/m3": (1.0, 0.0),
                "slug/ft3": (515.3788183931962, 0.0)},  # slug = lbf s2/ft; / 0.3048^3 (SP 811: 5.153 788 E+02)
    "mass": {"kg": (1.0, 0.0), "t": (1000.0, 0.0), "lb": (0.45359237, 0.0)},
    "force": {"N": (1.0, 0.0), "kN": (1000.0, 0.0), "lbf": (4.4482216152605, 0.0)},  # 0.45359237 * 9.80665
    "weight": {"kg": (9.80665, 0.0), "t": (9806.65, 0.0), "lb": (4.4482216152605, 0.0),  # a mass times g0
               "N": (1.0, 0.0), "kN": (1000.0, 0.0), "lbf": (4.4482216152605, 0.0)},
    "area": {"m2": (1.0, 0.0), "ft2": (0.09290304, 0.0)},
    "angle": {"deg": (math.pi / 180, 0.0), "rad": (1.0, 0.0)},
    "dynamic_viscosity": {"Pa*s": (1.0, 0.0)},
    "kinematic_viscosity": {"m2/s": (1.0, 0.0)},
    "lift_slope": {"1/rad": (1.0, 0.0), "1/deg": (180 / math.pi, 0.0)},
    "wing_loading": {"N/m2": (1.0, 0.0), "kg/m2": (9.80665, 0.0),  # a mass per area times g0
                     "lb/ft2": (47.880258980335846, 0.0)},  # 0.45359237 * 9.80665 / 0.3048^2 (SP 811: 4.788 026 E+01)
    "distance": {"NM": (1852.0, 0.0),  # international nautical mile, exact (SP 811 B.8)
                 "km": (1000.0, 0.0), "m": (1.0, 0.0), "ft": (0.3048, 0.0),
                 "mi": (1609.344, 0.0)},  # statute mile = 5280 ft, exact
    "vertical_speed": {"ft/min": (0.00508, 0.0),  # 0.3048 / 60, exact
                       "m/s": (1.0, 0.0)},
    "power": {"kW": (1000.0, 0.0), "W": (1.0, 0.0),
              "hp": (745.6998715822702, 0.0)},  # 550 ft lbf/s = 550 * 0.3048 * 4.4482216152605 (SP 811: 7.456 999 E+02)
    "time": {"s": (1.0, 0.0), "min": (60.0, 0.0)},
    "angular_rate": {"deg/s": (math.pi / 180, 0.0), "rad/s": (1.0, 0.0),
                     "standard_rate": (3 * math.pi / 180, 0.0)},  # the trade's rate-one turn, 3 deg/s (ICAO Doc 8168)
    "length": {"m": (1.0, 0.0), "ft": (0.3048, 0.0), "km": (1000.0, 0.0)},
    "acceleration": {"m/s2": (1.0, 0.0), "ft/s2": (0.3048, 0.0)},
    "number_density": {"1/m3": (1.0, 0.0), "1/cm3": (1e6, 0.0)},  # (0.01 m)^-3
    "frequency": {"1/s": (1.0, 0.0)},
    "thermal_conductivity": {"W/(m*K)": (1.0, 0.0)},
}

#: Other spellings each unit accepts on input (the catalogue's ``aliases``): the ASCII and the degree-sign forms in
#: common use. Every unit not named here has none.
ALIASES = {("speed", "kt"): ["kn"], ("speed", "mph"): ["mi/h"],
           ("temperature", "degC"): ["°C"], ("temperature", "degF"): ["°F"],
           ("temperature_difference", "degC"): ["°C"], ("temperature_difference", "degF"): ["°F"],
           ("angle", "deg"): ["°"]}


def to_unit(si, dimension: str, unit: str):
    """SI value(s) expressed in ``unit``."""
    factor, offset = UNITS[dimension][unit]
    if isinstance(si, list):
        return [None if x is None else (x - offset) / factor for x in si]
    return None if si is None else (si - offset) / factor


def from_unit(value, dimension: str, unit: str):
    """A value in ``unit`` in SI."""
    factor, offset = UNITS[dimension][unit]
    if isinstance(value, list):
        return [x * factor + offset for x in value]
    return value * factor + offset


# --- The standard atmosphere ------------------------------------------------------------------------------------

def _layer_bases():
    """(Hb, L, Tb, pb) of every layer, walked up from sea level with Doc 7488/3's two pressure formulas."""
    T, p, rows = T0, P0, []
    for i, (Hb, L) in enumerate(LAYERS):
        rows.append((Hb, L, T, p))
        if i + 1 < len(LAYERS):
            Ht = LAYERS[i + 1][0]
            Tt = T + L * (Ht - Hb)
            p = p * math.exp(-G0 * (Ht - Hb) / (R * T)) if L == 0.0 else p * (Tt / T) ** (-G0 / (R * L))
            T = Tt
    return tuple(rows)


BASES = _layer_bases()


def std_tp(H: float) -> tuple[float, float]:
    """Standard temperature [K] and pressure [Pa] at geopotential altitude H [m] (below 0: the first layer)."""
    Hb, L, Tb, pb = next(row for row in reversed(BASES) if H >= row[0] or row[0] == 0.0)
    T = Tb + L * (H - Hb)
    if L == 0.0:
        return T, pb * math.exp(-G0 * (H - Hb) / (R * Tb))
    return T, pb * (T / Tb) ** (-G0 / (R * L))


def std_rho(H: float) -> float:
    T, p = std_tp(H)
    return p / (R * T)


def _root(f, lo=H_LOW - 1.0, hi=H_TOP + 1.0):
    return brentq(f, lo, hi, xtol=1e-10, rtol=1e-15, maxiter=500)


def pressure_altitude(p: float) -> float:
    """The geopotential altitude whose standard pressure is p [m]."""
    return _root(lambda H: math.log(std_tp(H)[1] / p))


def density_altitude(rho: float) -> float | None:
    """The geopotential altitude whose standard density is rho [m]; None outside -5 km .. 84 852 m."""
    if not std_rho(H_TOP) <= rho <= std_rho(H_LOW):
        return None
    return _root(lambda H: math.log(std_rho(H) / rho))


def geopotential(h: float) -> float:
    """H = r h / (r + h) (Doc 7488/3; USSA 1976 eq. 18)."""
    return R_EARTH * h / (R_EARTH + h)


def geometric(H: float) -> float:
    """h = r H / (r - H) (USSA 1976 eq. 19)."""
    return R_EARTH * H / (R_EARTH - H)


def level_height(H: float, dT: float, H_datum: float = 0.0) -> float:
    """Geometric height of the pressure level of pressure altitude H above the level of pressure altitude
    H_datum (0: the 1013.25 hPa level; with a QNH, the standard altitude of the QNH: mean sea level), ISA + dT.

    The hypsometric relation: Z = integral from H_datum to H of (T_std + dT) / T_std dH', then h = r Z / (r - Z).
    """
    inner = [Hb for Hb, _ in LAYERS if min(H_datum, H) < Hb < max(H_datum, H)]
    integral, _ = quad(lambda x: 1.0 / std_tp(x)[0], H_datum, H, points=inner or None, epsabs=0.0, epsrel=1e-13,
                       limit=200)
    return geometric(H - H_datum + dT * integral)


def pressure_altitude_of_height(h: float, dT: float = 0.0, T: float | None = None) -> float:
    """The pressure altitude whose level lies at geometric height h above the 1013.25 hPa level on a day ISA + dT,
    or with the temperature T at that level (the deviation there, T - T_std(H)): brentq on level_height."""
    def deviation(H):
        return dT if T is None else T - std_tp(H)[0]
    return _root(lambda H: level_height(H, deviation(H)) - h)


def sutherland(T: float) -> float:
    """Dynamic viscosity [Pa s] (USSA 1976 eq. 51)."""
    return SUTH_BETA * T**1.5 / (T + SUTH_S)


def air(H: float, dT: float = 0.0, H_datum: float = 0.0) -> dict:
    """Every atmosphere output at pressure altitude H with ISA deviation dT [SI]; the geometric altitude above
    the level of pressure altitude H_datum (with a QNH, its standard altitude: mean sea level)."""
    T_std, p = std_tp(H)
    T = T_std + dT
    rho = p / (R * T)
    mu = sutherland(T)
    return {"pressure_altitude": H, "geometric_altitude": level_height(H, dT, H_datum), "temperature": T,
            "isa_deviation": dT, "pressure": p, "density": rho, "speed_of_sound": math.sqrt(KAPPA * R * T),
            "dynamic_viscosity": mu, "kinematic_viscosity": mu / rho, "pressure_ratio": p / P0,
            "temperature_ratio": T / T0, "density_ratio": rho / RHO0, "density_altitude": density_altitude(rho)}


# --- Pitot relations (NACA Report 1135, 1953) -------------------------------------------------------------------

def pitot_ratio(M: float) -> float:
    """Impact pressure over static pressure, qc / p, at Mach M.

    M <= 1: the isentropic relation (NACA 1135 eq. 44), p_t / p = (1 + (k-1)/2 M^2)^(k/(k-1)).
    M > 1: the Rayleigh pitot formula (NACA 1135 eq. 100),
    p_t2 / p = ((k+1)/2 M^2)^(k/(k-1)) ((k+1) / (2 k M^2 - (k-1)))^(1/(k-1)).
    """
    k = KAPPA
    if M <= 1.0:
        return (1.0 + (k - 1.0) / 2.0 * M * M) ** (k / (k - 1.0)) - 1.0
    return ((k + 1.0) / 2.0 * M * M) ** (k / (k - 1.0)) * ((k + 1.0) / (2.0 * k * M * M - (k - 1.0))) ** (
        1.0 / (k - 1.0)) - 1.0


def mach_of_ratio(r: float) -> float:
    """The Mach number with qc / p = r (brentq on pitot_ratio)."""
    if r == 0.0:
        return 0.0
    lo, hi = (0.0, 1.0) if r <= pitot_ratio(1.0) else (1.0, 1e4)
    return brentq(lambda M: pitot_ratio(M) - r, lo, hi, xtol=1e-15, rtol=1e-15, maxiter=500)


def qc_of_cas(cas: float) -> float:
    """Impact pressure of a calibrated airspeed: the pitot relations at sea-level standard p0, a0 [Pa]."""
    return P0 * pitot_ratio(cas / A0)


def cas_of_qc(qc: float) -> float:
    return A0 * mach_of_ratio(qc / P0)


def speeds(kind: str, value: float, p: float, T: float) -> dict:
    """Every speed from one given speed at static pressure p and temperature T [SI]."""
    a = math.sqrt(KAPPA * R * T)
    rho = p / (R * T)
    if kind == "cas":
        qc = qc_of_cas(value)
        mach = mach_of_ratio(qc / p)
        tas = mach * a
    elif kind == "mach":
        mach, tas = value, value * a
    elif kind == "tas":
        mach, tas = value / a, value
    elif kind == "eas":
        tas = value * math.sqrt(RHO0 / rho)
        mach = tas / a
    else:
        raise ValueError(kind)
    qc = p * pitot_ratio(mach)
    return {"cas": cas_of_qc(qc), "eas": tas * math.sqrt(rho / RHO0), "tas": tas, "mach": mach,
            "impact_pressure": qc, "dynamic_pressure": 0.5 * rho * tas * tas}


def crossover(cas: float, mach: float) -> tuple[float, float]:
    """Pressure [Pa] and pressure altitude [m] where CAS and Mach are the same speed: p = qc(CAS) / (qc/p)(M)."""
    p = qc_of_cas(cas) / pitot_ratio(mach)
    return p, pressure_altitude(p)


# --- Lift (Anderson, Introduction to Flight: L = n W = q S CL; level turn n = 1 / cos(bank)) -----------------------

def stall_eas(weight_n: float, area: float, cl_max: float, n: float = 1.0) -> float:
    """EAS at which q S CLmax = n W: sqrt(2 n W / (rho0 S CLmax)) [m/s]."""
    return math.sqrt(2.0 * n * weight_n / (RHO0 * area * cl_max))


def datcom_slope(aspect: float, sweep_half: float, mach: float, kappa: float = 1.0) -> float:
    """Lift-curve slope per radian, USAF DATCOM section 4.1.3.2 (Helmbold-Diederich-Polhamus):
    CLa = 2 pi A / (2 + sqrt(A^2 beta^2 / kappa^2 (1 + tan^2 L / beta^2) + 4)), beta^2 = 1 - M^2."""
    beta2 = 1.0 - mach * mach
    root = math.sqrt(aspect**2 * beta2 / kappa**2 * (1.0 + math.tan(sweep_half) ** 2 / beta2) + 4.0)
    return 2.0 * math.pi * aspect / (2.0 + root)


# --- Comparing answers with the reference ---------------------------------------------------------------------------

#: The API's default unit per dimension, as DESIGN.md and the spec state them.
DEFAULT_UNITS = {"altitude": "ft", "speed": "kt", "temperature": "degC", "temperature_difference": "K",
                 "pressure": "hPa", "density": "kg/m3", "mass": "kg", "force": "N", "area": "m2", "angle": "deg",
                 "dynamic_viscosity": "Pa*s", "kinematic_viscosity": "m2/s", "lift_slope": "1/rad",
                 "wing_loading": "N/m2", "distance": "NM", "vertical_speed": "ft/min", "power": "kW", "time": "s",
                 "angular_rate": "deg/s", "length": "m", "acceleration": "m/s2", "number_density": "1/m3",
                 "frequency": "1/s", "thermal_conductivity": "W/(m*K)"}
#: Relative tolerance of the endpoint reference checks: the service and this module agree to about 1e-12 where
#: both use closed forms; 1e-9 leaves room for root finders and quadrature and still catches any real slip.
REL = 1e-9


def post_ok(client, path: str, body: dict) -> dict:
    """POST body as JSON; the answer must be 200 with a JSON body (parsed without NaN/Infinity)."""
    response = client.post(path, data=json.dumps(body), content_type="application/json")
    assert response.status_code == 200, response.get_data(as_text=True)
    return json.loads(response.get_data(as_text=True), parse_constant=_no_constant)


def _no_constant(name):
    raise AssertionError(f"{name} in a JSON body")


def check(got, expected, dimension: str | None, unit: str | None = None, rel: float = REL, abs_si: float = 0.0):
    """An answer field against reference SI value(s): ``{"value", "unit"}`` in ``unit`` (default: the dimension's
    default unit), or a bare number (``dimension`` None). ``expected`` is a number, None (the answer must be null)
    or a list of them. ``abs_si`` is an absolute tolerance in SI units."""
    if dimension is None:
        value, want, tol = got, expected, abs_si
    else:
        unit = unit or DEFAULT_UNITS[dimension]
        assert isinstance(got, dict) and got["unit"] == unit, (got, unit)
        value, want = got["value"], to_unit(expected, dimension, unit)
        tol = abs_si / UNITS[dimension][unit][0]
    if isinstance(want, list):
        assert isinstance(value, list) and len(value) == len(want), (value, want)
        for v, w in zip(value, want, strict=True):
            _close(v, w, rel, tol)
    else:
        assert not isinstance(value, list), value
        _close(value, want, rel, tol)


def _close(value, want, rel, tol):
    if want is None:
        assert value is None, value
    else:
        assert isinstance(value, int | float) and not isinstance(value, bool), value
        assert value == pytest.approx(want, rel=rel, abs=tol)


def app_client():
    """A test client of the app with test settings (the reference modules build one per module: the app is
    stateless, and building it per test costs more than the checks)."""
    from service import create_app

    return create_app({"TESTING": True}).test_client()


# --- U.S. Standard Atmosphere 1976: the further properties (NOAA-S/T 76-1562, part 1, section 1.3) ------------
# Constants of USSA 1976 table 2 (from memory of the table), below 86 km where the molar mass is M0.
RSTAR = 8.31432  # universal gas constant R* [J/(mol K)] (8.31432e3 N m/(kmol K))
M0 = 28.9644e-3  # molar mass of sea-level air M0 [kg/mol] (28.9644 kg/kmol)
N_A = 6.022169e23  # Avogadro constant N_A [1/mol] (6.022169e26 /kmol)
SIGMA = 3.65e-10  # effective collision diameter of the air molecules sigma [m]
#: Thermal conductivity k = beta T^1.5 / (T + S 10^(-12/T)) (USSA 1976 eq. 53, from memory): beta [W/(m K^1.5)],
#: S [K], the exponent's numerator [K].
K_BETA, K_S, K_EXP = 2.64638e-3, 245.4, 12.0


def gravity(Z: float) -> float:
    """Acceleration of free fall at geometric height Z [m/s2]: g0 (r0 / (r0 + Z))^2 (USSA 1976 eq. 17, the number
    from memory)."""
    return G0 * (R_EARTH / (R_EARTH + Z)) ** 2


def ussa_properties(p: float, T: float, Z: float) -> dict:
    """The USSA 1976 property set at static pressure p [Pa], temperature T [K] and geometric height Z [m] [SI].

    Number density n = N_A p / (R* T); mean particle speed V = sqrt(8 R* T / (pi M0)); mean free path
    L = sqrt(2) / (2 pi sigma^2 n); collision frequency in the standard's own closed form
    4 N_A sigma^2 sqrt(pi / (R* M0)) p / sqrt(T) (not V / L, so a slip in either is seen); pressure scale height
    R* T / (M0 g); thermal conductivity as above."""
    g = gravity(Z)
    n = N_A * p / (RSTAR * T)
    return {"gravity": g, "number_density": n, "mean_particle_speed": math.sqrt(8.0 * RSTAR * T / (math.pi * M0)),
            "mean_free_path": math.sqrt(2.0) / (2.0 * math.pi * SIGMA**2 * n),
            "collision_frequency": 4.0 * N_A * SIGMA**2 * math.sqrt(math.pi / (RSTAR * M0)) * p / math.sqrt(T),
            "pressure_scale_height": RSTAR * T / (M0 * g),
            "thermal_conductivity": K_BETA * T**1.5 / (T + K_S * 10.0 ** (-K_EXP / T))}


# --- Water vapour: Hardy (1998), ITS-90 formulation over liquid water, -100 to +100 degC --------------------------
#: g0..g7 of ln(es / Pa) = sum_{i=0..6} g_i T^(i-2) + g7 ln(T / K) (Hardy 1998, table of coefficients; typed from
#: memory of the paper and checked against IAPWS (iapws) and MetPy in tests/test_reference_airdata.py).
HARDY_G = (-2.8365744e3, -6.028076559e3, 1.954263612e1, -2.737830188e-2, 1.6261698e-5, 7.0229056e-10,
           -1.8680009e-13, 2.7150305)
#: Molar mass of water [kg/mol] (CIPM-2007 equation for moist air, Picard et al. 2008; from memory).
M_WATER = 18.01528e-3


def saturation_vapour_pressure(T: float) -> float:
    """Saturation vapour pressure over plane water at T [K] (Hardy 1998) [Pa]."""
    terms = [HARDY_G[i] * T ** (i - 2) for i in range(7)]
    return math.exp(math.fsum(terms) + HARDY_G[7] * math.log(T))


def moist_density(p: float, T: float, e: float) -> float:
    """Density of moist air as the sum of the partial densities of dry air and vapour (Dalton; Wallace & Hobbs
    2006, 3.1.1): (p - e) / (R T) + e / (R_v T), R_v = R* / Mw written as R M0 / Mw so the dry part is ICAO's."""
    return (p - e) / (R * T) + e / (R * M0 / M_WATER * T)


def virtual_temperature(p: float, T: float, e: float) -> float:
    """The temperature at which dry air at p has the moist air's density: p / (R rho) [K]."""
    return p / (R * moist_density(p, T, e))


def humid_air(H: float, dT: float = 0.0, dew_point: float | None = None, rh: float | None = None) -> dict:
    """Every /v1/atmosphere output [SI] at pressure altitude H, ISA + dT, with a dew point [K] or relative humidity
    [percent] (dry air without either): the density and what follows from it (ratio, kinematic viscosity,
    density altitude) at the moist density; the property set at the day's temperature and pressure."""
    out = air(H, dT)
    p, T = out["pressure"], out["temperature"]
    e = 0.0
    if dew_point is not None:
        e = saturation_vapour_pressure(dew_point)
    elif rh is not None:
        e = rh / 100.0 * saturation_vapour_pressure(T)
    rho = moist_density(p, T, e)
    out.update({"vapour_pressure": e, "virtual_temperature": virtual_temperature(p, T, e), "density": rho,
                "density_ratio": rho / RHO0, "kinematic_viscosity": out["dynamic_viscosity"] / rho,
                "density_altitude": density_altitude(rho)})
    out.update(ussa_properties(p, T, out["geometric_altitude"]))
    return out


def moist_speeds(kind: str, value: float, p: float, T: float, e: float) -> dict:
    """:func:`speeds` in moist air of vapour pressure e [Pa]: the moist density (partial densities) in the EAS-TAS
    relation and in q = 1/2 rho V^2; the pitot relations and the speed of sound those of dry air at T (the model the
    service documents: the water vapour enters through the density only)."""
    rho = moist_density(p, T, e)
    if kind == "eas":
        tas = value * math.sqrt(RHO0 / rho)
        mach = tas / math.sqrt(KAPPA * R * T)
    else:
        dry = speeds(kind, value, p, T)
        mach, tas = dry["mach"], dry["tas"]
    qc = p * pitot_ratio(mach)
    return {"cas": cas_of_qc(qc), "eas": tas * math.sqrt(rho / RHO0), "tas": tas, "mach": mach,
            "impact_pressure": qc, "dynamic_pressure": 0.5 * rho * tas * tas}


# --- Total air temperature (NACA Report 1135, eq. 43 (number from memory): Tt / T = 1 + (k-1)/2 M^2) ----------------

def total_air_temperature(T: float, M: float, r: float = 1.0) -> float:
    """What a probe of recovery factor r reads, T + r (Tt - T) (the recovery factor's definition, Gracey, NASA
    RP-1046 ch. 13, from memory) [K]."""
    Tt = T * (1.0 + (KAPPA - 1.0) / 2.0 * M * M)
    return T + r * (Tt - T)


def static_from_tat(tat: float, kind: str, value: float, p: float, r: float = 1.0, vapour=None) -> float:
    """The static temperature whose total temperature, at the given speed and static pressure, is tat [K]: brentq
    over T with the speed converted at each trial temperature (no closed form used). ``vapour``: the vapour
    pressure [Pa] as a function of T (moist air, :func:`moist_speeds`)."""
    def f(T):
        sp = speeds(kind, value, p, T) if vapour is None else moist_speeds(kind, value, p, T, vapour(T))
        return total_air_temperature(T, sp["mach"], r) - tat
    return brentq(f, 100.0, tat + 1e-9, xtol=1e-12, rtol=1e-15, maxiter=500)


# --- Altimetry: pressure settings (Doc 7488/3 reduction) and the PANS-OPS cold-temperature correction ------------

def qfe_of_qnh(elevation: float, qnh: float) -> float:
    """QFE [Pa]: the standard pressure at the aerodrome's pressure altitude, elevation + H(QNH)."""
    return std_tp(elevation + pressure_altitude(qnh))[1]


def qnh_of_qfe(elevation: float, qfe: float) -> float:
    """QNH [Pa]: the standard pressure at H(QFE) - elevation."""
    return std_tp(pressure_altitude(qfe) - elevation)[1]


def cold_correction(height: float, elevation: float, T: float) -> float:
    """ICAO Doc 8168 (PANS-OPS) Vol. I, Part III, Section 1, Chapter 4 [m]:
    dH = (-dT / L0) ln(1 + L0 h_PAA / (T0 + L0 h_aerodrome)), h_PAA = height + dH (the corrected height; with the
    uncorrected one the equation misses the printed table by up to a quarter), dT the aerodrome's ISA deviation,
    L0 = -0.0065 K/m; solved by brentq."""
    L0 = LAYERS[0][1]
    Ta = T0 + L0 * elevation
    dT = T - Ta
    if height == 0.0:
        return 0.0
    def f(x):
        return x - (-dT / L0) * math.log(1.0 + L0 * x / Ta) - height
    return brentq(f, 0.2 * height, 5.0 * height, xtol=1e-12, rtol=1e-15, maxiter=500) - height


# --- Performance: the parabolic polar (Anderson, Introduction to Flight, ch. 6) and the level turn ---------------

def polar_point(W: float, S: float, cd0: float, k: float, q: float, tas: float, n: float = 1.0) -> dict:
    """Steady flight at dynamic pressure q [Pa] and TAS [m/s]: CL = n W / (q S), CD = CD0 + k CL^2, D = q S CD,
    the power D V [SI]."""
    cl = n * W / (q * S)
    cd = cd0 + k * cl * cl
    D = q * S * cd
    return {"cl": cl, "cd": cd, "drag": D, "lift_to_drag": cl / cd, "thrust_required": D, "power_required": D * tas,
            "dynamic_pressure": q}


def drag_speeds(W: float, S: float, cd0: float, k: float) -> dict:
    """The EAS [m/s] and figures of the three characteristic conditions (Anderson ch. 6): minimum drag at
    CL = sqrt(CD0 / k), (L/D)max = 1 / (2 sqrt(CD0 k)), D = W / (L/D)max; minimum power at CL = sqrt(3 CD0 / k)
    (CD = 4 CD0); the best glide at CL of minimum drag, tan(gamma) = 1 / (L/D)max, L = W cos(gamma)."""
    cl_md = math.sqrt(cd0 / k)
    ld_max = 1.0 / (2.0 * math.sqrt(cd0 * k))
    cl_mp = math.sqrt(3.0 * cd0 / k)
    gamma = math.atan(1.0 / ld_max)
    return {"minimum_drag": {"cl": cl_md, "lift_to_drag": ld_max, "drag": W / ld_max,
                             "eas": math.sqrt(2.0 * W / (RHO0 * S * cl_md))},
            "minimum_power": {"cl": cl_mp, "cd": 4.0 * cd0, "eas": math.sqrt(2.0 * W / (RHO0 * S * cl_mp))},
            "best_glide": {"cl": cl_md, "glide_ratio": ld_max, "glide_angle": gamma,
                           "eas": math.sqrt(2.0 * W * math.cos(gamma) / (RHO0 * S * cl_md))}}


def level_turn(tas: float, bank: float) -> dict:
    """The level coordinated turn at TAS [m/s] and bank [rad] (Anderson ch. 6; ICAO Doc 8168): n = 1 / cos(bank),
    R = V^2 / (g0 tan(bank)), omega = V / R, t360 = 2 pi / omega; with wings level radius and time are None."""
    n = 1.0 / math.cos(bank)
    if bank == 0.0:
        return {"bank_angle": 0.0, "load_factor": 1.0, "turn_rate": 0.0, "radius": None, "time_for_360": None}
    radius = tas * tas / (G0 * math.tan(bank))
    omega = tas / radius
    return {"bank_angle": bank, "load_factor": n, "turn_rate": omega, "radius": radius,
            "time_for_360": 2.0 * math.pi / omega}


def interpolate(x: float, xs, ys) -> float:
    """Linear interpolation between table rows (by hand: the row pair that brackets x)."""
    for (x0, y0), (x1, y1) in zip(zip(xs, ys, strict=True), zip(xs[1:], ys[1:], strict=True), strict=False):
        if x0 <= x <= x1:
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    raise ValueError(x)
