"""GET /v1/units against the unit definitions typed in tests/reference.py (NIST SP 811 appendix B; DESIGN.md's
defaults): every dimension, unit, factor and offset, and the exact shape of the catalogue."""

import json

import pytest

from tests import reference as ref


@pytest.fixture(scope="module")
def catalogue():
    """The published unit table."""
    response = ref.app_client().get("/v1/units")
    assert response.status_code == 200
    return json.loads(response.get_data(as_text=True))


def test_catalogue_shape(catalogue):
    assert set(catalogue) == {"dimensions"}
    for entry in catalogue["dimensions"]:
        assert set(entry) == {"dimension", "description", "si_unit", "default_unit", "output", "units"}
        assert entry["description"]
        for unit in entry["units"]:
            assert set(unit) == {"unit", "description", "factor", "offset", "aliases"} and unit["description"]


def test_aliases(catalogue):
    published = {(e["dimension"], u["unit"]): u["aliases"] for e in catalogue["dimensions"] for u in e["units"]}
    assert {key: aliases for key, aliases in published.items() if aliases} == ref.ALIASES


@pytest.mark.parametrize(("dimension", "unit"), sorted(ref.ALIASES))
def test_an_alias_reads_as_its_unit(dimension, unit):
    """An input in an alias gives the same answer as the same input in the unit's own name."""
    field, path, extra = {"speed": ("cas", "/v1/airspeed", {"altitude": 5000}),
                          "temperature": ("temperature", "/v1/atmosphere", {"altitude": 5000}),
                          "temperature_difference": ("isa_deviation", "/v1/atmosphere", {"altitude": 5000}),
                          "angle": ("bank_angle", "/v1/lift/solve",
                                    {"weight": 21000, "wing_area": 61, "altitude": 5000, "cas": 180,
                                     "solve_for": "cl"})}[dimension]
    client = ref.app_client()
    answers = [ref.post_ok(client, path, extra | {field: {"value": 12, "unit": name}})
               for name in (unit, *ref.ALIASES[dimension, unit])]
    assert all(answer == answers[0] for answer in answers[1:])


def test_every_unit_factor_and_offset(catalogue):
    published = {e["dimension"]: {u["unit"]: (u["factor"], u["offset"]) for u in e["units"]}
                 for e in catalogue["dimensions"]}
    assert set(published) == set(ref.UNITS)
    for dimension, units in ref.UNITS.items():
        assert list(published[dimension]) == list(units), dimension
        for unit, (factor, offset) in units.items():
            got = published[dimension][unit]
            assert got == (pytest.approx(factor, rel=1e-15), pytest.approx(offset, rel=1e-15, abs=1e-12)), unit


def test_defaults_si_units_and_output_dimensions(catalogue):
    by_name = {e["dimension"]: e for e in catalogue["dimensions"]}
    for dimension, unit in ref.DEFAULT_UNITS.items():
        assert by_name[dimension]["default_unit"] == unit
        assert by_name[dimension]["output"] is True
    assert by_name["weight"]["default_unit"] == "kg" and by_name["weight"]["output"] is False
    si = {"altitude": "m", "speed": "m/s", "temperature": "K", "temperature_difference": "K", "pressure": "Pa",
          "density": "kg/m3", "mass": "kg", "force": "N", "weight": "N", "area": "m2", "angle": "rad",
          "dynamic_viscosity": "Pa*s", "kinematic_viscosity": "m2/s", "lift_slope": "1/rad", "wing_loading": "N/m2",
          "distance": "m", "vertical_speed": "m/s", "power": "W", "time": "s", "angular_rate": "rad/s",
          "length": "m", "acceleration": "m/s2", "number_density": "1/m3", "frequency": "1/s",
          "thermal_conductivity": "W/(m*K)"}
    assert {name: e["si_unit"] for name, e in by_name.items()} == si


def test_unknown_unit_names_itself_and_the_allowed_ones():
    response = ref.app_client().post("/v1/atmosphere", json={"altitude": {"value": 7200, "unit": "feet"}})
    assert response.status_code == 422
    assert response.get_json()["errors"] == [
        {"pointer": "/altitude/unit",
         "message": "Unknown unit 'feet' for altitude (did you mean 'ft'?); allowed: m, ft, km, FL."}]
