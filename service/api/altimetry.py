"""POST /v1/altimetry/pressure-settings and /v1/altimetry/temperature-correction: aerodrome altimetry."""

from __future__ import annotations

import math

import numpy as np

from service.api import air, air_fields, examples
from service.api.base import Blueprint
from service.api.fields import Quantity
from service.api.inputs import ComputeSchema
from service.api.outputs import Result
from service.api.rules import ExactlyOne
from service.api.schemas import response_schema
from service.api.values import require
from service.physics import altimetry as alt
from service.physics.constants import LAYER_BASES
from service.units import to_si

blp = Blueprint("altimetry", __name__, url_prefix="/v1/altimetry", description=(
    "Aerodrome altimetry: the pressure settings QNH and QFE by the standard-atmosphere reduction, and the ICAO "
    "PANS-OPS (Doc 8168) temperature correction of minimum altitudes. Not certified for flight planning or "
    "operations: the published procedures, minima and local regulations govern."))

#: Bounds of an aerodrome elevation [ft]: beyond the lowest and the highest aerodromes in use.
ELEVATION_MIN_FT, ELEVATION_MAX_FT = -2_000.0, 20_000.0
#: Bounds of QFE [hPa], whole hPa outward: from the pressure at the highest aerodrome with the lowest QNH to that
#: at the lowest aerodrome with the highest QNH (every QFE the endpoint answers can be given back).
QFE_MIN_HPA = math.floor(float(alt.qfe_from_qnh(to_si(ELEVATION_MAX_FT, "altitude", "ft"),
                                                 to_si(air_fields.QNH_MIN_HPA, "pressure", "hPa"))) / 100.0)
QFE_MAX_HPA = math.ceil(float(alt.qfe_from_qnh(to_si(ELEVATION_MIN_FT, "altitude", "ft"),
                                               to_si(air_fields.QNH_MAX_HPA, "pressure", "hPa"))) / 100.0)
#: The QNH a QFE gives is checked against the bounds of `qnh` to this tolerance [Pa], a hundredth of the 1 hPa
#: resolution of a setting: the reduction there and back (p -> H -> p) rounds (a QFE at sea level of exactly
#: 1100 hPa gives 1100.0000000000004 hPa), and a QFE worked out elsewhere to the last digit agrees to about 1e-9.
QNH_CHECK_PA = 1.0
#: Highest minimum altitude the temperature correction takes [ft]: the method holds in the first layer
#: of the ISA (below 11 km, 36 089 ft).
CORRECTION_ALTITUDE_MAX_FT = 36_000.0
#: Top of the first layer of the ISA [m]: the corrected altitude must stay below it.
FIRST_LAYER_TOP = LAYER_BASES[1]


def elevation_field() -> Quantity:
    return Quantity("altitude", minimum=ELEVATION_MIN_FT, maximum=ELEVATION_MAX_FT, required=True,
                    rules=(air_fields.not_flight_level("elevation", "elevation"),), metadata={
        "description": "Aerodrome elevation above mean sea level [ft] (not in FL). Arrays allowed.",
        "example": 7200})


# --- pressure settings ---------------------------------------------------------------------------

SETTINGS_OUTPUTS = {
    "qnh": ("pressure", "QNH: the setting at which an altimeter on the aerodrome reads its elevation [hPa]."),
    "qfe": ("pressure", "QFE: the pressure at the aerodrome, the setting at which an altimeter there reads zero "
                        "[hPa]."),
    "pressure_altitude": ("altitude", "The aerodrome's pressure altitude: elevation + the standard altitude of "
                                      "the QNH pressure, equal to the standard altitude of the QFE [ft]."),
}


class PressureSettingsRequest(ComputeSchema):
    OUTPUTS = SETTINGS_OUTPUTS
    RULES = (ExactlyOne("qnh", "qfe", missing="Give the aerodrome's qnh or its qfe.",
                        message=lambda given: "Give either qnh or qfe, not both: each follows from the other."),)

    elevation = elevation_field()
    qnh = Quantity("pressure", minimum=air_fields.QNH_MIN_HPA, maximum=air_fields.QNH_MAX_HPA, metadata={
        "description": "QNH [hPa]. Not with `qfe`.", "example": 1008})
    qfe = Quantity("pressure", minimum=QFE_MIN_HPA, maximum=QFE_MAX_HPA, metadata={
        "description": f"QFE, the pressure at the aerodrome [hPa]; the QNH it gives must lie within the bounds of "
                       f"`qnh`, {air_fields.QNH_MIN_HPA:g} to {air_fields.QNH_MAX_HPA:g} hPa. Not with `qnh`.",
        "example": 771.7})


PressureSettingsResponse = response_schema(PressureSettingsRequest)


