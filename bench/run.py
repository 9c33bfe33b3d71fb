"""qbar's benchmarks, measured side by side in one run, printed as one table.

    .venv/bin/python -m bench.run            # every figure (needs wrk: apt-get install wrk)
    .venv/bin/python -m bench.run --quick    # smaller repeats, for a smoke run
    .venv/bin/python -m bench.run --only bulk --only throughput

1. Atmosphere physics on 1,000,000 random altitudes against ambiance (same six properties).
2. A 100,000-point POST /v1/atmosphere over HTTP through gunicorn, timed to the last byte of the answer,
   against ambiance computing the same points in-process (six properties), all in alternating rounds:
   the default outputs (15: the U.S. 1976 property set is answered only when named) as an Arrow table in and an
   Arrow stream out, JSON in and Arrow out, JSON in and out; six outputs, JSON in and out; and, for the record,
   every output (22) in JSON.
3. Single-point POST /v1/airspeed throughput through gunicorn against a bare Flask endpoint that returns a
   constant JSON object, same gunicorn settings, same load (wrk, one thread, in its own process); and the floors
   (bench.floor_app): qbar's hooks around the constant, then also the body read and schema load.
4. Peak resident memory of one worker serving the largest valid requests (a 200,000-point lift grid as
   JSON and as Arrow; the widest answers: the stall request with the most speed factors and the most points
   the limit then allows, and 200,000 /v1/drag/speeds points, the most columns per point).
5. Per compute endpoint, one gunicorn worker: points per second for a 100,000-point request (JSON and
   Arrow answers) and single-point requests per second (wrk): the figures the README's capacity section
   turns into pods.

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
import threading
import time
from pathlib import Path

import numpy as np
from ambiance import Atmosphere

from bench import atmosphere_physics
from service.api.atmosphere import OUTPUTS as ATMOSPHERE_OUTPUTS

ROOT = Path(__file__).resolve().parent.parent
SIX = ["pressure", "temperature", "density", "speed_of_sound", "dynamic_viscosity", "kinematic_viscosity"]

ARROW = "application/vnd.apache.arrow.stream"

TARGETS = {
    "physics": ("<= 0.05", lambda r: r <= 0.05),
    "bulk": ("<= 0.5", lambda r: r <= 0.5),
    "bulk_json": ("<= 1.3", lambda r: r <= 1.3),
    "bulk_six": ("<= 0.6", lambda r: r <= 0.6),
    "bulk_all": ("(measured)", lambda r: True),
    "single_point": (">= 0.6", lambda r: r >= 0.6),
    "memory": ("< 150 MB", lambda r: r < 150),
    "memory_widest": ("< 150 MB", lambda r: r < 150),
    "throughput": ("(measured)", lambda r: True),
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
    """POST and read the whole answer; (seconds from the first byte sent to the last byte read, status, body)."""
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=300)
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


def arrow_table_body(columns: dict[str, np.ndarray]) -> bytes:
    """An Arrow IPC stream of float64 columns (a table request body)."""
    import pyarrow as pa

    table = pa.table({name: pa.array(values) for name, values in columns.items()})
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table)
    return sink.getvalue().to_pybytes()


def bench_bulk(quick: bool) -> dict:
    """The 100k-point /v1/atmosphere request in four forms against ambiance, in alternating rounds."""
    n = 100_000
    rng = np.random.default_rng(7)
    h = rng.uniform(-4000.0, 80000.0, n)  # geometric [m], inside both models' ranges
    json_default = json.dumps({"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric"}).encode()
    json_six = json.dumps({"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric",
                           "outputs": SIX}).encode()
    json_all = json.dumps({"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric",
                           "outputs": list(ATMOSPHERE_OUTPUTS)}).encode()
    arrow_in = arrow_table_body({"altitude [m]": h})
    forms = {  # name -> (path, body, headers)
        "arrow": ("/v1/atmosphere?altitude_kind=%22geometric%22", arrow_in, {"Content-Type": ARROW, "Accept": ARROW}),
        "json_in_arrow_out": ("/v1/atmosphere", json_default, {"Accept": ARROW}),
        "json": ("/v1/atmosphere", json_default, {}),
        "json_six": ("/v1/atmosphere", json_six, {}),
        "json_all": ("/v1/atmosphere", json_all, {}),
    }
    repeat = 3 if quick else 7
    theirs = []
    times: dict[str, list[float]] = {name: [] for name in forms}
    sizes = {}
    with gunicorn("service:create_app()") as (port, _):
        for path, body, headers in forms.values():  # warm-up, and every form answers
            _, status, data = post_timed(port, path, body, headers)
            if status != 200:
                raise RuntimeError(f"{path} answered {status}: {data[:300]!r}")
        for _ in range(repeat):
            theirs.append(_time(lambda: ambiance_six(h)))
            for name, (path, body, headers) in forms.items():
                elapsed, status, data = post_timed(port, path, body, headers)
                assert status == 200, data[:300]
                times[name].append(elapsed)
                sizes[name] = len(data)
        gzip_times = []
        for _ in range(repeat):
            elapsed, status, zipped = post_timed(port, "/v1/atmosphere", json_six, {"Accept-Encoding": "gzip"})
            assert status == 200, zipped[:300]
            gzip_times.append(elapsed)
    ambiance_s = min(theirs)
    best = {name: min(values) for name, values in times.items()}
    out = {"ratio": best["arrow"] / ambiance_s, "ambiance_s": ambiance_s}
    for name in forms:
        out[f"{name}_s"] = best[name]
        out[f"{name}_ratio"] = best[name] / ambiance_s
        out[f"{name}_bytes"] = sizes[name]
    out["json_six_gzip_s"] = min(gzip_times)
    out["json_six_gzip_bytes"] = len(zipped)
    return out


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
    """Both servers up at once (idle between runs), measured in alternation; medians of the rounds.

    Also the floors, from a third server (bench.floor_app: qbar's app with two more routes): qbar's hooks around
    the bare constant, and the body read and schema load of /v1/airspeed before it: what any validated qbar
    request pays before its computation and its answer."""
    if shutil.which("wrk") is None:
        raise RuntimeError("wrk is not installed (apt-get install wrk)")
    seconds, rounds = (3, 2) if quick else (3, 9)  # many short pairs: single rounds move by a third here
    body = json.dumps({"cas": {"value": 280, "unit": "kt"}, "altitude": {"value": 330, "unit": "FL"},
                       "isa_deviation": 15})
    with (gunicorn("bench.bare_app:create_app()") as (bare_port, _), gunicorn("service:create_app()") as (port, _),
          gunicorn("bench.floor_app:create_app()") as (floor_port, _)):
        targets = {"bare": (bare_port, "/v1/airspeed"), "ours": (port, "/v1/airspeed"),
                   "floor_hooks": (floor_port, "/v1/floor/hooks"), "floor_load": (floor_port, "/v1/floor/load")}
        for target_port, path in targets.values():
            _wrk(target_port, path, body, 1)
        rps: dict[str, list[float]] = {name: [] for name in targets}
        for _ in range(rounds):
            for name, (target_port, path) in targets.items():
                rps[name].append(_wrk(target_port, path, body, seconds))
    bare, ours = rps["bare"], rps["ours"]
    ratios = sorted(o / b for o, b in zip(ours, bare, strict=True))
    out = {"ours_rps": statistics.median(ours), "bare_rps": statistics.median(bare),
           "ratio": statistics.median(ratios), "ratio_min": ratios[0], "ratio_max": ratios[-1]}
    for name in ("floor_hooks", "floor_load"):
        out[f"{name}_rps"] = statistics.median(rps[name])
        out[f"{name}_ratio"] = statistics.median(f / b for f, b in zip(rps[name], bare, strict=True))
    return out


def _children(pid: int) -> list[int]:
    path = Path(f"/proc/{pid}/task/{pid}/children")
    return [int(x) for x in path.read_text().split()] if path.exists() else []


def _peak_rss_mb(pid: int) -> float:
    status = Path(f"/proc/{pid}/status").read_text()
    return int(re.search(r"VmHWM:\s+(\d+) kB", status).group(1)) / 1024


#: 200,000 points: 50 weights x 40 flight levels x 100 ISA deviations, solve for CL at a fixed Mach.
LIFT_GRID = {
    "solve_for": "cl",
    "weight": {"value": np.linspace(40, 78, 50).tolist(), "unit": "t"},
    "altitude": {"value": np.linspace(50, 440, 40).tolist(), "unit": "FL"},
    "isa_deviation": np.linspace(-30, 30, 100).tolist(),
    "mach": 0.78,
    "wing_area": 122.6,
    "grid": True,
}


def _private_mb(pid: int) -> float:
    """Memory of ``pid`` that no other process shares (what one more worker costs) [MB]."""
    text = Path(f"/proc/{pid}/smaps_rollup").read_text()
    return sum(int(x) for x in re.findall(r"^Private_(?:Clean|Dirty):\s+(\d+) kB", text, re.MULTILINE)) / 1024


def _peak_memory(path: str, body: dict, headers: dict | None = None) -> dict:
    """One fresh worker serves one request: its resident memory before and its peak (VmHWM, which counts the
    pages the preloaded modules share with the other workers), and its private memory sampled every 5 ms
    during the request (the pages no other worker shares: what one more worker costs)."""
    with gunicorn("service:create_app()", workers=1) as (port, master):
        workers = _children(master)
        before = max(_peak_rss_mb(w) for w in workers)
        private_before = max(_private_mb(w) for w in workers)
        samples = []
        done = threading.Event()

        def sample():
            while not done.is_set():
                with contextlib.suppress(OSError):
                    samples.append(max(_private_mb(w) for w in workers))
                time.sleep(0.005)

        sampler = threading.Thread(target=sample, daemon=True)
        sampler.start()
        try:
            elapsed, status, data = post_timed(port, path, json.dumps(body).encode(), headers)
        finally:
            done.set()
            sampler.join()
        if status != 200:
            raise RuntimeError(f"{path} answered {status}: {data[:300]!r}")
        peak = max(_peak_rss_mb(w) for w in workers)
    return {"idle_mb": before, "peak_mb": peak, "private_idle_mb": private_before,
            "private_peak_mb": max(samples, default=private_before), "seconds": elapsed, "answer_bytes": len(data)}


def bench_memory(quick: bool) -> dict:
    """The 200,000-point lift grid (the most outputs per point), answered as JSON and as Arrow."""
    as_json = _peak_memory("/v1/lift/solve", LIFT_GRID)
    as_arrow = _peak_memory("/v1/lift/solve", LIFT_GRID, {"Accept": ARROW})
    return {"peak_mb": max(as_json["peak_mb"], as_arrow["peak_mb"]), "idle_mb": as_json["idle_mb"],
            "json_peak_mb": as_json["peak_mb"], "json_private_peak_mb": as_json["private_peak_mb"],
            "json_bytes": as_json["answer_bytes"], "arrow_peak_mb": as_arrow["peak_mb"],
            "arrow_private_peak_mb": as_arrow["private_peak_mb"], "arrow_bytes": as_arrow["answer_bytes"],
            "private_idle_mb": as_json["private_idle_mb"]}


#: The widest answer per point at the point limit: 200,000 drag/speeds points (29 columns with the inputs).
DRAG_SPEEDS_WIDEST = {
    "weight": np.linspace(15000, 23000, 200_000).tolist(), "wing_area": 61, "cd0": 0.024,
    "induced_drag_factor": 0.0371, "altitude": np.linspace(0, 20000, 200_000).tolist(), "height": 5000,
}


def bench_memory_widest(quick: bool) -> dict:
    """The widest valid answers, as JSON and as Arrow: as many stall points as the point limit allows with every
    multiple of the stall speed that speed_factors allows (MAX_SPEED_FACTORS), each factor counting a row per
    point (points x (1 + factors) <= QBAR_MAX_POINTS: 9,523 points); and 200,000 /v1/drag/speeds points, the
    endpoint with the most columns per point (29)."""
    from service.api.lift.stall import MAX_SPEED_FACTORS
    from service.config import SETTINGS

    n = SETTINGS["QBAR_MAX_POINTS"][0] // (1 + MAX_SPEED_FACTORS)
    stall = {"weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61, "cl_max": 1.6, "altitude": 3000,
             "bank_angle": 30, "speed_factors": np.linspace(1.05, 2.0, MAX_SPEED_FACTORS).round(4).tolist(),
             "cas": 180}
    out = {"stall_points": n, "factors": MAX_SPEED_FACTORS}
    for name, path, body in (("stall", "/v1/lift/stall", stall),
                             ("drag_speeds", "/v1/drag/speeds", DRAG_SPEEDS_WIDEST)):
        as_json = _peak_memory(path, body)
        as_arrow = _peak_memory(path, body, {"Accept": ARROW})
        out |= {f"{name}_json_peak_mb": as_json["peak_mb"], f"{name}_json_private_peak_mb": as_json["private_peak_mb"],
                f"{name}_json_bytes": as_json["answer_bytes"], f"{name}_arrow_peak_mb": as_arrow["peak_mb"],
                f"{name}_arrow_private_peak_mb": as_arrow["private_peak_mb"],
                f"{name}_arrow_bytes": as_arrow["answer_bytes"], "idle_mb": as_json["idle_mb"]}
    out["peak_mb"] = max(v for k, v in out.items() if k.endswith("_peak_mb") and "private" not in k)
    return out


#: One 100,000-point request per compute endpoint (default outputs), for points per second.
def throughput_bodies(n: int) -> dict[str, dict]:
    return {
        "/v1/atmosphere": {"altitude": np.linspace(-1000, 40000, n).tolist(), "isa_deviation": 10},
        "/v1/airspeed": {"cas": np.linspace(130, 300, n).tolist(), "altitude": np.linspace(0, 39000, n).tolist(),
                         "isa_deviation": 10},
        "/v1/airspeed/crossover": {"cas": np.linspace(250, 350, n).tolist(), "mach": 0.78},
        "/v1/airspeed/schedule": {"cas": 290, "mach": 0.78, "altitude": np.linspace(0, 41000, n).tolist(),
                                  "isa_deviation": 10},
        "/v1/lift/solve": {"solve_for": "cl", "weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61,
                           "mach": 0.6, "altitude": np.linspace(5000, 35000, n).tolist(), "isa_deviation": 5},
        "/v1/lift/stall": {"weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61, "cl_max": 1.6,
                           "altitude": 3000, "bank_angle": 30, "speed_factors": [1.3], "cas": 180},  # 2 rows a point
        "/v1/lift/curve": {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": np.linspace(0.1, 0.65, n).tolist(),
                           "airfoil_lift_slope": 6.0, "cl": 0.8, "cl_max": 1.6},
        "/v1/lift/turn": {"cas": np.linspace(150, 250, n).tolist(), "altitude": np.linspace(0, 20000, n).tolist(),
                          "turn_rate": 3},
        "/v1/lift/buffet": {"weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61,
                            "mach": np.linspace(0.6, 0.78, n).tolist(), "altitude": 35000, "margin": 1.3,
                            "buffet": BUFFET},
        "/v1/drag": {"weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61, "cd0": 0.024,
                     "aspect_ratio": 11, "oswald_efficiency": 0.78, "cas": np.linspace(160, 250, n).tolist(),
                     "altitude": 10000},
        "/v1/drag/speeds": {"weight": np.linspace(15000, 23000, n).tolist(), "wing_area": 61, "cd0": 0.024,
                            "induced_drag_factor": 0.0371, "altitude": np.linspace(0, 20000, n).tolist(),
                            "height": 5000},
        "/v1/altimetry/pressure-settings": {"elevation": np.linspace(-1000, 15000, n).tolist(),
                                            "qnh": np.linspace(950, 1050, n).tolist()},
        "/v1/altimetry/temperature-correction": {"elevation": np.linspace(0, 9000, n).tolist(), "temperature": -30,
                                                 "altitude": np.linspace(10000, 14000, n).tolist()},
    }


#: The demo type's buffet boundary (CL at the onset of buffet by Mach number; invented, for the benchmark).
BUFFET = {"mach": [0.30, 0.40, 0.50, 0.60, 0.66, 0.70, 0.74, 0.78, 0.82],
          "cl": [1.30, 1.20, 1.08, 0.94, 0.84, 0.76, 0.66, 0.55, 0.42]}


#: One single-point request per compute endpoint (the EFB's kind of request).
SINGLE = {
    "/v1/atmosphere": {"altitude": {"value": 350, "unit": "FL"}, "isa_deviation": 10},
    "/v1/airspeed": {"cas": 280, "altitude": {"value": 330, "unit": "FL"}, "isa_deviation": 15},
    "/v1/airspeed/crossover": {"cas": 290, "mach": 0.76},
    "/v1/airspeed/schedule": {"cas": 290, "mach": 0.76, "altitude": 31000, "isa_deviation": 10},
    "/v1/lift/solve": {"solve_for": "cl", "weight": 21000, "wing_area": 61, "mach": 0.45, "altitude": 25000},
    "/v1/lift/stall": {"weight": 22000, "wing_area": 61, "cl_max": 1.6, "altitude": 3000, "bank_angle": 30},
    "/v1/lift/curve": {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3, "airfoil_lift_slope": 6.0,
                       "cl": 0.9},
    "/v1/lift/turn": {"cas": 210, "altitude": 12000, "bank_angle": 25},
    "/v1/lift/buffet": {"weight": 21000, "wing_area": 61, "mach": 0.74, "altitude": 35000, "margin": 1.3,
                        "buffet": BUFFET},
    "/v1/drag": {"weight": 21000, "wing_area": 61, "cd0": 0.024, "aspect_ratio": 11, "oswald_efficiency": 0.78,
                 "cas": 220, "altitude": 18000},
    "/v1/drag/speeds": {"weight": 21000, "wing_area": 61, "cd0": 0.024, "induced_drag_factor": 0.0371,
                        "altitude": 18000},
    "/v1/altimetry/pressure-settings": {"elevation": 7200, "qnh": 1008},
    "/v1/altimetry/temperature-correction": {"elevation": 7200, "temperature": -25, "altitude": 9500},
}


def bench_throughput(quick: bool) -> dict:
    """Per endpoint, one worker: bulk points/s (JSON and Arrow answers), single-point requests/s."""
    n = 20_000 if quick else 100_000
    repeat, seconds = (2, 2) if quick else (3, 4)
    bodies = throughput_bodies(n)
    out = {}
    with gunicorn("service:create_app()", workers=1) as (port, _):
        for path, body in bodies.items():
            raw = json.dumps(body).encode()
            best = {}
            for label, headers in (("json", {}), ("arrow", {"Accept": ARROW})):
                post_timed(port, path, raw, headers)
                times = []
                for _ in range(repeat):
                    elapsed, status, data = post_timed(port, path, raw, headers)
                    if status != 200:
                        raise RuntimeError(f"{path} answered {status}: {data[:300]!r}")
                    times.append(elapsed)
                best[label] = min(times)
            rps = _wrk(port, path, json.dumps(SINGLE[path]), seconds) if shutil.which("wrk") else float("nan")
            name = path.removeprefix("/v1/")
            out[f"{name}: points/s json"] = n / best["json"]
            out[f"{name}: points/s arrow"] = n / best["arrow"]
            out[f"{name}: single requests/s"] = rps
    out["min_points_per_s_json"] = min(v for k, v in out.items() if k.endswith("points/s json"))
    return out


def _verdict(key: str, ok: bool) -> str:
    """"met" or "MISSED" against a target; nothing for a figure measured without one."""
    return "" if TARGETS[key][0] == "(measured)" else "met" if ok else "MISSED"


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true", help="fewer repeats (a smoke run)")
    parser.add_argument("--only", choices=["physics", "bulk", "single_point", "memory", "throughput"],
                        action="append")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, Python {platform.python_version()}, "
          f"NumPy {np.__version__}, {platform.platform()}")
    runs = {  # key: (group for --only, label, function, the figure's key in its result, format)
        "physics": ("physics", "atmosphere physics, 1e6 altitudes, ours / ambiance", bench_physics, "ratio",
                    "{:.3f}"),
        "bulk": ("bulk", "100k-point /v1/atmosphere, default outputs, Arrow in and out / ambiance", bench_bulk,
                 "ratio", "{:.2f}"),
        "single_point": ("single_point", "single-point /v1/airspeed throughput / bare Flask", bench_single_point,
                         "ratio", "{:.2f}"),
        "memory": ("memory", "peak worker memory, 200k-point lift grid, JSON or Arrow [MB]", bench_memory,
                   "peak_mb", "{:.0f}"),
        "memory_widest": ("memory", "peak worker memory, widest answers, JSON or Arrow [MB]",
                          bench_memory_widest, "peak_mb", "{:.0f}"),
        "throughput": ("throughput", "points/s per worker, slowest endpoint, JSON", bench_throughput,
                       "min_points_per_s_json", "{:.3g}"),
    }
    #: figures derived from another run's result: key -> (its run, label, figure)
    derived = {
        "bulk_json": ("bulk", "100k-point /v1/atmosphere, default outputs, JSON in and out / ambiance", "json_ratio"),
        "bulk_six": ("bulk", "100k-point /v1/atmosphere, six outputs, JSON in and out / ambiance", "json_six_ratio"),
        "bulk_all": ("bulk", "100k-point /v1/atmosphere, all 22 outputs, JSON in and out / ambiance", "json_all_ratio"),
    }
    rows = []
    results = {}
    failed = False
    for key, (group, label, fn, figure, fmt) in runs.items():
        if args.only and group not in args.only:
            continue
        try:
            results[key] = result = fn(args.quick)
        except Exception as err:  # report and go on with the other figures
            rows.append((label, "error", TARGETS[key][0], "-", str(err).splitlines()[0][:80]))
            failed = True
            continue
        for name, (source, derived_label, derived_figure) in derived.items():
            if source == key:
                ok = TARGETS[name][1](result[derived_figure])
                failed |= not ok
                rows.append((derived_label, f"{result[derived_figure]:.2f}", TARGETS[name][0],
                             _verdict(name, ok), ""))
        value = result[figure]
        ok = TARGETS[key][1](value)
        failed |= not ok
        details = "" if key == "throughput" else ", ".join(
            f"{k}={v:.4g}" if isinstance(v, float) else f"{k}={v}" for k, v in result.items())
        rows.append((label, fmt.format(value), TARGETS[key][0], _verdict(key, ok), details))
    width = max(len(r[0]) for r in rows)
    print(f"\n{'figure':<{width}}  {'value':>8}  {'target':>10}  {'':6}  details")
    for label, value, target, verdict, details in rows:
        print(f"{label:<{width}}  {value:>8}  {target:>10}  {verdict:6}  {details}")
    if "throughput" in results:
        per = results["throughput"]
        print(f"\n{'per endpoint, one worker:':<38} points/s JSON  points/s Arrow  single-point requests/s")
        for path in SINGLE:
            name = path.removeprefix("/v1/")
            print(f"  {name:<36} {per[f'{name}: points/s json']:>14,.0f} {per[f'{name}: points/s arrow']:>14,.0f} "
                  f"{per[f'{name}: single requests/s']:>24,.0f}")
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main())
