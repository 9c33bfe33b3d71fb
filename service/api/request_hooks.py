"""Request-level machinery: request ids, API keys, timing, metrics, the access log, headers, CORS.

:func:`init_app` installs one ``before_request`` and one ``after_request`` hook and the
``GET /metrics`` view. Per request, in this order:

1. Request id: ``X-Request-ID`` from the client when it has any of ``[A-Za-z0-9._-]`` (other
   characters are dropped, at most 64 kept), else 128 new random bits in hex; in ``g.request_id``,
   which problem documents carry as ``request_id``, and echoed in the response.
2. API key, when keys are configured (``QBAR_API_KEYS`` / ``QBAR_API_KEYS_FILE``): every
   ``/v1`` path except the open ones (:data:`OPEN_PATHS`) needs ``Authorization: Bearer
   <key>`` or ``X-API-Key: <key>``. Checked before the body is read; CORS preflight
   (OPTIONS) passes without a key. A missing or wrong key is a 401 problem.
3. After the view: ``X-Request-ID`` and ``X-Content-Type-Options: nosniff`` on the response,
   the request counted in the metrics, and one JSON line on the ``qbar.access`` logger
   (stdout): method, path, status, duration_ms, points, request_id, remote_addr. Never a
   header value other than the request id, so keys cannot reach the log.

Metrics: service.api.metrics.
"""

from __future__ import annotations

import hashlib
import hmac
import logging
import os
import re
import sys
from time import perf_counter

from flask import Flask, Response, g, has_request_context, request
from flask_cors import CORS

from service.api.metrics import METRICS_DIR_VARIABLE, Metrics, metrics_view
from service.api.problems import Problem
from service.logs import JsonFormatter

REQUEST_ID_HEADER = "X-Request-ID"
MAX_REQUEST_ID_LENGTH = 64
_REQUEST_ID = re.compile(r"[A-Za-z0-9._-]{1,64}")
_NOT_REQUEST_ID = re.compile(r"[^A-Za-z0-9._-]+")

#: Paths under /v1 that stay open when API keys are configured. Everything else under
#: PROTECTED_PREFIX needs a key, so a new compute endpoint is protected without a change here.
#: (/metrics, /openapi.json, /docs and /problems/* are outside the prefix.)
PROTECTED_PREFIX = "/v1/"
OPEN_PATHS = frozenset({"/v1/health", "/v1/ready", "/v1/units", "/v1/version"})

WWW_AUTHENTICATE = 'Bearer realm="qbar"'
API_KEY_HEADER = "X-API-Key"

#: The spec's security schemes and the security of every operation that does not override it
#: (the open endpoints declare ``security: []``). Either header satisfies it.
SECURITY_SCHEMES = {
    "bearerAuth": {
        "type": "http",
        "scheme": "bearer",
        "description": "An API key as a bearer token: `Authorization: Bearer <key>`. Required by the compute "
                       "endpoints when the operator has configured keys (QBAR_API_KEYS or QBAR_API_KEYS_FILE).",
    },
    "apiKeyHeader": {
        "type": "apiKey",
        "in": "header",
        "name": API_KEY_HEADER,
        "description": "The same API key in the `X-API-Key` header.",
    },
}
SECURITY = [{"bearerAuth": []}, {"apiKeyHeader": []}]

#: CORS: the request headers a browser may send, the response headers it may read.
CORS_ALLOW_HEADERS = ("Authorization", API_KEY_HEADER, "Content-Type", REQUEST_ID_HEADER)
CORS_EXPOSE_HEADERS = (REQUEST_ID_HEADER,)
CORS_MAX_AGE = 600  # seconds a browser may cache a preflight answer

UNMATCHED = "(unmatched)"  # the endpoint label of a path no route matches (404, 405)
_METHODS = frozenset({"GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"})

access_log = logging.getLogger("qbar.access")


# --- request ids ---------------------------------------------------------------------------

