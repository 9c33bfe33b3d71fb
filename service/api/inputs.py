"""Reading a compute request: body checks, schema load, broadcasting and grids.

Checks run cheapest first: body size, JSON syntax, point count, then the schema (types,
units, ranges). The parser plugs into flask-smorest as its ARGUMENTS_PARSER, so the
same schema documents the request in the spec and parses it here.
"""

from __future__ import annotations

import json
from functools import wraps

import marshmallow as ma
import numpy as np
import orjson
from flask import current_app, request

from service.api import ranges, tables
from service.api.fields import Number, OutputUnits, Value
from service.api.problems import Problem, echo, escape_pointer_token, flatten_messages, invalid, pointer
from service.api.rules import RuleSchema

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
    mimetype = request.mimetype
    if mimetype not in BODY_MEDIA_TYPES and not mimetype.endswith("+json"):
        shown = mimetype or "none"
        raise Problem("unsupported-media-type",
                      f"Content-Type is {echo(shown)}; send the body as JSON with 'Content-Type: application/json' "
                      f"(or a table as {' or '.join(tables.TABLE_MEDIA_TYPES)}).")
    charset = request.mimetype_params.get("charset")
    if mimetype == tables.CSV and charset is not None and charset.lower().replace("-", "") != "utf8":
        raise Problem("unsupported-media-type", f"A CSV body is read as UTF-8; charset {echo(charset)} is not.")
    limit = current_app.config["QBAR_MAX_BODY_BYTES"]
    length = request.content_length
    if length is not None and length > limit:
        raise Problem("payload-too-large",
                      f"The body has {length} bytes; the limit is {limit} bytes (QBAR_MAX_BODY_BYTES).",
                      extra={"limit": limit}, headers=CLOSE)
    stream = request.environ["wsgi.input"]
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


