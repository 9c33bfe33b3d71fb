"""POST /v1/atmosphere through the Flask test client: every field, unit and error class."""

import math

import numpy as np
import pytest

from tests.helpers import assert_problem, post, spy

ATM = "/v1/atmosphere"


def test_fl350_isa_plus_10(client):
    r = post(client, ATM, {"altitude": {"value": 350, "unit": "FL"}, "isa_deviation": 10})
    assert r.status_code == 200
    doc = r.json
    assert doc["pressure_altitude"] == {"value": pytest.approx(35000.0), "unit": "ft"}
    # ICAO Doc 7488/3 table: 10 668 m (35 000 ft) 238.42 hPa, 218.81 K (from memory)
    assert doc["pressure"]["value"] == pytest.approx(238.42, abs=0.01)
    assert doc["pressure"]["unit"] == "hPa"
    assert doc["temperature"]["value"] == pytest.approx(218.808 - 273.15 + 10, abs=1e-3)
    assert doc["isa_deviation"]["value"] == pytest.approx(10.0)
    # density from the gas law at 238.42 hPa and 228.81 K
    assert doc["density"]["value"] == pytest.approx(23842.27 / (287.05287 * 228.808), rel=1e-5)
    assert doc["density_ratio"] == pytest.approx(doc["density"]["value"] / 1.225, rel=1e-6)
    assert doc["density_altitude"]["value"] > 35000  # warmer than standard: thinner air
    assert doc["warnings"] == []
    assert set(doc) == {"pressure_altitude", "geometric_altitude", "temperature", "isa_deviation", "pressure",
                        "density", "speed_of_sound", "dynamic_viscosity", "kinematic_viscosity",
                        "pressure_ratio", "temperature_ratio", "density_ratio", "density_altitude", "warnings",
                        "vapour_pressure", "virtual_temperature"}


#: The U.S. Standard Atmosphere 1976 properties answered only when named (ComputeSchema.ON_REQUEST).
ON_REQUEST = {"gravity", "pressure_scale_height", "number_density", "mean_particle_speed", "mean_free_path",
              "collision_frequency", "thermal_conductivity"}


def test_property_set_only_when_named(client):
    """The default answer leaves the seven out; naming any of them (alone or with others) returns exactly what is
    named, in every format; the spec says which are on request and what the default is."""
    spec = client.get("/openapi.json").json
    default = post(client, ATM, {"altitude": 0}).json
    assert not ON_REQUEST & set(default)
    named = post(client, ATM, {"altitude": 0, "outputs": ["density", "mean_free_path", "gravity"]}).json
    assert set(named) == {"density", "mean_free_path", "gravity", "warnings"}
    everything = post(client, ATM, {"altitude": 0, "outputs": spec_outputs(spec)}).json
    assert ON_REQUEST < set(everything)
    csv = client.post(ATM, json={"altitude": [0, 1000]}, headers={"Accept": "text/csv"}).get_data(as_text=True)
    header = csv.splitlines()[0]
    assert "density" in header and not any(name in header for name in ON_REQUEST)
    schema = spec["components"]["schemas"]["AtmosphereResponse"]["properties"]
    for name in ON_REQUEST:
        assert schema[name]["description"].startswith("Only when `outputs` names it. "), name
    assert not any(schema[name].get("description", "").startswith("Only when") for name in set(schema) - ON_REQUEST)
    outputs = spec["components"]["schemas"]["AtmosphereRequest"]["properties"]["outputs"]["description"]
    assert "default: all but " + ", ".join(sorted(ON_REQUEST, key=spec_outputs(spec).index)) in outputs


def spec_outputs(spec) -> list[str]:
    """Every output name /v1/atmosphere knows, from the spec's enum."""
    return spec["components"]["schemas"]["AtmosphereRequest"]["properties"]["outputs"]["items"]["enum"]


def test_sea_level_standard_day(client):
    doc = post(client, ATM, {"altitude": 0}).json
    # ICAO Doc 7488/3 sea-level values
    assert doc["pressure"]["value"] == pytest.approx(1013.25, rel=1e-12)
    assert doc["temperature"]["value"] == pytest.approx(15.0, abs=1e-9)
    assert doc["density"]["value"] == pytest.approx(1.225, rel=1e-6)
    assert doc["speed_of_sound"]["value"] == pytest.approx(661.4786, rel=1e-6)  # 340.294 m/s in kt
    assert doc["density_altitude"]["value"] == pytest.approx(0.0, abs=1e-6)
    assert doc["geometric_altitude"]["value"] == pytest.approx(0.0, abs=1e-9)


def test_temperature_instead_of_deviation(client):
    a = post(client, ATM, {"altitude": 5000, "temperature": 20}).json
    b = post(client, ATM, {"altitude": 5000, "isa_deviation": 20 - (15 - 1.98 * 5)}).json  # lapse 1.98 K/1000 ft
    assert a["isa_deviation"]["value"] == pytest.approx(b["isa_deviation"]["value"], abs=0.01)
    assert a["temperature"]["value"] == pytest.approx(20.0)


