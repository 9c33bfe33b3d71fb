"""flask-smorest glue: our Blueprint (body parser) and Api (problem documents, spec parts)."""

from __future__ import annotations

import http
from copy import deepcopy

import flask
import flask_smorest
import marshmallow as ma
from apispec.ext.marshmallow import MarshmallowPlugin as _MarshmallowPlugin
from apispec.ext.marshmallow.common import resolve_schema_instance
from apispec.ext.marshmallow.openapi import OpenAPIConverter

from service.api import field_schemas, fields, problems
from service.api.problems import PROBLEM_MEDIA_TYPE
from service.api.request_body import BodyParser
from service.api.rule_schema import schema_rules
from service.api.spec import JSON_MEDIA_TYPE
from service.api.spec import complete as complete_spec

#: The problem responses every compute endpoint can give (documented with Blueprint.problems).
COMPUTE_PROBLEMS = (400, 401, 406, 413, 415, 422)


class Blueprint(flask_smorest.Blueprint):
    """A flask-smorest Blueprint whose request bodies go through qbar's BodyParser."""

    ARGUMENTS_PARSER = BodyParser()

    def response(self, status_code, schema=None, *, content_type=JSON_MEDIA_TYPE, **kwargs):
        """flask-smorest's response(), answering application/json (the Api's default media type is the
        problem documents')."""
        return super().response(status_code, schema, content_type=content_type, **kwargs)

    def problems(self, *statuses: int):
        """Document the problem responses ``statuses`` of a view (components in the spec)."""

        def decorator(func):
            # Documentation only. flask-smorest's public ways (alt_response, doc) each wrap the view, a Python
            # call per request per status; this writes the same entry its own decorators write (_apidoc).
            # tests/test_spec_complete.py pins the result: every compute operation lists COMPUTE_PROBLEMS.
            func._apidoc = deepcopy(getattr(func, "_apidoc", {}))
            responses = func._apidoc.setdefault("response", {}).setdefault("responses", {})
            for status in statuses:
                responses.setdefault(status, []).append(http.HTTPStatus(status).name)
            return func

        return decorator

    def compute(self, path: str, request: type[ma.Schema], examples: dict, response: type[ma.Schema],
                operation_id: str | None = None):
        """A compute endpoint: POST ``path``, the body loaded by ``request`` (with its spec ``examples``), a 200
        answer of ``response``, the COMPUTE_PROBLEMS, and the spec's ``operation_id`` when given. Applied once, at
        import: the same decorators, in the same order, as writing each out above the view."""

        def decorator(func):
            func = self.problems(*COMPUTE_PROBLEMS)(func)
            func = self.response(200, response)(func)
            func = self.arguments(request, examples=examples)(func)
            if operation_id is not None:
                func = self.doc(operationId=operation_id)(func)
            return self.route(path, methods=["POST"])(func)

        return decorator


class ErrorItemSchema(ma.Schema):
    pointer = ma.fields.String(required=True, metadata={
        "description": "JSON Pointer (RFC 6901) into the request body to the offending value; \"\" for the body."})
    message = ma.fields.String(required=True, metadata={"description": "What is wrong there."})
    column = ma.fields.String(metadata={"description": "Table bodies (CSV, Arrow): the column's header.",
                                        "example": "altitude [FL]"})
    row = ma.fields.Integer(metadata={"description": "Table bodies: the row, 0-based (the CSV line is row + 2).",
                                      "example": 1})
    parameter = ma.fields.String(metadata={"description": "Table bodies: the query parameter concerned.",
                                           "example": "isa_deviation"})


class WarningSchema(ma.Schema):
    """One entry per output field: when a field is null or doubtful for several reasons, one entry gives them all."""

    field = ma.fields.String(required=True, metadata={"description": "The output field concerned (one entry each)."})
    message = ma.fields.String(required=True, metadata={
        "description": "Why some values are null or doubtful (every reason, when there are several)."})
    count = ma.fields.Integer(required=True, metadata={"description": "How many points are concerned."})
    indices = ma.fields.List(ma.fields.Integer(), required=True, metadata={
        "description": "The first (up to ten) indices of the points concerned."})


