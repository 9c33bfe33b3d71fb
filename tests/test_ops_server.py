"""The HTTP server against hostile clients, on a real gunicorn (service/gunicorn_conf.py) on a loopback port.

Slow and stalled clients hold no worker; the server's own errors are problem documents; a
malformed or oversized chunked body is a 4xx; a stop refuses new connections at once and finishes
the ones in flight; the metrics directory stays bounded across worker restarts; a metrics
directory the workers cannot write stops the start with one line; `qbar serve` honours
QBAR_BIND. Each test holds its connections for a few seconds at most.
"""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import threading
import time
import urllib.error
import urllib.parse
import urllib.request

import pytest
from prometheus_client.parser import text_string_to_metric_families

from tests.live_server import HOST, REPO, free_port, running_gunicorn, server_env

SLOW_CLIENTS = 40  # per kind: header tricklers and body tricklers
PROBE_BUDGET = 1.0  # seconds: every other client is answered within this, slow clients or not
BODY = b'{"altitude": 1000}'


def address(base_url):
    url = urllib.parse.urlsplit(base_url)
    return url.hostname, url.port


def post(base_url, path="/v1/atmosphere", body=BODY, timeout=5.0):
    request = urllib.request.Request(base_url + path, data=body, headers={"Content-Type": "application/json"})
    try:
        with urllib.request.urlopen(request, timeout=timeout) as response:
            return response.status, response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.read()


def exchange(base_url, raw: bytes, timeout=5.0) -> tuple[int, dict, bytes]:
    """Send ``raw`` bytes, read the answer to the end; (status, headers, body)."""
    with socket.create_connection(address(base_url), timeout=timeout) as sock:
        sock.sendall(raw)
        sock.shutdown(socket.SHUT_WR)
        data = b""
        while chunk := sock.recv(65536):
            data += chunk
    head, _, body = data.partition(b"\r\n\r\n")
    lines = head.decode("latin-1").split("\r\n")
    headers = dict(line.split(": ", 1) for line in lines[1:] if ": " in line)
    return int(lines[0].split()[1]), {k.lower(): v for k, v in headers.items()}, body


def assert_problem(status, headers, body, expected_status):
    assert status == expected_status, body[:300]
    assert headers["content-type"] == "application/problem+json"
    doc = json.loads(body)
    assert doc["status"] == expected_status and doc["type"].startswith("/problems/") and doc["title"]
    assert len(doc["detail"]) <= 500
    return doc


# --- slow clients ------------------------------------------------------------------------------

def trickle(base_url, head: bytes, tail: bytes, stop: threading.Event, opened: list):
    """Open a connection, send ``head``, then ``tail`` a byte every 0.2 s until ``stop``."""
    try:
        sock = socket.create_connection(address(base_url), timeout=10)
    except OSError:
        return
    opened.append(sock)
    try:
        sock.sendall(head)
        for byte in tail:
            if stop.wait(0.2):
                break
            sock.sendall(bytes([byte]))
    except OSError:
        pass


def test_slow_clients_hold_no_worker(tmp_path):
    """Dozens of connections trickling their head or body leave every other client answered at once."""
    with running_gunicorn(workers=1, logs=tmp_path) as base_url:
        stop, opened = threading.Event(), []
        heads = [(b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\nContent-Len",
                  b"gth: 18\r\n\r\n" + BODY)] * SLOW_CLIENTS
        bodies = [(b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
                   b"Content-Length: 18\r\n\r\n{", BODY[1:])] * SLOW_CLIENTS
        threads = [threading.Thread(target=trickle, args=(base_url, head, tail, stop, opened), daemon=True)
                   for head, tail in heads + bodies]
        for thread in threads:
            thread.start()
        try:
            time.sleep(0.5)
            assert len(opened) == 2 * SLOW_CLIENTS
            started = time.monotonic()
            while time.monotonic() - started < 3.0:  # one worker, 80 slow connections, for 3 s
                for path, body in (("/v1/health", None), ("/v1/atmosphere", BODY)):
                    t0 = time.monotonic()
                    status, _ = post(base_url, path, body, timeout=PROBE_BUDGET) if body else (
                        urllib.request.urlopen(base_url + path, timeout=PROBE_BUDGET).status, b"")
                    assert status == 200 and time.monotonic() - t0 < PROBE_BUDGET
                time.sleep(0.1)
        finally:
            stop.set()
            for sock in opened:
                sock.close()


