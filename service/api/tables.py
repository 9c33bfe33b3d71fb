"""Tables in: a compute request whose array inputs come as a CSV or Arrow table.

The body is a table with one column per array input, its unit in the header the way the CSV answer
writes it (``altitude [FL]``; no brackets: the field's default unit; dimensionless inputs such as
``mach`` never take one). The scalar options (``outputs``, ``output_units``, ``solve_for``, ``grid``,
the aircraft's constants, tables such as ``calibration``, any input that is the same at every point)
are query parameters, one per top-level field of the JSON request, each value read as JSON and, when
it is not JSON, as a string::

    POST /v1/lift/solve?solve_for=cl&weight=21000&wing_area=61&outputs=["cl","tas"]
    Content-Type: text/csv

    mach,altitude [FL]
    0.45,250
    0.50,300

:func:`read_table` turns this into exactly the JSON request the endpoint's schema validates
(``{"altitude": {"value": [...], "unit": "FL"}, "mach": [...], "solve_for": "cl", ...}``), so the
same limits, checks and problem documents apply; :meth:`Table.locate` then adds to each error's
JSON Pointer (``/altitude/value/3``) the ``column`` and ``row`` (0-based, as in ``indices``) or the
query ``parameter`` it came from.

The body itself is read by api.table_readers (CSV or Arrow into columns, the row count checked against
the point limit before the rows are parsed); its size is checked by the caller.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import NamedTuple

import marshmallow as ma
import orjson

from service.api.arrow import ARROW_STREAM
from service.api.fields import Number
from service.api.formats import CSV
from service.api.problems import MAX_ERRORS, ErrorList, Problem, echo, invalid, pointer
from service.api.table_readers import MAX_CELL_ERRORS, parse_header, read_arrow, read_csv

#: The media types of a table body.
TABLE_MEDIA_TYPES = (CSV, ARROW_STREAM)


class Source(NamedTuple):
    """Where a top-level input came from: a table column (with its header) or a query parameter."""

    column: str | None = None
    parameter: str | None = None


class Table(NamedTuple):
    """A table request read into the JSON-shaped request, and where each input came from."""

    data: dict
    sources: dict[str, Source]
    rows: int
    media_type: str

    def locate_errors(self, errors: list[dict]) -> ErrorList:
        """Each {pointer, message} with the column and row (or the query parameter) it points into."""
        located = ErrorList(omitted=getattr(errors, "omitted", 0))
        for error in errors:
            tokens = [t.replace("~1", "/").replace("~0", "~") for t in error["pointer"].split("/")[1:]]
            source = self.sources.get(tokens[0]) if tokens else None
            error = dict(error)
            if "column" in error or "parameter" in error:
                pass  # located by the reader itself
            elif source is not None and source.column is not None:
                error["column"] = source.column
                rest = tokens[1:]
                if rest[:1] == ["value"]:
                    rest = rest[1:]
                if rest and rest[0].isdigit():
                    error["row"] = int(rest[0])
            elif source is not None:
                error["parameter"] = source.parameter
            located.append(error)
        return located

    def describe(self, error: dict) -> str:
        """Where an error is, in words: "column 'altitude [FL]', row 3 (line 5)"."""
        if "column" in error:
            text = f"column {error['column']!r}"
            if "row" in error:
                text += f", row {error['row']}"
                if self.media_type == CSV:
                    text += f" (line {error['row'] + 2})"
            return text
        if "parameter" in error:
            return f"query parameter {error['parameter']!r}"
        return error["pointer"] or "(body)"

    def locate(self, problem: Problem) -> Problem:
        """The same problem, its errors located in the table and its detail in the table's words."""
        if not problem.errors:
            return problem
        problem.errors = self.locate_errors(problem.errors)
        shown = problem.errors[:5]
        detail = "; ".join(f"{self.describe(e)}: {e['message'].rstrip('.')}" for e in shown)
        total = len(problem.errors) + problem.errors.omitted
        if total > len(shown):
            detail += f"; and {total - len(shown)} more"
        problem.detail = detail + "."
        return problem


def column_fields(schema: ma.Schema) -> dict[str, Number]:
    """The fields of a request schema a table column may fill: its top-level numeric inputs."""
    return {field.data_key or name: field for name, field in schema.fields.items() if isinstance(field, Number)}


def read_params(params: Iterable[tuple[str, str]]) -> tuple[dict, dict[str, Source], list[dict]]:
    """Query parameters as top-level JSON fields: each value read as JSON, else as a string."""
    data, sources, errors = {}, {}, []
    for name, text in params:
        if name in data:
            errors.append({"pointer": pointer(name), "parameter": name,
                           "message": "Given more than once; give each query parameter once."})
            continue
        try:
            value = orjson.loads(text)
        except orjson.JSONDecodeError:
            value = text
        data[name] = value
        sources[name] = Source(parameter=name)
    return data, sources, errors


