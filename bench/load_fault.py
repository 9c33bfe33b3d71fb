"""Load and fault run: gunicorn under concurrent mixed load, one worker SIGKILLed, the master reloaded,
then slow clients and oversized errors against the same load.

    .venv/bin/python -m bench.load_fault                 # 20000 requests, 8 clients, 4 workers, phases of 20 s
    .venv/bin/python -m bench.load_fault --requests 1500 --phase-seconds 8   # a shorter run

qbar runs as in production (``gunicorn -c python:service.gunicorn_conf "service:create_app()"``,
gevent workers) on a free loopback port; nothing leaves the machine. Client threads (http.client,
one new connection per request, ``Connection: close``) send a fixed mix of single-point requests
to every compute endpoint and bulk requests (thousands of points, grids). Every answer is compared
byte for byte with the answer the same request gets in-process through the Flask test client
before the run, so "answered correctly" means the right status and the right numbers.

Faults, at fixed fractions of the requests sent:

- SIGHUP to the master at 35 %: gunicorn reloads, starting new workers and stopping the old ones
  gracefully (they finish the requests they have accepted). No request may fail.
- SIGKILL to one worker at 70 %: the requests that worker had accepted and not yet answered are
  lost with it; the master starts a replacement. Only those may fail: a failure is explained when
  it started before the kill, ended after it, and no worker logged it (the app writes one access
  line per answered request, with the worker's pid and our X-Request-ID).

Then two phases of --phase-seconds each, the client threads sending single-point requests
throughout (checked byte for byte as above) while:

- slow clients: --slow connections trickle a request head or body a byte every 0.5 s (reopened
  when the server closes them at its header or body timeout);
- oversized errors: four more threads send hostile bodies as fast as they are answered (300 000
  unknown fields, 1 000 000 unknown output names, a 1 MB unit name, JSON nested 100 000 deep), each
  of which must come back as a 4xx problem document of at most 4 KiB.

For each phase: requests answered and failed, p50/p99, and the peak RSS of the workers (sampled
every 0.1 s). Bounded by the number of requests and by --max-seconds. Worker memory (RSS, from /proc) is read
after a warm-up and at the end, and sampled through the run. One connection per request keeps
each failure attributable: a keep-alive client must also resend on a pooled connection that a
reloading or dead worker has closed, which is the client's concern, not the server's.
Not part of the test suite (Linux only: /proc).
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
import uuid
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
HOST = "127.0.0.1"
HUP_AT, KILL_AT = 0.35, 0.70  # fractions of the requests sent
SETTLE_S = 3.0  # a worker's memory is compared from this long after its first sample (its warm-up)


def _mix() -> list[tuple[str, str, dict, str, int]]:
    """(name, path, body, kind, weight): the requests of the run, as an operator's systems send them."""
    rng = np.random.default_rng(20240607)
    levels = rng.uniform(-1000, 45_000, 5_000).round(1).tolist()
    cas = rng.uniform(120, 340, 5_000).round(2).tolist()
    return [
        ("atmosphere-point", "/v1/atmosphere", {"altitude": {"value": 350, "unit": "FL"}, "isa_deviation": 10},
         "single", 6),
        ("atmosphere-qnh", "/v1/atmosphere", {"altitude": 7200, "qnh": 1008, "temperature": 32}, "single", 3),
        ("airspeed-point", "/v1/airspeed", {"cas": 250, "altitude": {"value": 240, "unit": "FL"}, "isa_deviation": 12},
         "single", 6),
        ("airspeed-mach", "/v1/airspeed", {"mach": 0.78, "altitude": 37_000}, "single", 3),
        ("crossover", "/v1/airspeed/crossover", {"cas": [280, 300, 320], "mach": 0.78}, "single", 2),
        ("schedule", "/v1/airspeed/schedule", {"cas": 290, "mach": 0.76, "altitude": [10_000, 25_000, 35_000]},
         "single", 2),
        ("lift-solve", "/v1/lift/solve", {"solve_for": "cl", "weight": 21_000, "wing_area": 61, "mach": 0.45,
                                          "altitude": {"value": 250, "unit": "FL"}, "isa_deviation": 5}, "single", 4),
        ("lift-stall", "/v1/lift/stall", {"weight": 22_000, "wing_area": 61, "cl_max": 1.6, "altitude": 3_000,
                                          "bank_angle": [0, 30, 45], "speed_factors": [1.13, 1.3]}, "single", 3),
        ("lift-curve", "/v1/lift/curve", {"aspect_ratio": 11, "sweep_half_chord": 0, "mach": 0.3, "cl": 0.9},
         "single", 2),
        ("atmosphere-bulk", "/v1/atmosphere", {"altitude": levels, "isa_deviation": 15}, "bulk", 1),
        ("airspeed-bulk", "/v1/airspeed", {"cas": cas, "altitude": levels}, "bulk", 1),
        ("lift-grid", "/v1/lift/solve", {"solve_for": "cl", "weight": list(range(15_000, 23_001, 100)),
                                         "wing_area": 61, "cas": list(range(140, 300, 5)),
                                         "altitude": 10_000, "grid": True, "outputs": ["cl", "tas"]}, "bulk", 1),
    ]


