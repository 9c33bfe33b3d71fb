"""Clients generated from the published spec call every endpoint of a live server, as an EFB developer's would.

- Python: openapi-python-client (PyPI, a test-only dependency pinned in constraints.txt) generates a client
  package; every request example of every operation goes through its typed models and functions, and each
  answer is parsed into the operation's response model and written back to the same JSON.
- TypeScript: openapi-typescript generates the types and openapi-fetch makes the calls; the calls (every request
  example of every operation, as literals) are compiled with ``tsc --strict`` and run with node. A misspelt unit
  or a unit of another dimension is a compile error: a small file that must fail to compile proves it.

The npm packages are pinned in tests/clients/package.json and package-lock.json; ``npm ci`` installs them into
.cache/clients/ (ignored by git) and again only when the lock file changes. node and npm come from the machine
(.ci/run installs Debian's when they are missing).
"""

from __future__ import annotations

import ast
import hashlib
import importlib
import json
import re
import shutil
import subprocess
import sys
import typing
from pathlib import Path

import pytest

from service.api.tables import TABLE_MEDIA_TYPES
from tests.live_server import running_gunicorn

REPO = Path(__file__).resolve().parents[1]
SPEC_FILE = REPO / "openapi" / "openapi.json"
SPEC = json.loads(SPEC_FILE.read_text(encoding="utf-8"))
NODE_PROJECT = REPO / "tests" / "clients"  # package.json and package-lock.json, committed
CACHE = REPO / ".cache" / "clients"  # node_modules, installed by npm ci; ignored by git
PACKAGE = "qbar_client"  # the generated Python package's name
MAX_MODEL_CLASSES = 120
NPM_TIMEOUT = 600  # seconds: a first install downloads typescript
STEP_TIMEOUT = 180  # seconds: generating or compiling a client


def operations() -> list[dict]:
    """Every operation of the spec with every request to make of it: its request examples (or none)."""
    found = []
    for path, item in SPEC["paths"].items():
        shared = item.get("parameters", [])
        for method, op in item.items():
            if method == "parameters":
                continue
            params = {p["name"]: p["example"] for p in [*shared, *op.get("parameters", [])] if p["in"] == "path"}
            examples = (op.get("requestBody", {}).get("content", {}).get("application/json", {}).get("examples"))
            bodies = [(name, ex["value"]) for name, ex in examples.items()] if examples else [(None, None)]
            for name, body in bodies:
                found.append({"method": method, "path": path, "op": op, "params": params,
                              "example": name, "body": body})
    return found


OPERATIONS = operations()


def _id(call: dict) -> str:
    return f"{call['method'].upper()} {call['path']}" + (f" {call['example']}" if call["example"] else "")


def run(args: list[str], cwd: Path, timeout: float = STEP_TIMEOUT) -> subprocess.CompletedProcess:
    return subprocess.run(args, cwd=cwd, capture_output=True, text=True, timeout=timeout, stdin=subprocess.DEVNULL)


@pytest.fixture(scope="module")
def base_url():
    """A live gunicorn with one worker."""
    with running_gunicorn(workers=1) as url:
        yield url


# --- Python: openapi-python-client ---

def snake(name: str) -> str:
    """openapi-python-client's module and folder names: snake case of the operationId or tag."""
    name = re.sub(r"([a-z0-9])([A-Z])", r"\1_\2", name)
    return re.sub(r"[^0-9a-zA-Z]+", "_", name).strip("_").lower()


def python_function(package, call: dict):
    """The generated module of an operation: api/<tag>/<operationId>, or <method>_<path> without an operationId."""
    op = call["op"]
    name = op.get("operationId") or f"{call['method']}_{call['path']}".replace("{", "").replace("}", "")
    return importlib.import_module(f"{package.__name__}.api.{snake(op['tags'][0])}.{snake(name)}")