class ProblemSchema(ma.Schema):
    """RFC 9457 problem document. Bounded: see service.api.problems.BOUNDS."""

    type = ma.fields.String(required=True, metadata={
        "description": "Stable URI of the problem kind, e.g. /problems/validation (GET it for a description)."})
    title = ma.fields.String(required=True, metadata={"description": "Short summary of the problem kind."})
    status = ma.fields.Integer(required=True, metadata={"description": "The HTTP status code."})
    detail = ma.fields.String(required=True, metadata={"description": "What went wrong with this request."})
    instance = ma.fields.String(metadata={"description": "The path of the request that failed.",
                                          "example": "/v1/atmosphere"})
    errors = ma.fields.List(ma.fields.Nested(ErrorItemSchema), metadata={
        "description": "For invalid input: each offending value with a pointer into the request. " + problems.BOUNDS})
    errors_omitted = ma.fields.Integer(metadata={
        "description": f"How many further errors were found beyond the {problems.MAX_ERRORS} listed.", "example": 3})
    request_id = ma.fields.String(metadata={"description": "The request id (X-Request-ID) for support."})
    limit = ma.fields.Integer(metadata={"description": "For 413: the limit that was exceeded."})
    acceptable = ma.fields.List(ma.fields.String(), metadata={
        "description": "For 406: the media types the endpoint answers in (Accept may name them with q-values, "
                       "wildcards and charset=utf-8)."})
    field = ma.fields.String(metadata={"description": "For no-solution: the output that does not exist."})
    count = ma.fields.Integer(metadata={"description": "For no-solution: how many points have no solution."})
    indices = ma.fields.List(ma.fields.Integer(), metadata={
        "description": "For no-solution: the first (up to ten) indices of those points."})


class Converter(OpenAPIConverter):
    """apispec's schema converter, plus the schema's rules (api.rules) as its ``allOf``."""

    def schema2jsonschema(self, schema):
        jsonschema = super().schema2jsonschema(schema)
        # A request field's default is in its description, not a `default` keyword: generators read the
        # keyword as "always present" (openapi-typescript makes such a property required), so clients would
        # have to send what the service defaults.
        for prop in jsonschema.get("properties", {}).values():
            prop.pop("default", None)
        rules = schema_rules(resolve_schema_instance(schema))
        if rules:
            jsonschema["allOf"] = [rule.spec() for rule in rules]
        return jsonschema


class MarshmallowPlugin(_MarshmallowPlugin):
    Converter = Converter


class Api(flask_smorest.Api):
    """flask-smorest Api answering every error with a problem document, publishing the completed spec.

    Configured through flask-smorest's public hooks: the marshmallow plugin (spec_kwargs), the error schema
    and its media type for the lazily registered error responses (ERROR_SCHEMA, DEFAULT_RESPONSE_CONTENT_TYPE;
    our Blueprint says application/json for its answers), our error handlers registered after flask-smorest's
    (Flask keeps the last one per class), and /openapi.json served by our own rule (OPENAPI_URL_PREFIX unset:
    flask-smorest serves nothing).
    """

    ERROR_SCHEMA = ProblemSchema
    DEFAULT_ERROR_RESPONSE_NAME = None
    DEFAULT_RESPONSE_CONTENT_TYPE = PROBLEM_MEDIA_TYPE

    def init_app(self, app, *, spec_kwargs=None):
        self._spec_dict = None
        super().init_app(app, spec_kwargs={"marshmallow_plugin": MarshmallowPlugin(), **(spec_kwargs or {})})
        self.ma_plugin.converter.add_attribute_function(fields.field_to_properties)
        for name, component in field_schemas.named_schemas().items():  # the dimensions' types the fields refer to
            self.spec.components.schema(name, component=component)
        self.spec.components.schema("Warning", schema=WarningSchema)
        problems.register(app)
        app.add_url_rule("/openapi.json", "openapi_json", self.openapi_json)

    def spec_dict(self) -> dict:
        """The published spec: apispec's document completed by service.api.spec (computed examples, CSV,
        headers), built on first use; `qbar spec` writes it and GET /openapi.json serves it."""
        if self._spec_dict is None:
            self._spec_dict = complete_spec(self._app, self.spec.to_dict())
        return self._spec_dict

    def openapi_json(self):
        """GET /openapi.json: the published spec."""
        return flask.current_app.response_class(
            flask.json.dumps(self.spec_dict(), indent=2, sort_keys=False), mimetype="application/json")
