"""GET /docs: the page, its assets and headers through the test client; the rendered page in headless Chromium."""

from __future__ import annotations

import gzip
import json
import re
import shutil
import subprocess
import tempfile
import urllib.request
from html.parser import HTMLParser
from urllib.parse import urlsplit

import pytest

from service import CAUTION, create_app
from service.api import docs
from tests.live_server import running_gunicorn

CSP = "default-src 'self'; img-src 'self' data:; style-src 'self' 'unsafe-inline'"  # as the task states it
API_KEY = "docs-test-key-0123456789"  # 16+ printable characters, as service/config.py requires
HTTP_METHODS = ("get", "put", "post", "delete", "options", "head", "patch", "trace")  # OpenAPI 3.1 path item
MEDIA_TYPES = {".js": "text/javascript", ".css": "text/css", ".png": "image/png"}

CHROMIUM = "chromium"  # Debian's package; .ci/run installs it
CHROMIUM_TIMEOUT = 120  # [s] for the whole browser run; it takes a few seconds
CHROMIUM_FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-dev-shm-usage",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    # The browser itself calls home (updates, accounts) despite the flags above: no name resolves but loopback.
    "--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE 127.0.0.1",
    "--virtual-time-budget=15000",  # [ms] of page time: enough for Swagger UI to fetch the spec and render
    "--enable-logging=stderr",  # the page's console (CSP violations, script errors) on stderr
    "--v=0",
)
#: Console lines that mean the page did not work as served: a CSP refusal, a script error, a failed load.
CONSOLE_FAILURES = ("Content Security Policy", "Uncaught", "Failed to load resource")


class Page(HTMLParser):
    """The parts of an HTML page these tests look at."""

    def __init__(self, text: str):
        super().__init__()
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.text: list[str] = []
        self.script_bodies: list[str] = []
        self._in_script = False
        self.feed(text)
        self.close()

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._in_script = tag == "script"

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = False

    def handle_data(self, data):
        (self.script_bodies if self._in_script else self.text).append(data)

    def find(self, tag: str) -> list[dict[str, str | None]]:
        return [attrs for name, attrs in self.tags if name == tag]

    def with_class(self, cls: str) -> list[dict[str, str | None]]:
        return [attrs for _, attrs in self.tags if cls in (attrs.get("class") or "").split()]

    @property
    def plain_text(self) -> str:
        return " ".join(" ".join(self.text).split())


def asset_links(page: Page) -> list[str]:
    """Every script src and link href of the page."""
    return [a["src"] for a in page.find("script") if a.get("src")] + [a["href"] for a in page.find("link")]


def outside_urls(text: str) -> list[str]:
    """Absolute (http, https) and protocol-relative URLs in ``text``."""
    return re.findall(r"""https?://[^\s"'<>)]+|(?<=["'(=])\s*//[^\s"'<>)/]+""", text)


# --- through the test client ---------------------------------------------------------------------------------


def test_page_is_html_with_title_and_caution(client):
    response = client.get("/docs")
    assert response.status_code == 200
    assert response.mimetype == "text/html"
    page = Page(response.text)
    assert "qbar API" in page.plain_text
    assert CAUTION in page.plain_text
    # the caution says what the task asks: not certified, the flight manual and local regulations govern
    assert "not certified for flight planning" in CAUTION and "flight manual" in CAUTION and "regulations" in CAUTION
    assert [a.get("data-spec-url") for a in page.find("div") if a.get("id") == "swagger-ui"] == ["/openapi.json"]


def test_page_points_at_the_spec(client):
    page = Page(client.get("/docs").text)
    spec_url = next(a["data-spec-url"] for a in page.find("div") if a.get("id") == "swagger-ui")
    response = client.get(spec_url)
    assert response.status_code == 200
    assert response.json["openapi"].startswith("3.")
    assert response.json["paths"]


