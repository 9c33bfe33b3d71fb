"""Writing a compute answer: unit conversion, warnings, JSON (orjson), CSV (api.formats), or Arrow and Parquet
(api.arrow).

An endpoint fills a :class:`Result` with SI arrays; the Result converts each to the
caller's unit once and serialises the arrays directly (orjson's NumPy support), so the
cost does not grow with a Python call per point. Values that do not exist are NaN in
the arrays and ``null`` in the answer, each with a warning naming the field.
"""

from __future__ import annotations

import math
from functools import partial
from typing import NamedTuple

import numpy as np
import orjson
from flask import Response, g

from service import units
from service.api import arrow, formats
from service.api.arrow import Column
from service.api.inputs import Inputs
from service.api.masks import any_true, first_indices
from service.api.values import chosen_by, no_solution, refuse_unused_units, round_significant, unit_for

_JSON_OPTIONS = orjson.OPT_SERIALIZE_NUMPY


class Leaf(NamedTuple):
    """One output: SI values and their dimension (None for dimensionless, booleans, labels)."""

    si: object
    dimension: str | None = None
    #: An input echoed: the numbers as the caller gave them, in ``given_unit`` (written as they are, to the
    #: last bit, when that is the output unit of their dimension).
    given: object = None
    given_unit: str | None = None


