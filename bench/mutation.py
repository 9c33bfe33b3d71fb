"""Mutation score of the test suite: mutmut over service/physics/ and the shared unit, field, request and answer code.

Not part of the test suite (it takes tens of minutes). Each mutant is one small deliberate bug (an operator, a
constant, a comparison, a removed call) planted by mutmut in a copy of the code; the tests that exercise the mutated
function run against it, and the mutant is killed when one of them fails. The score is

    killed / (all mutants - those listed as equivalent in bench/mutation_equivalent.json)

and every surviving mutant that is not listed is printed with its diff, to be killed by a new test or listed with
the reason it cannot change any answer.

Usage (from the repository root, with the mutation extra: pip install -c constraints.txt -e '.[test,mutation]'):

    nice -n 19 .venv/bin/python -m bench.mutation                 # service/physics/ (default)
    nice -n 19 .venv/bin/python -m bench.mutation --target units  # service/units.py only
    nice -n 19 .venv/bin/python -m bench.mutation --target shared # service/units.py and the api's shared modules
    nice -n 19 .venv/bin/python -m bench.mutation --sample 160 --per-module 20  # a seeded sample, every module in it
    nice -n 19 .venv/bin/python -m bench.mutation --recheck       # the survivors against the current tests
    .venv/bin/python -m bench.mutation --report-only              # the last run's score and survivors again

The run happens in a copy of the repository under bench/results/mutation-<target>/ (ignored by git), so the working
tree is never touched; results are cached there by mutmut, so a second run only retests what changed.
"""

from __future__ import annotations

import argparse
import difflib
import json
import os
import random
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
REFERENCE_TESTS = ["tests/test_reference_atmosphere.py", "tests/test_reference_airspeed.py",
                   "tests/test_reference_lift.py", "tests/test_reference_contracts.py",
                   "tests/test_reference_airdata.py", "tests/test_reference_performance.py"]
#: Every module of service/physics/ has its tests/test_physics_<module>.py (heights: the altitude solves of
#: atmosphere and altimetry); the API tests of the modules without a tests/test_reference_*.py reach them as users do.
PHYSICS_TESTS = ["tests/test_physics_atmosphere.py", "tests/test_physics_airspeed.py", "tests/test_physics_lift.py",
                 "tests/test_physics_wing.py", "tests/test_physics_contracts.py", "tests/test_physics_drag.py",
                 "tests/test_physics_humidity.py", "tests/test_physics_altimetry.py",
                 "tests/test_physics_total_temperature.py", "tests/test_physics_properties.py",
                 "tests/test_physics_heights.py", "tests/test_physics_buffet.py", "tests/test_physics_turn.py",
                 "tests/test_physics_schedule.py", "tests/test_physics_single_point.py"]
API_TESTS = ["tests/test_api_atmosphere.py", "tests/test_api_airspeed.py", "tests/test_api_lift.py",
             "tests/test_api_drag.py", "tests/test_api_airdata.py", "tests/test_api_altimetry.py",
             "tests/test_api_lift_turn_buffet.py", "tests/test_api_speed_limit.py"]