class StrictBoolean(ma.fields.Boolean):
    """JSON true or false only (marshmallow's Boolean also takes 0, 1, "yes", ...)."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not bool:
            raise self.make_error("invalid", input=value)
        return value


class WholeNumber(ma.fields.Integer):
    """An integer as JSON Schema has it: 3 or 3.0, never true or "3"."""

    def __init__(self, **kwargs):
        super().__init__(strict=True, **kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is float and value.is_integer():
            value = int(value)
        return super()._deserialize(value, attr, data, **kwargs)


class ComputeSchema(RuleSchema):
    """Base of every compute request: output units, output selection, grid.

    Subclasses list their outputs in ``OUTPUTS`` ({name: (dimension or None, description)}, in the
    answer's order; or a tuple of names when they are nested) and their rules in ``RULES``
    (api.rules); every numeric top-level field is an axis of the grid, in field order.
    """

    class Meta:
        unknown = ma.RAISE
        ordered = True

    OUTPUTS: dict | tuple[str, ...] = ()

    def points_worth(self, data: dict, points: int) -> tuple[int, str]:
        """What the point limit counts for a raw (not yet loaded) request of ``points`` points, and how it
        was counted (for the 413; "" for the plain count). One row of the answer per point, unless a schema
        whose answer has more rows per point says otherwise (lift.stall: its speed factors)."""
        return points, ""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        #: The numeric top-level inputs, in field order: the grid's axes, first varying slowest.
        self.AXES = tuple(name for name, field in self.fields.items() if isinstance(field, Number))
        self._plain_fields = all(f.data_key is None and f.attribute is None for f in self.load_fields.values())

    def _deserialize(self, data, *, error_store, many=False, partial=None, unknown=ma.RAISE, index=None):
        """marshmallow's field loop, lean for the one case a request body is (one flat object):
        an absent optional field without a default costs nothing. Anything else: marshmallow's own.

        marshmallow has no public hook for its field loop; this override of a private method pays on the
        single-point path (about 40 % of a schema load). tests/test_fields.py pins that it loads and refuses
        exactly what marshmallow's own loop does."""
        if many or partial is not None or type(data) is not dict or not self._plain_fields:
            return super()._deserialize(data, error_store=error_store, many=many, partial=partial,
                                        unknown=unknown, index=index)
        loaded = {}
        for name, field in self.load_fields.items():
            raw = data.get(name, ma.missing)
            if raw is ma.missing and not field.required and field.load_default is ma.missing:
                continue
            try:
                value = field.deserialize(raw, name, data)
            except ma.ValidationError as err:
                error_store.store_error(err.messages, name)
                continue
            if value is not ma.missing:
                loaded[name] = value
        if unknown == ma.RAISE:
            for key in data.keys() - self.load_fields.keys():
                error_store.store_error([self.error_messages["unknown"]], key)
        return loaded

    output_units = OutputUnits(metadata={
        "description": "Units of the outputs, by dimension (keys as GET /v1/units lists them, for example "
                       "{\"altitude\": \"m\", \"speed\": \"km/h\"}); each dimension not named uses its default unit.",
        "example": {"altitude": "m", "speed": "km/h"},
    })
    grid = StrictBoolean(load_default=False, metadata={
        "description": "false (default): array inputs are broadcast point by point (equal lengths, or length 1). "
                       "true: the outer product of the array inputs, flattened with the first-listed axis "
                       "varying slowest; the answer then carries `inputs`, every input at every point.",
        "example": True,
    })

    significant_digits = WholeNumber(validate=ma.validate.Range(1, 17), metadata={
        "description": "Round every number of the answer to this many significant digits (1 to 17), for people "
                       "to read: with 6, 15 degC reads 59 degF and not 58.999999999999986. Default: full "
                       "precision (the nearest double), for machines.",
        "example": 6,
    })

    @ma.post_load
    def _to_request(self, data, **kwargs):
        return Inputs(data, self.AXES, self.OUTPUTS)


def outputs_field(names) -> ma.fields.List:
    """The ``outputs`` selection field for a schema whose outputs are ``names`` (enum and minItems in the spec)."""
    names = tuple(names)
    valid = ", ".join(names)
    return ma.fields.List(
        ma.fields.String(validate=ma.validate.OneOf(names, error=f"Unknown output {{input!r}}; valid: {valid}.")),
        validate=ma.validate.Length(min=1, error="Name at least one output."),
        metadata={"description": "Only these outputs are computed and returned (default: all). Valid names: "
                                 + valid + ".", "example": list(names[:2])})


class Inputs:
    """A loaded request: the values by field name, broadcast or gridded, and the output choices."""

    def __init__(self, data: dict, axes: tuple[str, ...], outputs: dict | tuple[str, ...]):
        self.output_units: dict = data.pop("output_units", None) or {}
        self.grid: bool = data.pop("grid", False)
        self.significant_digits: int | None = data.pop("significant_digits", None)
        wanted = data.pop("outputs", None)
        self.outputs: tuple[str, ...] = tuple(wanted) if wanted is not None else tuple(outputs)
        #: Output name -> its dimension (None: a bare number), from the schema's OUTPUTS table.
        self.dimensions: dict = {name: spec[0] for name, spec in outputs.items()} if isinstance(outputs, dict) else {}
        self.data = data
        self.axes = axes
        self.shape: tuple[int, ...] = ()
        self._arranged = False

    def __contains__(self, name: str) -> bool:
        return name in self.data

    def get(self, name, default=None):
        return self.data.get(name, default)

    def wants(self, name: str) -> bool:
        return name in self.outputs

    def arrange(self) -> tuple[int, ...]:
        """Broadcast (or grid) the array inputs in place; return the shape of every output."""
        if self._arranged:
            return self.shape
        self._arranged = True
        present = [(name, self.data[name]) for name in self.axes if isinstance(self.data.get(name), Value)]
        arrays = [(name, v) for name, v in present if v.is_array]
        if not arrays:
            self.shape = ()
            return self.shape
        if self.grid:
            grids = np.meshgrid(*(v.si for _, v in arrays), indexing="ij", copy=False)
            # the numbers as given, crossed alike, for the echo (api.outputs writes them as they are)
            given = np.meshgrid(*(v.si if v.given is None else v.given for _, v in arrays), indexing="ij", copy=False)
            for (name, v), g, raw in zip(arrays, grids, given, strict=False):
                self.data[name] = v._replace(si=g.ravel(), given=None if v.given is None else raw.ravel())
            self.shape = (grids[0].size,)
            return self.shape
        sizes = {name: v.size for name, v in arrays}
        n = max(sizes.values())
        wrong = [name for name, size in sizes.items() if size not in (1, n)]
        if wrong:
            longest = next(name for name, size in sizes.items() if size == n)
            errors = [
                {"pointer": pointer(name), "message": f"Array of length {sizes[name]} does not match "
                                                      f"'{longest}' of length {n} (give equal lengths or length 1)."}
                for name in wrong
            ] + [{"pointer": pointer(longest), "message": f"Array of length {n}."}]
            raise invalid(errors, detail="Array lengths differ: " + ", ".join(
                f"{name} has {size}" for name, size in sizes.items()) + "; give equal lengths or length 1.")
        self.shape = (n,)
        return self.shape

    def si(self, name: str, default=None):
        """The SI values of input ``name`` (0-d or 1-D), or ``default`` when absent."""
        v = self.data.get(name)
        if v is None:
            return default
        return v.si

    def given(self, *names: str) -> list[str]:
        return [name for name in names if name in self.data]


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


__all__ = ["BodyParser", "ComputeSchema", "Inputs", "Number", "OutputUnits", "outputs_field"]