def read_table(body: bytes, media_type: str, schema: ma.Schema, params: Iterable[tuple[str, str]] = (), *,
               max_points: int) -> Table:
    """The JSON-shaped request of a table body (CSV or Arrow stream) and query parameters.

    Raises a 413 Problem when the table has more rows than ``max_points``, a 400 when the body is not a
    table of this format, and a 422 (errors located by column and row, or parameter) when a column is
    not an input of the endpoint or a cell is not a finite number. Everything else (units, ranges, rules
    over several inputs) is the schema's, as for JSON.
    """
    data, sources, errors = read_params(params)
    fields = column_fields(schema)
    if media_type == CSV:
        headers, columns, rows = read_csv(body, max_points)
    elif media_type == ARROW_STREAM:
        headers, columns, rows = read_arrow(body, max_points)
    else:
        raise ValueError(media_type)
    table = Table(data, sources, rows, media_type)
    seen: dict[str, str] = {}
    for (header, metadata_unit), column in zip(headers, columns, strict=True):
        name, unit = parse_header(header)
        unit = unit if unit is not None else metadata_unit
        where = {"pointer": pointer(name) if name else "", "column": header}
        if name not in fields:
            allowed = ", ".join(fields)
            message = (f"{name} is not a column input: give it as a query parameter." if name in schema.fields
                       else f"Unknown column {echo(name)}; the columns this endpoint takes are: {allowed}.")
            errors.append(where | {"message": message})
            continue
        if name in seen:
            errors.append(where | {"message": f"Column {name} is given twice (also as {echo(seen[name])})."})
            continue
        if name in data:
            errors.append(where | {"message": f"{name} is given both as a column and as a query parameter."})
            continue
        seen[name] = header
        field = fields[name]
        if unit is not None and getattr(field, "dimension", None) is None:
            errors.append(where | {"message": f"{name} is dimensionless: write its header without a unit."})
            continue
        values, bad = column
        base = (name, "value") if unit is not None else (name,)
        for row, message in bad[:MAX_CELL_ERRORS]:
            errors.append({"pointer": pointer(*base, row), "column": header, "row": row, "message": message})
        data[name] = {"value": values, "unit": unit} if unit is not None else values
        sources[name] = Source(column=header)
    if rows == 0 and not errors:
        errors.append({"pointer": "", "message": "The table has no rows: give at least one."})
    if errors:
        raise table.locate(invalid(ErrorList(errors[:MAX_ERRORS], omitted=max(len(errors) - MAX_ERRORS, 0))))
    return table


# --- the spec ---------------------------------------------------------------------------------------

REQUEST_DESCRIPTION = (
    "The array inputs as a table: one column per input, named as the JSON field, its unit in brackets as the CSV "
    "answer writes it (`altitude [FL]`; without brackets the field's default unit; dimensionless inputs such as "
    "`mach` take none). Every other top-level field of the JSON request (`outputs`, `output_units`, `grid`, "
    "`solve_for`, the aircraft's constants, `calibration`, any input that is the same at every point) is a query "
    "parameter of the same name, its value read as JSON and, when it is not JSON, as a string: "
    "`?solve_for=cl&weight=21000&outputs=[\"cl\",\"tas\"]`. The same checks, limits and problem documents as "
    "JSON apply; each error then also names the `column` and `row` (0-based, as in `indices`) or the query "
    "`parameter` it is about. At most QBAR_MAX_POINTS rows.")
CSV_REQUEST = REQUEST_DESCRIPTION + (
    " CSV (RFC 4180): comma-separated, UTF-8, a header line first; an empty cell is refused.")
ARROW_REQUEST = REQUEST_DESCRIPTION + (
    " An Apache Arrow IPC stream of integer or floating-point columns without nulls, its buffers uncompressed; "
    "a column's unit may also be given as the field metadata `unit`.")


def table_example(body: dict, columns: Iterable[str]) -> tuple[str, str] | None:
    """A JSON request example as a table request: (query string, CSV text); None for a grid.

    Array inputs become columns and everything else query parameters; without arrays, the request is a
    table of one row.
    """
    from urllib.parse import quote

    if body.get("grid"):
        return None
    columns = [name for name in columns if name in body]
    arrays = [name for name in columns if isinstance(_values(body[name]), list)]
    chosen = arrays or columns
    if not chosen:
        return None
    table, options = {}, {}
    for name, value in body.items():
        if name not in chosen:
            options[name] = value
            continue
        unit = value.get("unit") if isinstance(value, dict) else None
        values = _values(value)
        table[f"{name} [{unit}]" if unit else name] = values if isinstance(values, list) else [values]
    rows = max(len(v) for v in table.values())
    lines = [",".join(table)] + [",".join(_cell(v[i] if len(v) > 1 else v[0]) for v in table.values())
                                 for i in range(rows)]
    query = "&".join(f"{name}={quote(value if isinstance(value, str) else orjson.dumps(value).decode(), safe=_SHOWN)}"
                     for name, value in options.items())
    return ("?" + query if query else ""), "\n".join(lines) + "\n"


#: Characters left as they are in the examples' query strings, for reading (clients encode them; curl 7.87+
#: does with --url-query).
_SHOWN = ',:[]{}"/'


def _values(value):
    return value.get("value") if isinstance(value, dict) else value


def _cell(value) -> str:
    return format(value, "g") if isinstance(value, float) else str(value)


def request_content(schema: ma.Schema, json_examples: dict) -> dict:
    """The requestBody content of the table forms (CSV with examples made from the JSON ones; Arrow)."""
    examples = {}
    for name, example in json_examples.items():
        made = table_example(example["value"], column_fields(schema))
        if made is not None:
            query, text = made
            examples[name] = {"summary": example["summary"], "value": text,
                              "description": f"With the query string `{query}`." if query else "No query string."}
    csv_content = {"schema": {"type": "string", "description": CSV_REQUEST}}
    if examples:
        csv_content["examples"] = examples
    return {CSV: csv_content,
            ARROW_STREAM: {"schema": {"type": "string", "format": "binary", "description": ARROW_REQUEST}}}


__all__ = ["CSV", "TABLE_MEDIA_TYPES", "Source", "Table", "parse_header", "read_table"]