@blp.compute("/pressure-settings", PressureSettingsRequest, examples.PRESSURE_SETTINGS, PressureSettingsResponse)
def pressure_settings(inputs):
    """QNH, QFE and the aerodrome's pressure altitude

    From the aerodrome elevation and either setting, the other one and the pressure altitude, by the
    standard-atmosphere reduction (ICAO Doc 7488/3): with QNH set an altimeter on the ground reads the elevation,
    with QFE set it reads zero, whatever the day's temperature. Arrays broadcast; `grid: true` takes their outer
    product.
    """
    result = Result(inputs)
    elevation = inputs.si("elevation")
    if "qnh" in inputs:
        qnh = inputs.si("qnh")
        H = alt.pressure_altitude_of_aerodrome(elevation, qnh=qnh)
        qfe = None
    else:
        qfe = inputs.si("qfe")
        H = alt.pressure_altitude_of_aerodrome(elevation, qfe=qfe)
        qnh = alt.qnh_from_qfe(elevation, qfe)
        low, high = air_fields.QNH_MIN_HPA * 100.0 - QNH_CHECK_PA, air_fields.QNH_MAX_HPA * 100.0 + QNH_CHECK_PA
        air.refuse_where(~((qnh >= low) & (qnh <= high)), "qfe",
                         f"With this elevation the QFE gives a QNH outside {air_fields.QNH_MIN_HPA:g} to "
                         f"{air_fields.QNH_MAX_HPA:g} hPa, beyond any sea-level pressure observed: check both.")
    values = {"qnh": lambda: qnh, "qfe": lambda: alt.qfe_from_qnh(elevation, qnh) if qfe is None else qfe,
              "pressure_altitude": lambda: H}
    for name in inputs.outputs:
        result.add(name, values[name]())
    return result.response()


# --- temperature correction ----------------------------------------------------------------------

CORRECTION_OUTPUTS = {
    "correction": ("altitude", "The correction to add to the minimum altitude [ft]: positive on a day colder than "
                               "ISA at the aerodrome, negative on a warmer one (with a warning)."),
    "corrected_altitude": ("altitude", "The minimum altitude plus the correction: the altitude to fly with QNH set "
                                       "[ft]."),
    "height_above_aerodrome": ("altitude", "The minimum altitude minus the elevation: the minimum height above the "
                                           "aerodrome that the correction keeps [ft]."),
}


class TemperatureCorrectionRequest(ComputeSchema):
    OUTPUTS = CORRECTION_OUTPUTS

    elevation = elevation_field()
    temperature = Quantity("temperature", minimum=air_fields.TEMPERATURE_MIN_C, maximum=air_fields.TEMPERATURE_MAX_C,
                           required=True, metadata={
        "description": f"Aerodrome (outside air) temperature [degC]; its ISA deviation at the elevation must lie "
                       f"within +-{air_fields.ISA_DEVIATION_LIMIT:g} K, as everywhere in the service.", "example": -25})
    altitude = Quantity("altitude", minimum=ELEVATION_MIN_FT, maximum=CORRECTION_ALTITUDE_MAX_FT, required=True,
                        rules=(air_fields.not_flight_level("altitude", "minimum altitude"),), metadata={
        "description": "Published minimum altitude(s) above mean sea level, as indicated with the aerodrome's QNH "
                       "set [ft] (not in FL); at or above the elevation. Arrays allowed.",
        "example": [9500, 8700, 7650]})


TemperatureCorrectionResponse = response_schema(TemperatureCorrectionRequest)


@blp.compute("/temperature-correction", TemperatureCorrectionRequest, examples.TEMPERATURE_CORRECTION,
             TemperatureCorrectionResponse)
def temperature_correction(inputs):
    """Cold-temperature correction of minimum altitudes (ICAO PANS-OPS)

    The correction to add to published minimum altitudes so that, with QNH set, the true height above the
    aerodrome is at least the published one on a day colder than standard: the ICAO PANS-OPS (Doc 8168, Vol. I,
    Part III, Section 1, Chapter 4) equation `dH = (-dT / L0) ln[1 + L0 h_PAA / (T0 + L0 h_aerodrome)]` with
    `h_PAA` the corrected height above the aerodrome, solved exactly. The method assumes that the ISA deviation
    `dT` measured at the aerodrome holds at every height, that the temperature falls with the standard lapse rate
    `L0 = -0.0065 K/m` (`T0 = 288.15 K`), and hydrostatic dry air; a real column departs from that, most near the
    ground in an inversion. On a day warmer than ISA the correction comes out negative, with a warning: operators
    usually apply only the cold correction. Caution: not certified for flight planning or operations; the
    published procedures, minima, the State's and the operator's rules govern.
    """
    result = Result(inputs)
    elevation, temperature, altitude = (inputs.si(name) for name in ("elevation", "temperature", "altitude"))
    air.refuse_where(altitude < elevation, "altitude", "A minimum altitude lies below the aerodrome elevation.")
    dT = alt.aerodrome_isa_deviation(elevation, temperature)
    air.check_isa_deviation(dT, "temperature")
    height = altitude - elevation
    correction = alt.temperature_correction(height, elevation, temperature)
    corrected = altitude + correction
    beyond = ~(corrected <= FIRST_LAYER_TOP)  # also where the solve failed (NaN)
    if np.any(beyond):
        require("corrected_altitude", np.where(beyond, np.nan, corrected),
                "the corrected altitude lies above 11 km (36 089 ft), beyond the first layer of the ISA where the "
                "method's lapse rate holds.")
    if np.any(dT > 0.0):
        result.warn("correction", "Warmer than ISA at the aerodrome: the correction is negative. Operators usually "
                                  "apply only cold-temperature corrections.", dT > 0.0)
    values = {"correction": correction, "corrected_altitude": corrected, "height_above_aerodrome": height}
    for name in inputs.outputs:
        result.add(name, values[name])
    return result.response()
