"""qbar's benchmarks, measured side by side in one run, printed as one table.

    .venv/bin/python -m bench.run            # all four figures (needs wrk: apt-get install wrk)
    .venv/bin/python -m bench.run --quick    # smaller repeats, for a smoke run

1. Atmosphere physics on 1,000,000 random altitudes against ambiance (same six properties).
2. A 100,000-point POST /v1/atmosphere over HTTP through gunicorn (JSON in and out, timed to the last byte
   of the answer) against ambiance computing the same points and properties in-process.
3. Single-point POST /v1/airspeed throughput through gunicorn against a bare Flask endpoint that returns a
   constant JSON object, same gunicorn settings, same load (wrk, one thread, in its own process).
4. Peak resident memory of one worker serving a 200,000-point lift grid.

Only the ratios compare like with like: on a 2-core machine the load generator competes with the workers.
Not part of the test suite.
"""

from __future__ import annotations

import argparse
import contextlib
import http.client
import json
import os
import platform
import re
import shutil
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from ambiance import Atmosphere

from bench import atmosphere_physics

ROOT = Path(__file__).resolve().parent.parent
SIX = ["pressure", "temperature", "density", "speed_of_sound", "dynamic_viscosity", "kinematic_viscosity"]

TARGETS = {
    "physics": ("<= 0.05", lambda r: r <= 0.05),
    "http_bulk": ("<= 1.0", lambda r: r <= 1.0),
    "single_point": (">= 0.6", lambda r: r >= 0.6),
    "memory": ("< 300 MB", lambda r: r < 300),
}


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextlib.contextmanager
def gunicorn(app: str, workers: int = 1, extra_env: dict | None = None, checkout: Path | None = None):
    """Start gunicorn with qbar's configuration on a free loopback port; yield (port, master pid).

    ``checkout``: another checkout of qbar, served with its own virtual environment (bench.compare).
    """
    port = free_port()
    env = dict(os.environ, QBAR_BIND=f"127.0.0.1:{port}", QBAR_WORKERS=str(workers), QBAR_LOG_LEVEL="warning")
    env.update(extra_env or {})
    env.pop("PROMETHEUS_MULTIPROC_DIR", None)
    log = tempfile.TemporaryFile()
    python = sys.executable if checkout is None else str(checkout / ".venv" / "bin" / "python")
    proc = subprocess.Popen([python, "-m", "gunicorn", "-c", "python:service.gunicorn_conf", app],
                            cwd=checkout or ROOT, env=env, stdout=log, stderr=subprocess.STDOUT)
    try:
        deadline = time.monotonic() + 30
        while time.monotonic() < deadline:
            with contextlib.suppress(OSError):
                socket.create_connection(("127.0.0.1", port), timeout=0.2).close()
                break
            if proc.poll() is not None:
                log.seek(0)
                raise RuntimeError(f"gunicorn exited: {log.read().decode()[-2000:]}")
            time.sleep(0.1)
        time.sleep(0.5)
        yield port, proc.pid
    finally:
        proc.send_signal(signal.SIGTERM)
        with contextlib.suppress(subprocess.TimeoutExpired):
            proc.wait(timeout=15)
        if proc.poll() is None:
            proc.kill()


def post_timed(port: int, path: str, body: bytes, headers: dict | None = None) -> tuple[float, int, bytes]:
    """POST and read the whole answer; (seconds to the last byte, status, body)."""
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=120)
    hdrs = {"Content-Type": "application/json"} | (headers or {})
    start = time.perf_counter()
    conn.request("POST", path, body=body, headers=hdrs)
    response = conn.getresponse()
    data = response.read()
    elapsed = time.perf_counter() - start
    conn.close()
    return elapsed, response.status, data


def ambiance_six(h_geometric: np.ndarray) -> list[np.ndarray]:
    a = Atmosphere(h_geometric, check_bounds=False)
    return [a.pressure, a.temperature, a.density, a.speed_of_sound, a.dynamic_viscosity, a.kinematic_viscosity]


def bench_physics(quick: bool) -> dict:
    result = atmosphere_physics.run(n=200_000 if quick else 1_000_000, repeat=2 if quick else 5)
    return {"ours_s": result["ours_s"], "ambiance_s": result["ambiance_s"], "ratio": result["ratio"]}


def bench_http_bulk(quick: bool) -> dict:
    n = 100_000
    rng = np.random.default_rng(7)
    h = rng.uniform(-4000.0, 80000.0, n)  # geometric [m], inside both models' ranges
    body = json.dumps({"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric",
                       "outputs": SIX}).encode()
    repeat = 3 if quick else 7
    theirs = min(_time(lambda: ambiance_six(h)) for _ in range(repeat))
    with gunicorn("service:create_app()") as (port, _):
        post_timed(port, "/v1/atmosphere", body)  # warm-up
        times = []
        for _ in range(repeat):
            elapsed, status, data = post_timed(port, "/v1/atmosphere", body)
            assert status == 200, data[:300]
            times.append(elapsed)
        gzip_times = []
        for _ in range(repeat):
            elapsed, status, zipped = post_timed(port, "/v1/atmosphere", body, {"Accept-Encoding": "gzip"})
            assert status == 200, zipped[:300]
            gzip_times.append(elapsed)
    ours = min(times)
    return {"ours_s": ours, "theirs_s": theirs, "ratio": ours / theirs, "answer_bytes": len(data),
            "gzip_s": min(gzip_times), "gzip_bytes": len(zipped)}


