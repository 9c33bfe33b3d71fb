"""The `speed_limit` of POST /v1/airspeed/schedule: 250 kt below 10,000 ft, against aerocalc3.

ICAO Annex 11, appendix 4: 250 kt IAS below 3 050 m (10 000 ft) AMSL in most airspace classes (the example; local
regulations govern).
"""

import pytest
from aerocalc3 import airspeed as ac

from tests.helpers import assert_problem, post

AEROCALC_RTOL = 5e-6  # aerocalc3's constants differ from ICAO's in the 7th digit (tests/test_physics_airspeed.py)
LEVELS_FT = [3000, 9999, 10000, 15000, 35000]
BODY = {"cas": 290, "mach": 0.76, "altitude": LEVELS_FT, "speed_limit": {"cas": 250, "altitude": 10000}}


def test_governing_and_speeds(client):
    doc = post(client, "/v1/airspeed/schedule", BODY).json
    assert doc["governing"] == ["limit", "limit", "cas", "cas", "mach"]
    assert doc["cas"]["value"][:4] == pytest.approx([250, 250, 290, 290], rel=1e-12)
    # aerocalc3 0.10 cas_alt2mach (test-only reference library) at the CAS flown, standard day.
    expected = [ac.cas_alt2mach(c, h, speed_units="kt", alt_units="ft")
                for c, h in zip([250, 250, 290, 290], LEVELS_FT[:4], strict=True)]
    assert doc["mach"][:4] == pytest.approx(expected, rel=AEROCALC_RTOL)
    assert doc["cas"]["value"][4] == pytest.approx(ac.mach_alt2cas(0.76, 35000, alt_units="ft", speed_units="kt"),
                                                   rel=AEROCALC_RTOL)
    # The crossover does not move: the limit applies far below it.
    plain = post(client, "/v1/airspeed/schedule", {k: v for k, v in BODY.items() if k != "speed_limit"}).json
    assert doc["crossover_altitude"] == plain["crossover_altitude"]
    assert plain["governing"] == ["cas", "cas", "cas", "cas", "mach"]


def test_limit_in_other_units_and_a_schedule_below_it(client):
    # The limit in km/h and FL; a 240 kt schedule is below a 250 kt limit, so the schedule's CAS governs.
    doc = post(client, "/v1/airspeed/schedule", BODY | {"speed_limit": {
        "cas": {"value": 463, "unit": "km/h"}, "altitude": {"value": 100, "unit": "FL"}}}).json
    assert doc["cas"]["value"][0] == pytest.approx(463 / 1.852, rel=1e-12)
    low = post(client, "/v1/airspeed/schedule", BODY | {"cas": 240}).json
    assert low["governing"][:2] == ["cas", "cas"]


@pytest.mark.parametrize(
    ("limit", "pointer"),
    [
        ({"cas": 250}, "/speed_limit/altitude"),
        ({"altitude": 10000}, "/speed_limit/cas"),
        ({"cas": [250, 240], "altitude": 10000}, "/speed_limit/cas"),
        ({"cas": 0, "altitude": 10000}, "/speed_limit/cas"),
        ({"cas": 250, "altitude": 10000, "mach": 0.5}, "/speed_limit/mach"),
        ({"cas": 250, "altitude": {"value": 10000, "unit": "yd"}}, "/speed_limit/altitude/unit"),
    ],
)
def test_refusals(client, limit, pointer):
    assert_problem(post(client, "/v1/airspeed/schedule", BODY | {"speed_limit": limit}), 422, pointer)
