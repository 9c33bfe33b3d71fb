"""Columnar answers: Apache Arrow IPC stream (and Parquet) from the answer's columns.

The answer writer hands over the same columns it writes as CSV: one :class:`Column` per input
(grids and tables) and output, with its dotted name, its unit and a mask of the points where the value
does not exist. This module turns them into one record batch:

- one Arrow field per column, named exactly as the CSV header names it (``atmosphere.pressure [hPa]``).
  The unit stays in the name because the name is what survives every tool: pandas, polars and most
  readers drop field metadata on the way to a data frame, and a column ``pressure`` read without its
  unit is a column read wrongly as soon as ``output_units`` changes it. The name is also the same in
  CSV and Arrow, so a client switches formats without renaming. The field metadata repeats it in parts
  for programs: ``name`` (the dotted name) and ``unit`` (absent for dimensionless columns);
- float64 columns are handed to Arrow without a copy (the NumPy buffer becomes the Arrow buffer); where
  the JSON answer has ``null`` the Arrow column has a null (validity bitmap), and the value under it is
  0, so the body holds no NaN; booleans are Arrow booleans, labels Arrow strings;
- the schema metadata carries ``warnings`` (the same list as the JSON answer, as JSON text), so
  nothing of the JSON answer is lost.

A scalar request gives one row. The body is an IPC *stream* (``application/vnd.apache.arrow.stream``):
``pyarrow.ipc.open_stream(body).read_all()``, ``pandas.read_feather`` does not read it (that is the
file format), ``pyarrow.ipc.open_stream(body).read_pandas()`` does. Parquet
(``application/vnd.apache.parquet``) holds the same table with the same names and metadata, written
plain (no dictionary, no compression, no statistics), which keeps its cost close to the stream's.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import NamedTuple

import numpy as np
import orjson
import pyarrow as pa

ARROW_STREAM = "application/vnd.apache.arrow.stream"
PARQUET = "application/vnd.apache.parquet"

#: Column -> Arrow type for the NumPy kinds an answer holds.
_BOOL, _FLOAT, _TEXT = "b", "f", "US"


class Column(NamedTuple):
    """One column of an answer: dotted name, unit (None: dimensionless), values, where null."""

    name: str
    unit: str | None
    values: object
    null: object = None
    #: A function giving the values, called only when the column is sent (:class:`Body`); ``values`` then
    #: stand in for them in the stream's header (float64 of the same length).
    later: object = None


def header(name: str, unit: str | None) -> str:
    """The column's name in CSV and Arrow: ``pressure [hPa]``, or the bare name without a unit.

    >>> header("atmosphere.pressure", "hPa"), header("mach", None)
    ('atmosphere.pressure [hPa]', 'mach')
    """
    return f"{name} [{unit}]" if unit else name


def _bits(flags: np.ndarray) -> pa.Buffer:
    """A bitmap in Arrow's order (least significant bit first) of a boolean array."""
    return pa.py_buffer(np.packbits(flags, bitorder="little"))


def _text(values: np.ndarray) -> pa.Array:
    """An Arrow string array from a NumPy array of str: the UTF-8 bytes and their offsets, built here."""
    try:
        encoded = values.astype(np.bytes_)  # ASCII, in C (the labels are)
    except UnicodeEncodeError:
        encoded = np.char.encode(values, "utf-8")
    lengths = np.char.str_len(encoded)
    offsets = np.zeros(values.size + 1, dtype=np.int32)
    np.cumsum(lengths, out=offsets[1:])
    width = encoded.dtype.itemsize
    data = encoded.view(np.uint8).reshape(values.size, width)[np.arange(width) < lengths[:, None]]
    return pa.Array.from_buffers(pa.string(), values.size, [None, pa.py_buffer(offsets), pa.py_buffer(data)])


