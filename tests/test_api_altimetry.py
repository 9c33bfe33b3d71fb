"""POST /v1/altimetry/pressure-settings and /v1/altimetry/temperature-correction through the test client.

Outside references: the classic altimeter-setting equation of the troposphere (Smithsonian
Meteorological Tables; FMH-1) typed here, ICAO Doc 7488/3 table values (from memory), and the
ICAO PANS-OPS (Doc 8168) equation and correction table (from memory), as in
tests/test_physics_altimetry.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.helpers import assert_problem, post

SETTINGS = "/v1/altimetry/pressure-settings"
CORRECTION = "/v1/altimetry/temperature-correction"
FT = 0.3048


def classic_qfe(elevation_m, qnh_hpa):
    """Altimeter-setting equation (Smithsonian Meteorological Tables; FMH-1), ICAO constants typed here."""
    n = 287.05287 * 0.0065 / 9.80665
    return (qnh_hpa**n - 1013.25**n * 0.0065 * elevation_m / 288.15) ** (1.0 / n)


# --- pressure settings --------------------------------------------------------------------------

def test_quillon_ridge_qfe_from_qnh(client):
    r = post(client, SETTINGS, {"elevation": 7200, "qnh": 1008})
    assert r.status_code == 200, r.json
    doc = r.json
    assert doc["qnh"] == {"value": pytest.approx(1008.0), "unit": "hPa"}
    assert doc["qfe"]["unit"] == "hPa"
    assert doc["qfe"]["value"] == pytest.approx(classic_qfe(7200 * FT, 1008.0), abs=1e-6)
    assert doc["pressure_altitude"]["unit"] == "ft"
    # The aerodrome's pressure altitude: 7200 ft + H(1008 hPa), about 27.8 ft per hPa below 1013.25.
    assert doc["pressure_altitude"]["value"] == pytest.approx(7343.68, abs=0.01)  # as the atmosphere endpoint
    assert doc["warnings"] == []


def test_qnh_from_qfe_is_the_inverse(client):
    qfe = classic_qfe(7200 * FT, 1008.0)
    doc = post(client, SETTINGS, {"elevation": 7200, "qfe": qfe}).json
    assert doc["qnh"]["value"] == pytest.approx(1008.0, abs=1e-6)
    assert doc["qfe"]["value"] == pytest.approx(qfe)


def test_standard_setting_gives_the_icao_table_pressure(client):
    # ICAO Doc 7488/3: 1000 ft, 977.17 hPa; 5000 ft, 843.07 hPa (from memory)
    doc = post(client, SETTINGS, {"elevation": [1000, 5000], "qnh": 1013.25}).json
    assert doc["qfe"]["value"] == pytest.approx([977.17, 843.07], abs=0.005)
    assert doc["pressure_altitude"]["value"] == pytest.approx([1000.0, 5000.0], abs=1e-6)


def test_units_arrays_grid_and_csv(client):
    body = {"elevation": {"value": [0, 500, 2195], "unit": "m"}, "qnh": {"value": [29.92, 30.12], "unit": "inHg"},
            "grid": True, "output_units": {"pressure": "inHg", "altitude": "m"}}
    doc = post(client, SETTINGS, body).json
    assert len(doc["qfe"]["value"]) == 6
    assert doc["qfe"]["unit"] == "inHg"
    assert doc["inputs"]["elevation"]["value"] == pytest.approx([0, 0, 500, 500, 2195, 2195])
    expected = [classic_qfe(e, q * 33.86389) / 33.86389 for e in (0, 500, 2195) for q in (29.92, 30.12)]
    assert doc["qfe"]["value"] == pytest.approx(expected, abs=1e-9)
    r = post(client, SETTINGS, body | {"grid": True}, headers={"Accept": "text/csv"})
    assert r.status_code == 200 and r.mimetype == "text/csv"
    assert len(r.get_data(as_text=True).strip().splitlines()) == 7


@pytest.mark.parametrize(("body", "pointer"), [
    ({"elevation": 7200}, ""),
    ({"elevation": 7200, "qnh": 1008, "qfe": 780}, "/qfe"),
    ({"qnh": 1008}, "/elevation"),
    ({"elevation": {"value": 72, "unit": "FL"}, "qnh": 1008}, "/elevation"),
    ({"elevation": 7200, "qnh": 700}, "/qnh"),
    ({"elevation": 90000, "qnh": 1008}, "/elevation"),
    ({"elevation": 7200, "qnh": 1008, "outputs": ["density"]}, "/outputs/0"),
])
def test_bad_requests(client, body, pointer):
    assert_problem(post(client, SETTINGS, body), 422, pointer)


def test_qfe_whose_qnh_is_implausible_is_refused(client):
    # A QFE of 1000 hPa at 7200 ft would need a QNH far above any sea-level pressure ever observed.
    doc = assert_problem(post(client, SETTINGS, {"elevation": [0, 7200], "qfe": 1000}), 422, "/qfe")
    assert "1" in str(doc["errors"])


# --- temperature correction ---------------------------------------------------------------------

# Doc 8168 table (from memory), sea-level aerodrome: (aerodrome temperature degC, height ft, table ft)
TABLE_POINTS = [(0, 1000, 60), (-10, 1000, 100), (-30, 3000, 570), (-50, 5000, 1500), (-20, 500, 70)]


@pytest.mark.parametrize(("t_c", "height_ft", "table_ft"), TABLE_POINTS)
def test_correction_matches_the_pans_ops_table(client, t_c, height_ft, table_ft):
    # Within the table's 10 ft rounding step (see tests/test_physics_altimetry.py).
    doc = post(client, CORRECTION, {"elevation": 0, "temperature": t_c, "altitude": height_ft}).json
    assert doc["correction"]["unit"] == "ft"
    assert doc["correction"]["value"] == pytest.approx(table_ft, abs=10.05)
    assert doc["corrected_altitude"]["value"] == pytest.approx(height_ft + doc["correction"]["value"])
    assert doc["height_above_aerodrome"]["value"] == pytest.approx(height_ft)
    assert doc["warnings"] == []


def test_quillon_ridge_approach_on_a_cold_morning(client):
    # Quillon Ridge, 7200 ft, -25 degC; the approach's minimum altitudes 9500, 8700 and 7650 ft.
    altitudes = [9500, 8700, 7650]
    doc = post(client, CORRECTION, {"elevation": 7200, "temperature": -25, "altitude": altitudes}).json
    dH = np.array(doc["correction"]["value"]) * FT
    # Doc 8168's equation, typed here (see tests/test_physics_altimetry.py)
    h_aero = 7200 * FT
    dT = -25.0 - (15.0 - 0.0065 * h_aero)
    h = (np.array(altitudes) - 7200) * FT
    expected = (dT / 0.0065) * np.log(1.0 - 0.0065 * (h + dH) / (288.15 - 0.0065 * h_aero))
    np.testing.assert_allclose(dH, expected, atol=1e-6)
    assert doc["height_above_aerodrome"]["value"] == pytest.approx([2300, 1500, 450])
    assert all(c > 0 for c in doc["correction"]["value"])


def test_warm_day_correction_is_negative_with_a_warning(client):
    doc = post(client, CORRECTION, {"elevation": 7200, "temperature": [-10, 30], "altitude": 9000}).json
    assert doc["correction"]["value"][0] > 0 > doc["correction"]["value"][1]
    [warning] = doc["warnings"]
    assert warning["field"] == "correction"
    assert warning["count"] == 1 and warning["indices"] == [1]
    assert "cold" in warning["message"]


@pytest.mark.parametrize(("body", "pointer"), [
    ({"elevation": 7200, "temperature": -20}, "/altitude"),
    ({"elevation": 7200, "altitude": 9000}, "/temperature"),
    ({"elevation": 7200, "temperature": -20, "altitude": [9000, 7000]}, "/altitude"),
    ({"elevation": 7200, "temperature": -130, "altitude": 9000}, "/temperature"),
    ({"elevation": 7200, "temperature": -20, "altitude": {"value": 90, "unit": "FL"}}, "/altitude"),
])
def test_bad_correction_requests(client, body, pointer):
    assert_problem(post(client, CORRECTION, body), 422, pointer)
