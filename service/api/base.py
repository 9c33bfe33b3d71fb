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

from service.api import fields, problems
from service.api.inputs import BodyParser
from service.api.problems import PROBLEM_MEDIA_TYPE
from service.api.rules import schema_rules
from service.api.spec import complete as complete_spec

#: The problem responses every compute endpoint can give (documented with Blueprint.problems).
COMPUTE_PROBLEMS = (400, 401, 406, 413, 415, 422)


class Blueprint(flask_smorest.Blueprint):
    """A flask-smorest Blueprint whose request bodies go through qbar's BodyParser."""

    ARGUMENTS_PARSER = BodyParser()

    def problems(self, *statuses: int):
        """Document the problem responses ``statuses`` of a view (components in the spec)."""

        def decorator(func):
            # Documentation only: unlike alt_response, no wrapper is added to the call path.
            func._apidoc = deepcopy(getattr(func, "_apidoc", {}))
            responses = func._apidoc.setdefault("response", {}).setdefault("responses", {})
            for status in statuses:
                responses.setdefault(status, []).append(http.HTTPStatus(status).name)
            return func

        return decorator


class ErrorItemSchema(ma.Schema):
    pointer = ma.fields.String(required=True, metadata={
        "description": "JSON Pointer (RFC 6901) into the request body to the offending value; \"\" for the body."})
    message = ma.fields.String(required=True, metadata={"description": "What is wrong there."})


class WarningSchema(ma.Schema):
    field = ma.fields.String(required=True, metadata={"description": "The output field concerned."})
    message = ma.fields.String(required=True, metadata={"description": "Why some values are null or doubtful."})
    count = ma.fields.Integer(required=True, metadata={"description": "How many points are concerned."})
    indices = ma.fields.List(ma.fields.Integer(), required=True, metadata={
        "description": "The first (up to ten) indices of the points concerned."})


class ProblemSchema(ma.Schema):
    """RFC 9457 problem document."""

    type = ma.fields.String(required=True, metadata={
        "description": "Stable URI of the problem kind, e.g. /problems/validation (GET it for a description)."})
    title = ma.fields.String(required=True, metadata={"description": "Short summary of the problem kind."})
    status = ma.fields.Integer(required=True, metadata={"description": "The HTTP status code."})
    detail = ma.fields.String(required=True, metadata={"description": "What went wrong with this request."})
    instance = ma.fields.String(metadata={"description": "The path of the request that failed.",
                                          "example": "/v1/atmosphere"})
    errors = ma.fields.List(ma.fields.Nested(ErrorItemSchema), metadata={
        "description": "For invalid input: each offending value with a pointer into the request."})
    request_id = ma.fields.String(metadata={"description": "The request id (X-Request-ID) for support."})
    limit = ma.fields.Integer(metadata={"description": "For 413: the limit that was exceeded."})
    field = ma.fields.String(metadata={"description": "For no-solution: the output that does not exist."})
    count = ma.fields.Integer(metadata={"description": "For no-solution: how many points have no solution."})
    indices = ma.fields.List(ma.fields.Integer(), metadata={
        "description": "For no-solution: the first (up to ten) indices of those points."})


class Converter(OpenAPIConverter):
    """apispec's schema converter, plus the schema's rules (api.rules) as its ``allOf``."""

    def schema2jsonschema(self, schema):
        jsonschema = super().schema2jsonschema(schema)
        rules = schema_rules(resolve_schema_instance(schema))
        if rules:
            jsonschema["allOf"] = [rule.spec() for rule in rules]
        return jsonschema


class MarshmallowPlugin(_MarshmallowPlugin):
    Converter = Converter


class Api(flask_smorest.Api):
    """flask-smorest Api answering every error with a problem document, publishing the completed spec."""

    ERROR_SCHEMA = ProblemSchema
    DEFAULT_ERROR_RESPONSE_NAME = None

    def __init__(self, *args, **kwargs):
        self._spec_dict = None
        super().__init__(*args, **kwargs)

    def spec_dict(self) -> dict:
        """The published spec: apispec's document completed by service.api.spec (computed examples, CSV,
        headers), built on first use; `qbar spec` writes it and GET /openapi.json serves it."""
        if self._spec_dict is None:
            self._spec_dict = complete_spec(self._app, self.spec.to_dict())
        return self._spec_dict

    def _openapi_json(self):
        return flask.current_app.response_class(
            flask.json.dumps(self.spec_dict(), indent=2, sort_keys=False), mimetype="application/json")

    def _register_pagination_header(self):
        """Nothing: qbar does not paginate (flask-smorest would add an unused PaginationMetadata schema)."""

    def _register_etag_headers(self):
        """Nothing: qbar's answers carry no ETag."""

    def _register_error_handlers(self):
        problems.register(self._app)

    def _init_spec(self, *args, **kwargs):
        kwargs.setdefault("marshmallow_plugin", MarshmallowPlugin())
        super()._init_spec(*args, **kwargs)
        self.ma_plugin.converter.add_attribute_function(fields.field_to_properties)

    def _register_responses(self):
        self.spec.components.schema("Problem", schema=ProblemSchema)
        self.spec.components.schema("Warning", schema=WarningSchema)
        for status in http.HTTPStatus:
            if status < 400:
                continue
            response = {
                "description": status.phrase,
                "content": {PROBLEM_MEDIA_TYPE: {"schema": {"$ref": "#/components/schemas/Problem"}}},
            }
            self.spec.components.response(status.name, response, lazy=True)
