"""Reading a compute request's body, cheapest check first: media type (415), size (413), JSON syntax (400),
a JSON object of bounded structure (422), tables (api.tables), the point count (413), then the schema.

:class:`BodyParser` plugs into flask-smorest as its ARGUMENTS_PARSER (api.base), so the same schema
documents the request in the spec and parses it here.
"""

from __future__ import annotations

import json
from functools import wraps

import marshmallow as ma
import numpy as np
import orjson
from flask import current_app, request

from service.api import ranges, tables
from service.api.problems import Problem, echo, escape_pointer_token, flatten_messages, invalid

JSON_MEDIA_TYPES = ("application/json",)
#: Every media type a compute request body may have: JSON, or a table (api.tables).
BODY_MEDIA_TYPES = (*JSON_MEDIA_TYPES, *tables.TABLE_MEDIA_TYPES)
CLOSE = {"Connection": "close"}  # a body left unread: the connection cannot carry another request


#: JSON nested deeper than this is refused (orjson's own limit; qbar's inputs nest three levels at most).
MAX_JSON_DEPTH = 1024
#: A JSON integer with more digits than this is read as a float (infinity beyond 1.8e308), which the
#: fields refuse with a pointer: Python's int() gives up at 4300 digits, and no input needs 400.
MAX_INT_DIGITS = 400


#: No object in a request body has more members, and no array of strings (``outputs``) more entries:
#: no endpoint takes that many, and refusing them here bounds the work before the schema, which
#: would otherwise check (and answer) each of hundreds of thousands of unknown members one by one.
MAX_MEMBERS = 100


def check_structure(data: dict, where: str = "", depth: int = 0) -> None:
    """422 for an object of more than MAX_MEMBERS members, or an array of strings longer than that.

    Looks at objects only (the body and the objects in it, three levels down) and at each array's
    length and first item, never at the items of a numeric array: its cost does not grow with the
    points.
    """
    if len(data) > MAX_MEMBERS:
        raise invalid([{"pointer": where, "message": f"An object here has at most {MAX_MEMBERS} members; this one has "
                                                     f"{len(data)}."}])
    for key, value in data.items():
        kind = type(value)
        if kind is dict and depth < 3:
            check_structure(value, where + "/" + escape_pointer_token(key), depth + 1)
        elif kind is list and len(value) > MAX_MEMBERS and type(value[0]) is str:
            raise invalid([{"pointer": where + "/" + escape_pointer_token(key),
                            "message": f"An array of strings has at most {MAX_MEMBERS} entries; this one has "
                                       f"{len(value)}."}])


def _reject_constant(name):
    raise ValueError(f"{name} is not valid JSON")


def _parse_int(text: str):
    return int(text) if len(text) <= MAX_INT_DIGITS else float(text)


def _too_deep() -> Problem:
    return invalid([{"pointer": "", "message": f"The body nests arrays or objects deeper than {MAX_JSON_DEPTH} "
                                               "levels; qbar's inputs nest three levels at most."}])


def decode_json(body: bytes):
    """Decode a JSON body strictly (no NaN/Infinity); Problem 400 when it is not JSON.

    orjson refuses numbers beyond the float range; the standard library reads them as
    infinity (integers of any length too, see MAX_INT_DIGITS), which the fields then refuse
    with a pointer (a 422, not a 400). Nesting deeper than MAX_JSON_DEPTH is a 422 whatever the
    parser (the standard library's would end in a RecursionError).
    """
    try:
        return orjson.loads(body)
    except orjson.JSONDecodeError as first:
        if str(first).startswith("depth limit"):
            raise _too_deep() from None
        try:
            return json.loads(body, parse_constant=_reject_constant, parse_int=_parse_int)
        except RecursionError:
            raise _too_deep() from None
        except ValueError as err:
            message = str(err) if "not valid JSON" in str(err) else str(first)
            raise Problem("malformed-json", f"The body is not valid JSON: {message}.") from None


