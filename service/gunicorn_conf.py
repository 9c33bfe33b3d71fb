"""gunicorn settings for qbar, read from ``QBAR_*`` environment variables.

One configuration for ``qbar serve``, the container image and the Kubernetes manifests::

    gunicorn -c python:service.gunicorn_conf "service:create_app()"

It also loads as a file (``gunicorn -c service/gunicorn_conf.py ...``): it needs nothing from the
``service`` package but ``service.config``, which it runs once to check the app's own settings
before gunicorn binds and forks (see check_app_settings). gunicorn takes the module-level names
that match its settings and ignores the rest (``granted_cpus`` and the helpers, which the tests
use).

Environment
-----------
QBAR_WORKERS    worker processes, 1..128; default: CPUs granted to the process + 1
QBAR_THREADS    threads per worker, 1..32; default 2
QBAR_BIND       HOST:PORT to listen on; default 127.0.0.1:8080 (the image sets 0.0.0.0:8080)
QBAR_LOG_LEVEL  debug, info, warning or error (any case); default info
PROMETHEUS_MULTIPROC_DIR  metrics directory shared by the workers: created and emptied at start,
                a dead worker's live gauges are removed from it
GUNICORN_CMD_ARGS  gunicorn's own: command-line options over these settings, for example
                "--access-logfile -" for gunicorn's JSON access log (off by default: the app
                logs every request)

An empty variable counts as unset. An invalid value, here or in the app's settings
(``service/config.py``: QBAR_MAX_POINTS, QBAR_API_KEYS, ...), stops the start with one line naming
the variable: the module raises ``SystemExit("QBAR_WORKERS: ...")``, which gunicorn does not
catch, so Python prints that line (no traceback) and exits with status 1.
"""

import datetime
import importlib
import ipaddress
import json
import logging
import math
import os
import re
import time
from pathlib import Path

from gunicorn.glogging import Logger
from gunicorn.http import wsgi as gunicorn_wsgi
from prometheus_client import multiprocess

CGROUP_ROOT = "/sys/fs/cgroup"
DEFAULT_BIND = "127.0.0.1:8080"
DEFAULT_THREADS = 2
MAX_WORKERS = 128
MAX_THREADS = 32
LOG_LEVELS = ("debug", "info", "warning", "error")  # as service/config.py accepts
METRICS_DIR_VARIABLE = "PROMETHEUS_MULTIPROC_DIR"

_DIGITS = re.compile(r"[0-9]{1,6}")
_HOSTNAME = re.compile(r"(?=.{1,253}\Z)[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?"
                       r"(?:\.[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?)*")
_BIND = re.compile(r"(?P<host>\[[^\]]*\]|[^:\[\]]+):(?P<port>[0-9]{1,5})")


# --- CPUs actually granted ------------------------------------------------------------------

def _read_words(path):
    """The whitespace-separated words of a small file, or None when it cannot be read."""
    try:
        return path.read_text(encoding="ascii").split()
    except (OSError, UnicodeDecodeError):
        return None


def _cgroup_v2_quota(root):
    """CPUs allowed by cgroup v2 ``cpu.max`` ("$MAX $PERIOD"); None when unlimited or absent."""
    words = _read_words(root / "cpu.max")
    if not words or len(words) != 2 or words[0] == "max":
        return None
    try:
        quota, period = int(words[0]), int(words[1])
    except ValueError:
        return None
    return quota / period if quota > 0 and period > 0 else None


def _cgroup_v1_quota(root):
    """CPUs allowed by cgroup v1 CFS bandwidth control; None when unlimited (-1) or absent."""
    for controller in ("cpu", "cpu,cpuacct", "cpuacct,cpu", "."):
        directory = root / controller
        quota_words = _read_words(directory / "cpu.cfs_quota_us")
        period_words = _read_words(directory / "cpu.cfs_period_us")
        if not quota_words or not period_words:
            continue
        try:
            quota, period = int(quota_words[0]), int(period_words[0])
        except ValueError:
            return None
        return quota / period if quota > 0 and period > 0 else None
    return None


