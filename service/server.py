"""The parts of the HTTP server that are qbar's own: JSON logs, problem documents, body deadline, metrics files.

``service/gunicorn_conf.py`` holds gunicorn's settings and hooks and takes everything else from
here. What gunicorn offers no setting or public hook for is done here in one place each, with a
comment saying why, and a test in ``tests/test_ops_server.py`` pinning the behaviour:

- its own error answers (a bad request line, an oversized header, a malformed chunk) are HTML:
  :func:`write_problem` writes them as problem documents instead;
- its ``Server: gunicorn`` header: :func:`drop_server_header`;
- a request body may trickle in for ever: :class:`BodyDeadline` gives it a deadline;
- a stop: the master stops the shared listening sockets at once (gunicorn_conf.when_ready), and
  the workers' gevent servers, which would report the next accept as an error with a traceback,
  stop accepting quietly instead (:class:`StoppingStreamServer`);
- prometheus-client keeps a dead worker's counter and histogram files for ever:
  :func:`archive_dead_worker` adds them into one archive file per kind and removes them.
"""

from __future__ import annotations

import errno
import glob
import json
import os
import re
import time
from pathlib import Path

import gevent
from gunicorn import util as gunicorn_util
from gunicorn.glogging import Logger
from gunicorn.http import errors as gunicorn_errors
from gunicorn.http import wsgi as gunicorn_wsgi
from gunicorn.workers import ggevent
from prometheus_client import multiprocess as prometheus_multiprocess
from prometheus_client.mmap_dict import MmapedDict

from service.api.problems import Problem, problem_document
from service.logs import JsonFormatter, utc_time

CLOSE = {"Connection": "close"}  # after a body that was not read to its end

# --- logs: one JSON object per line ---------------------------------------------------------

#: gunicorn's access log line (off by default, see gunicorn_conf.accesslog). Every ``%(x)s`` is
#: replaced by a JSON literal (see JsonAtoms). No query string and no Authorization/X-API-Key
#: header: keys must never reach a log.
ACCESS_LOG_FORMAT = (
    '{"time": %(t)s, "level": "info", "logger": "gunicorn.access", "pid": %(p)s, '
    '"remote_addr": %(h)s, "forwarded_for": %({x-forwarded-for}i)s, '
    '"method": %(m)s, "path": %(U)s, "protocol": %(H)s, "status": %(s)s, '
    '"bytes": %(B)s, "duration_s": %(L)s, "request_id": %({x-request-id}o)s, '
    '"user_agent": %(a)s}'
)
_NUMBER = re.compile(r"-?[0-9]+(?:\.[0-9]+)?")
_NUMERIC_ATOMS = frozenset({"s", "B", "D", "M", "T", "L", "p"})


class JsonAtoms(dict):
    """gunicorn's access-log atoms, each rendered as a JSON literal.

    gunicorn's own wrapper only escapes double quotes, so a backslash or a tab in a header
    would break the JSON. Here strings go through ``json.dumps``; the numeric atoms (status,
    bytes, durations, pid) become numbers; a missing atom or gunicorn's ``-`` becomes ``null``.
    """

    def __init__(self, atoms):
        super().__init__((key.lower() if key.startswith("{") else key, value) for key, value in atoms.items())

    def __getitem__(self, key):
        if key.startswith("{"):
            key = key.lower()
        value = self.get(key)
        if value is None or value == "-":
            return "null"
        if key in _NUMERIC_ATOMS:
            text = str(value).split(None, 1)[0] if isinstance(value, str) else str(value)
            return text if _NUMBER.fullmatch(text) else "null"
        return json.dumps(str(value))


class JsonLogger(Logger):
    """gunicorn's logger with JSON lines: the access log and the error log (service.logs.JsonFormatter)."""

    atoms_wrapper_class = JsonAtoms

    def setup(self, cfg):
        super().setup(cfg)
        for handler in self.error_log.handlers:
            if getattr(handler, "_gunicorn", False):
                handler.setFormatter(JsonFormatter())

    def now(self):
        return utc_time()

    def atoms(self, resp, req, environ, request_time):
        atoms = super().atoms(resp, req, environ, request_time)
        atoms["p"] = os.getpid()  # gunicorn writes "<pid>"
        return atoms


