"""Table bodies read into columns: a CSV table or an Arrow IPC stream, each column as float64 or its bad cells.

:func:`read_csv` and :func:`read_arrow` give the same thing, ``(headers, columns, rows)``: each header as
``(text, unit from the field metadata or None)``, each column as ``(float64 values, [])`` or ``(None,
[(row, message), ...])`` for its first cells that are not finite numbers. api.tables turns them into the
JSON-shaped request. The row count is checked against the point limit before the rows are parsed (CSV: the
line breaks are counted, an upper bound; Arrow: each record batch's declared length is read from its header
before the batch is); compressed Arrow buffers are refused (their size after decompression is not bounded
by the body's).
"""

from __future__ import annotations

import re
import struct

import numpy as np
import pyarrow as pa
import pyarrow.csv as pa_csv

from service.api.masks import MAX_REPORTED
from service.api.numbers import first_bad
from service.api.problems import Problem, echo, invalid, pointer

#: At most this many cells of one column are listed.
MAX_CELL_ERRORS = MAX_REPORTED

_HEADER = re.compile(r"\s*([^\[\]]*?)\s*(?:\[\s*([^\[\]]*?)\s*\])?\s*")

def parse_header(text: str) -> tuple[str, str | None]:
    """A column header: (field name, unit or None).

    >>> parse_header("altitude [FL]"), parse_header(" mach "), parse_header("cas[kt]")
    (('altitude', 'FL'), ('mach', None), ('cas', 'kt'))
    """
    match = _HEADER.fullmatch(text)
    if match is None:
        return text, None
    return match.group(1), match.group(2)


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


def read_csv(body: bytes, max_points: int):
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


def _numeric(kind: pa.DataType) -> bool:
    """The Arrow types a column of numbers may have: integers and floating point."""
    return pa.types.is_integer(kind) or pa.types.is_floating(kind)


def _first_line(err: Exception) -> str:
    return str(err).strip().splitlines()[0] if str(err).strip() else type(err).__name__


def _csv_numbers(column: pa.ChunkedArray) -> tuple[np.ndarray | None, list[tuple[int, str]]]:
    """(float64 values, []) for a column of finite numbers; else (None, [(row, message), ...])."""
    if _numeric(column.type) and column.null_count == 0:
        return _finite(_float64(column))
    return None, first_bad(column.to_pylist(), _cell_message)  # the first cells that are not finite numbers


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


def read_arrow(body: bytes, max_points: int):
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