def _affinity_cpus():
    """CPUs this process may be scheduled on (its affinity mask), at least 1."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not Linux
        return max(1, os.cpu_count() or 1)


def granted_cpus(root=CGROUP_ROOT):
    """Whole CPUs granted to this process, at least 1.

    The smallest of the cgroup CPU quota (v2 ``cpu.max``; else v1 ``cpu.cfs_quota_us`` over
    ``cpu.cfs_period_us``) and the CPU affinity mask (``os.sched_getaffinity``). Not
    ``os.cpu_count()``, which counts the host's CPUs, not the container's.

    A fractional quota is rounded up: 1.5 CPUs keep two processes busy most of the time, and
    rounding down would leave half a CPU unused. Unreadable or malformed cgroup files count as
    no quota: this only chooses a default, it never stops the start.

    In a container the cgroup namespace makes the container's own cgroup appear at
    ``/sys/fs/cgroup``, so the files are read at the root of ``root`` only.

    Parameters
    ----------
    root : str or os.PathLike
        Mount point of the cgroup file system.

    Returns
    -------
    int
        Number of CPUs [-].
    """
    root = Path(root)
    quota = _cgroup_v2_quota(root)
    if quota is None:
        quota = _cgroup_v1_quota(root)
    cpus = _affinity_cpus()
    if quota is not None:
        cpus = min(cpus, math.ceil(quota))
    return max(1, cpus)


def default_workers(root=CGROUP_ROOT):
    """Default worker count: granted CPUs + 1, at most MAX_WORKERS.

    The work is CPU-bound NumPy plus Python JSON and validation, so processes (not threads)
    are what scale it: one worker per granted CPU. The one extra keeps a CPU busy while
    another worker waits on a slow client's socket (common practice, no source).
    """
    return min(granted_cpus(root) + 1, MAX_WORKERS)


# --- environment --------------------------------------------------------------------------

def _shown(raw):
    """A bounded, quoted rendering of a bad value for an error line."""
    return repr(raw if len(raw) <= 60 else raw[:60] + "...")


def env_int(name, default, low, high, environ=None):
    """A whole number from the environment variable ``name``, or ``default`` when unset/empty.

    Raises SystemExit with one line naming the variable when the value is not a plain decimal
    integer within [low, high].
    """
    raw = (os.environ if environ is None else environ).get(name, "").strip()
    if not raw:
        return default
    if not _DIGITS.fullmatch(raw) or not low <= int(raw) <= high:
        raise SystemExit(f"{name}: expected a whole number from {low} to {high}, "
                         f"got {_shown(raw)}")
    return int(raw)


def env_bind(name="QBAR_BIND", default=DEFAULT_BIND, environ=None):
    """A ``HOST:PORT`` address from the environment variable ``name``.

    HOST is an IPv4 address, a bracketed IPv6 address (``[::]``) or a host name; PORT is
    1..65535. Raises SystemExit with one line naming the variable otherwise.
    """
    raw = (os.environ if environ is None else environ).get(name, "").strip()
    if not raw:
        return default
    problem = f"{name}: expected HOST:PORT such as 127.0.0.1:8080 or [::]:8080, got {_shown(raw)}"
    match = _BIND.fullmatch(raw)
    if match is None or not 1 <= int(match["port"]) <= 65535:
        raise SystemExit(problem)
    host = match["host"]
    try:
        if host.startswith("["):
            ipaddress.IPv6Address(host[1:-1])
        elif re.fullmatch(r"[0-9.]+", host):
            ipaddress.IPv4Address(host)
        elif not _HOSTNAME.fullmatch(host):
            raise ValueError(host)
    except ValueError:
        raise SystemExit(problem) from None
    return raw


def env_choice(name, default, choices, environ=None):
    """One of ``choices`` (case-insensitive) from the environment variable ``name``."""
    raw = (os.environ if environ is None else environ).get(name, "").strip()
    if not raw:
        return default
    if raw.lower() not in choices:
        raise SystemExit(f"{name}: expected one of {', '.join(choices)}, got {_shown(raw)}")
    return raw.lower()


def check_app_settings():
    """Check the app's QBAR_* settings (``service.config.load``) now, as one line on failure.

    The app reads them again in ``create_app``; an invalid one would there end in a traceback
    from gunicorn's preload. Skipped when ``service.config`` is not importable (the config file
    used on its own).
    """
    try:
        settings = importlib.import_module("service.config")
    except ModuleNotFoundError as error:
        if error.name in ("service", "service.config"):
            return
        raise
    try:
        settings.load()
    except getattr(settings, "ConfigError", ValueError) as error:
        raise SystemExit(str(error)) from None


# --- logs: one JSON object per line ---------------------------------------------------------

#: gunicorn's access log line (when turned on, see ``accesslog``). Every ``%(x)s`` is replaced
#: by a JSON literal (see JsonAtoms), never written inside quotes here. No query string and no
#: Authorization/X-API-Key header: keys must never reach a log.
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
    bytes, durations, pid) become numbers; a missing atom or gunicorn's ``-`` placeholder
    becomes ``null``.
    """

    def __init__(self, atoms):
        super().__init__((key.lower() if key.startswith("{") else key, value)
                         for key, value in atoms.items())

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


