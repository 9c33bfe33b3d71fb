"""gunicorn's settings and hooks for qbar: one configuration for ``qbar serve``, the image and the Deployment.

    gunicorn -c python:service.gunicorn_conf "service:create_app()"

Every QBAR_* setting, the server's included (QBAR_WORKERS, QBAR_CONNECTIONS, QBAR_BIND), is read
and checked once by ``service.config.load``; an invalid one stops the start with one line naming
it (a SystemExit, which gunicorn does not catch: no traceback). What is qbar's own around
gunicorn (JSON logs, problem documents, the body deadline, the metrics files) is in
``service/server.py``. PROMETHEUS_MULTIPROC_DIR: the metrics directory shared by the workers,
checked writable and emptied at start; a dead worker's files are folded into an archive.
GUNICORN_CMD_ARGS (gunicorn's own) puts command-line options over these settings, for example
"--access-logfile -" for gunicorn's JSON access line (off: the app logs every request).
"""

import os
import signal
import socket

from service import config as qbar_config
from service import server

METRICS_DIR_VARIABLE = "PROMETHEUS_MULTIPROC_DIR"

try:
    _settings = qbar_config.load()
except qbar_config.ConfigError as error:
    raise SystemExit(str(error)) from None


def metrics_dir():
    """The Prometheus multiprocess directory, or None when metrics run single-process."""
    return os.environ.get(METRICS_DIR_VARIABLE, "").strip() or None


# --- hooks ---------------------------------------------------------------------------------

def on_starting(arbiter):
    """Master, before the workers: empty the metrics directory."""
    path = metrics_dir()
    if path:
        server.reset_metrics_dir(path)
        arbiter.log.info("metrics directory %s emptied", path)


def when_ready(arbiter):
    """Master, listening: say what was started; on SIGTERM, SIGINT or SIGQUIT refuse new connections at once."""
    arbiter.log.info("qbar ready: %d %s workers x %d connections on %s", arbiter.cfg.workers,
                     arbiter.cfg.worker_class_str, arbiter.cfg.worker_connections, ", ".join(arbiter.cfg.bind))
    for signum in (signal.SIGTERM, signal.SIGINT, signal.SIGQUIT):
        signal.signal(signum, _refusing(arbiter, signal.getsignal(signum)))


def _refusing(arbiter, queued):
    """A master signal handler that stops the listeners, then queues the signal as gunicorn does.

    gunicorn closes the master's copy of each listening socket when it stops, but every worker
    keeps its own copy open until its gevent loop next wakes (up to a second, longer while it
    computes), and meanwhile the kernel queues new connections that nobody will answer.
    ``shutdown(SHUT_RD)`` on a listening socket stops listening for every process that shares it
    (Linux), so a new connection is refused at once; accepted ones are separate sockets and finish.
    A reload (SIGHUP) keeps the listeners, so this is done for the stop signals only.
    """

    def handler(signum, frame):
        for listener in list(arbiter.LISTENERS):
            try:
                listener.sock.shutdown(socket.SHUT_RD)
            except OSError:
                pass
        queued(signum, frame)

    return handler


def post_worker_init(worker):
    """Worker, app loaded: problem documents for the server's own errors, no Server header, body deadline."""
    server.install(worker, body_timeout=_settings["QBAR_BODY_TIMEOUT"])


def child_exit(arbiter, worker):
    """Master, a worker has exited: fold its counters and histograms into the archive, remove its files."""
    path = metrics_dir()
    if path:
        try:
            server.archive_dead_worker(path, worker.pid)
        except OSError as error:
            arbiter.log.warning("metrics of worker %s not archived: %s", worker.pid, error)


# --- settings ------------------------------------------------------------------------------

# gevent workers: each connection is a greenlet, not a thread, so a client that sends its request
# slowly or stalls holds a few kilobytes, not a worker (see README "Slow clients"). A worker per
# CPU: the work is CPU-bound NumPy plus JSON, so processes are what scale it; QBAR_WORKERS
# defaults to the CPUs available and the Deployment passes its CPU limit.
worker_class = "gevent"
workers = _settings["QBAR_WORKERS"]
worker_connections = _settings["QBAR_CONNECTIONS"]  # open connections per worker, then the backlog
bind = [_settings["QBAR_BIND"]]
loglevel = _settings["QBAR_LOG_LEVEL"].lower()
backlog = 256

# Load the app once in the master, before forking: the workers share the loaded modules' memory.
preload_app = True

# Time limits. keepalive (QBAR_HEADER_TIMEOUT, 15 s): the whole request head (line and headers)
# must arrive within it, on a new connection and between requests on a kept-alive one (the
# gevent worker times the head read with it); an idle connection is closed after it, so a proxy
# in front must keep its idle upstream connections for less. The body: QBAR_BODY_TIMEOUT (30 s,
# service.server.BodyDeadline). timeout: a worker silent for 30 s is stuck (a request takes well
# under a second).
# graceful_timeout: on SIGTERM the workers finish what they accepted within it; Kubernetes'
# terminationGracePeriodSeconds must exceed the preStop pause plus this (tests/test_deploy.py).
keepalive = _settings["QBAR_HEADER_TIMEOUT"]
timeout = 30
graceful_timeout = 20
# The request head's size: gunicorn's defaults, said here (414 and 431 problem documents over them).
limit_request_line = 8190
limit_request_fields = 100
limit_request_field_size = 8190

# Restart a worker after about 20,000 requests (jitter spreads the restarts), a guard against slow
# growth; its metrics are archived (child_exit). Not more often: a fresh worker runs cold (its first
# requests copy the preloaded pages they touch), so a restart every 2000 requests cost a single-point
# worker about a fifth of its time, and a worker's memory stays flat anyway (240 bulk requests and
# 4800 single points: 77.9 MB throughout; README, Benchmarks).
max_requests = 20000
max_requests_jitter = 2000

# The heartbeat file must live on a memory file system (the root file system is read-only in
# Kubernetes, and a disk-backed one can stall the heartbeat).
worker_tmp_dir = "/dev/shm" if os.path.isdir("/dev/shm") else None

accesslog = None  # the app writes one JSON line per request (logger qbar.access)
errorlog = "-"    # stderr
access_log_format = server.ACCESS_LOG_FORMAT
logger_class = server.JsonLogger
proc_name = "qbar"

# Never a development server: no code reloading, no tracing. No runtime control socket either
# (gunicorn >= 25 opens one under $HOME by default; the container has no writable home).
reload = False
spew = False
control_socket_disable = True

# Every path the workers write must be writable before the first fork: otherwise every request
# would answer 500 (one line naming the path instead).
if metrics_dir():
    server.check_writable(METRICS_DIR_VARIABLE, metrics_dir())
if worker_tmp_dir:
    server.check_writable("worker_tmp_dir", worker_tmp_dir)