def _array(values, null) -> pa.Array:
    """One Arrow array from a 1-D NumPy array (no copy for float64 without nulls).

    Built from the array's buffers (``pa.Array.from_buffers``), not by ``pa.array``: that one looks for
    pandas on every call and imports it when it is installed (about 50 MB in a worker that never uses it).
    """
    values = np.asarray(values)
    if values.ndim == 0:
        values = values.reshape(1)
    kind = values.dtype.kind
    if kind in _TEXT:
        return _text(values)
    if kind == _BOOL:
        return pa.Array.from_buffers(pa.bool_(), values.size, [None, _bits(values)])
    if kind != _FLOAT or values.dtype != np.float64:
        values = values.astype(np.float64)
    if not values.flags.c_contiguous:
        values = np.ascontiguousarray(values)
    if null is not None:
        null = np.broadcast_to(np.asarray(null, dtype=bool), values.shape)
        count = int(np.count_nonzero(null))
        if count:
            return pa.Array.from_buffers(pa.float64(), values.size, [_bits(~null), pa.py_buffer(
                np.where(null, 0.0, values))], null_count=count)
    return pa.Array.from_buffers(pa.float64(), values.size, [None, pa.py_buffer(values)])


def record_batch(columns: Iterable[Column], warnings: list[dict]) -> pa.RecordBatch:
    """The answer as one Arrow record batch: fields named as in CSV, units in field metadata,
    warnings in the schema metadata.

    Examples
    --------
    >>> batch = record_batch([Column("input.altitude", "ft", np.array([0.0, 1000.0])),
    ...                       Column("density_altitude", "ft", np.array([0.0, np.nan]), np.array([False, True])),
    ...                       Column("pressure_ratio", None, np.array([1.0, 0.964]))],
    ...                      [{"field": "density_altitude", "message": "...", "count": 1, "indices": [1]}])
    >>> batch.schema.names
    ['input.altitude [ft]', 'density_altitude [ft]', 'pressure_ratio']
    >>> batch.column(1).to_pylist(), batch.schema.field(1).metadata[b"unit"]
    ([0.0, None], b'ft')
    """
    arrays, fields = [], []
    for column in columns:
        array = _array(column.values, column.null)
        metadata = {"name": column.name}
        if column.unit:
            metadata["unit"] = column.unit
        arrays.append(array)
        fields.append(pa.field(header(column.name, column.unit), array.type, nullable=True, metadata=metadata))
    schema = pa.schema(fields, metadata={"warnings": orjson.dumps(warnings)})
    return pa.RecordBatch.from_arrays(arrays, schema=schema)


class _Chunks:
    """A write-only file for pyarrow that keeps each write as one chunk of the body: bytes, or the Arrow
    buffer itself (a column's numbers, not copied: :class:`Body` copies each into bytes when it is sent)."""

    closed = False

    def __init__(self, keep_buffers: bool = True):
        self.chunks: list = []
        self._keep = keep_buffers

    def write(self, data) -> int:
        self.chunks.append(data if self._keep and type(data) is pa.Buffer else bytes(data))
        return len(data)

    def writable(self) -> bool:
        return True

    def flush(self):
        """Nothing to flush: the chunks are the output."""

    def close(self):
        """Nothing to close."""


class Body:
    """A WSGI body of chunks of bytes or Arrow buffers, each copied into bytes (the server writes bytes) only
    when it is sent, and let go once sent: a large answer is held once, as its arrays, never also as its bytes.
    ``later``: chunk index -> the Column whose values (made then) replace that chunk, a stand-in of the same
    length. ``length``: the body's length in bytes, for Content-Length."""

    def __init__(self, chunks: list, later: dict | None = None):
        self._chunks = chunks[::-1]
        self._later = later or {}
        self.length = sum(len(chunk) for chunk in chunks)

    def __iter__(self):
        chunks, later, index = self._chunks, self._later, 0
        while chunks:
            chunk = chunks.pop()
            column = later.pop(index, None)
            index += 1
            if column is not None:
                data = _array(column.later(), column.null).buffers()[1]
                if data.size != chunk.size:
                    raise RuntimeError(f"column {column.name}: {data.size} bytes where its stand-in had {chunk.size}")
                chunk = data
            yield chunk if type(chunk) is bytes else chunk.to_pybytes()