class JsonFormatter(logging.Formatter):
    """A log record as one JSON object: time, level, logger, pid, message (and traceback)."""

    def format(self, record):
        entry = {
            "time": _utc_now(record.created),
            "level": record.levelname.lower(),
            "logger": record.name,
            "pid": record.process,
            "message": record.getMessage(),
        }
        if record.exc_info:
            entry["exception"] = self.formatException(record.exc_info)
        return json.dumps(entry)


def _utc_now(timestamp=None):
    """ISO 8601 UTC time with milliseconds."""
    moment = datetime.datetime.fromtimestamp(
        time.time() if timestamp is None else timestamp, datetime.UTC)
    return moment.isoformat(timespec="milliseconds")


class JsonLogger(Logger):
    """gunicorn's logger with JSON lines: the access log and the error log."""

    atoms_wrapper_class = JsonAtoms

    def setup(self, cfg):
        super().setup(cfg)
        for handler in self.error_log.handlers:
            if getattr(handler, "_gunicorn", False):
                handler.setFormatter(JsonFormatter())

    def now(self):
        return _utc_now()

    def atoms(self, resp, req, environ, request_time):
        atoms = super().atoms(resp, req, environ, request_time)
        atoms["p"] = os.getpid()  # gunicorn writes "<pid>"
        return atoms


# --- no Server banner ----------------------------------------------------------------------

def drop_server_header():
    """Stop gunicorn from sending its ``Server: gunicorn`` header (idempotent).

    gunicorn has no setting for it: the line is written by Response.default_headers, so
    that method is wrapped to leave it out. Applied in each worker (post_worker_init).
    """
    original = gunicorn_wsgi.Response.default_headers
    if getattr(original, "_qbar_drops_server", False):
        return

    def default_headers(self):
        return [line for line in original(self) if not line.lower().startswith("server:")]

    default_headers._qbar_drops_server = True
    gunicorn_wsgi.Response.default_headers = default_headers


# --- Prometheus multiprocess directory -----------------------------------------------------

def metrics_dir():
    """The Prometheus multiprocess directory, or None when metrics run single-process."""
    return os.environ.get(METRICS_DIR_VARIABLE, "").strip() or None


def reset_metrics_dir(path):
    """Create ``path`` and remove the metric files (``*.db``) a previous run left in it.

    Only prometheus-client's ``*.db`` files are removed, nothing else, so a mistaken
    directory setting cannot wipe unrelated files.
    """
    directory = Path(path)
    directory.mkdir(parents=True, exist_ok=True)
    for stale in directory.glob("*.db"):
        stale.unlink(missing_ok=True)


