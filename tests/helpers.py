"""Small helpers shared by the API tests."""

import gc
import json
import sys

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
