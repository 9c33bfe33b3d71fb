"""Arrow (and Parquet) answers: the writer's columns, names, units, nulls and warnings, read back by pyarrow
and pandas."""

import io

import numpy as np
import orjson
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from service.api import arrow
from service.api.arrow import Column

WARNINGS = [{"field": "density_altitude", "message": "Outside the model's range.", "count": 1, "indices": [2]}]


def columns(n=3):
    altitude = np.linspace(0.0, 40000.0, n)
    density_altitude = np.linspace(100.0, 41000.0, n)
    density_altitude[2 % n] = np.nan
    null = np.zeros(n, dtype=bool)
    null[2 % n] = True
    return [
        Column("input.altitude", "ft", altitude),
        Column("density_altitude", "ft", density_altitude, null),
        Column("atmosphere.pressure", "hPa", np.linspace(1013.25, 187.5, n)),
        Column("pressure_ratio", None, np.linspace(1.0, 0.185, n)),
        Column("beyond_stall", None, np.arange(n) % 2 == 1),
        Column("governing", None, np.where(np.arange(n) < 1, "cas", "mach")),
    ]


def read_stream(body: bytes) -> pa.Table:
    return pa.ipc.open_stream(body).read_all()


def test_names_units_and_types():
    table = read_stream(arrow.body(arrow.ARROW_STREAM, columns(), WARNINGS))
    assert table.column_names == ["input.altitude [ft]", "density_altitude [ft]", "atmosphere.pressure [hPa]",
                                  "pressure_ratio", "beyond_stall", "governing"]
    units = [(f.metadata or {}).get(b"unit") for f in table.schema]
    assert units == [b"ft", b"ft", b"hPa", None, None, None]
    names = [f.metadata[b"name"] for f in table.schema]
    assert names == [b"input.altitude", b"density_altitude", b"atmosphere.pressure", b"pressure_ratio",
                     b"beyond_stall", b"governing"]
    assert [f.type for f in table.schema] == [pa.float64()] * 4 + [pa.bool_(), pa.string()]
    assert table.column("governing").to_pylist() == ["cas", "mach", "mach"]
    assert table.column("beyond_stall").to_pylist() == [False, True, False]


def test_nulls_where_json_has_null_and_no_nan_in_the_body():
    body = arrow.body(arrow.ARROW_STREAM, columns(), WARNINGS)
    table = read_stream(body)
    assert table.column("density_altitude [ft]").to_pylist() == [100.0, 20550.0, None]
    assert table.column("density_altitude [ft]").null_count == 1
    data = table.column("density_altitude [ft]").chunk(0).buffers()[1]
    assert not np.isnan(np.frombuffer(data, dtype=np.float64)).any()  # the value under the null is 0
    assert np.frombuffer(np.float64(np.nan).tobytes(), dtype=np.uint8).tobytes() not in body


def test_warnings_in_the_schema_metadata():
    table = read_stream(arrow.body(arrow.ARROW_STREAM, columns(), WARNINGS))
    assert orjson.loads(table.schema.metadata[b"warnings"]) == WARNINGS
    empty = read_stream(arrow.body(arrow.ARROW_STREAM, columns(), []))
    assert orjson.loads(empty.schema.metadata[b"warnings"]) == []


def test_float_columns_are_not_copied():
    values = np.linspace(0.0, 1.0, 1000)
    batch = arrow.record_batch([Column("pressure_ratio", None, values)], [])
    assert batch.column(0).buffers()[1].address == values.ctypes.data


def test_a_scalar_answer_is_one_row():
    batch = arrow.record_batch([Column("mach", None, np.float64(0.78)), Column("cas", "kt", np.float64(280.0))], [])
    assert batch.num_rows == 1
    assert batch.to_pylist() == [{"mach": 0.78, "cas [kt]": 280.0}]


def test_broadcast_and_strided_values():
    base = np.arange(10.0)
    batch = arrow.record_batch([Column("a", None, base[::2]), Column("b", "kt", np.broadcast_to(3.0, (5,)))], [])
    assert batch.column(0).to_pylist() == [0.0, 2.0, 4.0, 6.0, 8.0]
    assert batch.column(1).to_pylist() == [3.0] * 5


def test_pandas_reads_the_stream_with_nulls_as_nan():
    frame = pa.ipc.open_stream(arrow.body(arrow.ARROW_STREAM, columns(), WARNINGS)).read_pandas()
    assert list(frame.columns) == ["input.altitude [ft]", "density_altitude [ft]", "atmosphere.pressure [hPa]",
                                   "pressure_ratio", "beyond_stall", "governing"]
    assert frame["density_altitude [ft]"].isna().tolist() == [False, False, True]
    assert frame["input.altitude [ft]"].tolist() == [0.0, 20000.0, 40000.0]


def test_parquet_holds_the_same_table():
    body = arrow.body(arrow.PARQUET, columns(), WARNINGS)
    assert body[:4] == b"PAR1"
    table = pq.read_table(io.BytesIO(body))
    assert table.equals(read_stream(arrow.body(arrow.ARROW_STREAM, columns(), WARNINGS)))
    assert orjson.loads(table.schema.metadata[b"warnings"]) == WARNINGS
    assert table.schema.field("atmosphere.pressure [hPa]").metadata[b"unit"] == b"hPa"
    frame = pd.read_parquet(io.BytesIO(body))
    assert frame["density_altitude [ft]"].isna().sum() == 1


@pytest.mark.parametrize("name", ["multiples.0.tas", "stall.cas", "input.altitude"])
def test_header_is_the_csv_header(name):
    assert arrow.header(name, "kt") == f"{name} [kt]"