def test_every_asset_of_the_page_resolves_with_its_media_type(client):
    page = Page(client.get("/docs").text)
    links = asset_links(page)
    assert {urlsplit(u).path for u in links} >= {"/docs/swagger-ui-bundle.js", "/docs/init.js", "/docs/swagger-ui.css"}
    for url in links:
        response = client.get(url)
        assert response.status_code == 200, url
        suffix = "." + urlsplit(url).path.rsplit(".", 1)[-1]
        assert response.mimetype == MEDIA_TYPES[suffix], url
        assert response.headers["X-Content-Type-Options"] == "nosniff"
        assert response.data == docs.FILES[urlsplit(url).path.removeprefix("/docs/")].read_bytes(), url


def test_no_inline_script_so_a_strict_csp_holds(client):
    page = Page(client.get("/docs").text)
    scripts = page.find("script")
    assert scripts and all(s.get("src") for s in scripts)
    assert "".join(page.script_bodies).strip() == ""
    assert not [name for _, attrs in page.tags for name in attrs if name.startswith("on")]  # no onload= etc.


def test_nothing_refers_outside_the_service(client):
    page_text = client.get("/docs").text
    page = Page(page_text)
    own = [client.get(f"/docs/{name}").text for name in ("init.js", "qbar.css")]
    for text in (page_text, *own):
        assert outside_urls(text) == []
    for _, attrs in page.tags:
        for name in ("src", "href", "data-spec-url"):
            if attrs.get(name):
                assert urlsplit(attrs[name]).netloc == "" and urlsplit(attrs[name]).scheme == "", attrs[name]


def test_outside_url_finder_finds_them():
    assert outside_urls('<script src="https://cdn.example/x.js">') == ["https://cdn.example/x.js"]
    assert outside_urls("<link href='//cdn.example/x.css'>") == ["//cdn.example"]
    assert outside_urls("url(http://x.example/a.png)") == ["http://x.example/a.png"]
    assert outside_urls("// a comment\nvar a = b; // another") == []


@pytest.mark.parametrize("path", ["/docs", "/docs/init.js", "/docs/swagger-ui-bundle.js", "/docs/no-such-file.js"])
def test_content_security_policy_on_every_docs_response(client, path):
    response = client.get(path)
    assert response.headers["Content-Security-Policy"] == CSP


def test_init_script_configures_the_renderer(client):
    text = client.get("/docs/init.js").text
    # deep links, the page's own spec only, no outside validator; the browser test checks the first in effect
    for setting in ("deepLinking: true", "queryConfigEnabled: false", "validatorUrl: null", "dataset.specUrl"):
        assert setting in text


def test_cache_headers(client):
    page = Page(client.get("/docs").text)
    assert client.get("/docs").headers["Cache-Control"] == "no-cache"
    bundle = next(a["src"] for a in page.find("script") if "swagger-ui-bundle.js" in a["src"])
    assert "?v=" in bundle
    versioned = client.get(bundle)  # the page's link carries the content digest: cacheable for a year
    assert {"public", "immutable", f"max-age={docs.ONE_YEAR}"} <= set(versioned.headers["Cache-Control"].split(", "))
    for url in ("/docs/swagger-ui-bundle.js", "/docs/swagger-ui-bundle.js?v=stale"):  # anything else: revalidate
        assert client.get(url).headers["Cache-Control"] == "public, no-cache"
    again = client.get(bundle, headers={"If-None-Match": versioned.headers["ETag"]})
    assert again.status_code == 304
    assert again.data == b""


def test_text_assets_are_gzipped_when_the_client_takes_it(client):
    raw = client.get("/docs/swagger-ui-bundle.js")
    zipped = client.get("/docs/swagger-ui-bundle.js", headers={"Accept-Encoding": "gzip, deflate"})
    refused = client.get("/docs/swagger-ui-bundle.js", headers={"Accept-Encoding": "gzip;q=0, identity"})
    assert "Content-Encoding" not in raw.headers and "Content-Encoding" not in refused.headers
    assert zipped.headers["Content-Encoding"] == "gzip"
    assert gzip.decompress(zipped.data) == raw.data == refused.data
    assert len(zipped.data) < len(raw.data) / 2  # minified JavaScript: about 3.5 to 1 (measured here)
    assert "Accept-Encoding" in zipped.headers["Vary"]
    assert zipped.headers["ETag"] != raw.headers["ETag"]
    png = client.get("/docs/favicon-32x32.png", headers={"Accept-Encoding": "gzip"})
    assert "Content-Encoding" not in png.headers


