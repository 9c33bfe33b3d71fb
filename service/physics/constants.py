"""Physical and standard constants, SI units, each with its source.

References
----------
1. ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
2. ISO 2533:1975, *Standard Atmosphere*.
3. NOAA/NASA/USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562.
4. NIST SP 811 (2008), appendix B, for the unit definitions.
"""

from __future__ import annotations

import math

# --- Sea-level standard values (ICAO Doc 7488/3 table A; ISO 2533 table 1) ---
#: Standard acceleration of free fall [m/s^2] (ICAO Doc 7488/3; exact by definition).
G0 = 9.80665
#: Specific gas constant of dry air [J/(kg K)] (ICAO Doc 7488/3: R* / M = 287.05287).
R_AIR = 287.05287
#: Mean molar mass of dry air [kg/mol] (U.S. Standard Atmosphere 1976, table 2: M0 = 28.9644 kg/kmol).
M0 = 28.9644e-3
#: Ratio of specific heats of dry air [-] (ICAO Doc 7488/3: kappa = 1.4).
GAMMA = 1.4
#: Sea-level standard temperature [K] (ICAO Doc 7488/3).
T0 = 288.15
#: Sea-level standard pressure [Pa] (ICAO Doc 7488/3).
P0 = 101_325.0
#: Sea-level standard density [kg/m^3], derived by the gas law rho0 = p0 / (R T0)
#: (ICAO Doc 7488/3 tabulates 1.225).
RHO0 = P0 / (R_AIR * T0)
#: Sea-level standard speed of sound [m/s], a0 = sqrt(gamma R T0)
#: (ICAO Doc 7488/3 tabulates 340.294).
A0 = math.sqrt(GAMMA * R_AIR * T0)
#: Nominal Earth radius for the geopotential conversion [m] (ICAO Doc 7488/3; U.S. Std Atm 1976).
EARTH_RADIUS = 6_356_766.0
#: Sutherland's constant beta_s [kg/(m s K^0.5)] (ICAO Doc 7488/3; U.S. Std Atm 1976 eq. 51).
SUTHERLAND_BETA = 1.458e-6
#: Sutherland's constant S [K] (ICAO Doc 7488/3; U.S. Std Atm 1976 eq. 51).
SUTHERLAND_S = 110.4

# --- Layers of the standard atmosphere (ICAO Doc 7488/3 table D; U.S. Std Atm 1976 table 4) ---
#: Geopotential heights of the layer bases [m]; the first layer's gradient also holds
#: below sea level, down to H_MIN. Base temperatures and pressures are derived from T0 and P0.
LAYER_BASES = (0.0, 11_000.0, 20_000.0, 32_000.0, 47_000.0, 51_000.0, 71_000.0)
#: Temperature lapse rates dT/dH of each layer [K/m].
LAYER_LAPSE_RATES = (-0.0065, 0.0, 0.0010, 0.0028, 0.0, -0.0028, -0.0020)
#: Lowest geopotential altitude of the model [m] (ICAO Doc 7488/3 starts its tables at -5 km).
H_MIN = -5_000.0
#: Highest geopotential altitude of the model [m]: 86 km geometric, the top of the
#: U.S. Standard Atmosphere 1976 constant-lapse layers (84 852.05 m geopotential, rounded
#: to the metre as that standard tabulates it).
H_MAX = 84_852.0

# --- Exact unit definitions (NIST SP 811 appendix B; international yard and pound, 1959) ---
#: International foot [m], exact.
FT = 0.3048
#: International nautical mile per hour [m/s], exact (1852 m / 3600 s).
KT = 1852.0 / 3600.0
#: Avoirdupois pound mass [kg], exact.
LB = 0.45359237
#: Pound force [N], exact (lb * g0).
LBF = LB * G0
#: Inch of mercury (conventional, 0 degC) [Pa] (NIST SP 811: 3.386389e3).
INHG = 3386.389
#: Pound-force per square inch [Pa] (lbf / in^2, from the exact inch 0.0254 m).
PSI = LBF / 0.0254**2
#: Statute mile [m], exact (5280 ft).
MILE = 5280 * FT
#: Slug [kg] (lbf s^2 / ft).
SLUG = LBF / FT
