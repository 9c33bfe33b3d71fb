"""Small helpers shared by the API tests."""

import gc
import json
import math
import re
import sys
from collections import Counter

PROBLEM = "application/problem+json"


def post(client, path, body, headers=None):
    """POST ``body`` as JSON."""
    return client.post(path, data=json.dumps(body), content_type="application/json", headers=headers or {})


def assert_problem(response, status, pointer=None):
    """The response is a problem document with ``status`` (and an error at ``pointer``)."""
    assert response.status_code == status, response.get_data(as_text=True)
    assert response.mimetype == PROBLEM
    doc = json.loads(response.get_data(as_text=True), parse_constant=_refuse)
    assert doc["status"] == status
    assert doc["type"].startswith("/problems/")
    assert doc["title"] and doc["detail"]
    if pointer is not None:
        pointers = [e["pointer"] for e in doc.get("errors", [])]
        assert pointer in pointers, pointers
    return doc


def _refuse(name):
    raise AssertionError(f"{name} in a JSON body")


def count_calls(fn) -> int:
    """Python-level function calls made while running fn()."""
    calls = 0

    def profile(frame, event, arg):
        nonlocal calls
        if event == "call":
            calls += 1

    # gc callbacks are not the request path, and their count follows the allocations (hypothesis installs one
    # to time the collector once any property test has run in this process): leave them out while counting.
    callbacks, gc.callbacks[:] = gc.callbacks[:], []
    sys.setprofile(profile)
    try:
        fn()
    finally:
        sys.setprofile(None)
        gc.callbacks[:] = callbacks
    return calls


def spy(monkeypatch, module, *names) -> Counter:
    """Count the calls of ``module.<name>`` for each of ``names`` (the original still runs).

    A test that something is not computed asserts the count is zero, and then asks for it and asserts the
    count grew: should the code stop calling it through ``module`` (a moved import, say), the second half
    fails, instead of the first passing for the wrong reason.
    """
    calls: Counter = Counter()
    for name in names:
        original = getattr(module, name)

        def counted(*args, _name=name, _original=original, **kwargs):
            calls[_name] += 1
            return _original(*args, **kwargs)

        monkeypatch.setattr(module, name, counted)
    return calls


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
