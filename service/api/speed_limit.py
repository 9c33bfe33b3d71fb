"""The `speed_limit` block of POST /v1/airspeed/schedule: a CAS limit below an altitude (250 kt below 10,000 ft).

Kept beside, not inside, the airspeed endpoints: the schedule view calls :func:`flown` for its speeds.
"""

from __future__ import annotations

import marshmallow as ma
import numpy as np

from service.api import air_fields
from service.api.fields import Quantity
from service.api.rule_schema import StrictSchema
from service.api.speeds import SPEED_MAX_KT
from service.physics import airspeed as spd
from service.physics.schedule import GOVERNING, limited_speed_schedule

#: What `governing` reads: the schedule's CAS, its Mach number, or the speed limit.
GOVERNING_LABELS = GOVERNING
GOVERNING_DESCRIPTION = (
    "Which speed governs at the point: \"cas\" below the crossover altitude (the schedule's CAS is flown), \"mach\" "
    "above it (the Mach number is flown), \"limit\" below `speed_limit.altitude` where the limiting CAS is below the "
    "schedule's (the limit is flown).")


class SpeedLimitSchema(StrictSchema):
    """A CAS limit below an altitude."""

    cas = Quantity("speed", required=True, minimum=0.0, exclusive_minimum=True, maximum=SPEED_MAX_KT,
                   allow_array=False, metadata={"description": "The highest CAS allowed below `altitude` [kt].",
                                                "example": 250})
    altitude = air_fields.Altitude(required=True, allow_array=False, metadata={
        "description": "The altitude below which the limit applies [ft] (strictly below: at the altitude itself the "
                       "schedule's CAS is flown), compared with `altitude` as given (the same kind: FL and ft are both "
                       "pressure altitudes here).", "example": 10000})


def speed_limit_field() -> ma.fields.Nested:
    return ma.fields.Nested(SpeedLimitSchema, metadata={
        "description": "Optional: a speed limit below an altitude, as flown in climb and in descent (the common 250 kt "
                       "below 10,000 ft; local regulations govern). Below `speed_limit.altitude` the CAS flown is at "
                       "most `speed_limit.cas`.", "example": {"cas": 250, "altitude": 10000}})


def flown(inputs, cas, mach, state):
    """The schedule's speeds at each point, under the request's speed limit where one is given.

    Returns (governing labels, the physics' result with cas, mach, tas, eas).
    """
    limit = inputs.get("speed_limit")
    if limit is None:
        s = spd.speed_schedule(cas, mach, state.p, state.T)
        return np.where(s.governing_mach, "mach", "cas"), s
    s = limited_speed_schedule(cas, mach, state.p, state.T, inputs.si("altitude"), limit["cas"].si,
                               limit["altitude"].si)
    return np.asarray(GOVERNING)[s.governing], s
