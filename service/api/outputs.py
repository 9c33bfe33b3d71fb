"""Writing a compute answer: unit conversion, warnings, JSON (orjson) or CSV.

An endpoint fills a :class:`Result` with SI arrays; the Result converts each to the
caller's unit once and serialises the arrays directly (orjson's NumPy support), so the
cost does not grow with a Python call per point. Values that do not exist are NaN in
the arrays and ``null`` in the answer, each with a warning naming the field.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
import orjson
from flask import Response, g, request

from service import units
from service.api import arrow
from service.api.arrow import Column
from service.api.fields import any_true
from service.api.inputs import Inputs, first_indices, no_solution
from service.api.problems import Problem

_JSON_OPTIONS = orjson.OPT_SERIALIZE_NUMPY
CSV_MEDIA_TYPE = "text/csv"


class Leaf(NamedTuple):
    """One output: SI values and their dimension (None for dimensionless, booleans, labels)."""

    si: object
    dimension: str | None = None


def unit_for(dimension: str, chosen: dict) -> str:
    """The output unit of ``dimension``: the caller's choice or the default."""
    if dimension == "weight":
        dimension = "force"
    return chosen.get(dimension) or units.DIMENSIONS[dimension].default


def _output_dimension(dimension: str | None) -> str | None:
    return "force" if dimension == "weight" else dimension


def _plain(values, shape):
    """A JSON-ready value: Python scalar for 0-d, NumPy array (or list of str) otherwise."""
    array = np.asarray(values)
    if shape == ():
        return array.item() if array.ndim == 0 else array.reshape(()).item()
    if array.shape != shape:
        array = np.broadcast_to(array, shape)
    if array.dtype.kind in "US":
        return array.tolist()
    if array.dtype.kind == "f" and not array.flags.c_contiguous:
        array = np.ascontiguousarray(array)
    if not array.flags.c_contiguous:
        array = np.ascontiguousarray(array)
    return array