def request_id_from(raw: str | None) -> str:
    """The request id for a client's ``X-Request-ID`` value (None: absent).

    Kept when it is 1 to 64 of ``[A-Za-z0-9._-]``; otherwise the other characters are dropped
    and the rest cut to 64; when nothing is left, 128 new random bits in hex.

    >>> request_id_from("abc-123")
    'abc-123'
    >>> request_id_from("a b\\r\\nc")
    'abc'
    >>> len(request_id_from(None))
    32
    """
    if raw:
        if _REQUEST_ID.fullmatch(raw):
            return raw
        cleaned = _NOT_REQUEST_ID.sub("", raw[: 16 * MAX_REQUEST_ID_LENGTH])[:MAX_REQUEST_ID_LENGTH]
        if cleaned:
            return cleaned
    return os.urandom(16).hex()  # 128 random bits, as uuid4 carries, at a fraction of its cost


# --- API keys ------------------------------------------------------------------------------

class KeyRing:
    """The accepted API keys, compared in constant time.

    Keys and candidates are compared as SHA-256 digests with ``hmac.compare_digest``, every key
    every time: the time taken depends neither on where a candidate first differs nor on its
    length nor on which key matched.
    """

    def __init__(self, keys):
        self._digests = tuple(hashlib.sha256(key.encode("utf-8")).digest() for key in keys)

    def __bool__(self) -> bool:
        return bool(self._digests)

    def accepts(self, candidate: str) -> bool:
        digest = hashlib.sha256(candidate.encode("utf-8", "surrogateescape")).digest()
        found = False
        for known in self._digests:
            found |= hmac.compare_digest(digest, known)
        return found


def credentials(environ) -> list[str]:
    """The keys a request presents: the bearer token, then X-API-Key (either may be absent)."""
    found = []
    authorization = environ.get("HTTP_AUTHORIZATION")
    if authorization:
        scheme, _, token = authorization.strip().partition(" ")
        if scheme.lower() == "bearer" and token.strip():
            found.append(token.strip())
    key = environ.get("HTTP_X_API_KEY")
    if key and key.strip():
        found.append(key.strip())
    return found


def authenticate(keyring: KeyRing, environ) -> None:
    """Raise a 401 Problem unless the request presents one of the keys."""
    presented = credentials(environ)
    if not presented:
        raise Problem("unauthorized",
                      "This endpoint needs an API key: send 'Authorization: Bearer <key>' or 'X-API-Key: <key>'.",
                      headers={"WWW-Authenticate": WWW_AUTHENTICATE})
    if not any([keyring.accepts(candidate) for candidate in presented]):
        raise Problem("unauthorized", "The API key is not valid.",
                      headers={"WWW-Authenticate": WWW_AUTHENTICATE + ', error="invalid_token"'})


def is_protected(rule: str) -> bool:
    """Whether the URL rule ``rule`` needs a key when keys are configured."""
    return rule.startswith(PROTECTED_PREFIX) and rule not in OPEN_PATHS


# --- logs ----------------------------------------------------------------------------------

class RequestIdFilter(logging.Filter):
    """Adds the request id to every record logged while a request is handled (service.logs.JsonFormatter shows it)."""

    def filter(self, record: logging.LogRecord) -> bool:
        if getattr(record, "fields", None) is None and has_request_context():
            record.request_id = g.get("request_id")
        return True


class _CurrentStream(logging.StreamHandler):
    """A handler writing to whatever ``sys.stdout`` / ``sys.stderr`` is at the time of each line."""

    def __init__(self, name: str):
        super().__init__()
        self._name = name

    @property
    def stream(self):
        return getattr(sys, self._name)

    @stream.setter
    def stream(self, value):  # StreamHandler.__init__ assigns it; the property decides
        pass


def configure_logging(level: str) -> None:
    """JSON lines: ``qbar.access`` to stdout, every other ``qbar`` record to stderr; ``level`` for both.

    Idempotent: a second app replaces the handlers instead of adding more.
    """
    for name, stream, propagate in (("qbar", "stderr", True), ("qbar.access", "stdout", False)):
        logger = logging.getLogger(name)
        for handler in [h for h in logger.handlers if getattr(h, "_qbar", False)]:
            logger.removeHandler(handler)
        handler = _CurrentStream(stream)
        handler._qbar = True
        handler.setFormatter(JsonFormatter())
        handler.addFilter(RequestIdFilter())
        logger.addHandler(handler)
        logger.propagate = propagate
    logging.getLogger("qbar").setLevel(level)


