"""qbar: the standard atmosphere, airspeed conversions and the lift equation as a REST service.

``create_app(config=None)`` is the app factory; gunicorn runs ``"service:create_app()"``.
"""

from __future__ import annotations

import inspect

from flask import Flask, Response
from flask_compress import Compress

from service import config as settings
from service.api import about, airspeed, altimetry, atmosphere, docs, drag, lift, request_hooks
from service.api.base import Api
from service.version import __version__

CAUTION = (
    "CAUTION: qbar is not certified for flight planning or for the operation of aircraft. Its results are "
    "for information, engineering and cross-checking only. The aircraft's approved flight manual, the "
    "published procedures and the applicable local regulations govern."
)

API_DESCRIPTION = f"""qbar computes the ICAO standard atmosphere (on standard and off-standard days, with QNH, \
humidity, density altitude and the U.S. Standard Atmosphere 1976 property set), altimetry (QNH and QFE, \
cold-temperature corrections), compressible airspeed conversions (IAS, CAS, EAS, TAS, Mach, total air temperature, \
crossover altitudes, speed schedules with a speed limit) and the lift equation with what follows from it (solve for \
any unknown, stall speeds under load, the wing's lift curve, drag, performance speeds, turns, buffet margins), for \
one point or hundreds of thousands per request.

**{CAUTION}**

Conventions: every physical input is a bare number or array in the field's default unit (named in each field's \
description), or an object `{{"value": ..., "unit": "..."}}`; GET /v1/units lists the units. Every physical output is \
`{{"value": ..., "unit": "..."}}`; `output_units` chooses the units per dimension. Arrays broadcast (equal lengths or \
length 1); `grid: true` takes their outer product. Every error is an RFC 9457 problem document \
(`application/problem+json`) with a JSON Pointer to each offending input.
"""

class QbarFlask(Flask):
    """Flask, with the per-call check for coroutine functions done once, when the app is built."""

    def ensure_sync(self, func):
        # Flask asks of every view and hook, on every request, whether it is a coroutine function
        # (about 10 us a request). qbar has none, and check_sync makes sure of it when the app is built.
        return func

    def check_sync(self) -> None:
        """Refuse to build an app with an ``async def`` view or hook (this class would call it unawaited)."""
        hooks = [self.view_functions.values(), self.teardown_appcontext_funcs]
        for registry in (self.before_request_funcs, self.after_request_funcs, self.teardown_request_funcs,
                         self.url_value_preprocessors, self.url_default_functions, self.template_context_processors):
            hooks.extend(registry.values())
        for by_code in self.error_handler_spec.values():  # {blueprint: {code: {exception class: handler}}}
            hooks.extend(handlers.values() for handlers in by_code.values())
        for funcs in hooks:
            for func in funcs:
                if inspect.iscoroutinefunction(func):
                    raise TypeError(f"{func.__qualname__} is async; qbar's views and hooks are plain functions")


class SmallAnswersCompress(Compress):
    """flask-compress, with a fast way past the answers it never compresses: complete (not streamed) and
    under COMPRESS_MIN_SIZE. Those only get ``Vary: Accept-Encoding``, as flask-compress itself gives them."""

    def init_app(self, app):
        super().init_app(app)
        self._min_size = app.config["COMPRESS_MIN_SIZE"]

    def after_request(self, response: Response) -> Response:
        if response and not response.is_streamed:
            length = response.content_length
            if length is not None and length < self._min_size:
                vary = response.headers.get("Vary")
                if not vary:
                    response.headers["Vary"] = "Accept-Encoding"
                elif "accept-encoding" not in vary.lower():
                    response.headers["Vary"] = f"{vary}, Accept-Encoding"
                return response
        return super().after_request(response)


#: Blueprints in the order of the spec's tags.
BLUEPRINTS = (atmosphere.blp, airspeed.blp, lift.blp, drag.blp, altimetry.blp, about.blp)


def create_app(config: dict | None = None) -> Flask:
    """Build the Flask application: defaults, then QBAR_* environment variables, then ``config``."""
    app = QbarFlask(__name__)
    try:
        app.config.update(settings.load(overrides=config))
    except settings.ConfigError as error:
        settings.exit_with(error)  # one line naming the variable, no traceback (also under gunicorn)
    app.config.update(
        API_TITLE="qbar",
        API_VERSION=__version__,
        OPENAPI_VERSION="3.1.0",
        API_SPEC_OPTIONS={
            "info": {
                "description": API_DESCRIPTION,
                "license": {"name": "MIT", "identifier": "MIT"},
            },
            "servers": [{"url": "/", "description": "This service"}],
        },
    )
    request_hooks.init_app(app)  # request ids, API keys, metrics, access log, headers, CORS; before Api and Compress
    app.json.sort_keys = False
    app.config.setdefault("COMPRESS_MIMETYPES", ["application/json", "text/csv", "application/problem+json"])
    app.config.setdefault("COMPRESS_ALGORITHM", ["gzip"])
    app.config.setdefault("COMPRESS_MIN_SIZE", 4096)
    app.config.setdefault("COMPRESS_LEVEL", 1)  # fast: bulk answers are tens of MB
    app.config.setdefault("COMPRESS_ALGORITHM_STREAMING", ["gzip"])  # the JSON array answers are streamed
    app.extensions["qbar.compress"] = SmallAnswersCompress(app)
    api = Api(app)
    for blp in BLUEPRINTS:
        api.register_blueprint(blp)
    app.register_blueprint(docs.blp)  # GET /docs: not in the spec
    app.extensions["qbar.api"] = api
    app.check_sync()
    return app
