"""RFC 9457 problem documents (application/problem+json) for every failure.

Each kind of problem has a stable ``type`` URI under ``/problems/``; GET on that URI
describes it. Views and helpers raise :class:`Problem`; the handlers registered by
:func:`register` turn it, and every werkzeug HTTPException, into a problem document.
Nothing else reaches the client: no HTML error page, no stack trace.

Every document is bounded by the request's worth, not by its size (:data:`BOUNDS`): at most
:data:`MAX_ERRORS` entries in ``errors`` plus ``errors_omitted``, the count of the rest; any text
taken from the request (a field name, a unit, a value) echoed as at most :data:`MAX_ECHO`
characters; no string longer than :data:`MAX_TEXT`; text that UTF-8 cannot encode (a lone
surrogate in a field name) written with backslash escapes. The server's own errors (a bad request
line, a header too large, a malformed chunk) are answered in the same form
(:func:`problem_document`, used by service/server.py).
"""

from __future__ import annotations

import logging
import re
from typing import NamedTuple

import marshmallow as ma
import orjson
from flask import Flask, Response, g, has_request_context, request
from werkzeug.exceptions import HTTPException

PROBLEM_MEDIA_TYPE = "application/problem+json"

#: At most this many entries in a problem document's ``errors``; ``errors_omitted`` counts the rest.
#: A schema that collects errors stops storing them past this many (and counts the rest).
MAX_ERRORS = 20
#: Any text taken from the request (field name, unit, value) is echoed as at most this many characters.
MAX_ECHO = 40
#: No string in a problem document (detail, message, pointer) is longer than this many characters.
MAX_TEXT = 500
#: The bound in words, for the spec's problem schema and the README.
BOUNDS = (f"A problem document lists at most {MAX_ERRORS} errors; `errors_omitted` counts the rest. Text taken "
          f"from the request (field names, units, values) is echoed as at most its first {MAX_ECHO} characters, "
          f"and no string in the document is longer than {MAX_TEXT} characters.")

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
        Kind("request-timeout", 408, "Request timeout",
             "The request's head or body did not arrive in time; send it again, at a steady pace."),
        Kind("payload-too-large", 413, "Payload too large",
             "The request body or the number of points is over the service's limit."),
        Kind("uri-too-long", 414, "URI too long", "The request line is over the server's limit."),
        Kind("unsupported-media-type", 415, "Unsupported media type",
             "The request body must be JSON, sent with 'Content-Type: application/json'."),
        Kind("validation", 422, "Invalid input",
             "One or more inputs are invalid: wrong type, unknown unit, out of range, or physically impossible."),
        Kind("no-solution", 422, "No solution",
             "The inputs are valid but the requested result does not exist for some points."),
        Kind("too-many-requests", 429, "Too many requests", "Slow down."),
        Kind("header-too-large", 431, "Request header fields too large",
             "The request has too many header fields, or one too long."),
        Kind("internal", 500, "Internal error", "The service failed; the failure was logged."),
        Kind("not-implemented", 501, "Not implemented", "The request uses an HTTP feature the server lacks."),
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
            doc["instance"] = bounded(instance)
        if self.errors is not None:
            shown = self.errors[:MAX_ERRORS]
            doc["errors"] = [{"pointer": bounded_pointer(e["pointer"]), "message": bounded(e["message"])}
                             for e in shown]
            omitted = len(self.errors) - len(shown) + getattr(self.errors, "omitted", 0)
            if omitted:
                doc["errors_omitted"] = omitted
        doc.update(self.extra)
        doc["detail"] = bounded(self.detail)
        request_id = g.get("request_id") if g else None
        if request_id:
            doc["request_id"] = request_id
        return doc


# --- bounds ----------------------------------------------------------------------------------

#: A quoted echo (repr) in a message longer than this is shortened to MAX_ECHO characters. Not every
#: quote ends an echo; so a run this long, not MAX_ECHO, counts as one, and messages quote one value.
_LONG_ECHO = 64
_QUOTED = re.compile(rf"'[^'\n]{{{_LONG_ECHO},}}'|\"[^\"\n]{{{_LONG_ECHO},}}\"")


def echo(text) -> str:
    """``text`` (from the request) as a message may quote it: repr of at most MAX_ECHO characters.

    >>> echo("kts")
    "'kts'"
    >>> echo("x" * 100)
    "'xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx...' (100 characters)"
    """
    text = str(text)
    if len(text) <= MAX_ECHO:
        return repr(text)
    return f"{text[:MAX_ECHO] + '...'!r} ({len(text)} characters)"


