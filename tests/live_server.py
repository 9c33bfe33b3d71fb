"""A real gunicorn serving qbar with service/gunicorn_conf.py on a free loopback port, for tests.

    from tests.live_server import running_gunicorn

    with running_gunicorn(env={"QBAR_API_KEYS": "..."}, workers=2) as base_url:
        urllib.request.urlopen(base_url + "/v1/health")

The server runs as ``python -m gunicorn -c python:service.gunicorn_conf "service:create_app()"`` (the
image's command) from the repository root, with the QBAR_* variables of the calling process removed,
so only ``env`` configures it. On leaving the block it gets SIGTERM, and the block raises if it does
not then stop cleanly (exit status 0) in time.
"""

from __future__ import annotations

import contextlib
import os
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from collections.abc import Iterator, Mapping
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
CONFIG = "python:service.gunicorn_conf"
APP = "service:create_app()"
HOST = "127.0.0.1"
START_TIMEOUT = 30.0  # seconds until /v1/health answers
STOP_TIMEOUT = 30.0  # seconds after SIGTERM; more than gunicorn's graceful_timeout (20 s)
PORT_ATTEMPTS = 3  # a free port can be taken by someone else between choosing and binding it


def free_port(host: str = HOST) -> int:
    """A TCP port that is free on ``host`` right now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind((host, 0))
        return sock.getsockname()[1]


def server_env(port: int, workers: int, scratch: Path, env: Mapping[str, str | None] | None) -> dict[str, str]:
    """The server's environment: no inherited QBAR_* settings, a fresh metrics directory, then ``env``.

    A value of None in ``env`` removes that variable.
    """
    result = {k: v for k, v in os.environ.items() if not k.startswith("QBAR_") and k != "PROMETHEUS_MULTIPROC_DIR"}
    result.update(
        QBAR_BIND=f"{HOST}:{port}",
        QBAR_WORKERS=str(workers),
        # not created here: the config creates it, as in a container with an empty /tmp
        PROMETHEUS_MULTIPROC_DIR=str(scratch / "metrics"),
        PYTHONUNBUFFERED="1",
    )
    for key, value in (env or {}).items():
        if value is None:
            result.pop(key, None)
        else:
            result[key] = value
    return result


def _wait_until_healthy(proc: subprocess.Popen, base_url: str) -> bool:
    """True once GET /v1/health answers 200; False when the process has exited first."""
    deadline = time.monotonic() + START_TIMEOUT
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            return False
        try:
            with urllib.request.urlopen(base_url + "/v1/health", timeout=2) as response:
                if response.status == 200:
                    return True
        except (urllib.error.URLError, ConnectionError, TimeoutError):
            pass
        time.sleep(0.1)
    raise TimeoutError(f"gunicorn did not answer {base_url}/v1/health within {START_TIMEOUT} s")


def stop(proc: subprocess.Popen) -> int:
    """SIGTERM to gunicorn's master, as Kubernetes sends it; its exit status.

    When it has not stopped within STOP_TIMEOUT, its process group (this server's own session)
    is killed and TimeoutError raised.
    """
    if proc.poll() is None:
        proc.send_signal(signal.SIGTERM)
    try:
        return proc.wait(timeout=STOP_TIMEOUT)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait()
        raise TimeoutError(f"gunicorn (pid {proc.pid}) did not stop within {STOP_TIMEOUT} s of SIGTERM") from None


def _tail(path: Path, lines: int = 30) -> str:
    return "\n".join(path.read_text(encoding="utf-8", errors="replace").splitlines()[-lines:])


@contextlib.contextmanager
def running_gunicorn(
    env: Mapping[str, str | None] | None = None,
    workers: int = 2,
    *,
    app: str = APP,
    logs: Path | None = None,
) -> Iterator[str]:
    """Run gunicorn with qbar's configuration and ``workers`` workers; yield its base URL.

    Parameters
    ----------
    env : mapping, optional
        Environment variables over the defaults of :func:`server_env` (None removes one).
    workers : int
        QBAR_WORKERS.
    app : str
        The WSGI application, as gunicorn takes it.
    logs : Path, optional
        Directory that receives ``stdout.log`` (the access log) and ``stderr.log`` (the error
        log) and keeps them after the server stops; default: a temporary directory.
    """
    with tempfile.TemporaryDirectory(prefix="qbar-gunicorn-") as scratch:
        log_dir = Path(logs) if logs is not None else Path(scratch)
        log_dir.mkdir(parents=True, exist_ok=True)
        stdout_path, stderr_path = log_dir / "stdout.log", log_dir / "stderr.log"
        for attempt in range(PORT_ATTEMPTS):
            port = free_port()
            base_url = f"http://{HOST}:{port}"
            with open(stdout_path, "wb") as stdout, open(stderr_path, "wb") as stderr:
                proc = subprocess.Popen(
                    [sys.executable, "-m", "gunicorn", "-c", CONFIG, app],
                    cwd=REPO,
                    env=server_env(port, workers, Path(scratch), env),
                    stdin=subprocess.DEVNULL,
                    stdout=stdout,
                    stderr=stderr,
                    start_new_session=True,  # its own process group: stop() never signals anything else
                )
            try:
                healthy = _wait_until_healthy(proc, base_url)
            except BaseException:
                stop(proc)
                raise
            if healthy:
                break
            errors = _tail(stderr_path)
            if "in use" not in errors or attempt == PORT_ATTEMPTS - 1:
                raise RuntimeError(f"gunicorn exited with status {proc.returncode} before serving:\n{errors}")
        try:
            yield base_url
        except BaseException:
            stop(proc)
            raise
        status = stop(proc)
        if status != 0:
            raise RuntimeError(f"gunicorn exited with status {status} after SIGTERM:\n{_tail(stderr_path)}")
