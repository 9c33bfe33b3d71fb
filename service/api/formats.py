"""The answer's formats: the one the client accepts (406 for none), and the CSV body from the writer's columns.

JSON is the default (for ``*/*`` and the common Accept headers, answered without parsing them); CSV, an Arrow
IPC stream and Parquet on request. api.outputs hands over the same columns to :func:`csv_body` here and to
api.arrow for Arrow and Parquet.
"""

from __future__ import annotations

import numpy as np
import orjson
from flask import request
from werkzeug.datastructures import MIMEAccept

from service.api import arrow
from service.api.arrow import Column
from service.api.problems import Problem, echo

CSV = "text/csv"


def csv_body(columns: list[Column]) -> bytes:
    """The CSV answer: a header line (``name [unit]``), then one row per point; null (NaN) as an empty cell."""
    header = ",".join(_csv_text(arrow.header(c.name, c.unit)) for c in columns).encode()
    values = [c.values for c in columns]
    # The rows are written by orjson as one JSON array of arrays ([[1.0,2.5],[...]]), in C: strip the outer
    # brackets, turn "],[" into line breaks and null (NaN) into an empty cell. No number or label holds
    # any of those byte sequences.
    if all(v.dtype.kind == "f" for v in values):
        text = orjson.dumps(np.column_stack(values) if values else np.empty((0, 0)), option=orjson.OPT_SERIALIZE_NUMPY)
    else:
        text = orjson.dumps(list(zip(*(v.tolist() for v in values), strict=False)))
    return header + b"\r\n" + text[2:-2].replace(b"],[", b"\r\n").replace(b"null", b"") + b"\r\n"


def _csv_text(name: str) -> str:
    return f'"{name}"' if ("," in name or '"' in name) else name


#: Accept headers that mean JSON, answered without parsing (curl, browsers' fetch, most clients).
_JSON_ACCEPTS = frozenset({"", "*/*", "application/json", "application/json, */*", "application/problem+json"})

#: The answer's media types, JSON first (the default for */*).
ANSWER_MEDIA_TYPES = ("application/json", CSV, arrow.ARROW_STREAM, arrow.PARQUET)


def _without_utf8(value: str) -> str:
    """An Accept entry without a ``charset=utf-8`` parameter: every answer is UTF-8, so it is met."""
    main, *params = (part.strip() for part in value.split(";"))
    kept = [p for p in params if p.replace(" ", "").lower() != "charset=utf-8"]
    return "; ".join([main, *kept])


def answer_media_type() -> str:
    """The answer's media type: the client's preferred one of ANSWER_MEDIA_TYPES; 406 if it accepts none.

    The header is parsed by werkzeug (parameters, q-values, wildcards, lists); ``charset=utf-8`` is
    dropped from each entry first (werkzeug matches parameters exactly, and the text answers are UTF-8).
    """
    header = request.environ.get("HTTP_ACCEPT")
    if header is None or header in _JSON_ACCEPTS:  # the common cases, without parsing the header
        return ANSWER_MEDIA_TYPES[0]
    accept = request.accept_mimetypes
    if not accept:
        return ANSWER_MEDIA_TYPES[0]
    accept = MIMEAccept([(_without_utf8(value), quality) for value, quality in accept])
    best = accept.best_match(ANSWER_MEDIA_TYPES)
    if best is None:
        offered = ", ".join(ANSWER_MEDIA_TYPES)
        raise Problem("not-acceptable", f"This endpoint answers {offered} (text in UTF-8); Accept was "
                                        f"{echo(request.headers.get('Accept'))}.",
                      extra={"acceptable": list(ANSWER_MEDIA_TYPES)})
    return best