def read_body() -> tuple[bytes, str]:
    """The request body and its media type, after the content-type and size checks.

    The body is read from the server's input straight (one read of the declared length, or of
    one byte over the limit for a chunked body): werkzeug's stream wrapper would read in 64 KiB
    chunks, a Python call per chunk, and cut a chunked body at the limit without a word.
    """
    req = request._get_current_object()  # the request once, not a context lookup per attribute
    mimetype = req.mimetype
    if mimetype not in BODY_MEDIA_TYPES and not mimetype.endswith("+json"):
        shown = mimetype or "none"
        raise Problem("unsupported-media-type",
                      f"Content-Type is {echo(shown)}; send the body as JSON with 'Content-Type: application/json' "
                      f"(or a table as {' or '.join(tables.TABLE_MEDIA_TYPES)}).")
    charset = req.mimetype_params.get("charset")
    if mimetype == tables.CSV and charset is not None and charset.lower().replace("-", "") != "utf8":
        raise Problem("unsupported-media-type", f"A CSV body is read as UTF-8; charset {echo(charset)} is not.")
    limit = current_app.config["QBAR_MAX_BODY_BYTES"]
    length = req.content_length
    if length is not None and length > limit:
        raise Problem("payload-too-large",
                      f"The body has {length} bytes; the limit is {limit} bytes (QBAR_MAX_BODY_BYTES).",
                      extra={"limit": limit}, headers=CLOSE)
    stream = req.environ["wsgi.input"]
    body = stream.read(length if length is not None else limit + 1)
    if len(body) > limit:
        raise Problem("payload-too-large",
                      f"The body is over the limit of {limit} bytes (QBAR_MAX_BODY_BYTES).", extra={"limit": limit},
                      headers=CLOSE)
    return body, mimetype


def read_json_object(body: bytes) -> dict:
    """A JSON body as a dict, after the syntax check."""
    if not body.strip():
        raise Problem("malformed-json", "The body is empty: send a JSON object.")
    data = decode_json(body)
    if type(data) is not dict:
        raise invalid([{"pointer": "", "message": "The body must be a JSON object."}])
    check_structure(data)
    return data


def read_request(schema) -> tuple[dict, tables.Table | None]:
    """The request as the JSON-shaped dict the schema loads, and the table it came from (if any)."""
    body, mimetype = read_body()
    if mimetype in tables.TABLE_MEDIA_TYPES:
        table = tables.read_table(body, mimetype, schema, request.args.items(multi=True),
                                  max_points=current_app.config["QBAR_MAX_POINTS"])
        return table.data, table
    if request.environ.get("QUERY_STRING") and request.args:  # (the environ first: no parsing for the common case)
        names = ", ".join(echo(name) for name in list(request.args)[:5])
        raise invalid([{"pointer": "", "message": f"Query parameters ({names}) are read only with a table body "
                                                  "(text/csv or Arrow); put them in the JSON body."}])
    return read_json_object(body), None


def count_points(data: dict, axes: tuple[str, ...]) -> int:
    """The number of points a request asks for: the longest array, or the grid's product."""
    lengths = [ranges.length(data[name]) for name in axes if name in data]
    if not lengths:
        return 1
    if data.get("grid") is True:
        return int(np.prod([n for n in lengths if n > 0], dtype=np.float64))
    return max(lengths)


def check_point_limit(points: int, counted: str = "") -> None:
    """The 413 when ``points`` (the request's worth, ``counted`` says how when it is not the plain count)
    is over QBAR_MAX_POINTS."""
    limit = current_app.config["QBAR_MAX_POINTS"]
    if points > limit:
        how = f" ({counted})" if counted else ""
        raise Problem("payload-too-large",
                      f"The request asks for {points} points{how}; the limit is {limit} points per request "
                      "(QBAR_MAX_POINTS).", extra={"limit": limit})


class BodyParser:
    """The flask-smorest ARGUMENTS_PARSER: our body checks, then the schema load."""

    DEFAULT_VALIDATION_STATUS = 422

    def use_args(self, schema, location="json", **kwargs):
        if isinstance(schema, type):
            schema = schema()
        axes = getattr(schema, "AXES", ())

        def decorator(func):
            @wraps(func)
            def wrapper(*args, **kw):
                data, table = read_request(schema)
                try:
                    check_point_limit(*schema.points_worth(data, count_points(data, axes)))
                    try:
                        loaded = schema.load(data)
                    except ma.ValidationError as err:
                        raise invalid(flatten_messages(err.messages)) from None
                    del data  # the body's lists of Python floats (32 bytes a number), no longer needed
                    return func(loaded, *args, **kw)
                except Problem as problem:
                    if table is None:
                        raise
                    raise table.locate(problem) from None  # errors located by column and row

            return wrapper

        return decorator