def _shorten_quoted(match: re.Match) -> str:
    quoted = match.group(0)
    inner = quoted[1:-1]
    return f"{quoted[0]}{inner[:MAX_ECHO]}...{quoted[0]} ({len(inner)} characters)"


def encodable(text: str) -> str:
    """``text`` with anything UTF-8 cannot encode (lone surrogates) as backslash escapes."""
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return text.encode("utf-8", "backslashreplace").decode("utf-8")
    return text


def bounded(text) -> str:
    """A message or detail as a problem document shows it: long quoted echoes shortened, at most MAX_TEXT.

    >>> bounded("Unknown unit '" + "k" * 1000 + "' for speed.")
    "Unknown unit 'kkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkkk...' (1000 characters) for speed."
    """
    text = str(text)
    if len(text) > _LONG_ECHO:
        text = _QUOTED.sub(_shorten_quoted, text)
    if len(text) > MAX_TEXT:
        text = text[:MAX_TEXT - 3] + "..."
    return encodable(text)


def bounded_pointer(text) -> str:
    """A JSON Pointer whose reference tokens from the request are cut to MAX_ECHO characters.

    >>> bounded_pointer("/" + "a" * 50 + "/value/3")
    '/aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa.../value/3'
    """
    text = str(text)
    if len(text) > MAX_ECHO:
        tokens = text.split("/")
        text = "/".join(t if len(t) <= MAX_ECHO else t[:MAX_ECHO] + "..." for t in tokens[:12])
        if len(tokens) > 12:
            text += "/..."
    return encodable(text)


class ErrorList(list):
    """A list of at most MAX_ERRORS ``{pointer, message}`` entries, and ``omitted``: how many more were found."""

    def __init__(self, entries=(), omitted: int = 0):
        super().__init__(entries)
        self.omitted = omitted


def escape_pointer_token(token) -> str:
    """Escape one JSON Pointer reference token (RFC 6901)."""
    return str(token).replace("~", "~0").replace("/", "~1")


def pointer(*tokens) -> str:
    """A JSON Pointer from reference tokens: pointer("altitude", "value", 3) == "/altitude/value/3"."""
    return "".join("/" + escape_pointer_token(t) for t in tokens)


def flatten_messages(messages, prefix: str = "") -> ErrorList:
    """Turn marshmallow's nested error messages into a list of {pointer, message}.

    ``_schema`` entries point at the object that holds them. At most MAX_ERRORS entries are
    made; the rest are only counted (``omitted``).
    """
    out = ErrorList()
    stack = [(prefix, messages)]
    while stack:
        where, node = stack.pop()
        if isinstance(node, dict):
            items = list(node.items())
            for key, value in reversed(items):
                stack.append((where if key == ma.exceptions.SCHEMA else where + "/" + escape_pointer_token(key),
                              value))
        elif isinstance(node, (list, tuple)):
            stack.extend((where, value) for value in reversed(node))
        elif len(out) < MAX_ERRORS:
            out.append({"pointer": where, "message": str(node)})
        else:
            out.omitted += 1
    return out


def invalid(errors: dict | list, detail: str | None = None, slug: str = "validation") -> Problem:
    """A 422 Problem from {field or pointer: message} or a list of {pointer, message}."""
    if isinstance(errors, dict):
        errors = [
            {"pointer": key if key.startswith("/") or key == "" else pointer(key), "message": msg}
            for key, msg in errors.items()
        ]
    if detail is None:
        total = len(errors) + getattr(errors, "omitted", 0)
        detail = "; ".join(f"{bounded_pointer(e['pointer']) or '(body)'}: {bounded(e['message']).rstrip('.')}"
                           for e in errors[:5])
        if total > 5:
            detail += f"; and {total - 5} more"
        detail += "."
    return Problem(slug, detail, errors=errors)


def problem_document(status: int, detail: str) -> bytes:
    """The body of a problem document for ``status`` outside the app (the HTTP server's own errors)."""
    kind = KINDS["bad-request"] if status == 400 else _BY_STATUS.get(status)
    kind = kind or (KINDS["bad-request"] if status < 500 else KINDS["internal"])
    return orjson.dumps({"type": type_uri(kind.slug), "title": kind.title, "status": status,
                         "detail": bounded(detail)})


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
