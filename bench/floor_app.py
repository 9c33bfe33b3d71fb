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
from service.api.request_body import check_point_limit, count_points, read_request


def create_app():
    app = qbar_app()
    schema = AirspeedRequest()

    def hooks():
        return CONSTANT

    def load():
        data, _ = read_request(schema)
        check_point_limit(*schema.points_worth(data, count_points(data, schema.AXES)))
        schema.load(data)
        return Response(orjson.dumps(CONSTANT), content_type="application/json")

    app.add_url_rule("/v1/floor/hooks", "floor_hooks", hooks, methods=["POST"])
    app.add_url_rule("/v1/floor/load", "floor_load", load, methods=["POST"])
    return app