# --- the server's own answers ----------------------------------------------------------------

def write_problem(sock, status_int, reason, mesg):
    """Write gunicorn's own error answer (``gunicorn.util.write_error``) as a problem document.

    gunicorn answers a request it cannot parse (bad request line, header too large, malformed
    chunk size, ...) itself, before any application sees it, with a small HTML page, and has no
    setting or hook for that page; so its ``write_error`` is replaced (:func:`install`). Same
    status, ``Connection: close``; the detail is gunicorn's message cut to 200 characters.
    """
    body = problem_document(int(status_int), str(mesg) or str(reason))
    head = (f"HTTP/1.1 {int(status_int)} {reason}\r\nConnection: close\r\n"
            f"Content-Type: application/problem+json\r\nContent-Length: {len(body)}\r\n"
            "X-Content-Type-Options: nosniff\r\n\r\n")
    gunicorn_util.write_nonblock(sock, head.encode("latin-1") + body)


def drop_server_header():
    """Stop gunicorn from sending its ``Server: gunicorn`` header (idempotent).

    gunicorn has no setting for it: the line is written by Response.default_headers, so
    that method is wrapped to leave it out.
    """
    original = gunicorn_wsgi.Response.default_headers
    if getattr(original, "_qbar_drops_server", False):
        return

    def default_headers(self):
        return [line for line in original(self) if not line.lower().startswith("server:")]

    default_headers._qbar_drops_server = True
    gunicorn_wsgi.Response.default_headers = default_headers


class DeadlineInput:
    """``wsgi.input`` whose reads end by a deadline (gevent's Timeout: a stalled read holds no thread).

    A stall past the deadline is a 408 problem, a parse error of gunicorn's while reading (a
    malformed chunk size, a missing chunk terminator) or a body cut short a 400 problem; both
    close the connection. Raised as the app's Problem, whoever reads the body.
    """

    def __init__(self, stream, deadline: float, seconds: float):
        self._stream = stream
        self._deadline = deadline
        self._seconds = seconds

    def _call(self, method, *args):
        timer = gevent.Timeout(max(self._deadline - time.monotonic(), 0.0))
        try:
            with timer:
                return method(*args)
        except gevent.Timeout as expired:
            if expired is not timer:
                raise
            raise Problem("request-timeout", f"The body did not arrive within {self._seconds:g} s of the request's "
                          "head.", headers=CLOSE) from None
        except gunicorn_errors.ParseException as error:
            raise Problem("bad-request", f"The body could not be read: {error}.", headers=CLOSE) from None
        except gunicorn_errors.NoMoreData:
            raise Problem("bad-request", "The body ended before its declared length.", headers=CLOSE) from None

    def read(self, size=-1):
        return self._call(self._stream.read, size)

    def readline(self, size=-1):
        return self._call(self._stream.readline, size)

    def readlines(self, hint=-1):
        return self._call(self._stream.readlines, hint)

    def __iter__(self):
        return iter(self.readline, b"")


class BodyDeadline:
    """WSGI middleware: the body of each request must arrive within ``seconds`` of its head (QBAR_BODY_TIMEOUT).

    With the 30 s default, the 8 MiB body limit needs 280 kB/s; a client sending a byte a second is cut off.
    An answer the app marks ``Connection: close`` (a body refused unread: 408, 413, a bad chunk) closes
    the connection: gunicorn drops that header from the app as hop-by-hop and would otherwise read
    and discard the rest of the body before the next request; its response's ``force_close()`` is
    reached through the ``start_response`` it passes (a bound method of that response).
    """

    def __init__(self, app, seconds: float):
        self.app = app
        self.seconds = seconds

    def __call__(self, environ, start_response):
        environ["wsgi.input"] = DeadlineInput(environ["wsgi.input"], time.monotonic() + self.seconds, self.seconds)

        def start(status, headers, exc_info=None):
            if status[0] != "2" and ("Connection", "close") in headers:
                response = getattr(start_response, "__self__", None)
                if hasattr(response, "force_close"):
                    response.force_close()
            return start_response(status, headers, exc_info)

        return self.app(environ, start)