TARGETS = {
    "physics": (["service/physics/*"],
                [*PHYSICS_TESTS, *REFERENCE_TESTS, "tests/test_edges.py", "tests/test_api_drag.py",
                 "tests/test_api_airdata.py", "tests/test_api_altimetry.py", "tests/test_api_lift_turn_buffet.py",
                 "tests/test_api_speed_limit.py"]),
    "units": (["service/units.py"], ["tests/test_units.py", "tests/test_reference_units.py", *REFERENCE_TESTS]),
    # (the shared code as measured, split since into the modules after outputs.py: the same functions)
    "shared": (["service/units.py", "service/api/fields.py", "service/api/inputs.py", "service/api/outputs.py",
                "service/api/numbers.py", "service/api/field_schemas.py", "service/api/request_body.py",
                "service/api/values.py", "service/api/formats.py"],
               ["tests/test_units.py", "tests/test_reference_units.py", "tests/test_units_api.py",
                "tests/test_fields.py", *REFERENCE_TESTS, *API_TESTS, "tests/test_bad_inputs.py",
                "tests/test_edges.py", "tests/test_echo.py", "tests/test_output_units.py",
                "tests/test_significant_digits.py", "tests/test_ranges.py", "tests/test_range_ends.py",
                "tests/test_tables.py", "tests/test_accept.py", "tests/test_response_validation.py"]),
}
#: Functions that run only while the module is imported (tables built once). mutmut forks its workers after the
#: import, so their mutants are never active in its own run; each surviving one is rechecked here by writing it
#: into the work copy's source (``mutmut apply``) and running these tests in a fresh interpreter.
IMPORT_TIME = {
    "service.physics.atmosphere": (["x__derive_layer_bases", "x__frozen", "x__build_layer_lookup"],
                                   ["tests/test_physics_atmosphere.py"]),
    "service.units": (["x__dim"], ["tests/test_reference_units.py", "tests/test_units.py"]),
    # The request schemas' fields are built when their classes are defined.
    "service.api.fields": (["xǁNumberǁ__init__", "xǁQuantityǁ__init__", "xǁQuantityǁunit_bounds", "xǁRangeǁ__new__",
                            "x__published"],
                           ["tests/test_fields.py", "tests/test_range_ends.py", "tests/test_units_api.py",
                            "tests/test_spec.py"]),
    "service.api.request_body": (["xǁBodyParserǁuse_args"],
                                 ["tests/test_bad_inputs.py", "tests/test_api_atmosphere.py", "tests/test_spec.py"]),
    "service.api.inputs": (["x_outputs_field", "xǁWholeNumberǁ__init__", "xǁBodyParserǁuse_args"],
                           ["tests/test_bad_inputs.py", "tests/test_api_atmosphere.py", "tests/test_api_drag.py",
                            "tests/test_spec.py"]),
}
#: The tests that recheck a survivor of each module against the current tests (--recheck), without a new mutmut
#: run (whose stats step reruns every test whenever a test file changed).
CONTRACTS = "tests/test_physics_contracts.py"
RECHECK_TESTS = {
    "service.physics.airspeed": ["tests/test_physics_airspeed.py", CONTRACTS, "tests/test_reference_airspeed.py"],
    "service.physics.atmosphere": ["tests/test_physics_atmosphere.py", CONTRACTS, "tests/test_physics_heights.py",
                                   "tests/test_reference_atmosphere.py"],
    "service.physics.lift": ["tests/test_physics_lift.py", CONTRACTS, "tests/test_reference_lift.py",
                             "tests/test_physics_heights.py"],
    "service.physics.wing": ["tests/test_physics_wing.py", CONTRACTS],
    "service.physics.drag": ["tests/test_physics_drag.py", CONTRACTS, "tests/test_api_drag.py"],
    "service.physics.humidity": ["tests/test_physics_humidity.py", CONTRACTS, "tests/test_api_airdata.py"],
    "service.physics.altimetry": ["tests/test_physics_altimetry.py", CONTRACTS, "tests/test_physics_heights.py",
                                  "tests/test_api_altimetry.py"],
    "service.physics.total_temperature": ["tests/test_physics_total_temperature.py", CONTRACTS,
                                          "tests/test_api_airdata.py"],
    "service.physics.properties": ["tests/test_physics_properties.py", CONTRACTS, "tests/test_api_airdata.py"],
    "service.physics.buffet": ["tests/test_physics_buffet.py", CONTRACTS, "tests/test_api_lift_turn_buffet.py"],
    "service.physics.turn": ["tests/test_physics_turn.py", CONTRACTS, "tests/test_api_lift_turn_buffet.py"],
    "service.physics.schedule": ["tests/test_physics_schedule.py", CONTRACTS, "tests/test_api_speed_limit.py"],
    "service.physics.single_point": ["tests/test_physics_single_point.py", CONTRACTS],
    "service.physics.arrays": [CONTRACTS],
    "service.units": ["tests/test_units.py", "tests/test_reference_units.py", "tests/test_units_api.py"],
    # The spec is what clients are generated from: a field's or an outputs list's published words are checked
    # against the committed openapi.json (tests/test_spec.py).
    "service.api.fields": ["tests/test_fields.py", "tests/test_spec.py", "tests/test_units_api.py",
                           "tests/test_range_ends.py", "tests/test_bad_inputs.py", "tests/test_api_atmosphere.py",
                           "tests/test_response_validation.py"],
    "service.api.inputs": ["tests/test_bad_inputs.py", "tests/test_tables.py", "tests/test_ranges.py",
                           "tests/test_api_atmosphere.py", "tests/test_api_drag.py", "tests/test_spec.py"],
    # The modules split from fields, inputs and outputs since the measurement: the tests of the code they came from.
    "service.api.numbers": ["tests/test_fields.py", "tests/test_bad_inputs.py", "tests/test_tables.py"],
    "service.api.field_schemas": ["tests/test_spec.py", "tests/test_fields.py", "tests/test_response_validation.py",
                                  "tests/test_rules.py"],
    "service.api.request_body": ["tests/test_bad_inputs.py", "tests/test_tables.py", "tests/test_api_atmosphere.py",
                                 "tests/test_spec.py"],
    "service.api.values": ["tests/test_output_units.py", "tests/test_significant_digits.py",
                           "tests/test_api_airspeed.py", "tests/test_arrow.py", "tests/test_echo.py"],
    "service.api.formats": ["tests/test_accept.py", "tests/test_bulk.py", "tests/test_arrow.py"],
    "service.api.outputs": ["tests/test_echo.py", "tests/test_significant_digits.py", "tests/test_output_units.py",
                            "tests/test_arrow.py", "tests/test_api_atmosphere.py", "tests/test_api_airdata.py",
                            "tests/test_accept.py", "tests/test_api_airspeed.py", "tests/test_bulk.py"],
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
    globs, tests = TARGETS[target]
    tests = [t for t in tests if (ROOT / t).exists()]
    config = "\n".join([
        "", "[tool.mutmut]",
        'source_paths = ["service"]',
        'also_copy = ["bench", "openapi", "README.md", "DEVELOPERS.md", "constraints.txt"]',
        f"only_mutate = {json.dumps(globs)}",
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


def run(work: Path, children: int, names: list[str] | None = None) -> float:
    """mutmut run in ``work`` at the lowest CPU priority (all mutants, or only ``names``)."""
    env = dict(os.environ, PYTHONDONTWRITEBYTECODE="1")
    mutmut = Path(sys.executable).with_name("mutmut")
    start = time.monotonic()
    subprocess.run(["nice", "-n", "19", str(mutmut), "run", "--max-children", str(children), *(names or [])],
                   cwd=work, env=env, check=False)
    return time.monotonic() - start


def generate(work: Path) -> None:
    """Let mutmut write its mutants (a run of no mutant: the name matches none), so they can be listed."""
    subprocess.run([str(Path(sys.executable).with_name("mutmut")), "run", "none.of.these__mutmut_0"], cwd=work,
                   capture_output=True, check=False)


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
    """The changed lines of mutant ``name``: its function in mutmut's copy against the original (no subprocess)."""
    module, function = name.rsplit(".", 1)
    path = work / "mutants" / (module.replace(".", "/") + ".py")
    if not path.exists():
        return ""
    text = path.read_text()
    base = function.split("__mutmut_")[0]

    def body(fn):  # a function, or a method (indented in its class): up to the next line indented no deeper
        match = re.search(rf"^( *)def {re.escape(fn)}\(.*?(?=^(?!\1 )(?!\s*$))", text + "\nend", flags=re.S | re.M)
        return match.group(0).replace(fn, base, 1).splitlines() if match else []

    diff = difflib.unified_diff(body(f"{base}__mutmut_orig"), body(function), lineterm="", n=0)
    return "\n".join(line for line in diff if line[:1] in "+-" and not line.startswith(("+++", "---")))


def recheck_import_time(work: Path, statuses: dict[str, str], everything: bool = False,
                        done: dict | None = None) -> dict[str, str]:
    """Survivors in import-time functions (and, with ``everything``, every survivor not listed as equivalent),
    each applied to the work copy's source and tested in a new interpreter against the current tests."""
    verdicts = {}
    mutmut = str(Path(sys.executable).with_name("mutmut"))
    sample_file = work / "sample.json"
    sampled = set(json.loads(sample_file.read_text())) if sample_file.exists() else set(statuses)
    equivalent = load_equivalent()
    for name, status in sorted(statuses.items()):
        module, function = name.rsplit(".", 1)
        function = function.split("__mutmut_")[0]
        import_time = function in IMPORT_TIME.get(module, ([], []))[0]
        # "no tests": no test reached the function in mutmut's stats step; a test added since may
        if status not in ("survived", "no tests") or name not in sampled or name in equivalent \
                or not (import_time or everything):
            continue
        if (done or {}).get(name) == "killed":
            continue
        tests = IMPORT_TIME[module][1] if import_time else RECHECK_TESTS.get(module)
        if not tests:
            continue
        source = work / (module.replace(".", "/") + ".py")
        pristine = (ROOT / (module.replace(".", "/") + ".py")).read_text()
        for test in tests:  # the current tests
            shutil.copy2(ROOT / test, work / test)
        try:
            subprocess.run([mutmut, "apply", name], cwd=work, capture_output=True, check=True)
            result = subprocess.run(
                ["nice", "-n", "19", sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "-o",
                 "addopts=", *tests], cwd=work, capture_output=True, timeout=600, check=False)
            verdicts[name] = "survived" if result.returncode == 0 else "killed"
        except subprocess.TimeoutExpired:
            verdicts[name] = "timeout"
        finally:
            source.write_text(pristine)
    return verdicts


def choose(everything: list[str], sample: int, per_module: int, seed: int) -> list[str]:
    """A seeded sample: ``sample`` mutants drawn from all, and ``per_module`` more from each module (every mutant of
    a module that has fewer), without repeats, in the order drawn."""
    rng = random.Random(seed)
    chosen = rng.sample(everything, min(sample, len(everything)))
    if per_module:
        by_module: dict[str, list[str]] = {}
        for name in everything:
            by_module.setdefault(name.rsplit(".", 1)[0], []).append(name)
        for module in sorted(by_module):
            rest = [n for n in by_module[module] if n not in set(chosen)]
            chosen += rng.sample(rest, min(per_module, len(rest)))
    return chosen


def load_equivalent() -> dict[str, dict]:
    if not EQUIVALENT_FILE.exists():
        return {}
    return {entry["mutant"]: entry for entry in json.loads(EQUIVALENT_FILE.read_text())["equivalent"]}


def report(work: Path, target: str, seconds: float | None) -> int:
    statuses = results(work) if (work / "mutants").is_dir() else {}
    generated = set(statuses)
    sample_file = work / "sample.json"
    sampled = json.loads(sample_file.read_text()) if sample_file.exists() else None
    if sampled is not None:
        total = len(statuses)
        statuses = {n: s for n, s in statuses.items() if n in set(sampled)}
    rechecked_file = work / "import_time_verdicts.json"
    rechecked = json.loads(rechecked_file.read_text()) if rechecked_file.exists() else {}
    statuses.update({n: v for n, v in rechecked.items() if statuses.get(n) in ("survived", "no tests")})
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
    listed = [n for n, s in statuses.items()
              if n in equivalent and s not in ("killed", "timeout", "segfault", "not checked")]
    checked = sum(1 for s in statuses.values() if s != "not checked")
    denominator = checked - len(listed)
    score = killed / denominator if denominator else 0.0
    print(f"qbar mutation score ({target}: {', '.join(TARGETS[target][0])}), mutmut, "
          + (f"{seconds / 60:.1f} min" if seconds is not None else "cached results"))
    if sampled is not None:
        print(f"  a seeded random sample of {len(statuses)} of the {total} mutants (--sample); the score is the "
              "sample's")
    print(f"  mutants              {len(statuses)}  ({', '.join(f'{k} {v}' for k, v in sorted(counts.items()))})")
    print(f"  listed equivalent    {len(listed)}  (bench/mutation_equivalent.json, each with its reason)")
    print(f"  killed               {killed}")
    print(f"  score                {score:.1%}  (killed / (mutants checked - listed equivalent))")
    print("  per module           checked  killed  listed  survived")
    for module in sorted({n.rsplit(".", 1)[0] for n in statuses}):
        names = [n for n, s in statuses.items() if n.rsplit(".", 1)[0] == module and s != "not checked"]
        dead = sum(1 for n in names if statuses[n] in ("killed", "timeout", "segfault", "caught by type check"))
        equal = sum(1 for n in names if n in listed)
        print(f"    {module:<34} {len(names):>5} {dead:>7} {equal:>7} {len(names) - dead - equal:>9}")
    stale = [n for n in equivalent if n.split(".x_")[0].replace(".", "/") in " ".join(TARGETS[target][0]).replace(
        "*", "") and n not in generated]
    if stale:
        print(f"  equivalent entries no longer generated (the code moved): {len(stale)}")
    changed = [n for n in listed if equivalent[n]["diff"].strip() != show(work, n).strip()]
    if changed:
        print(f"  LISTED ENTRIES WHOSE MUTANT NOW PLANTS ANOTHER CHANGE (the code moved; check them): {len(changed)}")
        for name in sorted(changed):
            print(f"    {name}")
    unchecked = [n for n, s in statuses.items() if s == "not checked"]
    if unchecked:
        print(f"  NOT CHECKED: {len(unchecked)} mutants (the run stopped early, or its stats step failed); "
              "run again to go on")
    alive = {n: s for n, s in alive.items() if s != "not checked"}
    if alive:
        print(f"  survivors not explained ({len(alive)}):")
        for name, status in sorted(alive.items()):
            print(f"    {name}  [{status}]")
            for line in show(work, name).splitlines()[:6]:
                print(f"        {line}")
    else:
        print("  every survivor is listed as equivalent")
    return 0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--target", choices=sorted(TARGETS), default="physics")
    parser.add_argument("--children", type=int, default=2, help="parallel mutant runs (default 2)")
    parser.add_argument("--report-only", action="store_true", help="print the last run's results")
    parser.add_argument("--sample", type=int, default=0,
                        help="test a seeded random sample of this many mutants (0: all); the score is the sample's")
    parser.add_argument("--per-module", type=int, default=0, metavar="K",
                        help="add a seeded sample of K mutants of each mutated module (all of a smaller one), so "
                             "that small modules are covered as well as large ones; with --sample, the union")
    parser.add_argument("--seed", type=int, default=20261202, help="seed of the sample")
    parser.add_argument("--recheck", action="store_true",
                        help="recheck the last run's survivors against the current tests (each applied to the work "
                             "copy), then report")
    parser.add_argument("--survivors", action="store_true",
                        help="retest only the last run's survivors, against the current tests")
    args = parser.parse_args(argv)
    work = _workdir(args.target)
    seconds = None
    if args.survivors:
        names = [n for n, s in results(work).items() if s == "survived"]
        work = prepare(args.target)
        shutil.rmtree(work / "mutants" / "tests", ignore_errors=True)  # mutmut copies the current tests again
        seconds = run(work, args.children, names)
    elif not (args.report_only or args.recheck):
        work = prepare(args.target)
        if args.sample or args.per_module:
            if not (work / "mutants").is_dir():
                generate(work)
            chosen = choose(sorted(results(work)), args.sample, args.per_module, args.seed)
            (work / "sample.json").write_text(json.dumps(chosen))
            done = results(work)
            seconds = run(work, args.children, [n for n in chosen if done.get(n) == "not checked"])
        else:
            (work / "sample.json").unlink(missing_ok=True)
            seconds = run(work, args.children)
    if not args.report_only:
        verdicts_file = work / "import_time_verdicts.json"
        verdicts = json.loads(verdicts_file.read_text()) if verdicts_file.exists() and args.recheck else {}
        verdicts.update(recheck_import_time(work, results(work), everything=args.recheck, done=verdicts))
        verdicts_file.write_text(json.dumps(verdicts, indent=1))
    return report(work, args.target, seconds)


if __name__ == "__main__":
    sys.exit(main())