class Result:
    """The outputs of one request, in order, with warnings and (for grids) the inputs."""

    def __init__(self, inputs: Inputs):
        self.inputs = inputs
        self.shape = inputs.arrange()
        g.points = math.prod(self.shape)  # for the access log and the points-computed metric
        self.tree: dict = {}
        self.warnings: list[dict] = []
        self._warning_masks: dict[str, np.ndarray] = {}  # field -> the points its warning covers (Result.warn)
        self._null_masks: dict[str, object] = {}  # output -> where null_where made it null
        self._units_used: set = set()  # the output_units keys that set the unit of something written
        self._output_units: dict[str, tuple] = {}  # dimension -> (unit name, Unit), for this answer

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
            # a copy, as wide as the mask when the values are narrower (a constant output over varying points)
            values = np.array(np.broadcast_to(values, np.broadcast_shapes(values.shape, mask.shape)))
            values[mask] = np.nan
            self.warn(field, message, mask)
            previous = self._null_masks.get(field)
            self._null_masks[field] = mask if previous is None else previous | mask
        return values

    def warn(self, field: str, message: str, mask=None):
        """A warning on ``field`` at the points of ``mask`` (default: every point). One entry per field: a second
        warning on the same field (another reason) joins the first, its message appended, its points added."""
        mask = np.ones(self.shape, dtype=bool) if mask is None else np.broadcast_to(np.asarray(mask), self.shape)
        entry = next((w for w in self.warnings if w["field"] == field), None)
        if entry is None:
            self._warning_masks[field] = mask
            entry = {"field": field, "message": message}
            self.warnings.append(entry)
        else:
            mask = self._warning_masks[field] = self._warning_masks[field] | mask
            if message not in entry["message"]:
                entry["message"] += " " + message
        entry["count"], entry["indices"] = int(np.count_nonzero(mask)), first_indices(mask)

    # --- writing: one walk over the outputs, for JSON and CSV -----------------------------------------

    def _walk(self, node, path: str, visit):
        """``node`` with each Leaf replaced by ``visit(path, leaf)``; paths are dotted ("margin.cl_fraction")."""
        kind = type(node)
        if kind is Leaf:
            return visit(path, node)
        if kind is dict:
            return {key: self._walk(value, f"{path}.{key}" if path else key, visit) for key, value in node.items()}
        if isinstance(node, (list, tuple)):
            return [self._walk(value, f"{path}.{index}", visit) for index, value in enumerate(node)]
        return node  # a label (solved_for)

    def _leaf(self, path: str, leaf: Leaf, check: bool = True, json: bool = True, rounded: bool = True):
        """One output in the caller's unit: a Python scalar for one point (plain arithmetic, no NumPy call),
        else a C-contiguous array of the points; ``{"value", "unit"}`` for JSON, else ``(values, unit)``.

        An input echoed in its output unit is written as given; ``significant_digits`` rounds."""
        unit, u = (None, None) if leaf.dimension is None else self._output_unit(leaf.dimension)
        source, convert = leaf.si, unit is not None
        if leaf.given is not None and leaf.given_unit == unit:  # an input in its output unit: as given
            source, convert = leaf.given, False
        if self.shape == ():
            value = source.item() if hasattr(source, "item") else source
            if convert and value is not None and (u.factor != 1.0 or u.offset):
                value = (value - u.offset) / u.factor
        else:
            si = units.from_si(source, leaf.dimension, unit) if convert else source
            value = np.asarray(si)
            if value.shape != self.shape:
                value = np.broadcast_to(value, self.shape)
            value = value.tolist() if value.dtype.kind in "US" else np.ascontiguousarray(value)
        if check:
            self._check_finite(path, value)
        digits = self.inputs.significant_digits
        if digits is not None and rounded:
            value = round_significant(value, digits)
        if json:
            return value if unit is None else {"value": value, "unit": unit}
        return value, unit

    def _output_unit(self, dimension: str) -> tuple[str, units.Unit]:
        """``dimension``'s output unit in this answer, (name, Unit), found once (its output_units key noted used)."""
        found = self._output_units.get(dimension)
        if found is None:
            chosen = self.inputs.output_units
            name = unit_for(dimension, chosen)
            self._units_used.add(chosen_by(dimension, chosen))
            found = self._output_units[dimension] = (name, units.DIMENSIONS[dimension].units[name])
        return found

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
        return {name: Leaf(data[name].si, data[name].dimension, data[name].given, data[name].unit)
                for name in self.inputs.axes if hasattr(data.get(name), "si")}

    def document(self) -> dict:
        doc = self._walk(self.tree, "", self._leaf)
        doc["warnings"] = self.warnings
        if self.inputs.grid:
            doc["inputs"] = self._walk(self._input_leaves(), "", partial(self._leaf, check=False))
        return doc

    def json_response(self) -> Response:
        """One point: the document in one orjson call. Arrays: checked, then streamed (:meth:`json_chunks`)."""
        if self.shape == ():
            return Response(orjson.dumps(self.document(), option=_JSON_OPTIONS), status=200,
                            content_type="application/json")
        # Every output converted and checked (and every unit noted) before the first byte: once the answer has
        # begun, a 422 can no longer be sent.
        self._walk(self.tree, "", self._check)
        if self.inputs.grid:
            self._walk(self._input_leaves(), "", partial(self._check, check=False))
        return Response(self.json_chunks(), status=200, content_type="application/json")

    def _check(self, path: str, leaf: Leaf, check: bool = True) -> None:
        """Output ``path`` converted to its unit (the unit noted as used) and checked (a 422), then let go."""
        self._leaf(path, leaf, check, json=False, rounded=False)

    def json_chunks(self):
        """The bytes of ``orjson.dumps(self.document())``, written one output at a time as the server sends them.

        Each output is converted to its unit, written and let go before the next: a large answer is held as
        its arrays only, never also as its text (which is two to three times their size). orjson writes a dict
        as ``{"key":value,...}`` with no space, so the pieces joined are the document's bytes exactly. The
        punctuation and names between two outputs go out as one chunk; the server sends the chunks with
        chunked transfer encoding (the length is known only at the end).
        """
        small = bytearray()
        for piece, large in self._pieces():
            if not large:
                small += piece
                continue
            if small:
                yield bytes(small)
                small.clear()
            yield piece
        if small:
            yield bytes(small)

    def _pieces(self):
        """(bytes, large) of the document in order: ``large`` for an output's numbers."""
        visit = partial(self._leaf, check=False)  # checked before (json_response)
        yield b"{", False
        for key, node in self.tree.items():
            yield orjson.dumps(key) + b":", False
            yield from self._node_pieces(node, key, visit)
            yield b",", False
        yield b'"warnings":' + orjson.dumps(self.warnings), False
        if self.inputs.grid:
            yield b',"inputs":', False
            yield from self._node_pieces(self._input_leaves(), "", visit)
        yield b"}", False

    def _node_pieces(self, node, path: str, visit):
        """The pieces of ``node`` as :meth:`_walk` would make it (each Leaf through ``visit``)."""
        if isinstance(node, Leaf):
            yield orjson.dumps(visit(path, node), option=_JSON_OPTIONS), True
        elif isinstance(node, dict):
            yield b"{", False
            for index, (key, value) in enumerate(node.items()):
                yield (b"," if index else b"") + orjson.dumps(key) + b":", False
                yield from self._node_pieces(value, f"{path}.{key}" if path else key, visit)
            yield b"}", False
        elif isinstance(node, (list, tuple)):
            yield b"[", False
            for index, value in enumerate(node):
                if index:
                    yield b",", False
                yield from self._node_pieces(value, f"{path}.{index}", visit)
            yield b"]", False
        else:
            yield orjson.dumps(node, option=_JSON_OPTIONS), False  # a label (solved_for)

    def columns(self, later: bool = False) -> list[Column]:
        """The answer as columns (CSV, Arrow): inputs first (``input.<name>``), then every output under its
        dotted name, each with its unit and where it is null.

        ``later``: a column converted to another unit (or rounded) is checked here and then let go; it carries
        its SI array as a stand-in and the means to convert it again when it is sent (api.arrow.Body), so that
        the answer is never held twice, in SI and in the caller's units."""
        columns = []

        def column(prefix, check):
            def visit(path, leaf):
                null = self._null_mask(path) if check else None
                si = leaf.si
                if (later and type(si) is np.ndarray and si.dtype == np.float64 and si.shape == self.shape
                        and si.flags.c_contiguous):
                    unit = self._checked_unmade(prefix + path, leaf, check)
                    if unit is not False:
                        make = partial(self._values, prefix + path, leaf)
                        columns.append(Column(prefix + path, unit, si, null, make))
                        return
                value, unit = self._leaf(prefix + path, leaf, check, json=False)
                columns.append(Column(prefix + path, unit, np.atleast_1d(value), null))
            return visit

        self._walk(self._input_leaves(), "", column("input.", False))
        self._walk(self.tree, "", column("", True))
        return columns

    def _checked_unmade(self, path: str, leaf: Leaf, check: bool):
        """The unit of a column to be made later (its values are other numbers than its SI array: converted,
        rounded or as given), once its values are known to be finite where they must be (else the 422 of
        :meth:`_check_finite`); False when the column is its SI array as it is (nothing to make). Either way the
        output unit is found, and noted as used, by :meth:`_output_unit`, as for every other output.

        Finite SI values whose largest magnitude stays finite through the conversion give finite values in
        the unit (and rounding keeps a number finite): one reduction instead of a conversion. Otherwise (a NaN
        under a null, a huge value) the values are made, checked and let go."""
        unit, u = (None, None) if leaf.dimension is None else self._output_unit(leaf.dimension)
        as_given = leaf.given is not None and leaf.given_unit == unit
        converts = u is not None and not as_given and (u.factor != 1.0 or u.offset != 0.0)
        if not (converts or as_given or self.inputs.significant_digits is not None):
            return False
        if check:
            si = leaf.si
            bound = float(max(si.max(), -si.min())) if si.size else 0.0  # Python floats: inf, no overflow warning
            if not (math.isfinite(bound) and (not converts or math.isfinite((bound + abs(u.offset)) / u.factor))):
                self._leaf(path, leaf, check, json=False, rounded=False)
        return unit

    def _values(self, path: str, leaf: Leaf) -> np.ndarray:
        """A column's values in the caller's unit, once more (checked already by :meth:`columns`)."""
        return np.atleast_1d(self._leaf(path, leaf, check=False, json=False)[0])

    def _null_mask(self, path: str):
        """Where null_where made output ``path`` null (None: nowhere)."""
        masks = [mask for field, mask in self._null_masks.items() if path == field or path.startswith(field + ".")]
        if not masks:
            return None
        return np.logical_or.reduce(masks) if len(masks) > 1 else masks[0]

    def csv_response(self) -> Response:
        """Inputs first (``input.<name> [unit]``), then every output under its dotted name (api.formats)."""
        body = formats.csv_body(self.columns())
        return self._with_warning_count(Response(body, status=200, content_type="text/csv; charset=utf-8"))

    def columnar_response(self, media_type: str) -> Response:
        """The answer as an Arrow IPC stream or a Parquet file (api.arrow): the CSV's columns, with nulls,
        units in field metadata and the warnings in the schema metadata."""
        body = arrow.body(media_type, self.columns(later=True), self.warnings)
        response = Response(body, status=200, content_type=media_type)
        response.content_length = body.length  # an iterable's length werkzeug does not know
        return self._with_warning_count(response)

    def _with_warning_count(self, response: Response) -> Response:
        """Tables (CSV, Arrow) carry the number of warnings in X-Warnings."""
        if self.warnings:
            response.headers["X-Warnings"] = str(len(self.warnings))
        return response

    def response(self) -> Response:
        """The answer in the format the client accepts (JSON unless another is preferred); a 422 when an
        ``output_units`` key applies to nothing written (nothing is silently ignored)."""
        media_type = formats.answer_media_type()
        if media_type == formats.CSV:
            response = self.csv_response()
        elif media_type in arrow.WRITERS:
            response = self.columnar_response(media_type)
        else:
            response = self.json_response()
        refuse_unused_units(self.inputs.output_units, self._units_used)
        return response
