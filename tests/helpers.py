"""Small helpers shared by the API tests."""

import gc
import json
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
