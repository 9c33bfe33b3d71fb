"""The finishing pass over the generated OpenAPI document: computed examples, CSV answers, headers.

apispec writes the spec from the schemas; this pass adds what only the running service knows.
Every request example (service.api.examples) is sent through its view, and the answer becomes
the 200 response's example of the same name, as JSON and as CSV; the GET endpoints' answers
become theirs. So the examples are the service's own output and cannot go stale. The error
responses get real problem documents the same way. Every field without an example in its
schema's metadata then takes the value it has in those requests and answers (the grid's
`inputs` from the same requests sent with `grid: true`).

The views are called without the request hooks (:func:`dispatch`): no API key is checked, no
access line is logged, nothing is counted in the metrics, and the request id is a fixed one.
A request example that does not answer 200 (a deployment with a point limit below the
example's size, say) is logged and left without an answer; the spec tests fail on that.
"""

from __future__ import annotations

import copy
import http
import json
import logging

import marshmallow as ma
from flask import Flask, Response, g

from service.api import arrow, formats, request_hooks, tables
from service.api.problems import PROBLEM_MEDIA_TYPE, Problem, problem_response

log = logging.getLogger("qbar")

JSON_MEDIA_TYPE = "application/json"
#: The request id of the example requests (problem documents repeat it).
EXAMPLE_REQUEST_ID = "tav-ops-20260105-0001"

CSV_DESCRIPTION = (
    "The same answer as a table (send `Accept: text/csv`): one header line, then one row per point. The inputs "
    "come first, every numeric input at every point as `input.<name> [unit]`; then every output, nested ones with "
    "dotted names (`atmosphere.pressure`, `multiples.0.cas`), each physical column with its unit in brackets. A "
    "value that does not exist is an empty cell; the `X-Warnings` header counts the warnings, which a table cannot "
    "carry (ask for JSON to read them).")

#: Response headers, documented once in components/headers and referenced by every response.
HEADERS = {
    "X-Request-ID": {
        "description": "The request id: the caller's own X-Request-ID (letters, digits, `.`, `_`, `-`, at most 64 "
                       "kept) or a new one. Problem documents repeat it as `request_id`; quote it to support.",
        "required": True,
        "schema": {"type": "string", "pattern": "^[A-Za-z0-9._-]{1,64}$", "example": EXAMPLE_REQUEST_ID},
    },
    "X-Warnings": {
        "description": "CSV answers only: the number of warnings (outputs null or doubtful at some points); "
                       "absent when there are none. Ask for JSON to read them.",
        "schema": {"type": "integer", "minimum": 1, "example": 1},
    },
    "WWW-Authenticate": {
        "description": "401 only: the authentication scheme, `Bearer realm=\"qbar\"` (with `error=\"invalid_token\"` "
                       "when a key was sent but is not valid).",
        "required": True,
        "schema": {"type": "string", "example": 'Bearer realm="qbar"'},
    },
}


def _ref(name: str) -> dict:
    return {"$ref": f"#/components/headers/{name}"}


# --- calling a view ----------------------------------------------------------------------------------


def dispatch(app: Flask, method: str, path: str, *, body: bytes | None = None, headers: dict | None = None,
             environ: dict | None = None) -> Response:
    """The app's answer to one request, from the view alone (no before/after-request hooks).

    A fresh app context gives the request its own ``g``, so nothing leaks from or into a request
    that is being served while the spec is generated.
    """
    with app.app_context(), app.test_request_context(path, method=method, data=body, headers=headers or {},
                                                    environ_overrides=environ or {}):
        g.request_id = EXAMPLE_REQUEST_ID  # as the request hook would set it from the caller's X-Request-ID
        try:
            rv = app.dispatch_request()
        except Exception as error:  # noqa: BLE001 - answered by the app's own error handlers, as when served
            rv = app.handle_user_exception(error)
        return app.make_response(rv)


def _post_json(app: Flask, path: str, document, headers: dict | None = None) -> Response:
    return dispatch(app, "POST", path, body=json.dumps(document).encode(),
                    headers={"Content-Type": JSON_MEDIA_TYPE, **(headers or {})})


def _problem(response: Response | None) -> dict | None:
    """The problem document of an error answer; None (logged) for anything else."""
    if response is None or response.mimetype != PROBLEM_MEDIA_TYPE:
        log.warning("spec error example is not a problem document: %s", response and response.status)
        return None
    return json.loads(response.get_data())


# --- the error examples ----------------------------------------------------------------------------


