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

Bounded work before refusing: the body size is checked by the caller; the row count is checked against
the point limit before the rows are parsed (CSV: the line breaks are counted, an upper bound; Arrow: each
record batch's declared length is read from its header before the batch is). Compressed Arrow buffers
are refused (their size after decompression is not bounded by the body's).
"""

from __future__ import annotations

import re
import struct
from collections.abc import Iterable
from typing import NamedTuple

import marshmallow as ma
import numpy as np
import orjson
import pyarrow as pa
import pyarrow.csv as pa_csv

from service.api.arrow import ARROW_STREAM
from service.api.fields import Number
from service.api.masks import MAX_REPORTED
from service.api.problems import MAX_ERRORS, ErrorList, Problem, echo, invalid, pointer

CSV = "text/csv"
#: The media types of a table body.
TABLE_MEDIA_TYPES = (CSV, ARROW_STREAM)

#: At most this many cells of one column are listed.
MAX_CELL_ERRORS = MAX_REPORTED

_HEADER = re.compile(r"\s*([^\[\]]*?)\s*(?:\[\s*([^\[\]]*?)\s*\])?\s*")


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


def parse_header(text: str) -> tuple[str, str | None]:
    """A column header: (field name, unit or None).

    >>> parse_header("altitude [FL]"), parse_header(" mach "), parse_header("cas[kt]")
    (('altitude', 'FL'), ('mach', None), ('cas', 'kt'))
    """
    match = _HEADER.fullmatch(text)
    if match is None:
        return text, None
    return match.group(1), (match.group(2) if match.group(2) is not None else None)


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
        headers, columns, rows = _read_csv(body, max_points)
    elif media_type == ARROW_STREAM:
        headers, columns, rows = _read_arrow(body, max_points)
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


# --- CSV ---------------------------------------------------------------------------------------------

_CSV_READ = pa_csv.ReadOptions(use_threads=False)
_CSV_PARSE = pa_csv.ParseOptions(delimiter=",", newlines_in_values=False)
#: Only an empty cell is missing; "NA", "null", "nan" are text and refused as such.
_CSV_CONVERT = pa_csv.ConvertOptions(null_values=[""], strings_can_be_null=True, quoted_strings_can_be_null=True,
                                     true_values=["true"], false_values=["false"])


def count_lines(body: bytes) -> int:
    """Data rows of a CSV body at most: its line breaks after the header (no row is parsed).

    >>> count_lines(b"altitude\\r\\n0\\r\\n1000\\r\\n"), count_lines(b"altitude\\n0\\n1000"), count_lines(b"a")
    (2, 2, 0)
    """
    breaks = max(body.count(b"\n"), body.count(b"\r"))
    if body and not body.endswith((b"\n", b"\r")):
        breaks += 1
    return max(breaks - 1, 0)


def _too_many_rows(rows: int, limit: int, *, exact: bool) -> Problem:
    what = f"{rows} rows" if exact else f"{rows} lines after its header"
    return Problem("payload-too-large", f"The table has {what}; the limit is {limit} points per request "
                                        "(QBAR_MAX_POINTS).", extra={"limit": limit})


def _read_csv(body: bytes, max_points: int):
    lines = count_lines(body)
    if lines > max_points:
        raise _too_many_rows(lines, max_points, exact=False)
    try:
        table = pa_csv.read_csv(pa.py_buffer(body), read_options=_CSV_READ, parse_options=_CSV_PARSE,
                                convert_options=_CSV_CONVERT)
        names = table.column_names
    except (pa.ArrowInvalid, pa.ArrowTypeError, UnicodeDecodeError) as err:
        raise Problem("bad-request", f"The body is not a CSV table: {echo(_first_line(err))}") from None
    if table.num_rows > max_points:  # lines are an upper bound: this cannot happen, but costs nothing
        raise _too_many_rows(table.num_rows, max_points, exact=True)
    headers = [(name, None) for name in names]
    return headers, [_csv_numbers(column) for column in table.columns], table.num_rows


def _first_line(err: Exception) -> str:
    return str(err).strip().splitlines()[0] if str(err).strip() else type(err).__name__


def _csv_numbers(column: pa.ChunkedArray) -> tuple[np.ndarray | None, list[tuple[int, str]]]:
    """(float64 values, []) for a column of finite numbers; else (None, [(row, message), ...])."""
    kind = column.type
    if (pa.types.is_integer(kind) or pa.types.is_floating(kind)) and column.null_count == 0:
        return _finite(_float64(column))
    return None, _bad_cells(column)


def _float64(column: pa.ChunkedArray) -> np.ndarray:
    """A numeric column without nulls as a new float64 array (integers rounded to the nearest double, as NumPy
    does), read from its buffer: ``to_numpy`` looks for pandas and imports it when installed (50 MB), and
    ``cast`` loads pyarrow.compute (9 MB)."""
    if not len(column):
        return np.empty(0)
    array = column.chunk(0) if column.num_chunks == 1 else pa.concat_arrays(column.chunks)
    kind = array.type
    letter = "f" if pa.types.is_floating(kind) else "i" if pa.types.is_signed_integer(kind) else "u"
    dtype = np.dtype(f"<{letter}{kind.bit_width // 8}")
    values = np.frombuffer(array.buffers()[1], dtype=dtype, count=len(array), offset=array.offset * dtype.itemsize)
    return values.astype(np.float64)  # a copy: the body's buffer is read-only


def _null_rows(column: pa.ChunkedArray) -> np.ndarray:
    """The rows of a column that are null (from the validity bitmaps)."""
    flags, start = [], 0
    for chunk in column.chunks:
        bitmap = chunk.buffers()[0]
        if chunk.null_count and bitmap is not None:
            bits = np.unpackbits(np.frombuffer(bitmap, dtype=np.uint8), bitorder="little")
            flags.append(start + np.flatnonzero(~bits[chunk.offset:chunk.offset + len(chunk)].astype(bool)))
        elif chunk.null_count:  # a column of the null type: every row
            flags.append(start + np.arange(len(chunk)))
        start += len(chunk)
    return np.concatenate(flags) if flags else np.empty(0, dtype=np.intp)


def _finite(values: np.ndarray) -> tuple[np.ndarray | None, list[tuple[int, str]]]:
    bad = ~np.isfinite(values)
    if not bad.any():
        return values, []
    rows = np.flatnonzero(bad)[:MAX_CELL_ERRORS]
    return None, [(int(row), "Not a number: NaN." if np.isnan(values[row])
                   else "Number out of the floating-point range.") for row in rows]


def _bad_cells(column: pa.ChunkedArray) -> list[tuple[int, str]]:
    """The first cells of a column that are not finite numbers (the error path: a Python loop is fine)."""
    found = []
    for row, cell in enumerate(column.to_pylist()):
        message = _cell_message(cell)
        if message:
            found.append((row, message))
            if len(found) >= MAX_CELL_ERRORS:
                break
    return found


def _cell_message(cell) -> str | None:
    if cell is None:
        return "Empty cell: give a number."
    if isinstance(cell, bool):
        return "Not a number: a boolean."
    if isinstance(cell, (int, float)):
        return None if np.isfinite(cell) else "Number out of the floating-point range."
    if isinstance(cell, str):
        try:
            value = float(cell)
        except ValueError:
            return f"Not a number: {echo(cell)}."
        if value != value:
            return "Not a number: NaN."
        if value - value != 0.0:
            return "Number out of the floating-point range."
        return None
    return f"Not a number: {echo(cell)}."


# --- Arrow ------------------------------------------------------------------------------------------

def _numeric(kind: pa.DataType) -> bool:
    """The Arrow types a column of numbers may have: integers and floating point."""
    return pa.types.is_integer(kind) or pa.types.is_floating(kind)


def _message_header(metadata: bytes) -> tuple[int, int, bool]:
    """(header type, record batch length, compressed) from an IPC message's flatbuffer metadata.

    The layout is the Arrow columnar format's Message.fbs: a Message table (field 1: the header type,
    3 for a RecordBatch; field 2: the header), whose RecordBatch table holds the length (field 0) and the
    compression (field 3). Read here so that a batch's size is known before pyarrow materialises it.
    """
    def u(fmt, at):
        if at < 0 or at + struct.calcsize(fmt) > len(metadata):
            raise struct.error("out of bounds")
        return struct.unpack_from(fmt, metadata, at)[0]

    def table(at):
        vtable = at - u("<i", at)
        size = u("<H", vtable)

        def field(index):
            slot = 4 + 2 * index
            if slot + 2 > size:
                return None
            offset = u("<H", vtable + slot)
            return at + offset if offset else None
        return field

    message = table(u("<I", 0))
    type_at = message(1)
    kind = u("<B", type_at) if type_at is not None else 0
    if kind != 3:
        return kind, 0, False
    header_at = message(2)
    if header_at is None:
        raise struct.error("no header")
    batch = table(header_at + u("<I", header_at))
    length_at = batch(0)
    return kind, (u("<q", length_at) if length_at is not None else 0), batch(3) is not None


def _read_arrow(body: bytes, max_points: int):
    try:
        reader = pa.ipc.MessageReader.open_stream(pa.BufferReader(pa.py_buffer(body)))
        schema = pa.ipc.read_schema(reader.read_next_message())
    except (pa.ArrowInvalid, StopIteration, OSError, TypeError) as err:
        raise Problem("bad-request", f"The body is not an Arrow IPC stream: {echo(_first_line(err))}") from None
    headers, errors = [], []
    for field in schema:
        unit = (field.metadata or {}).get(b"unit")
        unit = unit.decode("utf-8", "replace") if unit is not None else None
        header_field, header_unit = parse_header(field.name)
        if unit is not None and header_unit is not None and unit != header_unit:
            errors.append({"pointer": pointer(header_field), "column": field.name,
                           "message": f"The header says {echo(header_unit)} and the field metadata "
                                      f"{echo(unit)}: give one unit."})
        if not _numeric(field.type):
            errors.append({"pointer": pointer(header_field), "column": field.name,
                           "message": f"Column of type {field.type}: give numbers (floating point or integer)."})
        headers.append((field.name, unit))
    if errors:
        raise invalid(errors, detail="; ".join(f"column {e['column']!r}: {e['message'].rstrip('.')}"
                                               for e in errors[:5]) + ".")
    batches, rows = [], 0
    while True:
        try:
            message = reader.read_next_message()
        except StopIteration:
            break
        except (pa.ArrowInvalid, OSError) as err:
            raise Problem("bad-request", f"The body is not an Arrow IPC stream: {echo(_first_line(err))}") from None
        try:
            kind, length, compressed = _message_header(message.metadata.to_pybytes())
        except struct.error:
            raise Problem("bad-request", "The body is not an Arrow IPC stream: a message header is damaged.") from None
        if kind != 3:
            raise Problem("bad-request", f"The Arrow stream holds a {message.type} message; send record batches of "
                                         "numeric columns only.")
        if compressed:
            raise Problem("bad-request", "The Arrow stream's buffers are compressed (their size after "
                                         "decompression is not bounded by the body's); send it uncompressed.")
        rows += length
        if rows > max_points:
            raise _too_many_rows(rows, max_points, exact=True)
        try:
            batch = pa.ipc.read_record_batch(message, schema)
            batch.validate(full=True)
        except (pa.ArrowInvalid, OSError) as err:
            raise Problem("bad-request", f"The body is not an Arrow IPC stream: {echo(_first_line(err))}") from None
        batches.append(batch)
    columns = []
    for index in range(len(schema)):
        chunks = [batch.column(index) for batch in batches]
        columns.append(_arrow_numbers(pa.chunked_array(chunks, type=schema.field(index).type)))
    return headers, columns, rows


def _arrow_numbers(column: pa.ChunkedArray) -> tuple[np.ndarray | None, list[tuple[int, str]]]:
    if column.null_count:
        nulls = _null_rows(column)[:MAX_CELL_ERRORS]
        return None, [(int(row), "Null: give a number.") for row in nulls]
    return _finite(_float64(column))


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
