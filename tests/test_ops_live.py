"""Metrics across workers, API keys and start-up errors against a real gunicorn on a loopback port.

The parts the test client cannot show: several worker processes adding up to one /metrics
(prometheus-client's multiprocess mode), the headers gunicorn itself sends, and what an operator
sees when a setting is invalid (one line naming the variable, no traceback).
"""

import json
import subprocess
import sys
import time
import urllib.error
import urllib.request

import pytest
from prometheus_client.parser import text_string_to_metric_families

from tests.live_server import CONFIG, REPO, free_port, running_gunicorn, server_env

KEY = "live-test-key-0123456789"
MIN_REQUESTS = 20
MAX_REQUESTS = 400
EXIT_TIMEOUT = 30.0  # seconds for a refused start to end


def call(url, body=None, headers=None):
    """(status, headers, body bytes) of a GET, or of a POST of ``body`` as JSON."""
    data = None if body is None else json.dumps(body).encode()
    request = urllib.request.Request(url, data=data, headers={
        **({"Content-Type": "application/json"} if body is not None else {}), **(headers or {})})
    try:
        with urllib.request.urlopen(request, timeout=10) as response:
            return response.status, response.headers, response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.headers, error.read()


def metric(base_url, name, labels) -> float:
    """One sample of GET /metrics (0 when absent)."""
    status, _, body = call(base_url + "/metrics")
    assert status == 200
    for family in text_string_to_metric_families(body.decode()):
        for sample in family.samples:
            if sample.name == name and sample.labels == labels:
                return sample.value
    return 0.0


def access_pids(log_path) -> set:
    """The worker pids of the qbar.access lines written so far."""
    if not log_path.exists():
        return set()
    pids = set()
    for line in log_path.read_text(encoding="utf-8").splitlines():
        if '"qbar.access"' in line:
            entry = json.loads(line)
            if entry["path"] == "/v1/atmosphere":
                pids.add(entry["pid"])
    return pids


def test_metrics_add_up_over_two_workers(tmp_path):
    with running_gunicorn(workers=2, logs=tmp_path) as base_url:
        sent = points = 0
        # At least MIN_REQUESTS, and on until both workers have answered some (each request on a
        # new connection, so the workers take turns at random).
        while sent < MIN_REQUESTS or (len(access_pids(tmp_path / "stdout.log")) < 2 and sent < MAX_REQUESTS):
            n = 1 + sent % 3
            status, headers, _ = call(base_url + "/v1/atmosphere", {"altitude": list(range(0, 1000 * n, 1000))},
                                      headers={"X-Request-ID": f"live-{sent}"})
            assert status == 200
            assert headers["X-Request-ID"] == f"live-{sent}"
            sent += 1
            points += n
        time.sleep(0.2)  # the access lines of the last requests
        assert len(access_pids(tmp_path / "stdout.log")) == 2, "one worker answered everything"
        labels = {"endpoint": "/v1/atmosphere", "method": "POST", "status": "200"}
        # several scrapes, answered by either worker: each one sums the files of both
        for _ in range(4):
            assert metric(base_url, "qbar_http_requests_total", labels) == sent
            assert metric(base_url, "qbar_points_computed_total", {"endpoint": "/v1/atmosphere"}) == points
            assert metric(base_url, "qbar_http_request_duration_seconds_count",
                          {"endpoint": "/v1/atmosphere"}) == sent
    entries = [json.loads(line) for line in (tmp_path / "stdout.log").read_text().splitlines()
               if '"qbar.access"' in line and '"/v1/atmosphere"' in line]
    assert len(entries) == sent
    assert {e["request_id"] for e in entries} == {f"live-{i}" for i in range(sent)}


def test_keys_refuse_without_and_serve_with(tmp_path):
    with running_gunicorn(env={"QBAR_API_KEYS": KEY}, workers=1, logs=tmp_path) as base_url:
        status, headers, body = call(base_url + "/v1/atmosphere", {"altitude": 1000})
        assert status == 401 and headers["WWW-Authenticate"] == 'Bearer realm="qbar"'
        assert json.loads(body)["type"] == "/problems/unauthorized"
        status, headers, body = call(base_url + "/v1/atmosphere", {"altitude": 1000},
                                     headers={"Authorization": f"Bearer {KEY}"})
        assert status == 200 and "pressure" in json.loads(body)
        assert headers["X-Content-Type-Options"] == "nosniff"
        assert headers["Server"] is None  # no banner from gunicorn or the app
        status, _, _ = call(base_url + "/v1/atmosphere", {"altitude": 1000}, headers={"X-API-Key": KEY})
        assert status == 200
        for path in ("/v1/health", "/v1/ready", "/v1/version", "/metrics", "/openapi.json"):
            assert call(base_url + path)[0] == 200, path
    for log in ("stdout.log", "stderr.log"):
        assert KEY not in (tmp_path / log).read_text(encoding="utf-8")


def start_refused(argv, env) -> tuple[int, str]:
    """Run a gunicorn start that must fail; (exit status, stdout + stderr)."""
    port = free_port()
    environment = server_env(port, 2, REPO, env)
    environment.pop("PROMETHEUS_MULTIPROC_DIR")
    proc = subprocess.run([sys.executable, "-m", "gunicorn", *argv, "--bind", f"127.0.0.1:{port}",
                           "service:create_app()"],
                          cwd=REPO, env=environment, capture_output=True, text=True, timeout=EXIT_TIMEOUT,
                          stdin=subprocess.DEVNULL)
    return proc.returncode, proc.stdout + proc.stderr


LINE = "QBAR_MAX_POINTS: 'abc' is not a whole number"


@pytest.mark.parametrize("argv, alone", [
    (["-c", CONFIG], True),                                       # the image's and `qbar serve`'s start
    (["--preload", "--workers", "2", "--no-control-socket"], True),  # plain gunicorn, app loaded in the master
    (["--workers", "1", "--no-control-socket"], False),           # plain gunicorn, app loaded in the worker
])
def test_an_invalid_setting_stops_gunicorn_with_one_line(argv, alone):
    status, output = start_refused(argv, {"QBAR_MAX_POINTS": "abc"})
    assert status != 0
    assert "Traceback" not in output, output
    assert LINE in output.splitlines()
    if alone:
        assert output == LINE + "\n"
    else:  # gunicorn's own start and stop lines around it; its master stops ("App failed to load")
        assert "App failed to load" in output


def test_a_misspelt_setting_stops_gunicorn_with_one_line():
    status, output = start_refused(["-c", CONFIG], {"QBAR_API_KEY": KEY})
    assert status != 0
    assert output == "QBAR_API_KEY: not a qbar setting; did you mean QBAR_API_KEYS?\n"
