"""What the service says about itself: health, readiness, the unit table, the version, problem types.

Open without an API key (service.api.request_hooks.OPEN_PATHS; the spec says so, api.spec).
"""

from __future__ import annotations

import marshmallow as ma
import orjson
from flask import Response, current_app

from service import units
from service.api.base import Blueprint
from service.api.problems import KINDS, Problem, type_uri
from service.physics.constants import H_MAX, H_MIN
from service.version import __version__

blp = Blueprint("service", __name__, description="Liveness, readiness, the unit table and the service version.")


def _json(doc, status=200) -> Response:
    return Response(orjson.dumps(doc), status=status, mimetype="application/json")


class StatusSchema(ma.Schema):
    status = ma.fields.String(required=True, metadata={"description": "\"ok\" when the service answers."})


class UnitSchema(ma.Schema):
    unit = ma.fields.String(required=True, metadata={"description": "The unit's symbol, as answers give it."})
    aliases = ma.fields.List(ma.fields.String(), required=True, metadata={
        "description": "The unit's other standard symbols, also accepted in requests (the knot: kn)."})
    description = ma.fields.String(required=True, metadata={"description": "What the unit is."})
    factor = ma.fields.Float(required=True, metadata={"description": "SI value = value x factor + offset."})
    offset = ma.fields.Float(required=True, metadata={"description": "SI value = value x factor + offset."})


class DimensionSchema(ma.Schema):
    dimension = ma.fields.String(required=True, metadata={"description": "Dimension name (the key of output_units)."})
    description = ma.fields.String(required=True, metadata={"description": "What the dimension measures."})
    si_unit = ma.fields.String(required=True, metadata={"description": "The SI unit that factors convert to."})
    default_unit = ma.fields.String(required=True, metadata={"description": "The unit of a bare number."})
    output = ma.fields.Boolean(required=True, metadata={
        "description": "Whether output_units may name this dimension (false: an input-only dimension)."})
    units = ma.fields.List(ma.fields.Nested(UnitSchema), required=True, metadata={"description": "Allowed units."})


class UnitsSchema(ma.Schema):
    dimensions = ma.fields.List(ma.fields.Nested(DimensionSchema), required=True, metadata={
        "description": "Every dimension with its units."})


class ModelSchema(ma.Schema):
    name = ma.fields.String(required=True, metadata={"description": "The atmosphere model."})
    min_geopotential_altitude_m = ma.fields.Float(required=True, metadata={"description": "Lowest altitude [m]."})
    max_geopotential_altitude_m = ma.fields.Float(required=True, metadata={"description": "Highest altitude [m]."})


class VersionSchema(ma.Schema):
    service = ma.fields.String(required=True, metadata={"description": "Service name."})
    version = ma.fields.String(required=True, metadata={"description": "Service version."})
    api = ma.fields.String(required=True, metadata={"description": "API major version (the /v1 prefix)."})
    commit = ma.fields.String(allow_none=True, required=True, metadata={
        "description": "The build's commit (QBAR_COMMIT at build time), null when unknown."})
    atmosphere_model = ma.fields.Nested(ModelSchema, required=True, metadata={"description": "The model and range."})


@blp.route("/v1/health", methods=["GET"])
@blp.doc(operationId="getHealth")
@blp.response(200, StatusSchema)
def health():
    """Liveness

    Answers 200 while the process serves requests.
    """
    return _json({"status": "ok"})


@blp.route("/v1/ready", methods=["GET"])
@blp.doc(operationId="getReadiness")
@blp.response(200, StatusSchema)
@blp.problems(503)
def ready():
    """Readiness

    Answers 200 once the application is loaded and can compute; 503 while it cannot.
    """
    if not current_app.config.get("QBAR_READY", True):
        raise Problem("unavailable", "The service is not ready.")
    return _json({"status": "ok"})


@blp.route("/v1/units", methods=["GET"])
@blp.doc(operationId="listUnits")
@blp.response(200, UnitsSchema)
def unit_table():
    """The unit table

    Every dimension, its default unit (the unit of a bare number) and the units a request may name.
    """
    return _json(units.catalogue())


@blp.route("/v1/version", methods=["GET"])
@blp.doc(operationId="getVersion")
@blp.response(200, VersionSchema)
def version():
    """Service version

    The service version, the atmosphere model and its range, and the build's commit when known.
    """
    return _json({
        "service": "qbar",
        "version": __version__,
        "api": "v1",
        "commit": current_app.config.get("QBAR_COMMIT") or None,
        "atmosphere_model": {
            "name": "ICAO Standard Atmosphere (Doc 7488/3, ISO 2533:1975) extended to 86 km geometric as the "
                    "U.S. Standard Atmosphere 1976",
            "min_geopotential_altitude_m": H_MIN,
            "max_geopotential_altitude_m": H_MAX,
        },
    })


class ProblemTypeSchema(ma.Schema):
    type = ma.fields.String(required=True, metadata={"description": "The type URI."})
    title = ma.fields.String(required=True, metadata={"description": "Short summary."})
    status = ma.fields.Integer(required=True, metadata={"description": "The HTTP status it comes with."})
    description = ma.fields.String(required=True, metadata={"description": "What it means and what to do."})


@blp.route("/problems/<slug>", methods=["GET"], parameters=[{
    "in": "path", "name": "slug", "required": True, "example": "validation",
    "description": "The end of a problem document's `type` URI, e.g. `validation` for /problems/validation.",
    "schema": {"type": "string", "minLength": 1}}])
@blp.doc(operationId="getProblemType")
@blp.response(200, ProblemTypeSchema)
@blp.problems(404)
def problem_type(slug):
    """Description of a problem type

    The `type` URI of every problem document leads here.
    """
    kind = KINDS.get(slug)
    if kind is None:
        raise Problem("not-found", f"No problem type {slug!r}.")
    return _json({"status": kind.status, "type": type_uri(kind.slug), "title": kind.title,
                  "description": kind.description})
