"""Mutation score of the test suite: mutmut over service/physics/ and the shared unit, field, request and answer code.

Not part of the test suite (it takes tens of minutes). Each mutant is one small deliberate bug (an operator, a
constant, a comparison, a removed call) planted by mutmut in a copy of the code; the tests that exercise the mutated
function run against it, and the mutant is killed when one of them fails. The score is

    killed / (all mutants - those listed as equivalent in bench/mutation_equivalent.json)

and every surviving mutant that is not listed is printed with its diff, to be killed by a new test or listed with
the reason it cannot change any answer.

Usage (from the repository root, with the mutation extra: pip install -c constraints.txt -e '.[test,mutation]'):

    nice -n 19 .venv/bin/python -m bench.mutation                 # service/physics/ (default)
    nice -n 19 .venv/bin/python -m bench.mutation --target shared # service/units.py and the api's shared modules
    .venv/bin/python -m bench.mutation --report-only              # the last run's score and survivors again

The run happens in a copy of the repository under bench/results/mutation-<target>/ (ignored by git), so the working
tree is never touched; results are cached there by mutmut, so a second run only retests what changed.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
EQUIVALENT_FILE = ROOT / "bench" / "mutation_equivalent.json"

#: What each target mutates (mutmut's only_mutate globs) and which tests it runs against the mutants.
#: Slow tests of other concerns (a live gunicorn, Chromium, the container, schemathesis, the spec text) are left
#: out: they never reach a physics or unit mutant that the API and reference tests do not reach first.
FAST_TESTS = [
    "tests/test_physics_atmosphere.py", "tests/test_physics_airspeed.py", "tests/test_physics_lift.py",
    "tests/test_physics_wing.py", "tests/test_reference_oracle.py", "tests/test_reference_atmosphere.py",
    "tests/test_reference_airspeed.py", "tests/test_reference_lift.py", "tests/test_reference_contracts.py",
    "tests/test_api_atmosphere.py", "tests/test_api_airspeed.py", "tests/test_api_lift.py", "tests/test_edges.py",
    "tests/test_units.py", "tests/test_fields.py", "tests/test_bad_inputs.py",
]
TARGETS = {
    "physics": ["service/physics/*"],
    "shared": ["service/units.py", "service/api/fields.py", "service/api/inputs.py", "service/api/outputs.py"],
}
#: Copied into the work directory (everything the tests read).
COPY = ["service", "tests", "bench", "openapi", "pyproject.toml", "README.md", "DEVELOPERS.md", "constraints.txt"]


def _workdir(target: str) -> Path:
    return ROOT / "bench" / "results" / f"mutation-{target}"


def prepare(target: str) -> Path:
    """A fresh copy of the repository's sources with a [tool.mutmut] section for ``target``."""
    work = _workdir(target)
    work.mkdir(parents=True, exist_ok=True)
    for name in COPY:
        src, dst = ROOT / name, work / name
        if dst.is_dir():
            shutil.rmtree(dst)
        if src.is_dir():
            shutil.copytree(src, dst, ignore=shutil.ignore_patterns("__pycache__", "results", ".hypothesis"))
        elif src.exists():
            shutil.copy2(src, dst)
    tests = [t for t in FAST_TESTS if (ROOT / t).exists()]
    config = "\n".join([
        "", "[tool.mutmut]",
        'source_paths = ["service"]',
        'also_copy = ["bench", "openapi", "README.md", "DEVELOPERS.md", "constraints.txt"]',
        f"only_mutate = {json.dumps(TARGETS[target])}",
        f"pytest_add_cli_args_test_selection = {json.dumps(tests)}",
        # No doctests (mutmut's trampolines hide the docstrings) and no hypothesis database across mutants.
        'pytest_add_cli_args = ["-q", "-p", "no:cacheprovider", "-o", "addopts=", "-x",'
        ' "--hypothesis-seed=0"]',
        "timeout_multiplier = 10.0",
        "",
    ])
    pyproject = work / "pyproject.toml"
    text = pyproject.read_text()
    text = re.sub(r"\n\[tool\.mutmut\].*?(?=\n\[|\Z)", "", text, flags=re.S)
    pyproject.write_text(text + config)
    return work