def test_units_in_and_out(client):
    r = post(client, ATM, {"altitude": {"value": 3000, "unit": "m"}, "isa_deviation": {"value": 18, "unit": "degF"},
                          "output_units": {"altitude": "m", "pressure": "inHg", "temperature": "K",
                                           "temperature_difference": "degF", "speed": "m/s", "density": "slug/ft3"}})
    doc = r.json
    assert doc["pressure_altitude"] == {"value": pytest.approx(3000.0), "unit": "m"}
    assert doc["isa_deviation"] == {"value": pytest.approx(18.0), "unit": "degF"}
    assert doc["pressure"]["unit"] == "inHg"
    # U.S. Std Atm 1976 at 3000 m geopotential: 70 108 Pa, 268.65 K (from memory)
    assert doc["pressure"]["value"] * 3386.389 == pytest.approx(70108.5, rel=1e-4)
    assert doc["temperature"]["value"] == pytest.approx(268.65 + 10, abs=1e-9)


def test_qnh_shifts_indicated_altitude(client):
    # QNH 1013.25 hPa: indicated = pressure altitude
    same = post(client, ATM, {"altitude": 5000, "qnh": 1013.25}).json
    assert same["pressure_altitude"]["value"] == pytest.approx(5000.0, abs=1e-6)
    # higher QNH: the aircraft is lower in pressure altitude; about 27-30 ft per hPa near sea level
    # (common practice, no source)
    high = post(client, ATM, {"altitude": 5000, "qnh": {"value": 1023.25, "unit": "hPa"}}).json
    assert 5000 - high["pressure_altitude"]["value"] == pytest.approx(272, abs=8)
    inhg = post(client, ATM, {"altitude": 5000, "qnh": {"value": 29.92, "unit": "inHg"}}).json
    assert inhg["pressure_altitude"]["value"] == pytest.approx(5000, abs=2)


def test_geometric_kind(client):
    doc = post(client, ATM, {"altitude": {"value": 11019.13, "unit": "m"}, "altitude_kind": "geometric",
                             "output_units": {"altitude": "m"}}).json
    # 11 000 m geopotential = 11 019.1 m geometric (U.S. Std Atm 1976 table I, from memory)
    assert doc["pressure_altitude"]["value"] == pytest.approx(11000.0, abs=0.1)
    assert doc["geometric_altitude"]["value"] == pytest.approx(11019.13, abs=1e-6)


def test_arrays_broadcast_and_scalars_stay_scalars(client):
    doc = post(client, ATM, {"altitude": [0, 10000, 20000], "isa_deviation": [5]}).json
    assert len(doc["pressure"]["value"]) == 3
    assert doc["isa_deviation"]["value"] == [5.0, 5.0, 5.0]
    one = post(client, ATM, {"altitude": [1000]}).json
    assert isinstance(one["pressure"]["value"], list) and len(one["pressure"]["value"]) == 1
    scalar = post(client, ATM, {"altitude": 1000}).json
    assert isinstance(scalar["pressure"]["value"], float)


def test_grid(client):
    r = post(client, ATM, {"altitude": [0, 5000, 10000], "isa_deviation": [-10, 0, 10], "grid": True})
    doc = r.json
    assert len(doc["pressure"]["value"]) == 9
    assert doc["inputs"]["altitude"]["value"] == [0.0] * 3 + [5000.0] * 3 + [10000.0] * 3
    assert doc["inputs"]["isa_deviation"]["value"] == [-10.0, 0.0, 10.0] * 3
    # same pressure for every ISA deviation at one pressure altitude
    p = np.array(doc["pressure"]["value"]).reshape(3, 3)
    assert np.ptp(p, axis=1) == pytest.approx([0, 0, 0], abs=1e-9)


def test_csv(client):
    r = post(client, ATM, {"altitude": [0, 10000], "outputs": ["pressure", "density_altitude"]},
             headers={"Accept": "text/csv"})
    assert r.status_code == 200 and r.mimetype == "text/csv"
    lines = r.get_data(as_text=True).strip().split("\r\n")
    assert lines[0] == "input.altitude [ft],pressure [hPa],density_altitude [ft]"
    assert len(lines) == 3
    assert float(lines[2].split(",")[1]) == pytest.approx(696.82, abs=0.01)  # ICAO table at 10 000 ft, from memory


def test_output_selection(client):
    doc = post(client, ATM, {"altitude": 0, "outputs": ["pressure"]}).json
    assert set(doc) == {"pressure", "warnings"}
    r = post(client, ATM, {"altitude": 0, "outputs": ["pressure", "colour"]})
    assert_problem(r, 422, "/outputs/1")
    assert "density_altitude" in r.json["errors"][0]["message"]


def test_unselected_physics_does_not_run(client, monkeypatch):
    from service.physics import atmosphere as atm

    calls = spy(monkeypatch, atm, "dynamic_viscosity", "density_altitude", "pressure_level_height", "speed_of_sound")
    assert post(client, ATM, {"altitude": 0, "outputs": ["pressure", "density"]}).status_code == 200
    assert not calls
    assert post(client, ATM, {"altitude": 0, "outputs": ["dynamic_viscosity", "density_altitude",
                                                         "geometric_altitude", "speed_of_sound"]}).status_code == 200
    assert set(calls) == {"dynamic_viscosity", "density_altitude", "pressure_level_height", "speed_of_sound"}