def expected_answers(mix) -> dict[str, bytes]:
    """Each request's answer from the app in-process (Flask test client): the reference bytes."""
    sys.path.insert(0, str(ROOT))
    from service import create_app

    client = create_app({"TESTING": True, "QBAR_LOG_LEVEL": "WARNING"}).test_client()
    answers = {}
    for name, path, body, _, _ in mix:
        response = client.post(path, data=json.dumps(body), content_type="application/json")
        assert response.status_code == 200, (name, response.get_data(as_text=True)[:300])
        answers[name] = response.get_data()
    return answers


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind((HOST, 0))
        return sock.getsockname()[1]


def children(pid: int) -> list[int]:
    """The live child processes of ``pid`` (gunicorn's workers of its master)."""
    out = []
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue
        fields = stat[stat.rindex(")") + 2:].split()
        if int(fields[1]) == pid and fields[0] != "Z":
            out.append(int(entry.name))
    return sorted(out)


def rss_mb(pid: int) -> float | None:
    try:
        for line in Path(f"/proc/{pid}/status").read_text().splitlines():
            if line.startswith("VmRSS:"):
                return int(line.split()[1]) / 1024
    except OSError:
        return None
    return None


class Server:
    """gunicorn with qbar's configuration, in its own process group; stdout (access log) kept in a file."""

    def __init__(self, workers: int, scratch: Path):
        self.port = free_port()
        self.stdout = scratch / "stdout.log"
        self.stderr = scratch / "stderr.log"
        env = {k: v for k, v in os.environ.items() if not k.startswith("QBAR_")}
        env |= {"QBAR_BIND": f"{HOST}:{self.port}", "QBAR_WORKERS": str(workers),
                "PROMETHEUS_MULTIPROC_DIR": str(scratch / "metrics"), "PYTHONUNBUFFERED": "1"}
        with open(self.stdout, "wb") as out, open(self.stderr, "wb") as err:
            self.proc = subprocess.Popen([sys.executable, "-m", "gunicorn", "-c", "python:service.gunicorn_conf",
                                          "service:create_app()"], cwd=ROOT, env=env, stdin=subprocess.DEVNULL,
                                         stdout=out, stderr=err, start_new_session=True)
        self.workers = workers
        deadline = time.monotonic() + 30
        while len(children(self.proc.pid)) < workers or not self._answers():
            if self.proc.poll() is not None or time.monotonic() > deadline:
                raise RuntimeError("gunicorn did not start:\n" + self.stderr.read_text()[-2000:])
            time.sleep(0.1)

    def _answers(self) -> bool:
        try:
            conn = http.client.HTTPConnection(HOST, self.port, timeout=2)
            conn.request("GET", "/v1/health")
            ok = conn.getresponse().status == 200
            conn.close()
            return ok
        except OSError:
            return False

    def worker_pids(self) -> list[int]:
        return children(self.proc.pid)

    def stop(self) -> int:
        self.proc.send_signal(signal.SIGTERM)
        try:
            return self.proc.wait(timeout=40)
        except subprocess.TimeoutExpired:
            os.killpg(self.proc.pid, signal.SIGKILL)
            return self.proc.wait()

    def served_by(self) -> dict[str, int]:
        """request id -> pid of the worker that answered it, from the app's access log."""
        out = {}
        for line in self.stdout.read_text(errors="replace").splitlines():
            try:
                entry = json.loads(line)
            except ValueError:
                continue
            if entry.get("logger") == "qbar.access" and entry.get("request_id"):
                out[entry["request_id"]] = entry["pid"]
        return out