class StoppingStreamServer(ggevent.StreamServer):
    """gevent's StreamServer that stops accepting, without a word, once its listener has stopped listening.

    On a stop signal the master shuts the listening sockets down for every process (see
    gunicorn_conf.when_ready): the next accept fails with EINVAL, which gevent would print as a
    traceback and an ERROR line on stderr. gunicorn's gevent worker builds its servers from
    ``ggevent.StreamServer`` and offers no hook for it, so that name is pointed here (install).
    """

    def do_read(self):
        try:
            return super().do_read()
        except OSError as error:
            if error.errno != errno.EINVAL:
                raise
            self.close()  # in-flight connections are other sockets: they go on
            return None


def install(worker, body_timeout: float):
    """In a worker, once its app is loaded: problem documents for gunicorn's own errors, no Server
    header, the body deadline around the app, quiet listeners at a stop."""
    gunicorn_util.write_error = write_problem
    ggevent.StreamServer = StoppingStreamServer
    drop_server_header()
    worker.wsgi = BodyDeadline(worker.wsgi, body_timeout)


# --- start-up checks --------------------------------------------------------------------------

def check_writable(variable: str, path: str) -> None:
    """Create ``path`` if needed and write a file in it; SystemExit with one line naming it if that fails.

    Run by the master before it forks; the workers run as the same user. Without it, a metrics
    directory the workers cannot write makes every request, /v1/health included, a 500.
    """
    try:
        Path(path).mkdir(parents=True, exist_ok=True)
        probe = Path(path) / f".qbar-write-check-{os.getpid()}"
        probe.write_bytes(b"")
        probe.unlink()
    except OSError as error:
        raise SystemExit(f"{variable}: {path} is not writable ({error.strerror or error})") from None


# --- Prometheus multiprocess directory ----------------------------------------------------------

def reset_metrics_dir(path):
    """Create ``path`` and remove the metric files (``*.db``) a previous run left in it.

    Only prometheus-client's ``*.db`` files are removed, nothing else, so a mistaken
    directory setting cannot wipe unrelated files.
    """
    directory = Path(path)
    directory.mkdir(parents=True, exist_ok=True)
    for stale in directory.glob("*.db"):
        stale.unlink(missing_ok=True)


#: The kinds of metric files whose values add up over processes (prometheus-client names a file
#: ``<kind>_<pid>.db``); gauges do not, and qbar has none.
ADDITIVE_KINDS = ("counter", "histogram", "summary")


def archive_dead_worker(path, pid) -> int:
    """Add a dead worker's counter and histogram values into ``<kind>_archive.db``; remove its files.

    prometheus-client keeps one file per process and kind, and its collector reads every file at
    each scrape, so without this the directory (and the cost of a scrape) grows with every worker
    ever started (``max_requests`` restarts one every ~20,000 requests). Values in these files are
    plain sums (histogram buckets are stored per bucket, not cumulated), so adding them under the
    same key keeps every total exact. prometheus-client has no public API for this: its
    ``MmapedDict`` (the file format it uses itself) reads and writes the files. The archive is
    written beside and renamed into place, so a scrape sees the old archive or the new one.
    Its live gauges (none in qbar today) are dropped, as prometheus-client's mark_process_dead does.
    Returns the number of counter and histogram files removed.
    """
    prometheus_multiprocess.mark_process_dead(pid, path)
    removed = 0
    for kind in ADDITIVE_KINDS:
        dead = os.path.join(path, f"{kind}_{pid}.db")
        if not os.path.exists(dead):
            continue
        archive = os.path.join(path, f"{kind}_archive.db")
        totals: dict[str, float] = {}
        for source in (archive, dead):
            if os.path.exists(source):
                for key, value, _timestamp, _pos in MmapedDict.read_all_values_from_file(source):
                    totals[key] = totals.get(key, 0.0) + value
        scratch = archive + ".new"  # not *.db: the collector never reads it
        Path(scratch).unlink(missing_ok=True)
        merged = MmapedDict(scratch)
        try:
            for key, value in totals.items():
                merged.write_value(key, value, 0.0)
        finally:
            merged.close()
        os.replace(scratch, archive)
        os.unlink(dead)
        removed += 1
    return removed


def metric_files(path) -> int:
    """How many metric files ``path`` holds."""
    return len(glob.glob(os.path.join(path, "*.db")))

