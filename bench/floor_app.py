"""qbar's app with two more POST routes that answer the single-point benchmark's constant, for the floors of the
single-point ratio (bench.run): what every qbar request pays before its computation.

- ``/v1/floor/hooks``: qbar's request hooks and compression around a view that returns the bare app's constant;
- ``/v1/floor/load``: the same, after reading the body and loading it with /v1/airspeed's request schema (the
  body checks, the point count and the schema load of a real request; no computation, no answer written).
"""

import orjson
from flask import Response

from bench.bare_app import CONSTANT
from service import create_app as qbar_app
from service.api.airspeed import AirspeedRequest
from service.api.request_body import BodyParser


def create_app():
    app = qbar_app()

    def hooks():
        return CONSTANT

    @BodyParser().use_args(AirspeedRequest)  # the body checks, point count and schema load of every compute view
    def load(inputs):
        return Response(orjson.dumps(CONSTANT), content_type="application/json")

    app.add_url_rule("/v1/floor/hooks", "floor_hooks", hooks, methods=["POST"])
    app.add_url_rule("/v1/floor/load", "floor_load", load, methods=["POST"])
    return app