def hostile_bodies() -> list[tuple[str, bytes]]:
    """(name, body): requests that once made answers of hundreds of MB, a 500 or a stuck worker."""
    return [
        ("unknown-fields", json.dumps({"altitude": 1000, **{f"x{i}": 1 for i in range(300_000)}}).encode()),
        ("unknown-outputs", json.dumps({"altitude": 1000, "outputs": ["nope"] * 1_000_000}).encode()),
        ("long-unit", json.dumps({"altitude": {"value": 1000, "unit": "k" * 1_000_000}}).encode()),
        ("deep-nesting", b'{"altitude": ' + b"[" * 100_000 + b"]" * 100_000 + b"}"),
    ]


def phase(server, kind: str, seconds: float, clients: int, mix, bodies, expected, slow: int) -> dict:
    """One phase: ``clients`` threads of single-point requests, plus slow clients or hostile senders."""
    port = server.port
    singles = [i for i, m in enumerate(mix) if m[3] == "single"]
    stop = threading.Event()
    lock = threading.Lock()
    normal, hostile, peaks = [], [], {}
    deadline = time.monotonic() + seconds

    def send(path, body, headers=None, timeout=60):
        conn = http.client.HTTPConnection(HOST, port, timeout=timeout)
        conn.request("POST", path, body=body, headers={"Content-Type": "application/json", "Connection": "close",
                                                       **(headers or {})})
        response = conn.getresponse()
        data = response.read()
        conn.close()
        return response.status, response.getheader("Content-Type"), data

    def client(k):
        n = k
        while time.monotonic() < deadline:
            index = singles[n % len(singles)]
            n += clients
            t = time.monotonic()
            try:
                status, _, data = send(mix[index][1], bodies[index])
                ok = status == 200 and data == expected[mix[index][0]]
            except (OSError, http.client.HTTPException):
                ok = False
            with lock:
                normal.append((ok, time.monotonic() - t))

    def hostile_sender(name, body):
        while time.monotonic() < deadline:
            t = time.monotonic()
            try:
                status, ctype, data = send("/v1/atmosphere", body)
                ok = 400 <= status < 500 and ctype == "application/problem+json" and len(data) <= 4096
            except (OSError, http.client.HTTPException):
                ok = False
            with lock:
                hostile.append((ok, time.monotonic() - t))

    def trickler(k):
        head = (b"POST /v1/atmosphere HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\n"
                b"Content-Length: 18\r\n\r\n")
        text = head + b'{"altitude": 1000}'
        start = len(head) if k % 2 else 30  # half trickle their body, half their head
        while time.monotonic() < deadline:
            try:
                sock = socket.create_connection((HOST, port), timeout=30)
                sock.sendall(text[:start])
                for byte in text[start:]:
                    if stop.wait(0.5):
                        break
                    sock.sendall(bytes([byte]))
                sock.close()
            except OSError:
                stop.wait(0.2)

    def sampler():
        while not stop.is_set():
            for pid in server.worker_pids():
                rss = rss_mb(pid)
                if rss is not None:
                    peaks[pid] = max(peaks.get(pid, 0.0), rss)
            stop.wait(0.1)

    threads = [threading.Thread(target=client, args=(k,)) for k in range(clients)]
    if kind == "slow":
        extra = [threading.Thread(target=trickler, args=(k,), daemon=True) for k in range(slow)]
    else:
        extra = [threading.Thread(target=hostile_sender, args=item) for item in hostile_bodies()]
    helper = threading.Thread(target=sampler)
    for thread in [helper, *extra, *threads]:
        thread.start()
    for thread in threads:
        thread.join()
    stop.set()
    for thread in [helper, *extra]:
        thread.join(timeout=65)

    def summary(records):
        times = np.array([t for ok, t in records if ok]) * 1000
        return {"answered": int(sum(ok for ok, _ in records)), "failed": int(sum(not ok for ok, _ in records)),
                "p50_ms": round(float(np.percentile(times, 50)), 1) if times.size else None,
                "p99_ms": round(float(np.percentile(times, 99)), 1) if times.size else None}

    result = {"seconds": seconds, "single_point": summary(normal),
              "peak_worker_rss_mb": round(max(peaks.values()), 1) if peaks else None}
    if kind == "slow":
        result["slow_connections"] = slow
    else:
        result["hostile"] = summary(hostile)
    return result