def test_density_altitude_beyond_range_is_null_with_warning(client):
    doc = post(client, ATM, {"altitude": [-16000, 0], "isa_deviation": -60}).json
    assert doc["density_altitude"]["value"][0] is None
    assert doc["density_altitude"]["value"][1] is not None
    (warning,) = doc["warnings"]
    assert warning["field"] == "density_altitude" and warning["count"] == 1 and warning["indices"] == [0]


@pytest.mark.parametrize(("body", "pointer"), [
    ({"altitude": 300000}, "/altitude"),
    ({"altitude": -17000}, "/altitude"),
    ({"altitude": {"value": 90, "unit": "km"}, "altitude_kind": "geometric"}, "/altitude/value"),
    ({"altitude": [0, 1e6]}, "/altitude/1"),
    ({"altitude": 0, "temperature": -300}, "/temperature"),
    ({"altitude": 0, "temperature": {"value": 0, "unit": "K"}}, "/temperature/value"),
    ({"altitude": 0, "temperature": {"value": -460, "unit": "degF"}}, "/temperature/value"),
    ({"altitude": 0, "isa_deviation": 150}, "/isa_deviation"),
    ({"altitude": 0, "isa_deviation": 5, "temperature": 20}, "/isa_deviation"),
    ({"altitude": {"value": 100, "unit": "FL"}, "qnh": 1013}, "/qnh"),
    ({"altitude": {"value": 100, "unit": "FL"}, "altitude_kind": "geometric"}, "/altitude_kind"),
    ({"altitude": 0, "altitude_kind": "geometric", "qnh": 1013}, "/qnh"),
    ({"altitude": 0, "qnh": 500}, "/qnh"),
    ({"altitude": 0, "altitude_kind": "density"}, "/altitude_kind"),
    ({"altitude": 0, "grid": "yes"}, "/grid"),
    ({"altitude": 0, "outputs": "pressure"}, "/outputs"),
    ({"altitude": 0, "altitude_ft": 0}, "/altitude_ft"),
    ({"altitude": [[0, 1]]}, "/altitude/0"),
    ({"altitude": [0, 1], "isa_deviation": [1, 2, 3]}, "/altitude"),
])
def test_bad_inputs(client, body, pointer):
    r = post(client, ATM, body)
    assert_problem(r, 422, pointer)


def test_empty_and_non_object_bodies(client):
    assert_problem(post(client, ATM, [1, 2]), 422, "")
    assert_problem(client.post(ATM, data="", content_type="application/json"), 400)
    assert_problem(client.post(ATM, data='{"altitude": 1', content_type="application/json"), 400)
    assert_problem(client.post(ATM, data='{"altitude": NaN}', content_type="application/json"), 400)
    assert_problem(client.post(ATM, data='{"altitude": Infinity}', content_type="application/json"), 400)
    assert_problem(client.post(ATM, data='{"altitude": 1e400}', content_type="application/json"), 422, "/altitude")
    assert_problem(client.post(ATM, data="altitude=1", content_type="application/x-www-form-urlencoded"), 415)
    assert_problem(client.post(ATM, data='{"altitude": 1}'), 415)
    assert_problem(client.get(ATM), 405)
    assert_problem(client.get("/v1/nowhere"), 404)
    assert_problem(post(client, ATM, {"altitude": 0}, headers={"Accept": "image/png"}), 406)


def test_limits(app):
    app.config.update(QBAR_MAX_POINTS=100, QBAR_MAX_BODY_BYTES=2000)
    client = app.test_client()
    r = post(client, ATM, {"altitude": list(range(101))})
    assert_problem(r, 413)
    assert "100 points" in r.json["detail"] and r.json["limit"] == 100
    r = post(client, ATM, {"altitude": list(range(10)), "isa_deviation": list(range(11)), "grid": True})
    assert_problem(r, 413)
    r = post(client, ATM, {"altitude": [0.123456789] * 90, "isa_deviation": [1.23456789] * 90})
    assert_problem(r, 413)
    assert "2000 bytes" in r.json["detail"]


def test_no_nan_anywhere(client):
    r = post(client, ATM, {"altitude": np.linspace(-5000, 84852, 50).tolist(), "isa_deviation": -100,
                           "output_units": {"altitude": "m"}})
    text = r.get_data(as_text=True)
    assert "NaN" not in text and "Infinity" not in text
    for _key, value in r.json.items():
        if isinstance(value, dict):
            assert all(v is None or math.isfinite(v) for v in value["value"])


def test_layers_evaluated_once_per_request(client, monkeypatch):
    """Every output comes from one evaluation of the layer formulas (the geometric height reuses the pressure)."""
    from service.physics import atmosphere as atm

    calls = []
    original = atm._temperature_log_pressure
    monkeypatch.setattr(atm, "_temperature_log_pressure", lambda H: calls.append(1) or original(H))
    assert post(client, ATM, {"altitude": [0, 20000, 40000], "isa_deviation": 12}).status_code == 200
    assert len(calls) == 1