def _time(fn) -> float:
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def _wrk(port: int, path: str, body: str, seconds: int) -> float:
    script = tempfile.NamedTemporaryFile("w", suffix=".lua", delete=False)
    script.write(f'wrk.method = "POST"\nwrk.body = {json.dumps(body)}\n'
                 'wrk.headers["Content-Type"] = "application/json"\n')
    script.close()
    try:
        out = subprocess.run(["wrk", "-t1", "-c8", f"-d{seconds}s", "-s", script.name,
                              f"http://127.0.0.1:{port}{path}"], capture_output=True, text=True, check=True).stdout
    finally:
        os.unlink(script.name)
    if "Non-2xx" in out:
        raise RuntimeError(f"errors under load:\n{out}")
    return float(re.search(r"Requests/sec:\s+([0-9.]+)", out).group(1))


def bench_single_point(quick: bool) -> dict:
    """Both servers up at once (idle between runs), measured in alternation; medians of the rounds."""
    if shutil.which("wrk") is None:
        raise RuntimeError("wrk is not installed (apt-get install wrk)")
    seconds, rounds = (3, 2) if quick else (5, 5)
    body = json.dumps({"cas": {"value": 280, "unit": "kt"}, "altitude": {"value": 330, "unit": "FL"},
                       "isa_deviation": 15})
    with gunicorn("bench.bare_app:create_app()") as (bare_port, _), gunicorn("service:create_app()") as (port, _):
        _wrk(bare_port, "/v1/airspeed", body, 1)
        _wrk(port, "/v1/airspeed", body, 1)
        bare, ours = [], []
        for _ in range(rounds):
            bare.append(_wrk(bare_port, "/v1/airspeed", body, seconds))
            ours.append(_wrk(port, "/v1/airspeed", body, seconds))
    ratios = sorted(o / b for o, b in zip(ours, bare, strict=True))
    return {"ours_rps": statistics.median(ours), "bare_rps": statistics.median(bare),
            "ratio": statistics.median(ratios), "ratio_min": ratios[0], "ratio_max": ratios[-1]}


def _children(pid: int) -> list[int]:
    path = Path(f"/proc/{pid}/task/{pid}/children")
    return [int(x) for x in path.read_text().split()] if path.exists() else []


def _peak_rss_mb(pid: int) -> float:
    status = Path(f"/proc/{pid}/status").read_text()
    return int(re.search(r"VmHWM:\s+(\d+) kB", status).group(1)) / 1024


def bench_memory(quick: bool) -> dict:
    # 200,000 points: 50 weights x 40 flight levels x 100 ISA deviations, solve for CL at a fixed Mach
    body = json.dumps({
        "solve_for": "cl",
        "weight": {"value": np.linspace(40, 78, 50).tolist(), "unit": "t"},
        "altitude": {"value": np.linspace(50, 440, 40).tolist(), "unit": "FL"},
        "isa_deviation": np.linspace(-30, 30, 100).tolist(),
        "mach": 0.78,
        "wing_area": 122.6,
        "grid": True,
    }).encode()
    with gunicorn("service:create_app()", workers=1) as (port, master):
        workers = _children(master)
        before = max(_peak_rss_mb(w) for w in workers)
        elapsed, status, data = post_timed(port, "/v1/lift/solve", body)
        if status != 200:
            raise RuntimeError(f"lift grid answered {status}: {data[:300]!r}")
        peak = max(_peak_rss_mb(w) for w in workers)
    return {"idle_mb": before, "peak_mb": peak, "seconds": elapsed, "answer_bytes": len(data)}


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true", help="fewer repeats (a smoke run)")
    parser.add_argument("--only", choices=["physics", "http_bulk", "single_point", "memory"], action="append")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, Python {platform.python_version()}, "
          f"NumPy {np.__version__}, {platform.platform()}")
    runs = {
        "physics": ("atmosphere physics, 1e6 altitudes, ours / ambiance", bench_physics, "ratio", "{:.3f}"),
        "http_bulk": ("100k-point /v1/atmosphere over HTTP / ambiance in-process", bench_http_bulk, "ratio",
                      "{:.2f}"),
        "single_point": ("single-point /v1/airspeed throughput / bare Flask", bench_single_point, "ratio",
                         "{:.2f}"),
        "memory": ("peak worker memory, 200k-point lift grid [MB]", bench_memory, "peak_mb", "{:.0f}"),
    }
    rows = []
    failed = False
    for key, (label, fn, figure, fmt) in runs.items():
        if args.only and key not in args.only:
            continue
        try:
            result = fn(args.quick)
        except Exception as err:  # report and go on with the other figures
            rows.append((label, "error", TARGETS[key][0], "-", str(err).splitlines()[0][:80]))
            failed = True
            continue
        value = result[figure]
        ok = TARGETS[key][1](value)
        failed |= not ok
        details = ", ".join(f"{k}={v:.4g}" if isinstance(v, float) else f"{k}={v}" for k, v in result.items())
        rows.append((label, fmt.format(value), TARGETS[key][0], "met" if ok else "MISSED", details))
    width = max(len(r[0]) for r in rows)
    print(f"\n{'figure':<{width}}  {'value':>8}  {'target':>8}  {'':6}  details")
    for label, value, target, verdict, details in rows:
        print(f"{label:<{width}}  {value:>8}  {target:>8}  {verdict:6}  {details}")
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main())