class Result:
    """The outputs of one request, in order, with warnings and (for grids) the inputs."""

    def __init__(self, inputs: Inputs):
        self.inputs = inputs
        self.shape = inputs.arrange()
        g.points = math.prod(self.shape)  # for the access log and the points-computed metric
        self.tree: dict = {}
        self.warnings: list[dict] = []
        self._null_masks: dict[str, object] = {}  # output -> where null_where made it null

    def wants(self, name: str) -> bool:
        return self.inputs.wants(name)

    def add(self, name: str, si, dimension: str | None = None):
        """Add output ``name`` (SI values); ``dimension`` None for a bare number."""
        self.tree[name] = Leaf(si, dimension)

    def add_tree(self, name: str, tree):
        """Add a nested output: a dict (or list of dicts) of Leafs."""
        self.tree[name] = tree

    def null_where(self, field: str, values, message: str, mask=None):
        """NaN -> null with a warning for ``field`` where ``mask`` (default: where NaN)."""
        values = np.asarray(values, dtype=float)
        if mask is None:
            mask = np.isnan(values)
        mask = np.asarray(mask)
        if any_true(mask):
            if mask.shape != values.shape:
                values = np.array(np.broadcast_to(values, np.broadcast_shapes(values.shape, mask.shape)))
            else:
                values = values.copy()
            values[mask] = np.nan
            self.warn(field, message, mask)
            previous = self._null_masks.get(field)
            self._null_masks[field] = mask if previous is None else previous | mask
        return values

    def warn(self, field: str, message: str, mask=None):
        entry = {"field": field, "message": message}
        if mask is not None:
            mask = np.broadcast_to(np.asarray(mask), self.shape) if self.shape else np.asarray(mask)
            entry["count"] = int(np.count_nonzero(mask))
            entry["indices"] = first_indices(mask)
        else:
            entry["count"] = math.prod(self.shape)
            entry["indices"] = []
        self.warnings.append(entry)

    # --- rendering ---------------------------------------------------------------------------

    def _render(self, node, path: str = "", check: bool = True):
        if isinstance(node, Leaf):
            if self.shape == ():
                rendered = self._render_scalar(node)
                if check:
                    self._check_finite(path, rendered["value"] if type(rendered) is dict else rendered)
                return rendered
            if node.dimension is None:
                rendered = _plain(node.si, self.shape)
                if check:
                    self._check_finite(path, rendered)
                return rendered
            unit = unit_for(node.dimension, self.inputs.output_units)
            value = _plain(units.from_si(node.si, _output_dimension(node.dimension), unit), self.shape)
            if check:
                self._check_finite(path, value)
            return {"value": value, "unit": unit}
        if isinstance(node, dict):
            return {key: self._render(value, f"{path}.{key}" if path else key, check) for key, value in node.items()}
        if isinstance(node, (list, tuple)):
            return [self._render(value, f"{path}.{index}", check) for index, value in enumerate(node)]
        return node

    def _check_finite(self, path: str, value):
        """A 422 (no solution) where an output is not a finite number and no null_where made it null.

        The physics gives NaN where a relation has no solution and infinity where a result
        overflows; an endpoint turns each into a 422 or a null with a warning. This catches what
        it did not foresee, so that no null ever appears without a warning (orjson writes NaN and
        infinity as null).
        """
        kind = type(value)
        if kind is float:
            if value - value == 0.0:
                return
            bad = np.True_
        elif kind is np.ndarray and value.dtype.kind == "f":
            bad = ~np.isfinite(value)
            if not bad.any():
                return
        else:
            return
        for field, mask in self._null_masks.items():
            if path == field or path.startswith(field + "."):
                bad = bad & ~np.broadcast_to(mask, np.shape(bad))
        if np.any(bad):
            top = path.split(".", 1)[0]
            raise no_solution(top, bad, f"{path} is not a finite number here (beyond the floating-point range, "
                                        "or outside the domain of the relations).")

    def _render_scalar(self, node: Leaf):
        """One point: plain Python arithmetic, no NumPy call per output."""
        value = node.si.item() if hasattr(node.si, "item") else node.si
        if node.dimension is None:
            return value
        dimension = _output_dimension(node.dimension)
        unit = unit_for(dimension, self.inputs.output_units)
        u = units.DIMENSIONS[dimension].units[unit]
        if value is not None and (u.factor != 1.0 or u.offset):
            value = (value - u.offset) / u.factor
        return {"value": value, "unit": unit}

    def input_leaves(self) -> dict:
        """Every numeric input at every point, as outputs."""
        out = {}
        for name in self.inputs.axes:
            v = self.inputs.data.get(name)
            if v is None or not hasattr(v, "si"):
                continue
            out[name] = Leaf(v.si, v.dimension)
        return out

    def document(self) -> dict:
        doc = self._render(self.tree)
        doc["warnings"] = self.warnings
        if self.inputs.grid:
            doc["inputs"] = self._render(self.input_leaves(), check=False)
        return doc

    def json_response(self) -> Response:
        body = orjson.dumps(self.document(), option=_JSON_OPTIONS)
        return Response(body, status=200, content_type="application/json")

    def _columns(self) -> list[Column]:
        """Every leaf as a column: inputs first (``input.<name>``), then outputs, dotted names."""
        columns = []

        def walk(prefix, node, check=True):
            if isinstance(node, Leaf):
                if node.dimension is None:
                    value = _plain(node.si, self.shape or (1,))
                    unit = None
                else:
                    unit = unit_for(node.dimension, self.inputs.output_units)
                    value = _plain(units.from_si(node.si, _output_dimension(node.dimension), unit), self.shape or (1,))
                if check:
                    self._check_finite(prefix, value)
                columns.append(Column(prefix, unit, value, self._null_mask(prefix)))
            elif isinstance(node, dict):
                for key, value in node.items():
                    walk(f"{prefix}.{key}" if prefix else key, value)
            elif isinstance(node, (list, tuple)):
                for index, value in enumerate(node):
                    walk(f"{prefix}.{index}", value)

        for name, leaf in self.input_leaves().items():
            walk(f"input.{name}", leaf, check=False)
        walk("", self.tree)
        return columns

    def _null_mask(self, path: str):
        """Where null_where made output ``path`` null (None: nowhere)."""
        masks = [mask for field, mask in self._null_masks.items() if path == field or path.startswith(field + ".")]
        if not masks:
            return None
        return np.logical_or.reduce(masks) if len(masks) > 1 else masks[0]

    def csv_response(self) -> Response:
        columns = self._columns()
        header = ",".join(_csv_text(arrow.header(c.name, c.unit)) for c in columns).encode()
        values = [np.asarray(c.values) for c in columns]
        if all(v.dtype.kind == "f" for v in values):
            table = np.column_stack(values) if values else np.empty((0, 0))
            text = orjson.dumps(table, option=_JSON_OPTIONS)
        else:
            rows = list(zip(*(v.tolist() for v in values), strict=False))
            text = orjson.dumps(rows)
        body = text[2:-2].replace(b"],[", b"\r\n").replace(b"null", b"")
        body = header + b"\r\n" + body + b"\r\n"
        response = Response(body, status=200, content_type="text/csv; charset=utf-8")
        if self.warnings:
            response.headers["X-Warnings"] = str(len(self.warnings))
        return response

    def columnar_response(self, media_type: str) -> Response:
        """The answer as an Arrow IPC stream or Parquet file (api.arrow): the CSV's columns, with nulls,
        units in field metadata and the warnings in the schema metadata."""
        response = Response(arrow.body(media_type, self._columns(), self.warnings), status=200,
                            content_type=media_type)
        if self.warnings:
            response.headers["X-Warnings"] = str(len(self.warnings))
        return response

    def response(self) -> Response:
        """The answer in the format the client accepts (JSON unless another is preferred)."""
        media_type = answer_media_type()
        if media_type == CSV_MEDIA_TYPE:
            return self.csv_response()
        if media_type in arrow.WRITERS:
            return self.columnar_response(media_type)
        return self.json_response()


def _csv_text(name: str) -> str:
    return f'"{name}"' if ("," in name or '"' in name) else name


#: Accept headers that mean JSON, answered without parsing (curl, browsers' fetch, most clients).
_JSON_ACCEPTS = frozenset({"", "*/*", "application/json", "application/json, */*", "application/problem+json"})

#: The answer's media types, JSON first (the default for */*).
ANSWER_MEDIA_TYPES = ("application/json", CSV_MEDIA_TYPE, arrow.ARROW_STREAM, arrow.PARQUET)


def answer_media_type() -> str:
    """The answer's media type: the client's preferred one of ANSWER_MEDIA_TYPES; 406 if it accepts none."""
    header = request.environ.get("HTTP_ACCEPT")
    if header is None or header in _JSON_ACCEPTS:  # the common cases, without parsing the header
        return ANSWER_MEDIA_TYPES[0]
    accept = request.accept_mimetypes
    if not accept:
        return ANSWER_MEDIA_TYPES[0]
    best = accept.best_match(ANSWER_MEDIA_TYPES)
    if best is None:
        raise Problem("not-acceptable", f"This endpoint answers {', '.join(ANSWER_MEDIA_TYPES)}; "
                                        f"Accept was {request.headers.get('Accept')!r}.")
    return best