def error_examples(app: Flask) -> dict[int, dict[str, dict]]:
    """Real problem documents by status: {status: {name: {"summary", "value"}}}."""
    atmosphere = "/v1/atmosphere"
    limit = app.config["QBAR_MAX_BODY_BYTES"]
    cases = {
        400: {"malformed-json": ("The body is not JSON (here cut short)",
                                 dispatch(app, "POST", atmosphere, body=b'{"altitude": 7200,',
                                          headers={"Content-Type": JSON_MEDIA_TYPE}))},
        401: {"unauthorized": ("No API key sent while the service has keys configured", _unauthorized(app))},
        404: {"not-found": ("No problem type of that name", dispatch(app, "GET", "/problems/no-such-problem"))},
        406: {"not-acceptable": ("Accept names neither JSON nor CSV",
                                 _post_json(app, atmosphere, {"altitude": 7200}, {"Accept": "application/xml"}))},
        413: {"payload-too-large": ("A body over QBAR_MAX_BODY_BYTES (refused before it is read)",
                                    dispatch(app, "POST", atmosphere, body=b"{}",
                                             headers={"Content-Type": JSON_MEDIA_TYPE},
                                             environ={"CONTENT_LENGTH": str(limit + 1)}))},
        415: {"unsupported-media-type": ("The body sent without Content-Type: application/json",
                                         dispatch(app, "POST", atmosphere, body=b'{"altitude": 7200}',
                                                  headers={"Content-Type": "text/plain"}))},
        422: {
            "validation": ("An invalid input, with a JSON Pointer to it",
                           _post_json(app, atmosphere, {"altitude": {"value": [7200, 8200], "unit": "feet"},
                                                        "isa_deviation": [20, True]})),
            "table-validation": ("A CSV table with a value out of range and a query parameter that is not a number, "
                                 "each located",
                                 dispatch(app, "POST", atmosphere + "?isa_deviation=hot",
                                          body=b"altitude [FL]\n100\n9000\n",
                                          headers={"Content-Type": formats.CSV})),
            "no-solution": ("Valid inputs whose result does not exist at some points",
                            _post_json(app, "/v1/airspeed/crossover", {"cas": [290, 600], "mach": [0.76, 0.5]})),
        },
    }
    found = {status: {name: {"summary": summary, "value": _problem(response)}
                      for name, (summary, response) in named.items()}
             for status, named in cases.items()}
    return {status: {name: e for name, e in named.items() if e["value"] is not None} for status, named in found.items()}


def _unauthorized(app: Flask) -> Response | None:
    """The 401 the request hook answers when keys are configured and the request sends none."""
    with app.app_context(), app.test_request_context("/v1/atmosphere", method="POST"):
        g.request_id = EXAMPLE_REQUEST_ID
        try:
            request_hooks.authenticate(request_hooks.KeyRing(["an-operator-key-0123456789"]), {})
        except Problem as problem:
            return problem_response(problem)
    return None


# --- the pass ----------------------------------------------------------------------------------------


def complete(app: Flask, generated: dict) -> dict:
    """The spec ``generated`` by apispec with computed examples, CSV answers and response headers."""
    spec = copy.deepcopy(generated)
    components = spec.setdefault("components", {})
    schemas = components.get("schemas", {})
    schemas.pop("PaginationMetadata", None)  # flask-smorest registers it with every Api; qbar does not paginate
    components.setdefault("headers", {}).update(copy.deepcopy(HEADERS))
    filler = _Filler(schemas)

    for path, item in spec["paths"].items():  # the paths open without a key say so
        if not request_hooks.is_protected(path.replace("{", "<").replace("}", ">")):
            for method, operation in item.items():
                if method != "parameters":
                    operation["security"] = []
    for path, item in spec["paths"].items():
        for method, operation in item.items():
            if method == "parameters":
                continue
            ok = operation["responses"].get("200")
            if ok is None:
                continue
            json_content = ok["content"][JSON_MEDIA_TYPE]
            request_body = operation.get("requestBody")
            if request_body is not None:
                _compute_examples(app, path, request_body["content"][JSON_MEDIA_TYPE], ok, filler)
                request_schema = ma.class_registry.get_class(
                    request_body["content"][JSON_MEDIA_TYPE]["schema"]["$ref"].rsplit("/", 1)[1])()
                request_body["content"].update(tables.request_content(
                    request_schema, request_body["content"][JSON_MEDIA_TYPE]["examples"]))
                ok["content"].update(arrow.response_content())
            else:
                answer = _answer(dispatch(app, method.upper(), _example_path(path, item, operation)), method, path)
                if answer is None:
                    continue
                json_content["example"] = answer
                filler.fill(json_content["schema"], answer)

    responses = components.get("responses", {})
    for status, named in error_examples(app).items():
        content = responses.get(http.HTTPStatus(status).name, {}).get("content", {}).get(PROBLEM_MEDIA_TYPE)
        if content is None:  # no operation gives this status
            continue
        if len(named) == 1:
            content["example"] = next(iter(named.values()))["value"]
        elif named:
            content["examples"] = named
        for example in named.values():
            filler.fill(content["schema"], example["value"])

    for item in spec["paths"].values():
        for method, operation in item.items():
            if method != "parameters":
                for response in operation["responses"].values():
                    _add_headers(response)
    for name, response in responses.items():
        _add_headers(response)
        if name == "UNAUTHORIZED":
            response["headers"]["WWW-Authenticate"] = _ref("WWW-Authenticate")
    _drop_unused_schemas(spec)
    return spec