@pytest.mark.parametrize("path", ["/docs/no-such-file.js", "/docs/..%2F__init__.py", "/docs/docs.py", "/docs/"])
def test_unknown_files_are_problem_404s(client, path):
    response = client.get(path)
    assert response.status_code == 404
    assert response.mimetype == "application/problem+json"


def test_docs_stay_open_when_api_keys_are_configured():
    client = create_app({"TESTING": True, "QBAR_API_KEYS": API_KEY}).test_client()
    page = Page(client.get("/docs").text)
    for url in ["/docs", *asset_links(page), "/openapi.json"]:  # the page is useless without the spec
        assert client.get(url).status_code == 200, url


# --- in a real browser ---------------------------------------------------------------------------------------


def chromium(url: str) -> tuple[str, str]:
    """Headless Chromium's rendered DOM of ``url`` after the virtual-time budget, and its console log."""
    binary = shutil.which(CHROMIUM)
    if binary is None:
        pytest.fail(f"{CHROMIUM!r} is not on PATH: install Debian's chromium package "
                    "(apt-get install -y chromium; .ci/run does it when it is missing)")
    with tempfile.TemporaryDirectory(prefix="qbar-chromium-") as profile:
        try:
            done = subprocess.run(
                [binary, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "--dump-dom", url],
                capture_output=True, text=True, timeout=CHROMIUM_TIMEOUT, stdin=subprocess.DEVNULL,
            )
        except subprocess.TimeoutExpired:
            pytest.fail(f"chromium did not finish rendering {url} within {CHROMIUM_TIMEOUT} s")
    assert done.returncode == 0, f"chromium exited with {done.returncode}:\n{done.stderr[-3000:]}"
    console = [line for line in done.stderr.splitlines() if ":CONSOLE" in line]
    return done.stdout, "\n".join(console)


def swagger_anchor(spec: dict, path: str, method: str) -> str:
    """The deep link Swagger UI gives an operation: #/<first tag>/<operationId, or method + path with _ for
    every non-word character when there is none>."""
    operation = spec["paths"][path][method]
    operation_id = operation.get("operationId") or method + re.sub(r"\W", "_", path)
    return f"#/{operation['tags'][0]}/{operation_id}"


def test_chromium_renders_every_path_of_the_spec():
    # gunicorn as the image runs it, with API keys configured: /docs and /openapi.json must stay open
    with running_gunicorn(env={"QBAR_API_KEYS": API_KEY}, workers=1) as base_url:
        with urllib.request.urlopen(base_url + "/openapi.json", timeout=10) as response:
            spec = json.load(response)
        path, method = "/v1/units", "get"  # opened by its deep link
        anchor = swagger_anchor(spec, path, method)
        dom, console = chromium(f"{base_url}/docs{anchor}")

    rendered = Page(dom)
    shown = {a.get("data-path") for a in rendered.with_class("opblock-summary-path")}
    assert shown == set(spec["paths"]), (f"paths in the spec but not on the page: {set(spec['paths']) - shown}; "
                                         f"on the page only: {shown - set(spec['paths'])}")
    assert CAUTION in rendered.plain_text
    assert "qbar API" in rendered.plain_text
    # deepLinking: every operation has its anchor, and the one in the URL is open
    links = {a.get("href") for a in rendered.find("a")}
    operations = [(p, m) for p, item in spec["paths"].items() for m in item if m in HTTP_METHODS]
    assert {swagger_anchor(spec, p, m) for p, m in operations} <= links
    opened = [a["id"] for a in rendered.with_class("is-open") if (a.get("id") or "").startswith("operations-")]
    assert opened == ["operations-" + anchor.removeprefix("#/").replace("/", "-")]
    assert not [line for line in console.splitlines() if any(f in line for f in CONSOLE_FAILURES)], console