def stream_chunks(batch: pa.RecordBatch) -> list:
    """The Arrow IPC stream of one record batch, as the WSGI body's chunks (bytes, and the batch's buffers).

    pyarrow's stream writer writes the schema message, then the batch message's header and each of its
    buffers in turn, then the end-of-stream marker. The small writes are copied into bytes; the buffers
    (the NumPy arrays' memory) are kept as they are, for :class:`Body` to copy as it sends them. A write per
    buffer, not per point; no buffer the size of the whole body is built.

    >>> batch = pa.record_batch({"mach": [0.5, 0.8]})
    >>> sink = pa.BufferOutputStream()
    >>> with pa.ipc.new_stream(sink, batch.schema) as writer:
    ...     writer.write_batch(batch)
    >>> b"".join(Body(stream_chunks(batch))) == sink.getvalue().to_pybytes()
    True
    """
    sink = _Chunks()
    with pa.ipc.new_stream(pa.PythonFile(sink, mode="w"), batch.schema) as writer:
        writer.write_batch(batch)
    return sink.chunks


def parquet_chunks(batch: pa.RecordBatch) -> list[bytes]:
    """The same table as a Parquet file (plain encoding, uncompressed, no statistics: the cheap form)."""
    import pyarrow.parquet as pq  # only for Parquet answers: it adds about 9 MB to a worker

    sink = _Chunks(keep_buffers=False)  # the Parquet writer's buffers are its own, perhaps reused: copied
    pq.write_table(pa.Table.from_batches([batch]), pa.PythonFile(sink, mode="w"), compression="none",
                   use_dictionary=False, write_statistics=False)
    return sink.chunks


ANSWER_DESCRIPTION = (
    "The same answer as a table (send `Accept: {media_type}`): one column per CSV column, named as in the CSV header "
    "(`input.<name> [unit]` for the inputs, then every output, nested ones with dotted names, physical ones with "
    "their unit in brackets), the unit also in each field's metadata (`unit`, beside `name`, the dotted name); "
    "float64 numbers, booleans and strings; an Arrow null where the JSON answer has null; the JSON answer's "
    "`warnings` as JSON text in the schema metadata `warnings`. A scalar answer is one row. {what}")
WHAT = {"application/vnd.apache.arrow.stream": "An Arrow IPC stream: `pyarrow.ipc.open_stream(body).read_all()`.",
        "application/vnd.apache.parquet": "A Parquet file, plain-encoded and uncompressed: "
                                          "`pandas.read_parquet(io.BytesIO(body))`."}


def response_content() -> dict:
    """The 200 response content of the columnar answers, for the spec."""
    return {media_type: {"schema": {"type": "string", "format": "binary",
                                    "description": ANSWER_DESCRIPTION.format(media_type=media_type, what=what)}}
            for media_type, what in WHAT.items()}


#: media type -> writer of the body.
WRITERS = {ARROW_STREAM: stream_chunks, PARQUET: parquet_chunks}


def body(media_type: str, columns: Iterable[Column], warnings: list[dict]) -> Body:
    """The answer's body in ``media_type`` (a key of WRITERS), a WSGI iterable of known length.

    An Arrow stream's columns with ``later`` values are written with their stand-ins, then each stand-in's data
    buffer is replaced by the values as it is sent: the stream's header depends only on the columns' types,
    lengths and nulls. Parquet (which encodes the values) gets the values at once."""
    columns = list(columns)
    if media_type != ARROW_STREAM:
        columns = [c._replace(values=c.later(), later=None) if c.later is not None else c for c in columns]
        return Body(WRITERS[media_type](record_batch(columns, warnings)))
    batch = record_batch(columns, warnings)
    chunks = stream_chunks(batch)
    if all(c.later is None for c in columns):
        return Body(chunks)
    # The writer hands over the non-empty buffers of each column in order, each as the buffer itself.
    expected = [(index, number, buffer) for index, array in enumerate(batch.columns)
                for number, buffer in enumerate(array.buffers()) if buffer is not None and buffer.size]
    handed = [k for k, chunk in enumerate(chunks) if type(chunk) is pa.Buffer]
    if len(handed) != len(expected) or any(chunks[k].address != buffer.address or chunks[k].size != buffer.size
                                           for k, (_, _, buffer) in zip(handed, expected, strict=True)):
        raise RuntimeError("the Arrow stream writer did not hand over the columns' buffers as expected")
    later = {k: columns[index] for k, (index, number, _) in zip(handed, expected, strict=True)
             if number == 1 and columns[index].later is not None}
    return Body(chunks, later)