# --- the hooks -----------------------------------------------------------------------------

def init_app(app: Flask) -> None:
    """Install request ids, API keys, metrics, the access log, headers and CORS on ``app``.

    Call it after the settings are loaded and before the flask-smorest ``Api`` is created: it
    adds the security schemes to ``API_SPEC_OPTIONS``. Its ``after_request`` hook is then the
    first registered, so it runs last (Flask runs them in reverse) and times the whole answer.
    """
    spec_options = app.config.setdefault("API_SPEC_OPTIONS", {})
    spec_options.setdefault("components", {}).setdefault("securitySchemes", {}).update(SECURITY_SCHEMES)
    spec_options.setdefault("security", SECURITY)

    configure_logging(app.config.get("QBAR_LOG_LEVEL", "INFO"))
    metrics = Metrics(multiprocess=bool(os.environ.get(METRICS_DIR_VARIABLE, "").strip()))
    app.extensions["qbar.metrics"] = metrics
    app.add_url_rule("/metrics", "metrics", metrics_view, methods=["GET"])

    keyring = KeyRing(app.config.get("API_KEYS", ()))
    protected: dict[str, bool] = {}  # URL rule -> needs a key

    @app.before_request
    def _before():
        # The real objects once, not a context-local lookup per attribute (this runs on every request).
        ctx_g = g._get_current_object()
        req = request._get_current_object()
        ctx_g.started = perf_counter()
        environ = req.environ
        ctx_g.request_id = request_id_from(environ.get("HTTP_X_REQUEST_ID"))
        if keyring and req.method != "OPTIONS":
            rule = req.url_rule
            if rule is not None:
                needed = protected.get(rule.rule)
                if needed is None:
                    needed = protected[rule.rule] = is_protected(rule.rule)
                if needed:
                    authenticate(keyring, environ)

    @app.after_request
    def _after(response: Response) -> Response:
        ctx_g = g._get_current_object()
        req = request._get_current_object()
        started = getattr(ctx_g, "started", None)
        request_id = getattr(ctx_g, "request_id", None) or request_id_from(None)
        points = getattr(ctx_g, "points", None)
        # add, not set: a fresh response has neither header, and set scans the list first
        response.headers.add(REQUEST_ID_HEADER, request_id)
        response.headers.add("X-Content-Type-Options", "nosniff")
        rule = req.url_rule
        endpoint = rule.rule if rule is not None else UNMATCHED
        method = req.method if req.method in _METHODS else "OTHER"
        status = response.status_code
        path, remote_addr = req.path, req.remote_addr

        def record() -> None:
            seconds = perf_counter() - started if started is not None else 0.0
            metrics.observe(endpoint, method, status, seconds, points)
            if access_log.isEnabledFor(logging.INFO):
                # A record made here and handed to the logger: Logger.info would also look up the
                # caller's source line, which no one reads, at a third of the cost of the line.
                line = logging.LogRecord(access_log.name, logging.INFO, __file__, 0, "request", None, None)
                line.fields = {"method": method, "path": path, "status": status,
                               "duration_ms": round(seconds * 1000.0, 3), "points": points,
                               "request_id": request_id, "remote_addr": remote_addr}
                access_log.handle(line)

        if response.is_streamed:  # a streamed answer (large JSON) is timed and logged once its last byte is sent
            response.call_on_close(record)
        else:
            record()
        return response

    origins = app.config.get("QBAR_CORS_ORIGINS") or ()
    if origins:
        CORS(app, origins=list(origins), allow_headers=list(CORS_ALLOW_HEADERS),
             expose_headers=list(CORS_EXPOSE_HEADERS), methods=["GET", "HEAD", "POST", "OPTIONS"],
             max_age=CORS_MAX_AGE, supports_credentials=False, vary_header=True)

        @app.after_request
        def _vary_on_origin(response: Response) -> Response:
            # With CORS on, every answer depends on the request's Origin (the CORS headers come only
            # for an allowed one), so a cache must key on it. flask-cors says so only when more than
            # one origin is configured.
            response.vary.add("Origin")
            return response