def _drop_unused_schemas(spec: dict) -> None:
    """Leave out the component schemas nothing refers to (api.field_schemas.named_schemas registers every
    dimension's types; a dimension no input uses needs no input types), so that generated clients hold no
    type nobody uses."""
    schemas = spec["components"]["schemas"]

    def refs(node, out: set):
        if isinstance(node, dict):
            for key, value in node.items():
                if key == "$ref" and isinstance(value, str) and value.startswith("#/components/schemas/"):
                    out.add(value.rsplit("/", 1)[1])
                else:
                    refs(value, out)
        elif isinstance(node, list):
            for value in node:
                refs(value, out)

    todo: set = set()
    refs({key: value for key, value in spec.items() if key != "components"}, todo)
    refs({key: value for key, value in spec["components"].items() if key != "schemas"}, todo)
    used: set = set()
    while todo:
        name = todo.pop()
        if name not in used:
            used.add(name)
            refs(schemas[name], todo)
    for name in set(schemas) - used:
        del schemas[name]


def _add_headers(response: dict) -> None:
    if "$ref" not in response:
        response.setdefault("headers", {})["X-Request-ID"] = _ref("X-Request-ID")


def _compute_examples(app: Flask, path: str, request: dict, ok: dict, filler: _Filler) -> None:
    """The 200 answers (JSON and CSV) to each named request example of a compute endpoint."""
    json_examples, csv_examples = {}, {}
    # Answers in the default units first: a field's example then shows the unit its description names.
    for name, example in sorted(request["examples"].items(), key=lambda item: "output_units" in item[1]["value"]):
        body = example["value"]
        answer = _answer(_post_json(app, path, body), "post", path)
        if answer is None:
            continue
        json_examples[name] = {"summary": example["summary"], "value": answer}
        table = _post_json(app, path, body, {"Accept": formats.CSV})
        csv_examples[name] = {"summary": example["summary"], "value": table.get_data(as_text=True)}
        filler.fill(request["schema"], body)
        filler.fill(ok["content"][JSON_MEDIA_TYPE]["schema"], answer)
        if not body.get("grid"):  # every input at every point, in the output units: the answer's `inputs`
            grid = _answer(_post_json(app, path, {**body, "grid": True}), "post", path)
            if grid is not None:
                filler.fill(ok["content"][JSON_MEDIA_TYPE]["schema"], grid)
    order = list(request["examples"])
    ok["content"][JSON_MEDIA_TYPE]["examples"] = {name: json_examples[name] for name in order if name in json_examples}
    ok["content"][formats.CSV] = {"schema": {"type": "string", "description": CSV_DESCRIPTION},
                                     "examples": {name: csv_examples[name] for name in order if name in csv_examples}}
    ok.setdefault("headers", {})["X-Warnings"] = _ref("X-Warnings")


def _example_path(path: str, item: dict, operation: dict) -> str:
    """``path`` with each path parameter replaced by its example."""
    for parameter in [*item.get("parameters", []), *operation.get("parameters", [])]:
        if parameter.get("in") == "path":
            path = path.replace("{" + parameter["name"] + "}", str(parameter["example"]))
    return path


def _answer(response: Response, method: str, path: str):
    """The JSON body of a 200 answer; None (logged) otherwise."""
    if response.status_code != 200:
        log.warning("spec example of %s %s answered %s: %s", method.upper(), path, response.status_code,
                    response.get_data(as_text=True)[:300])
        return None
    return json.loads(response.get_data())


class _Filler:
    """Gives each schema property without an example the value it has in a real answer."""

    def __init__(self, schemas: dict):
        self.schemas = schemas

    def _resolve(self, schema: dict) -> dict:
        ref = schema.get("$ref")
        if ref and ref.startswith("#/components/schemas/"):
            return self.schemas[ref.rsplit("/", 1)[1]]
        return schema

    def fill(self, schema: dict, value) -> None:
        schema = self._resolve(schema)
        if isinstance(value, dict):
            for key, prop in schema.get("properties", {}).items():
                if key in value:
                    if "example" not in prop:
                        prop["example"] = value[key]
                    self.fill(prop, value[key])
        elif isinstance(value, list) and value and isinstance(schema.get("items"), dict):
            if isinstance(value[0], dict):
                self.fill(schema["items"], value[0])