@pytest.fixture(scope="module")
def python_client(tmp_path_factory):
    """The generated Python client package, importable."""
    out = tmp_path_factory.mktemp("python-client")
    config = out / "config.yaml"
    config.write_text("post_hooks: []\n", encoding="utf-8")  # no formatter run over the generated code
    # The generator takes the JSON request bodies only: it warns on the table bodies (CSV, Arrow: api.tables),
    # and with them mapped to bytes (content_type_overrides) 0.29 writes a body union that does not import.
    # Tables are posted as raw bytes (tests/test_tables.py); the client is for JSON.
    spec = json.loads(SPEC_FILE.read_text(encoding="utf-8"))
    for item in spec["paths"].values():
        for operation in item.values():
            if isinstance(operation, dict) and "requestBody" in operation:
                content = operation["requestBody"]["content"]
                for media_type in TABLE_MEDIA_TYPES:
                    content.pop(media_type, None)
    spec_file = out / "openapi.json"
    spec_file.write_text(json.dumps(spec), encoding="utf-8")
    generator = Path(sys.executable).with_name("openapi-python-client")
    done = run([str(generator), "generate", "--path", str(spec_file), "--output-path", str(out / PACKAGE),
                "--meta", "none", "--config", str(config)], cwd=out)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "Warning" not in done.stdout + done.stderr, done.stdout + done.stderr  # nothing left out
    sys.path.insert(0, str(out))
    try:
        yield importlib.import_module(PACKAGE)
    finally:
        sys.path.remove(str(out))
        for name in [m for m in sys.modules if m == PACKAGE or m.startswith(PACKAGE + ".")]:
            del sys.modules[name]


def model_classes(package) -> list[str]:
    """The classes the generator wrote under models/ (read from the source, not imported)."""
    return sorted(node.name for file in (Path(package.__file__).parent / "models").glob("*.py")
                  for node in ast.walk(ast.parse(file.read_text(encoding="utf-8")))
                  if isinstance(node, ast.ClassDef))


def test_python_client_has_few_model_classes_and_none_numbered(python_client):
    classes = model_classes(python_client)
    numbered = [name for name in classes if re.search(r"\d", name)]
    print(f"generated Python client: {len(classes)} model classes, {len(numbered)} numbered")
    assert not numbered, f"{len(numbered)} of {len(classes)} model classes are numbered, e.g. {numbered[:5]}"
    assert len(classes) < MAX_MODEL_CLASSES, f"{len(classes)} model classes"


@pytest.mark.parametrize("call", OPERATIONS, ids=_id)
def test_python_client_calls_the_endpoint(python_client, base_url, call):
    module = python_function(python_client, call)
    kwargs = dict(call["params"])
    if call["body"] is not None:
        body_type = typing.get_type_hints(module.sync_detailed)["body"]
        kwargs["body"] = body_type.from_dict(call["body"])
        assert kwargs["body"].to_dict() == call["body"], "the request model changes the request"
    client = python_client.Client(base_url=base_url, raise_on_unexpected_status=True)
    with client:
        response = module.sync_detailed(client=client, **kwargs)
    assert response.status_code == 200, response.content[:2000]
    answer = json.loads(response.content)
    success = next(c for s, c in call["op"]["responses"].items() if s == "200")
    if "application/json" in success.get("content", {}):
        parsed = response.parsed
        assert parsed is not None and type(parsed).__name__ != "Problem"
        assert parsed.to_dict() == answer, "the response model does not give back the answer"


# --- TypeScript: openapi-typescript + openapi-fetch, compiled with tsc --strict ---

@pytest.fixture(scope="module")
def node_project() -> Path:
    """.cache/clients with the pinned npm packages installed (npm ci when the lock file has changed)."""
    for tool in ("node", "npm"):
        if shutil.which(tool) is None:
            pytest.fail(f"{tool} is not on PATH: run .ci/run, which installs Debian's nodejs and npm")
    CACHE.mkdir(parents=True, exist_ok=True)
    lock = (NODE_PROJECT / "package-lock.json").read_bytes()
    stamp = CACHE / ".installed"
    digest = hashlib.sha256(lock + (NODE_PROJECT / "package.json").read_bytes()).hexdigest()
    if not stamp.exists() or stamp.read_text() != digest or not (CACHE / "node_modules").is_dir():
        for name in ("package.json", "package-lock.json"):
            shutil.copyfile(NODE_PROJECT / name, CACHE / name)
        done = run(["npm", "ci", "--no-audit", "--no-fund"], cwd=CACHE, timeout=NPM_TIMEOUT)
        assert done.returncode == 0, done.stdout + done.stderr
        stamp.write_text(digest)
    return CACHE


