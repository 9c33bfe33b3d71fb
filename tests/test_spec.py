"""The committed OpenAPI spec matches the code, validates, and carries the caution."""

import json
import math
import re
from pathlib import Path

from openapi_spec_validator import validate

from service.cli import SPEC_PATH, spec_text

ROOT = Path(__file__).resolve().parent.parent


#: The spec's examples are answers computed on the machine that ran `qbar spec`; NumPy picks its
#: exp/log/power kernels by CPU (SIMD paths), so their last bit or two may differ from machine to
#: machine. Numbers are compared to this relative tolerance, everything else exactly.
LAST_DIGITS = 1e-12
_NUMBER = re.compile(r"-?[0-9]+(?:\.[0-9]+)?(?:[eE][-+]?[0-9]+)?")


def _same_text(a: str, b: str) -> bool:
    """Strings equal but for the last digits of the numbers in them (CSV examples)."""
    if a == b:
        return True
    if _NUMBER.sub("#", a) != _NUMBER.sub("#", b):
        return False
    return all(math.isclose(float(x), float(y), rel_tol=LAST_DIGITS, abs_tol=1e-300)
               for x, y in zip(_NUMBER.findall(a), _NUMBER.findall(b), strict=True))


def differences(a, b, path="") -> list[str]:
    """Where two JSON documents differ, numbers compared to LAST_DIGITS."""
    if isinstance(a, dict) and isinstance(b, dict):
        if list(a) != list(b):
            return [f"{path}: keys {list(a)} != {list(b)}"]
        return [d for key in a for d in differences(a[key], b[key], f"{path}/{key}")]
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [f"{path}: length {len(a)} != {len(b)}"]
        return [d for i, (x, y) in enumerate(zip(a, b, strict=True)) for d in differences(x, y, f"{path}/{i}")]
    if type(a) in (int, float) and type(b) in (int, float) and type(a) is type(b):
        return [] if math.isclose(a, b, rel_tol=LAST_DIGITS, abs_tol=1e-300) else [f"{path}: {a} != {b}"]
    if isinstance(a, str) and isinstance(b, str):
        return [] if _same_text(a, b) else [f"{path}: {a[:80]!r} != {b[:80]!r}"]
    return [] if a == b and type(a) is type(b) else [f"{path}: {a!r} != {b!r}"]


def test_differences_sees_real_changes():
    assert differences({"a": [1.0, "x,2.5"]}, {"a": [1.0 + 1e-15, "x,2.5000000000000004"]}) == []
    assert differences({"a": 1.0}, {"a": 1.001}) and differences({"a": "x,2.5"}, {"a": "y,2.5"})
    assert differences({"a": 1}, {"a": 1.0}) and differences({"a": 1, "b": 2}, {"b": 2, "a": 1})


def test_committed_spec_is_current():
    committed = (ROOT / SPEC_PATH).read_text(encoding="utf-8")
    generated = spec_text()
    if committed != generated:
        found = differences(json.loads(committed), json.loads(generated))
        assert not found, "openapi/openapi.json is stale: run `qbar spec` and commit it; " + "; ".join(found[:5])


def test_spec_validates():
    validate(json.loads(spec_text()))


def test_spec_served_matches_file(client):
    served = client.get("/openapi.json").json
    assert not differences(served, json.loads((ROOT / SPEC_PATH).read_text(encoding="utf-8")))


def test_caution_in_info():
    info = json.loads(spec_text())["info"]["description"]
    assert "not certified for flight planning" in info
    assert "approved flight manual" in info and "local regulations govern" in info


def test_every_operation_has_summary_and_tag():
    spec = json.loads(spec_text())
    for path, item in spec["paths"].items():
        for method, op in item.items():
            if method == "parameters":
                continue
            assert op.get("summary"), (path, method)
            assert op.get("tags"), (path, method)


def test_errors_are_problem_documents():
    spec = json.loads(spec_text())
    for name, response in spec["components"]["responses"].items():
        assert list(response["content"]) == ["application/problem+json"], name
