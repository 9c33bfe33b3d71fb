"""GET /docs: the interactive API documentation, Swagger UI rendering /openapi.json, served by qbar itself.

Swagger UI's files come from the ``dist`` directory of the flask-swagger-ui package, which tracks Swagger UI's
releases (its own blueprint and template, which use an inline script, are not used). The page and its start-up
script (``service/static/docs``) are ours: no inline script, so the page's Content-Security-Policy allows scripts
from this origin only. Nothing is fetched from anywhere else at run time.

Assets are read and gzipped once per process. The page links each asset with ``?v=<content digest>``; such a
request may be cached for a year, any other is revalidated with its ETag. A plain Flask blueprint: not in the spec.
"""

from __future__ import annotations

import functools
import gzip
import hashlib
import html
from dataclasses import dataclass
from pathlib import Path

import flask
import flask_swagger_ui

# The package itself, for service.CAUTION at request time: service/__init__.py imports this module while it runs.
import service

#: Swagger UI's distribution files, and ours (the page's script and style sheet; ours win a name clash).
VENDOR_DIR = Path(flask_swagger_ui.__file__).with_name("dist")
OWN_DIR = Path(__file__).resolve().parents[1] / "static" / "docs"

#: Allows this origin, data: images and inline styles (Swagger UI sets style attributes); no inline script.
CONTENT_SECURITY_POLICY = "default-src 'self'; img-src 'self' data:; style-src 'self' 'unsafe-inline'"

MEDIA_TYPES = {
    ".js": "text/javascript",  # RFC 9239
    ".css": "text/css",
    ".png": "image/png",
    ".html": "text/html",
}
COMPRESSIBLE = ("text/",)
ONE_YEAR = 365 * 24 * 3600  # [s]

blp = flask.Blueprint("docs", __name__, url_prefix="/docs")


def _files() -> dict[str, Path]:
    """Every servable file by its name: a closed table, so no request path ever reaches the file system."""
    files = {p.name: p for p in sorted(VENDOR_DIR.iterdir()) if p.is_file()}
    files.update({p.name: p for p in sorted(OWN_DIR.iterdir()) if p.is_file()})
    return files


FILES = _files()


@dataclass(frozen=True)
class Asset:
    """One file as served: its bytes, their gzip form (text only), media type and content digest."""

    body: bytes
    gzipped: bytes | None
    media_type: str
    digest: str


@functools.cache
def asset(name: str) -> Asset:
    """The file ``name`` of :data:`FILES`, read and compressed on first use."""
    body = FILES[name].read_bytes()
    media_type = MEDIA_TYPES.get(FILES[name].suffix, "text/plain")
    gzipped = gzip.compress(body, compresslevel=9, mtime=0) if media_type.startswith(COMPRESSIBLE) else None
    return Asset(body, gzipped, media_type, hashlib.sha256(body).hexdigest()[:16])


def asset_url(name: str) -> str:
    """The versioned URL of an asset, as the page links it."""
    return flask.url_for("docs.static_file", filename=name, v=asset(name).digest)


PAGE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>qbar API</title>
<link rel="stylesheet" href="{swagger_css}">
<link rel="stylesheet" href="{qbar_css}">
<link rel="icon" type="image/png" sizes="32x32" href="{icon}">
</head>
<body>
<header class="qbar-header">
<h1>qbar API</h1>
<p class="qbar-caution" role="note">{caution}</p>
<p>Interactive documentation of the OpenAPI description at <a href="{spec}">{spec}</a>.
&ldquo;Try it out&rdquo; sends real requests to this service.</p>
<noscript><p>This page needs JavaScript to show the endpoints; the description itself is at
<a href="{spec}">{spec}</a>.</p></noscript>
</header>
<div id="swagger-ui" data-spec-url="{spec}"></div>
<script src="{bundle}"></script>
<script src="{init}"></script>
</body>
</html>
"""


@blp.after_request
def security_headers(response: flask.Response) -> flask.Response:
    """The Content-Security-Policy on every /docs response, and no content sniffing."""
    response.headers["Content-Security-Policy"] = CONTENT_SECURITY_POLICY
    response.headers["X-Content-Type-Options"] = "nosniff"
    return response


@blp.get("")
def page():
    """The documentation page: our header with the caution, then Swagger UI started by init.js."""
    links = {
        "swagger_css": "swagger-ui.css",
        "qbar_css": "qbar.css",
        "icon": "favicon-32x32.png",
        "bundle": "swagger-ui-bundle.js",
        "init": "init.js",
    }
    values = {key: asset_url(name) for key, name in links.items()}
    values.update(caution=service.CAUTION, spec=flask.url_for("openapi_json"))
    response = flask.Response(PAGE.format(**{k: html.escape(v) for k, v in values.items()}), mimetype="text/html")
    response.cache_control.no_cache = True
    return response


@blp.get("/<path:filename>")
def static_file(filename: str):
    """A file of Swagger UI's distribution or of ours, gzipped when the client takes it."""
    if filename not in FILES:
        flask.abort(404)
    item = asset(filename)
    zipped = item.gzipped is not None and flask.request.accept_encodings["gzip"] > 0
    response = flask.Response(item.gzipped if zipped else item.body, mimetype=item.media_type)
    response.vary.add("Accept-Encoding")
    if zipped:
        response.headers["Content-Encoding"] = "gzip"
    response.set_etag(item.digest + ("-gzip" if zipped else ""))
    response.cache_control.public = True
    if flask.request.args.get("v") == item.digest:
        response.cache_control.max_age = ONE_YEAR
        response.cache_control.immutable = True
    else:
        response.cache_control.no_cache = True
    return response.make_conditional(flask.request)