@pytest.fixture(scope="module")
def ts_project(node_project, tmp_path_factory) -> Path:
    """A fresh folder under .cache/clients (node_modules resolve from there) with qbar.ts: the generated types."""
    work = node_project / "work"
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir()
    done = run([str(node_project / "node_modules" / ".bin" / "openapi-typescript"), str(SPEC_FILE),
                "--output", str(work / "qbar.ts")], cwd=work)
    assert done.returncode == 0, done.stdout + done.stderr
    return work


def tsc(work: Path, files: list[str], *, emit: bool) -> subprocess.CompletedProcess:
    """``tsc --strict`` over ``files`` in ``work``, to ES modules for node (into out/ with ``emit``)."""
    args = [str(CACHE / "node_modules" / ".bin" / "tsc"), "--strict", "--target", "es2022", "--module", "nodenext",
            "--moduleResolution", "nodenext", "--lib", "es2022,dom", "--pretty", "false"]
    args += ["--outDir", "out", "--noEmitOnError"] if emit else ["--noEmit"]
    return run([*args, *files], cwd=work)


#: JSON answers and problem documents; CSV answers are for other clients (`Accept: text/csv`).
HEADER = """import createClient from "openapi-fetch";
import type { paths } from "./qbar.js";

const client = createClient<paths, "application/json" | "application/problem+json">({ baseUrl: BASE_URL });
"""

MISSPELT = {  # each line must be a compile error: a misspelt unit, or a unit of another dimension
    "feet": ("/v1/atmosphere", '{ altitude: { value: 7200, unit: "feet" }, isa_deviation: 0 }'),
    "kts": ("/v1/airspeed", '{ cas: { value: 250, unit: "kts" }, altitude: 10000, isa_deviation: 0 }'),
    "kt": ("/v1/atmosphere", '{ altitude: { value: 7200, unit: "kt" }, isa_deviation: 0 }'),
}
SPELT = [  # the same requests spelt right, called in calls.ts: they compile and answer
    ("/v1/atmosphere", '{ altitude: { value: 7200, unit: "ft" }, isa_deviation: 0 }'),
    ("/v1/airspeed", '{ cas: { value: 250, unit: "kt" }, altitude: 10000, isa_deviation: 0 }'),
    ("/v1/airspeed", '{ cas: { value: 250, unit: "kn" }, altitude: 10000, isa_deviation: 0 }'),
]


def ts_call(call: dict) -> str:
    """One typed call: the example as an object literal, checked against the generated types."""
    options = []
    if call["params"]:
        options.append(f"params: {{ path: {json.dumps(call['params'])} }}")
    if call["body"] is not None:
        options.append(f"body: {json.dumps(call['body'])}")
    args = json.dumps(call["path"]) + (f", {{ {', '.join(options)} }}" if options else "")
    return f"client.{call['method'].upper()}({args})"


def calls_source(base_url: str) -> str:
    lines = [HEADER.replace("BASE_URL", json.dumps(base_url)),
             "async function check(name: string, call: Promise<{ data?: unknown; error?: unknown; "
             "response: Response }>) {",
             "  const { data, error, response } = await call;",
             "  return { name, status: response.status, data: data !== undefined, error: error !== undefined };",
             "}",
             "",
             "const results = [];"]
    for call in OPERATIONS:
        lines.append(f"results.push(await check({json.dumps(_id(call))}, {ts_call(call)}));")
    for n, (path, body) in enumerate(SPELT):
        lines.append(f'results.push(await check("spelt {n}", client.POST({json.dumps(path)}, {{ body: {body} }})));')
    lines += [
        "",
        "// Answers are typed: a physical output is {value, unit}; a problem document has its pointers.",
        'const fl350 = await client.POST("/v1/atmosphere", { body: { altitude: { value: 350, unit: "FL" },'
        ' isa_deviation: 10 } });',
        "const pressure = fl350.data?.pressure;",
        'results.push({ name: "typed answer", status: fl350.response.status,',
        '               data: typeof pressure?.value === "number" && pressure.unit === "hPa", error: false });',
        'const deep = await client.POST("/v1/atmosphere", { body: { altitude: -1e9, isa_deviation: 0 } });',
        'results.push({ name: "typed problem", status: deep.response.status === 422 ? 200 : deep.response.status,',
        '               data: deep.error?.errors?.[0]?.pointer === "/altitude", error: false });',
        "console.log(JSON.stringify(results));",
    ]
    return "\n".join(lines) + "\n"