def run(requests: int, clients: int, workers: int, max_seconds: float, phase_seconds: float = 20.0,
        slow: int = 60) -> dict:
    mix = _mix()
    expected = expected_answers(mix)
    schedule = [i for i, (_, _, _, _, weight) in enumerate(mix) for _ in range(weight)]
    rng = np.random.default_rng(7)
    plan = [schedule[i] for i in rng.integers(0, len(schedule), requests)]
    bodies = [json.dumps(body).encode() for _, _, body, _, _ in mix]

    with tempfile.TemporaryDirectory(prefix="qbar-load-fault-") as scratch:
        server = Server(workers, Path(scratch))
        port = server.port
        records: list[dict] = []
        lock = threading.Lock()
        sent = [0]
        events: dict = {}
        samples: dict[int, list[tuple[float, float]]] = {}
        stop = threading.Event()
        t0 = time.monotonic()

        def post(index: int) -> dict:
            name, path, _, kind, _ = mix[index]
            rid = uuid.uuid4().hex
            record = {"rid": rid, "name": name, "kind": kind, "start": time.monotonic()}
            try:
                conn = http.client.HTTPConnection(HOST, port, timeout=60)
                conn.request("POST", path, body=bodies[index], headers={
                    "Content-Type": "application/json", "X-Request-ID": rid, "Connection": "close"})
                response = conn.getresponse()
                data = response.read()
                conn.close()
                record |= {"status": response.status, "correct": response.status == 200 and data == expected[name]}
            except (OSError, http.client.HTTPException) as error:
                record |= {"status": None, "correct": False, "error": f"{type(error).__name__}: {error}"}
            record["end"] = time.monotonic()
            return record

        # warm-up: every worker has served a few of each request before memory is read
        for _ in range(3 * workers):
            for index in range(len(mix)):
                assert post(index)["correct"], mix[index][0]
        start_rss = {pid: rss_mb(pid) for pid in server.worker_pids()}

        def client():
            while not stop.is_set():
                with lock:
                    if sent[0] >= requests or time.monotonic() - t0 > max_seconds:
                        return
                    index = plan[sent[0]]
                    sent[0] += 1
                record = post(index)
                with lock:
                    records.append(record)

        def faults():
            while sent[0] < HUP_AT * requests and not stop.is_set():
                time.sleep(0.005)
            events["hup"] = {"time": time.monotonic(), "old_workers": server.worker_pids()}
            server.proc.send_signal(signal.SIGHUP)
            while sent[0] < KILL_AT * requests and not stop.is_set():
                time.sleep(0.005)
            victims = [pid for pid in server.worker_pids() if pid not in events["hup"]["old_workers"]]
            victim = victims[0] if victims else server.worker_pids()[0]
            events["kill"] = {"time": time.monotonic(), "pid": victim}
            os.kill(victim, signal.SIGKILL)

        def sampler():
            while not stop.is_set():
                now = time.monotonic() - t0
                for pid in server.worker_pids():
                    rss = rss_mb(pid)
                    if rss is not None:
                        samples.setdefault(pid, []).append((now, rss))
                stop.wait(0.25)

        threads = [threading.Thread(target=client) for _ in range(clients)]
        helpers = [threading.Thread(target=faults), threading.Thread(target=sampler)]
        for thread in helpers + threads:
            thread.start()
        for thread in threads:
            thread.join()
        elapsed = time.monotonic() - t0
        time.sleep(1.0)  # let the replacement worker come up before the last memory reading
        stop.set()
        for thread in helpers:
            thread.join()
        end_rss = {pid: rss_mb(pid) for pid in server.worker_pids()}
        phases = {"slow_clients": phase(server, "slow", phase_seconds, clients, mix, bodies, expected, slow),
                  "oversized_errors": phase(server, "oversized", phase_seconds, clients, mix, bodies, expected, slow)}
        status = server.stop()
        served = server.served_by()
        errors = server.stderr.read_text(errors="replace")

    result = report(records, events, served, start_rss, end_rss, samples, elapsed, requests, clients, workers,
                    status, errors, t0)
    result["phases"] = phases
    return result