# --- hooks ---------------------------------------------------------------------------------

def on_starting(server):
    """Master, before the workers: empty the metrics directory."""
    path = metrics_dir()
    if path:
        reset_metrics_dir(path)
        server.log.info("metrics directory %s emptied", path)


def when_ready(server):
    """Master, listening: say what was started."""
    server.log.info("qbar ready: %d workers x %d threads on %s (granted CPUs: %d)",
                    server.cfg.workers, server.cfg.threads, ", ".join(server.cfg.bind),
                    granted_cpus())


def post_worker_init(worker):
    """Worker, app loaded: no Server header."""
    drop_server_header()


def child_exit(server, worker):
    """Master, a worker has exited: drop its live gauges from the metrics directory."""
    path = metrics_dir()
    if path:
        multiprocess.mark_process_dead(worker.pid, path)


# --- settings ------------------------------------------------------------------------------

# Processes scale the CPU-bound work (see default_workers). Threads: 2. The GIL lets only one
# thread compute at a time, so a third thread adds no throughput, but the second one lets a
# worker answer a probe or a small request (and read a slow client's body) while the other
# computes; NumPy also releases the GIL inside its array loops. gthread also keeps idle
# keep-alive connections out of the threads. (Common practice, no source.)
workers = env_int("QBAR_WORKERS", default_workers(), 1, MAX_WORKERS)
threads = env_int("QBAR_THREADS", DEFAULT_THREADS, 1, MAX_THREADS)
worker_class = "gthread"
bind = [env_bind()]
loglevel = env_choice("QBAR_LOG_LEVEL", "info", LOG_LEVELS)

# Load the app once in the master, before forking: an invalid QBAR_* setting then stops the
# start with its one line (in a worker it would only make gunicorn respawn it forever), and
# the workers share the loaded modules' memory.
preload_app = True

# A request takes well under a second; a worker silent for 30 s is stuck. On SIGTERM the
# workers get graceful_timeout to finish; Kubernetes' terminationGracePeriodSeconds must exceed
# the preStop pause plus this (tests/test_deploy.py checks it).
timeout = 30
graceful_timeout = 20
# Longer than a typical proxy's idle keep-alive (60 s), so the proxy, not gunicorn, closes an
# idle connection and never sends a request on one gunicorn is closing
# (common practice, no source).
keepalive = 75
# Restart a worker after about 2000 requests (jitter spreads the restarts) to give back memory
# fragmented by large arrays.
max_requests = 2000
max_requests_jitter = 200

# The heartbeat file must live on a memory file system (the root file system is read-only in
# Kubernetes, and a disk-backed one can stall the heartbeat).
worker_tmp_dir = "/dev/shm" if os.path.isdir("/dev/shm") else None

# Access log: off by default, because the app already writes the one JSON line per request
# (logger qbar.access, service/api/ops.py: with the points computed and the request id), and a
# second line per request would double the log. gunicorn's own line (bytes sent, user agent,
# X-Forwarded-For, time including the response write) in the JSON format below is one switch
# away: GUNICORN_CMD_ARGS="--access-logfile -" (stdout).
accesslog = None
errorlog = "-"    # stderr
access_log_format = ACCESS_LOG_FORMAT
logger_class = JsonLogger
proc_name = "qbar"

# Never a development server: no code reloading, no tracing. No runtime control socket either
# (gunicorn >= 25 opens one under $HOME by default; the container has no writable home).
reload = False
spew = False
control_socket_disable = True

check_app_settings()

# The directory must exist before the preloaded app creates its metrics (on_starting runs
# after the preload and empties it).
if metrics_dir():
    try:
        Path(metrics_dir()).mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise SystemExit(f"{METRICS_DIR_VARIABLE}: cannot create "
                         f"{_shown(metrics_dir())}: {error.strerror}") from None
