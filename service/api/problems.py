"""RFC 9457 problem documents (application/problem+json) for every failure.

Each kind of problem has a stable ``type`` URI under ``/problems/``; GET on that URI
describes it. Views and helpers raise :class:`Problem`; the handlers registered by
:func:`register` turn it, and every werkzeug HTTPException, into a problem document.
Nothing else reaches the client: no HTML error page, no stack trace.
"""

from __future__ import annotations

import logging
from typing import NamedTuple

import marshmallow as ma
import orjson
from flask import Flask, Response, g, has_request_context, request
from werkzeug.exceptions import HTTPException

PROBLEM_MEDIA_TYPE = "application/problem+json"

log = logging.getLogger("qbar")


class Kind(NamedTuple):
    """A kind of problem: its slug (the end of the type URI), status and title."""

    slug: str
    status: int
    title: str
    description: str


KINDS: dict[str, Kind] = {
    k.slug: k
    for k in (
        Kind("malformed-json", 400, "Malformed JSON",
             "The request body is not valid JSON (NaN and Infinity are not JSON)."),
        Kind("bad-request", 400, "Bad request", "The request could not be understood."),
        Kind("unauthorized", 401, "Unauthorized",
             "A valid API key is required: 'Authorization: Bearer <key>' or 'X-API-Key: <key>'."),
        Kind("not-found", 404, "Not found", "No resource at this path."),
        Kind("method-not-allowed", 405, "Method not allowed", "This path does not accept this method."),
        Kind("not-acceptable", 406, "Not acceptable", "None of the media types in Accept can be produced."),
        Kind("payload-too-large", 413, "Payload too large",
             "The request body or the number of points is over the service's limit."),
        Kind("unsupported-media-type", 415, "Unsupported media type",
             "The request body must be JSON ('Content-Type: application/json'), or a table: CSV ('text/csv') "
             "or an Arrow IPC stream ('application/vnd.apache.arrow.stream')."),
        Kind("validation", 422, "Invalid input",
             "One or more inputs are invalid: wrong type, unknown unit, out of range, or physically impossible."),
        Kind("no-solution", 422, "No solution",
             "The inputs are valid but the requested result does not exist for some points."),
        Kind("too-many-requests", 429, "Too many requests", "Slow down."),
        Kind("internal", 500, "Internal error", "The service failed; the failure was logged."),
        Kind("unavailable", 503, "Service unavailable", "The service is not ready to answer."),
    )
}

_BY_STATUS = {}
for _k in KINDS.values():
    _BY_STATUS.setdefault(_k.status, _k)


def type_uri(slug: str) -> str:
    """The stable type URI of a problem kind."""
    return f"/problems/{slug}"


class Problem(Exception):
    """An error answered as a problem document.

    ``errors`` is a list of ``{"pointer": JSON Pointer into the request, "message": str}``.
    """

    def __init__(self, slug: str, detail: str, *, errors: list[dict] | None = None,
                 status: int | None = None, headers: dict | None = None, extra: dict | None = None):
        super().__init__(detail)
        kind = KINDS[slug]
        self.kind = kind
        self.status = status or kind.status
        self.detail = detail
        self.errors = errors
        self.headers = headers or {}
        self.extra = extra or {}

    def body(self, instance: str | None = None) -> dict:
        doc = {
            "type": type_uri(self.kind.slug),
            "title": self.kind.title,
            "status": self.status,
            "detail": self.detail,
        }
        if instance:
            doc["instance"] = instance
        if self.errors is not None:
            doc["errors"] = self.errors
        doc.update(self.extra)
        request_id = g.get("request_id") if g else None
        if request_id:
            doc["request_id"] = request_id
        return doc


def escape_pointer_token(token) -> str:
    """Escape one JSON Pointer reference token (RFC 6901)."""
    return str(token).replace("~", "~0").replace("/", "~1")


def pointer(*tokens) -> str:
    """A JSON Pointer from reference tokens: pointer("altitude", "value", 3) == "/altitude/value/3"."""
    return "".join("/" + escape_pointer_token(t) for t in tokens)


def flatten_messages(messages, prefix: str = "") -> list[dict]:
    """Turn marshmallow's nested error messages into a list of {pointer, message}.

    ``_schema`` entries point at the object that holds them.
    """
    out: list[dict] = []
    if isinstance(messages, dict):
        for key, value in messages.items():
            sub = prefix if key == ma.exceptions.SCHEMA else prefix + "/" + escape_pointer_token(key)
            out.extend(flatten_messages(value, sub))
    elif isinstance(messages, (list, tuple)):
        for value in messages:
            out.extend(flatten_messages(value, prefix))
    else:
        out.append({"pointer": prefix, "message": str(messages)})
    return out


def invalid(errors: dict | list, detail: str | None = None, slug: str = "validation") -> Problem:
    """A 422 Problem from {field or pointer: message} or a list of {pointer, message}."""
    if isinstance(errors, dict):
        errors = [
            {"pointer": key if key.startswith("/") or key == "" else pointer(key), "message": msg}
            for key, msg in errors.items()
        ]
    if detail is None:
        detail = "; ".join(f"{e['pointer'] or '(body)'}: {e['message'].rstrip('.')}" for e in errors[:5])
        if len(errors) > 5:
            detail += f"; and {len(errors) - 5} more"
        detail += "."
    return Problem(slug, detail, errors=errors)


def problem_response(problem: Problem) -> Response:
    body = orjson.dumps(problem.body(request.path if has_request_context() else None))
    resp = Response(body, status=problem.status, mimetype=PROBLEM_MEDIA_TYPE)
    for key, value in problem.headers.items():
        resp.headers[key] = value
    return resp


def _from_http_exception(error: HTTPException) -> Problem:
    code = error.code or 500
    kind = _BY_STATUS.get(code)
    headers = {}
    if code == 405 and getattr(error, "valid_methods", None):
        headers["Allow"] = ", ".join(error.valid_methods)
    if kind is None:
        kind = KINDS["bad-request"] if code < 500 else KINDS["internal"]
    detail = error.description if code != 500 else KINDS["internal"].description
    if code == 404:
        detail = "No resource at this path; see /openapi.json for the endpoints."
    elif code == 405:
        detail = f"This path accepts only: {headers.get('Allow', 'other methods')}."
    return Problem(kind.slug, detail, status=code, headers=headers)


def handle_problem(problem: Problem):
    return problem_response(problem)


def handle_http_exception(error: HTTPException):
    return problem_response(_from_http_exception(error))


def handle_unexpected(error: Exception):
    log.exception("unhandled error", exc_info=error)
    return problem_response(Problem("internal", KINDS["internal"].description))


def register(app: Flask) -> None:
    """Install the problem handlers on ``app`` (replacing flask-smorest's)."""
    app.register_error_handler(Problem, handle_problem)
    app.register_error_handler(HTTPException, handle_http_exception)
    app.register_error_handler(Exception, handle_unexpected)