@pytest.fixture(scope="module")
def ts_calls(ts_project, base_url) -> subprocess.CompletedProcess:
    """calls.ts, compiled with tsc --strict to out/calls.js."""
    (ts_project / "calls.ts").write_text(calls_source(base_url), encoding="utf-8")
    return tsc(ts_project, ["calls.ts"], emit=True)


def test_typescript_client_compiles_strict_and_calls_every_endpoint(ts_project, ts_calls):
    assert ts_calls.returncode == 0, ts_calls.stdout[-5000:] + ts_calls.stderr[-2000:]
    done = run(["node", str(ts_project / "out" / "calls.js")], cwd=ts_project)
    assert done.returncode == 0, done.stderr[-3000:]
    results = json.loads(done.stdout)
    expected = [*map(_id, OPERATIONS), *(f"spelt {n}" for n in range(len(SPELT))), "typed answer", "typed problem"]
    assert [r["name"] for r in results] == expected
    failed = [r for r in results if (r["status"], r["data"], r["error"]) != (200, True, False)]
    assert not failed, failed


def test_a_misspelt_unit_does_not_compile_in_typescript(ts_project, ts_calls):
    assert ts_calls.returncode == 0, "the same requests spelt right (SPELT) must compile"
    header = HEADER.replace("BASE_URL", json.dumps("http://127.0.0.1:1"))
    lines = [f"await client.POST({json.dumps(path)}, {{ body: {body} }});" for path, body in MISSPELT.values()]
    (ts_project / "misspelt.ts").write_text(header + "\n".join(lines) + "\n", encoding="utf-8")
    first = HEADER.count("\n") + 1  # the line of the first call
    done = tsc(ts_project, ["misspelt.ts"], emit=False)
    assert done.returncode != 0
    errors = [line for line in done.stdout.splitlines() if re.match(r"misspelt\.ts\(\d+,\d+\): error TS", line)]
    lines_with_errors = {int(re.match(r"misspelt\.ts\((\d+),", e).group(1)) for e in errors}
    assert lines_with_errors == set(range(first, first + len(MISSPELT))), done.stdout[-5000:]


# --- The README's client examples, as written ---

README = REPO / "README.md"


def readme_blocks(language: str) -> list[str]:
    """The ``language`` code blocks of the README's "Typed clients" paragraph."""
    text = README.read_text(encoding="utf-8")
    section = text[text.index("**Typed clients.**"):text.index("Other languages")]
    return re.findall(rf"```{language}\n(.*?)```", section, flags=re.S)


def test_the_readme_python_client_example_runs(python_client, base_url, capsys):
    (block,) = readme_blocks("python")
    assert "http://localhost:8080" in block
    exec(compile(block.replace("http://localhost:8080", base_url), "README.md", "exec"), {})  # noqa: S102
    mach, tas, unit = capsys.readouterr().out.split()
    # 250 kt CAS at FL240, ISA+12: the README's cookbook gives Mach 0.591744 and 366.487 kt TAS
    assert (mach[:6], tas[:6], unit) == ("0.5917", "366.48", "kt")


def test_the_readme_typescript_client_example_compiles(ts_project):
    (block,) = readme_blocks("ts")
    (ts_project / "readme.ts").write_text(block, encoding="utf-8")
    # as in an app built with a bundler: imports without extensions
    args = [str(CACHE / "node_modules" / ".bin" / "tsc"), "--strict", "--target", "es2022", "--module", "esnext",
            "--moduleResolution", "bundler", "--lib", "es2022,dom", "--pretty", "false", "--noEmit", "readme.ts"]
    done = run(args, cwd=ts_project)
    assert done.returncode == 0, done.stdout[-3000:]
