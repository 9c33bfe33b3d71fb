"""Before/after: two checkouts of qbar served side by side, measured in alternating rounds in one run.

    .venv/bin/python -m bench.compare --before ../qbar-before   # a checkout with its own .venv

1. Single-point POST /v1/airspeed throughput (wrk, as in bench.run), each checkout under the same load, with
   the bare Flask app of bench.run as the reference: the ratio after/before of the medians of the rounds.
2. A 100,000-point POST /v1/atmosphere (as in bench.run), timed to the last byte: the ratio of the best
   times after/before.

Ratios below 1.0 (bulk time) and above 1.0 (throughput) mean "after" is faster. Not part of the test suite.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import statistics
import sys
from pathlib import Path

import numpy as np

from bench.run import ROOT, SIX, _wrk, gunicorn, post_timed


@contextlib.contextmanager
def served(checkout: Path, app: str = "service:create_app()"):
    """gunicorn with the checkout's own Python and configuration on a free port (one worker); yield the port."""
    with gunicorn(app, checkout=checkout) as (port, _):
        yield port


def single_point(before: Path, seconds: int, rounds: int) -> dict:
    body = json.dumps({"cas": {"value": 280, "unit": "kt"}, "altitude": {"value": 330, "unit": "FL"},
                       "isa_deviation": 15})
    with served(ROOT, "bench.bare_app:create_app()") as bare, served(before) as old, served(ROOT) as new:
        for port in (bare, old, new):
            _wrk(port, "/v1/airspeed", body, 1)
        rps = {"bare": [], "before": [], "after": []}
        for _ in range(rounds):
            for name, port in (("bare", bare), ("before", old), ("after", new)):
                rps[name].append(_wrk(port, "/v1/airspeed", body, seconds))
    ratios = sorted(a / b for a, b in zip(rps["after"], rps["before"], strict=True))
    return {name: statistics.median(values) for name, values in rps.items()} | {
        "after/before": statistics.median(ratios), "min": ratios[0], "max": ratios[-1]}


def bulk(before: Path, repeat: int) -> dict:
    h = np.random.default_rng(7).uniform(-4000.0, 80000.0, 100_000)
    body = json.dumps({"altitude": {"value": h.tolist(), "unit": "m"}, "altitude_kind": "geometric",
                       "outputs": SIX}).encode()
    with served(before) as old, served(ROOT) as new:
        times = {"before": [], "after": []}
        answers = {}
        for _ in range(repeat + 1):  # the first round warms up
            for name, port in (("before", old), ("after", new)):
                elapsed, status, data = post_timed(port, "/v1/atmosphere", body)
                assert status == 200, data[:300]
                times[name].append(elapsed)
                answers[name] = data
    best = {name: min(values[1:]) for name, values in times.items()}
    return best | {"after/before": best["after"] / best["before"], "same_answer": answers["before"] == answers["after"]}


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--before", type=Path, required=True, help="the other checkout (with its own .venv)")
    parser.add_argument("--quick", action="store_true", help="fewer rounds (a smoke run)")
    args = parser.parse_args(argv)
    seconds, rounds, repeat = (2, 2, 2) if args.quick else (5, 5, 5)
    point = single_point(args.before.resolve(), seconds, rounds)
    print(f"single point  requests/s  bare {point['bare']:.0f}  before {point['before']:.0f}  "
          f"after {point['after']:.0f}  after/before {point['after/before']:.3f} "
          f"(rounds {point['min']:.3f} to {point['max']:.3f})")
    bulk_result = bulk(args.before.resolve(), repeat)
    print(f"100k points   best s  before {bulk_result['before']:.3f}  after {bulk_result['after']:.3f}  "
          f"after/before {bulk_result['after/before']:.3f}  same answer bytes: {bulk_result['same_answer']}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
