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
from service.api.inputs import Inputs
from service.api.masks import any_true, first_indices
from service.api.problems import Problem, pointer

_JSON_OPTIONS = orjson.OPT_SERIALIZE_NUMPY
CSV_MEDIA_TYPE = "text/csv"


class Leaf(NamedTuple):
    """One output: SI values and their dimension (None for dimensionless, booleans, labels)."""

    si: object
    dimension: str | None = None


def _written_as(dimension: str) -> str:
    """The dimension an output is written in: a weight (a mass or a force as input) as a force."""
    return "force" if dimension == "weight" else dimension


def unit_for(dimension: str, chosen: dict) -> str:
    """The output unit of ``dimension``: the caller's choice or the default."""
    dimension = _written_as(dimension)
    return chosen.get(dimension) or units.DIMENSIONS[dimension].default


def no_solution(field: str, mask, reason: str) -> Problem:
    """The 422 for a primary result that does not exist at some points."""
    mask = np.asarray(mask)
    count = int(np.count_nonzero(mask))
    where = first_indices(mask)
    at = "" if mask.ndim == 0 else f" at {count} point(s), first indices {where}"
    return Problem("no-solution", f"No {field}{at}: {reason}",
                   errors=[{"pointer": pointer(field), "message": reason}],
                   extra={"field": field, "count": count, "indices": where})


def require(field: str, values, reason: str):
    """``values``, or the no-solution 422 naming ``field`` where they are not finite (a primary result)."""
    bad = ~np.isfinite(values)
    if any_true(bad):
        raise no_solution(field, bad, reason)
    return values


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
        """Add output ``name`` (SI values) of ``dimension`` (default: its dimension in the schema's OUTPUTS)."""
        self.tree[name] = Leaf(si, dimension or self.inputs.dimensions.get(name))

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
        """A warning on ``field`` at the points of ``mask`` (default: every point)."""
        if mask is None:
            count, indices = math.prod(self.shape), []
        else:
            mask = np.broadcast_to(np.asarray(mask), self.shape) if self.shape else np.asarray(mask)
            count, indices = int(np.count_nonzero(mask)), first_indices(mask)
        self.warnings.append({"field": field, "message": message, "count": count, "indices": indices})

    # --- writing: one walk over the outputs, for JSON and CSV -----------------------------------------

    def _walk(self, node, path: str, visit):
        """``node`` with each Leaf replaced by ``visit(path, leaf)``; paths are dotted ("margin.cl_fraction")."""
        if isinstance(node, Leaf):
            return visit(path, node)
        if isinstance(node, dict):
            return {key: self._walk(value, f"{path}.{key}" if path else key, visit) for key, value in node.items()}
        if isinstance(node, (list, tuple)):
            return [self._walk(value, f"{path}.{index}", visit) for index, value in enumerate(node)]
        return node  # a label (solved_for)

    def _values(self, path: str, leaf: Leaf, check: bool = True):
        """(values in the caller's unit, the unit or None): a Python scalar for one point (plain arithmetic,
        no NumPy call per output), else a C-contiguous array of the points."""
        unit = None if leaf.dimension is None else unit_for(leaf.dimension, self.inputs.output_units)
        if self.shape == ():
            value = leaf.si.item() if hasattr(leaf.si, "item") else leaf.si
            if unit is not None:
                u = units.DIMENSIONS[_written_as(leaf.dimension)].units[unit]
                if value is not None and (u.factor != 1.0 or u.offset):
                    value = (value - u.offset) / u.factor
        else:
            si = leaf.si if unit is None else units.from_si(leaf.si, _written_as(leaf.dimension), unit)
            value = np.asarray(si)
            if value.shape != self.shape:
                value = np.broadcast_to(value, self.shape)
            value = value.tolist() if value.dtype.kind in "US" else np.ascontiguousarray(value)
        if check:
            self._check_finite(path, value)
        return value, unit

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
        if any_true(bad):
            top = path.split(".", 1)[0]
            raise no_solution(top, bad, f"{path} is not a finite number here (beyond the floating-point range, "
                                        "or outside the domain of the relations).")

    def _input_leaves(self) -> dict:
        """Every numeric input at every point, as outputs (the grid's ``inputs``; the CSV's first columns)."""
        data = self.inputs.data
        return {name: Leaf(data[name].si, data[name].dimension) for name in self.inputs.axes
                if hasattr(data.get(name), "si")}

    def document(self) -> dict:
        def json_leaf(path, leaf, check=True):
            value, unit = self._values(path, leaf, check)
            return value if unit is None else {"value": value, "unit": unit}

        doc = self._walk(self.tree, "", json_leaf)
        doc["warnings"] = self.warnings
        if self.inputs.grid:
            doc["inputs"] = self._walk(self._input_leaves(), "", lambda path, leaf: json_leaf(path, leaf, False))
        return doc

    def json_response(self) -> Response:
        body = orjson.dumps(self.document(), option=_JSON_OPTIONS)
        return Response(body, status=200, content_type="application/json")

    def csv_response(self) -> Response:
        """Inputs first (``input.<name> [unit]``), then every output under its dotted name."""
        columns = []

        def column(prefix, check):
            def visit(path, leaf):
                value, unit = self._values(prefix + path, leaf, check)
                columns.append((prefix + path if unit is None else f"{prefix}{path} [{unit}]", np.atleast_1d(value)))
            return visit

        self._walk(self._input_leaves(), "", column("input.", False))
        self._walk(self.tree, "", column("", True))
        header = ",".join(_csv_text(name) for name, _ in columns).encode()
        values = [v for _, v in columns]
        # The rows are written by orjson as one JSON array of arrays ([[1.0,2.5],[...]]), in C: strip the outer
        # brackets, turn "],[" into line breaks and null (NaN) into an empty cell. No number or label holds
        # any of those byte sequences.
        if all(v.dtype.kind == "f" for v in values):
            text = orjson.dumps(np.column_stack(values) if values else np.empty((0, 0)), option=_JSON_OPTIONS)
        else:
            text = orjson.dumps(list(zip(*(v.tolist() for v in values), strict=False)))
        body = header + b"\r\n" + text[2:-2].replace(b"],[", b"\r\n").replace(b"null", b"") + b"\r\n"
        response = Response(body, status=200, content_type="text/csv; charset=utf-8")
        if self.warnings:
            response.headers["X-Warnings"] = str(len(self.warnings))
        return response

    def response(self) -> Response:
        """The answer in the format the client accepts (JSON unless text/csv is preferred)."""
        if wants_csv():
            return self.csv_response()
        return self.json_response()


def _csv_text(name: str) -> str:
    return f'"{name}"' if ("," in name or '"' in name) else name


#: Accept headers that mean JSON, answered without parsing (curl, browsers' fetch, most clients).
_JSON_ACCEPTS = frozenset({"", "*/*", "application/json", "application/json, */*", "application/problem+json"})


def wants_csv() -> bool:
    """True when the client's Accept header prefers text/csv over JSON; 406 if it accepts neither."""
    header = request.environ.get("HTTP_ACCEPT")
    if header is None or header in _JSON_ACCEPTS:  # the common cases, without parsing the header
        return False
    accept = request.accept_mimetypes
    if not accept:
        return False
    best = accept.best_match(["application/json", CSV_MEDIA_TYPE])
    if best is None:
        raise Problem("not-acceptable", "This endpoint answers application/json or text/csv; "
                                        f"Accept was {request.headers.get('Accept')!r}.")
    return best == CSV_MEDIA_TYPE
