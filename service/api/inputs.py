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

from service.api.fields import Number, OutputUnits, Value
from service.api.problems import Problem, flatten_messages, invalid, pointer
from service.api.rules import RuleSchema

JSON_MEDIA_TYPES = ("application/json",)


def _reject_constant(name):
    raise ValueError(f"{name} is not valid JSON")


def decode_json(body: bytes):
    """Decode a JSON body strictly (no NaN/Infinity); Problem 400 when it is not JSON.

    orjson refuses numbers beyond the float range; the standard library reads them as
    infinity, which the fields then refuse with a pointer (a 422, not a 400).
    """
    try:
        return orjson.loads(body)
    except orjson.JSONDecodeError as first:
        try:
            return json.loads(body, parse_constant=_reject_constant)
        except ValueError as err:
            message = str(err) if "not valid JSON" in str(err) else str(first)
            raise Problem("malformed-json", f"The body is not valid JSON: {message}.") from None


def read_json_object() -> dict:
    """The request body as a dict, after the content-type, size and syntax checks."""
    mimetype = request.mimetype
    if mimetype not in JSON_MEDIA_TYPES and not mimetype.endswith("+json"):
        shown = mimetype or "none"
        raise Problem("unsupported-media-type",
                      f"Content-Type is {shown}; send the body as JSON with 'Content-Type: application/json'.")
    limit = current_app.config["QBAR_MAX_BODY_BYTES"]
    length = request.content_length
    if length is not None and length > limit:
        raise Problem("payload-too-large",
                      f"The body has {length} bytes; the limit is {limit} bytes (QBAR_MAX_BODY_BYTES).",
                      extra={"limit": limit})
    if length is not None:
        # One read of the declared length straight from the server's input: werkzeug's stream
        # wrapper would read in 64 KiB chunks, a Python call per chunk.
        body = request.environ["wsgi.input"].read(length)
    else:
        body = request.get_data(cache=True)
    if len(body) > limit:
        raise Problem("payload-too-large",
                      f"The body is over the limit of {limit} bytes (QBAR_MAX_BODY_BYTES).", extra={"limit": limit})
    if not body.strip():
        raise Problem("malformed-json", "The body is empty: send a JSON object.")
    data = decode_json(body)
    if type(data) is not dict:
        raise invalid([{"pointer": "", "message": "The body must be a JSON object."}])
    return data


def _length(raw) -> int:
    """Number of points a raw (unparsed) input contributes: an array's length, else 1."""
    if type(raw) is list:
        return len(raw)
    if type(raw) is dict and type(raw.get("value")) is list:
        return len(raw["value"])
    return 1


def count_points(data: dict, axes: tuple[str, ...]) -> int:
    """The number of points a request asks for: the longest array, or the grid's product."""
    lengths = [_length(data[name]) for name in axes if name in data]
    if not lengths:
        return 1
    if data.get("grid") is True:
        return int(np.prod([n for n in lengths if n > 0], dtype=np.float64))
    return max(lengths)


def check_point_limit(points: int) -> None:
    limit = current_app.config["QBAR_MAX_POINTS"]
    if points > limit:
        raise Problem("payload-too-large",
                      f"The request asks for {points} points; the limit is {limit} points per request "
                      "(QBAR_MAX_POINTS).", extra={"limit": limit})


class StrictBoolean(ma.fields.Boolean):
    """JSON true or false only (marshmallow's Boolean also takes 0, 1, "yes", ...)."""

    def _deserialize(self, value, attr, data, **kwargs):
        if type(value) is not bool:
            raise self.make_error("invalid", input=value)
        return value


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

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        #: The numeric top-level inputs, in field order: the grid's axes, first varying slowest.
        self.AXES = tuple(name for name, field in self.fields.items() if isinstance(field, Number))
        self._plain_fields = all(f.data_key is None and f.attribute is None for f in self.load_fields.values())

    def _deserialize(self, data, *, error_store, many=False, partial=None, unknown=ma.RAISE, index=None):
        """marshmallow's field loop, lean for the one case a request body is (one flat object):
        an absent optional field without a default costs nothing. Anything else: marshmallow's own."""
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
            for (name, v), g in zip(arrays, grids, strict=False):
                self.data[name] = v._replace(si=g.ravel())
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
                data = read_json_object()
                check_point_limit(count_points(data, axes))
                try:
                    loaded = schema.load(data)
                except ma.ValidationError as err:
                    raise invalid(flatten_messages(err.messages)) from None
                return func(loaded, *args, **kw)

            return wrapper

        return decorator


__all__ = ["BodyParser", "ComputeSchema", "Inputs", "Number", "OutputUnits", "outputs_field"]