def test_a_stalled_head_is_closed_after_the_header_timeout(tmp_path):
    with running_gunicorn(env={"QBAR_HEADER_TIMEOUT": "1"}, workers=1, logs=tmp_path) as base_url:
        with socket.create_connection(address(base_url), timeout=5) as sock:
            sock.sendall(b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\n")
            t0 = time.monotonic()
            assert sock.recv(100) == b""  # closed, nothing answered
            assert 0.5 < time.monotonic() - t0 < 3.0


def test_a_stalled_body_is_a_408_after_the_body_timeout(tmp_path):
    with running_gunicorn(env={"QBAR_BODY_TIMEOUT": "1"}, workers=1, logs=tmp_path) as base_url:
        with socket.create_connection(address(base_url), timeout=5) as sock:
            sock.sendall(b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
                         b"Content-Length: 18\r\n\r\n{\"alt")
            t0 = time.monotonic()
            answer = sock.recv(65536)
            assert 0.5 < time.monotonic() - t0 < 3.0
            while chunk := sock.recv(65536):  # then closed by the server
                answer += chunk
        head, _, body = answer.partition(b"\r\n\r\n")
        assert head.startswith(b"HTTP/1.1 408 ") and b"Connection: close" in head
        assert json.loads(body)["type"] == "/problems/request-timeout"


# --- the server's own errors ----------------------------------------------------------------------

CHUNKED = (b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
           b"Transfer-Encoding: chunked\r\n\r\n")


@pytest.mark.parametrize(("raw", "status"), [
    (b"NONSENSE\r\n\r\n", 400),                                            # a bad request line
    (b"GET /v1/health HTTP/1.1\r\nHost: x\r\nX-Big: " + b"a" * 9000 + b"\r\n\r\n", 431),  # a header too long
    (b"GET /v1/health HTTP/1.1\r\nHost: x\r\n" + b"X-H: 1\r\n" * 150 + b"\r\n", 431),     # too many headers
    (b"GET /" + b"a" * 9000 + b" HTTP/1.1\r\nHost: x\r\n\r\n", 414),       # a request line too long
    (b"GET /v1/health HTTP/9.9\r\nHost: x\r\n\r\n", 400),                  # an unknown HTTP version
    (b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nTransfer-Encoding: gzip\r\n\r\n", 400),  # a coding it lacks
    (CHUNKED + b"zz\r\n" + BODY + b"\r\n0\r\n\r\n", 400),                  # a malformed chunk size
    (CHUNKED + b"12\r\n" + BODY + b"XX0\r\n\r\n", 400),                    # a chunk without its terminator
])
def test_the_servers_own_errors_are_problem_documents(live, raw, status):
    doc = assert_problem(*exchange(live, raw), status)
    assert doc["type"] != "/problems/malformed-json" and "<html" not in doc["detail"].lower()


def test_a_chunked_body_is_read_whole(live):
    half = len(BODY) // 2
    raw = CHUNKED + b"%x\r\n%s\r\n%x\r\n%s\r\n0\r\n\r\n" % (half, BODY[:half], len(BODY) - half, BODY[half:])
    status, _, body = exchange(live, raw)
    assert status == 200 and json.loads(body)["pressure_altitude"]["value"] == 1000


def test_a_chunked_body_over_the_limit_is_a_413(live):
    chunk = b" " * 4096
    raw = CHUNKED + (b"1000\r\n" + chunk + b"\r\n") * 3 + b"0\r\n\r\n"  # 12 KiB against a 10 KiB limit
    doc = assert_problem(*exchange(live, raw), 413)
    assert doc["limit"] == 10 * 1024


@pytest.fixture(scope="module")
def live(tmp_path_factory):
    """One server for the error tests: a 10 KiB body limit."""
    with running_gunicorn(env={"QBAR_MAX_BODY_BYTES": "10240"}, workers=1,
                          logs=tmp_path_factory.mktemp("live")) as base_url:
        yield base_url


# --- a graceful stop ---------------------------------------------------------------------------------

def test_a_stop_refuses_new_connections_at_once_and_finishes_those_in_flight(tmp_path):
    port = free_port()
    env = server_env(port, 2, tmp_path, None)
    proc = subprocess.Popen([sys.executable, "-m", "gunicorn", "-c", "python:service.gunicorn_conf",
                             "service:create_app()"], cwd=REPO, env=env, stdin=subprocess.DEVNULL,
                            stdout=subprocess.DEVNULL, stderr=open(tmp_path / "stderr.log", "wb"),
                            start_new_session=True)
    try:
        base_url = f"http://{HOST}:{port}"
        deadline = time.monotonic() + 30
        while True:
            try:
                urllib.request.urlopen(base_url + "/v1/health", timeout=1)
                break
            except OSError:
                assert time.monotonic() < deadline and proc.poll() is None
                time.sleep(0.1)
        in_flight = socket.create_connection((HOST, port), timeout=10)
        in_flight.sendall(b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
                          b"Content-Length: 18\r\n\r\n" + BODY[:5])
        time.sleep(0.3)  # the request is in a worker, waiting for the rest of its body
        proc.send_signal(signal.SIGTERM)
        time.sleep(0.05)
        for _ in range(5):  # at once, and from then on: refused, not queued
            with pytest.raises(ConnectionRefusedError):
                socket.create_connection((HOST, port), timeout=1)
            time.sleep(0.1)
        in_flight.sendall(BODY[5:])
        answer = in_flight.recv(65536)
        in_flight.close()
        assert answer.startswith(b"HTTP/1.1 200 ")
        assert proc.wait(timeout=30) == 0
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    lines = (tmp_path / "stderr.log").read_text().splitlines()
    assert all(line.startswith("{") for line in lines), lines  # no traceback from the stopped listeners


# --- metrics across worker restarts ---------------------------------------------------------------

def metric_value(base_url, name, labels):
    body = urllib.request.urlopen(base_url + "/metrics", timeout=5).read().decode()
    for family in text_string_to_metric_families(body):
        for sample in family.samples:
            if sample.name == name and sample.labels == labels:
                return sample.value
    return 0.0


def test_the_metrics_directory_stays_bounded_across_worker_restarts(tmp_path):
    metrics = tmp_path / "metrics"
    env = {"GUNICORN_CMD_ARGS": "--max-requests 10 --max-requests-jitter 0", "PROMETHEUS_MULTIPROC_DIR": str(metrics)}
    with running_gunicorn(env=env, workers=2, logs=tmp_path / "logs") as base_url:
        sent = 0
        for _ in range(4):  # a gevent worker notices its max_requests within a second: a batch a second
            for _ in range(30):
                assert post(base_url)[0] == 200
                sent += 1
            time.sleep(1.2)
        log = (tmp_path / "logs" / "stderr.log").read_text()
        assert log.count('"Booting worker') >= 6  # two workers, restarted at least twice each
        files = sorted(p.name for p in metrics.glob("*.db"))
        # the live workers' counter and histogram files and one archive of each kind; nothing of the dead
        assert len(files) <= 6 and {"counter_archive.db", "histogram_archive.db"} <= set(files), files
        labels = {"endpoint": "/v1/atmosphere", "method": "POST", "status": "200"}
        assert metric_value(base_url, "qbar_http_requests_total", labels) == sent
        assert metric_value(base_url, "qbar_http_request_duration_seconds_count",
                            {"endpoint": "/v1/atmosphere"}) == sent
        assert metric_value(base_url, "qbar_points_computed_total", {"endpoint": "/v1/atmosphere"}) == sent


# --- start-up checks ---------------------------------------------------------------------------------

def refused_start(env) -> tuple[int, str]:
    environment = server_env(free_port(), 1, REPO, env)
    proc = subprocess.run([sys.executable, "-m", "gunicorn", "-c", "python:service.gunicorn_conf",
                           "service:create_app()"], cwd=REPO, env=environment, capture_output=True, text=True,
                          timeout=60, stdin=subprocess.DEVNULL)
    return proc.returncode, proc.stdout + proc.stderr


@pytest.mark.parametrize("path", ["/proc/1", "/dev/null/metrics"])
def test_an_unwritable_metrics_directory_stops_the_start_with_one_line(path):
    status, output = refused_start({"PROMETHEUS_MULTIPROC_DIR": path})
    assert status != 0
    assert output.count("\n") == 1 and output.startswith(f"PROMETHEUS_MULTIPROC_DIR: {path} is not writable"), output


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes through the permission bits")
def test_a_read_only_metrics_directory_stops_the_start_with_one_line(tmp_path):
    tmp_path.chmod(0o555)
    try:
        status, output = refused_start({"PROMETHEUS_MULTIPROC_DIR": str(tmp_path)})
    finally:
        tmp_path.chmod(0o755)
    assert status != 0 and output.startswith(f"PROMETHEUS_MULTIPROC_DIR: {tmp_path} is not writable")


# --- qbar serve -------------------------------------------------------------------------------------

def serve(argv, env, tmp_path):
    """Run `qbar serve ARGV` under ``env`` until /v1/health answers on the port it should; stop it."""
    environment = {k: v for k, v in os.environ.items() if not k.startswith("QBAR_")}
    environment.update(PROMETHEUS_MULTIPROC_DIR=str(tmp_path / "metrics"), QBAR_WORKERS="1", **env)
    return subprocess.Popen([sys.executable, "-m", "service.cli", "serve", *argv], cwd=REPO, env=environment,
                            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True)


@pytest.mark.parametrize("how", ["QBAR_BIND", "--port over QBAR_BIND"])
def test_qbar_serve_listens_where_qbar_bind_says(tmp_path, how):
    port, other = free_port(), free_port()
    if how == "QBAR_BIND":
        proc = serve([], {"QBAR_BIND": f"{HOST}:{port}"}, tmp_path)
    else:
        proc = serve(["--port", str(port)], {"QBAR_BIND": f"{HOST}:{other}"}, tmp_path)
    try:
        deadline = time.monotonic() + 30
        while True:
            try:
                assert urllib.request.urlopen(f"http://{HOST}:{port}/v1/health", timeout=1).status == 200
                break
            except OSError:
                assert time.monotonic() < deadline and proc.poll() is None
                time.sleep(0.1)
        if how != "QBAR_BIND":
            with pytest.raises(OSError):
                urllib.request.urlopen(f"http://{HOST}:{other}/v1/health", timeout=1)
    finally:
        proc.send_signal(signal.SIGTERM)
        try:
            proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()


def test_qbar_serve_refuses_a_bad_bind_with_one_line():
    environment = {k: v for k, v in os.environ.items() if not k.startswith("QBAR_")}
    environment["QBAR_BIND"] = "nowhere"
    result = subprocess.run([sys.executable, "-m", "service.cli", "serve", "--port", "8081"], cwd=REPO,
                            env=environment, capture_output=True, text=True, timeout=30)
    assert result.returncode != 0 and result.stderr.startswith("QBAR_BIND: expected HOST:PORT")
    assert result.stderr.count("\n") == 1