def run(work: Path, children: int) -> float:
    env = dict(os.environ, PYTHONDONTWRITEBYTECODE="1")
    mutmut = Path(sys.executable).with_name("mutmut")
    start = time.monotonic()
    subprocess.run(["nice", "-n", "19", str(mutmut), "run", "--max-children", str(children)], cwd=work, env=env,
                   check=False)
    return time.monotonic() - start


def results(work: Path) -> dict[str, str]:
    """Mutant name -> status (killed, survived, timeout, suspicious, no tests, skipped, ...)."""
    out = subprocess.run([str(Path(sys.executable).with_name("mutmut")), "results", "--all", "true"], cwd=work,
                         capture_output=True, text=True, check=False).stdout
    statuses = {}
    for line in out.splitlines():
        match = re.match(r"\s*(\S+__mutmut_\d+):\s*(.+?)\s*$", line)
        if match:
            statuses[match.group(1)] = match.group(2)
    return statuses


def show(work: Path, name: str) -> str:
    out = subprocess.run([str(Path(sys.executable).with_name("mutmut")), "show", name], cwd=work,
                         capture_output=True, text=True, check=False).stdout
    return "\n".join(line for line in out.splitlines() if line.startswith(("+", "-")) and not line.startswith(
        ("+++", "---")))


def load_equivalent() -> dict[str, dict]:
    if not EQUIVALENT_FILE.exists():
        return {}
    return {entry["mutant"]: entry for entry in json.loads(EQUIVALENT_FILE.read_text())["equivalent"]}


def report(work: Path, target: str, seconds: float | None) -> int:
    statuses = results(work) if (work / "mutants").is_dir() else {}
    if not statuses:
        print(f"no mutmut results in {work}", file=sys.stderr)
        return 2
    equivalent = load_equivalent()
    counts: dict[str, int] = {}
    for status in statuses.values():
        counts[status] = counts.get(status, 0) + 1
    killed = sum(1 for s in statuses.values() if s in ("killed", "timeout", "segfault", "caught by type check"))
    alive = {n: s for n, s in statuses.items() if n not in equivalent and s not in (
        "killed", "timeout", "segfault", "caught by type check")}
    listed = [n for n, s in statuses.items() if n in equivalent and s not in ("killed", "timeout", "segfault")]
    denominator = len(statuses) - len(listed)
    score = killed / denominator if denominator else 0.0
    print(f"qbar mutation score ({target}: {', '.join(TARGETS[target])}), mutmut, "
          + (f"{seconds / 60:.1f} min" if seconds is not None else "cached results"))
    print(f"  mutants              {len(statuses)}  ({', '.join(f'{k} {v}' for k, v in sorted(counts.items()))})")
    print(f"  listed equivalent    {len(listed)}  (bench/mutation_equivalent.json, each with its reason)")
    print(f"  killed               {killed}")
    print(f"  score                {score:.1%}  (killed / (mutants - listed equivalent))")
    stale = [n for n in equivalent if n.split(".x_")[0].replace(".", "/") in " ".join(TARGETS[target]).replace(
        "*", "") and n not in statuses]
    if stale:
        print(f"  equivalent entries no longer generated (the code moved): {len(stale)}")
    if alive:
        print(f"  survivors not explained ({len(alive)}):")
        for name, status in sorted(alive.items()):
            print(f"    {name}  [{status}]")
            for line in show(work, name).splitlines():
                print(f"        {line}")
    else:
        print("  every survivor is listed as equivalent")
    return 0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--target", choices=sorted(TARGETS), default="physics")
    parser.add_argument("--children", type=int, default=2, help="parallel mutant runs (default 2)")
    parser.add_argument("--report-only", action="store_true", help="print the last run's results")
    args = parser.parse_args(argv)
    work = _workdir(args.target)
    seconds = None
    if not args.report_only:
        work = prepare(args.target)
        seconds = run(work, args.children)
    return report(work, args.target, seconds)


if __name__ == "__main__":
    sys.exit(main())