def _explain(record, events, served) -> str:
    """Why a request failed: in flight on the killed worker, or UNEXPLAINED."""
    kill = events.get("kill")
    worker = served.get(record["rid"])
    if kill and record["start"] < kill["time"] <= record["end"] and worker in (None, kill["pid"]):
        when = (f"sent {1000 * (kill['time'] - record['start']):.0f} ms before the SIGKILL, failed "
                f"{1000 * (record['end'] - kill['time']):.0f} ms after it")
        if worker is None:
            return f"in flight on the killed worker {kill['pid']}: {when}; no worker answered it"
        return (f"in flight on the killed worker {kill['pid']}: {when}; that worker had computed and logged the "
                "answer and was killed while sending it")
    if worker is not None:
        return f"UNEXPLAINED: worker {worker} answered it, but not correctly"
    return "UNEXPLAINED"


def report(records, events, served, start_rss, end_rss, samples, elapsed, requests, clients, workers, status,
           errors, t0) -> dict:
    ok = [r for r in records if r["correct"]]
    failed = [r for r in records if not r["correct"]]
    latency = {}
    for kind in ("all", "single", "bulk"):
        times = np.array([r["end"] - r["start"] for r in ok if kind in ("all", r["kind"])]) * 1000
        latency[kind] = {"n": int(times.size), "p50_ms": float(np.percentile(times, 50)),
                         "p99_ms": float(np.percentile(times, 99))} if times.size else {}
    per_worker: dict[int, int] = {}
    for r in ok:
        pid = served.get(r["rid"])
        per_worker[pid] = per_worker.get(pid, 0) + 1
    lived = {}
    for pid, series in samples.items():  # workers sampled for at least SETTLE + 5 s
        settled = [rss for t, rss in series if t >= series[0][0] + SETTLE_S]
        if series[-1][0] - series[0][0] >= SETTLE_S + 5 and settled:
            lived[pid] = (settled[0], max(settled), series[-1][1], series[-1][0] - series[0][0])
    return {
        "requests_sent": len(records), "planned": requests, "clients": clients, "workers": workers,
        "seconds": round(elapsed, 1), "answered_correctly": len(ok), "failed": len(failed),
        "failures": [{"request": r["name"], "status": r["status"], "error": r.get("error"),
                      "explanation": _explain(r, events, served)} for r in failed],
        "latency": latency,
        "hup": {"at_s": round(events["hup"]["time"] - t0, 2), "old_workers": events["hup"]["old_workers"]},
        "kill": {"at_s": round(events["kill"]["time"] - t0, 2), "pid": events["kill"]["pid"]},
        "answers_per_worker": {str(k): v for k, v in sorted(per_worker.items(), key=lambda kv: str(kv[0]))},
        "rss_start_mb": {str(k): round(v, 1) for k, v in start_rss.items() if v},
        "rss_end_mb": {str(k): round(v, 1) for k, v in end_rss.items() if v},
        "rss_settled_max_last_mb": {str(k): [round(a, 1), round(b, 1), round(c, 1), round(span, 1)]
                                    for k, (a, b, c, span) in lived.items()},
        "gunicorn_exit_status": status,
        "error_lines": _error_lines(errors),
    }


def _error_lines(stderr: str) -> dict[str, int]:
    """The error-level lines gunicorn and the app wrote, by message (pids and numbers left out)."""
    counts: dict[str, int] = {}
    for line in stderr.splitlines():
        try:
            entry = json.loads(line)
        except ValueError:
            continue
        if entry.get("level") in ("error", "critical"):
            message = "".join("N" if c.isdigit() else c for c in str(entry.get("message", "")))[:120]
            counts[message] = counts.get(message, 0) + 1
    return counts


def print_report(result: dict) -> None:
    r = result
    print(f"qbar load and fault run: {r['workers']} gunicorn workers (gevent), {r['clients']} client threads, "
          f"loopback, {r['seconds']} s")
    print(f"  requests sent        {r['requests_sent']} (planned {r['planned']})")
    print(f"  answered correctly   {r['answered_correctly']} (status 200 and the same bytes as in-process)")
    print(f"  failed               {r['failed']}")
    for f in r["failures"]:
        print(f"    - {f['request']}: {f['error'] or f['status']} -> {f['explanation']}")
    for kind, lat in r["latency"].items():
        if lat:
            print(f"  latency {kind:<7}      p50 {lat['p50_ms']:.1f} ms, p99 {lat['p99_ms']:.1f} ms "
                  f"({lat['n']} requests)")
    print(f"  SIGHUP to the master at {r['hup']['at_s']} s (old workers {r['hup']['old_workers']}); "
          f"SIGKILL to worker {r['kill']['pid']} at {r['kill']['at_s']} s")
    print(f"  answers per worker   {r['answers_per_worker']}")
    print(f"  worker RSS at start  {r['rss_start_mb']} MB")
    print(f"  worker RSS at end    {r['rss_end_mb']} MB")
    print(f"  RSS of each worker sampled over >= {SETTLE_S + 5:.0f} s, {SETTLE_S:.0f} s after its first sample, its "
          f"highest after that and its last [MB, MB, MB, s sampled]: {r['rss_settled_max_last_mb']}")
    for name, p in r.get("phases", {}).items():
        extra = (f"{p['slow_connections']} slow connections" if "slow_connections" in p else
                 f"hostile bodies answered {p['hostile']['answered']}, failed {p['hostile']['failed']}, "
                 f"p50 {p['hostile']['p50_ms']} ms, p99 {p['hostile']['p99_ms']} ms")
        single = p["single_point"]
        print(f"  phase {name} ({p['seconds']:.0f} s, {extra}): single-point answered {single['answered']}, "
              f"failed {single['failed']}, p50 {single['p50_ms']} ms, p99 {single['p99_ms']} ms; "
              f"peak worker RSS {p['peak_worker_rss_mb']} MB")
    print(f"  gunicorn exit status {r['gunicorn_exit_status']}; error lines: {r['error_lines'] or 'none'}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--requests", type=int, default=20_000)
    parser.add_argument("--clients", type=int, default=8)
    parser.add_argument("--workers", type=int, default=4)
    parser.add_argument("--max-seconds", type=float, default=180.0)
    parser.add_argument("--phase-seconds", type=float, default=20.0, help="length of the slow and oversized phases")
    parser.add_argument("--slow", type=int, default=60, help="slow connections in the slow-client phase")
    parser.add_argument("--json", action="store_true", help="print the figures as JSON too")
    args = parser.parse_args(argv)
    result = run(args.requests, args.clients, args.workers, args.max_seconds, args.phase_seconds, args.slow)
    print_report(result)
    if args.json:
        print(json.dumps(result, indent=2))
    unexplained = [f for f in result["failures"] if f["explanation"].startswith("UNEXPLAINED")]
    phase_failures = sum(p["single_point"]["failed"] + p.get("hostile", {}).get("failed", 0)
                         for p in result["phases"].values())
    return 1 if unexplained or phase_failures else 0


if __name__ == "__main__":
    sys.exit(main())
