"""Encoding frames as Arrow IPC for the front end (polyadic/_arrow.py).

Every stream is read back with pyarrow's own IPC reader (pyarrow.ipc.open_stream and
MessageReader), and values are compared with what pandas, polars or the standard library say
the source holds.
"""

from __future__ import annotations

import datetime as dt
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import polars as pl
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic._arrow import (  # noqa: E402
    FETCH_ROW_CAP_DEFAULT,
    frame_to_ipc_batches,
    sample_indices,
)
from polyadic._errors import BridgeError  # noqa: E402

# Arrow IPC end-of-stream marker: continuation token 0xFFFFFFFF and a zero length (Arrow
# columnar format specification, "IPC Streaming Format").
END_OF_STREAM = b"\xff\xff\xff\xff\x00\x00\x00\x00"
DICTIONARY = pa.dictionary(pa.int32(), pa.string())


def decode(payload):
    """The whole stream of a payload, read back by pyarrow."""
    pieces = list(payload.iter_pieces())
    assert sum(len(piece) for piece in pieces) == payload.bytes_total
    return pa.ipc.open_stream(b"".join(pieces)).read_all().combine_chunks()


def messages(piece: bytes):
    """(type, serialized size) of each IPC message in a piece."""
    return [(m.type, len(m.serialize())) for m in pa.ipc.MessageReader.open_stream(pa.py_buffer(piece))]


def meta_by_name(payload):
    return {c["name"]: c for c in payload.columns}


def expected_from_pandas(series: pd.Series) -> list:
    """The values pandas holds, with every missing value as None."""
    return [None if missing else value for value, missing in zip(series.astype(object).tolist(), series.isna().tolist())]


def epoch_counts(series: pd.Series) -> list:
    """Datetime or timedelta values as int64 counts of the series' own unit, None for NaT."""
    counts = series.array.asi8
    return [None if missing else int(count) for count, missing in zip(counts, series.isna().tolist())]


@pytest.fixture(scope="module")
def typed_frame():
    """One column per pandas type the bridge sends, each with a missing value where it can."""
    return pd.DataFrame(
        {
            "Int8": pd.array([-128, None, 127], dtype="Int8"),
            "Int16": pd.array([None, -1, 32767], dtype="Int16"),
            "Int32": pd.array([1, 2, None], dtype="Int32"),
            "Int64": pd.array([-(2**63), None, 2**63 - 1], dtype="Int64"),
            "UInt8": pd.array([0, None, 255], dtype="UInt8"),
            "UInt16": pd.array([0, 65535, None], dtype="UInt16"),
            "UInt32": pd.array([None, 4_294_967_295, 0], dtype="UInt32"),
            "UInt64": pd.array([2**64 - 1, None, 0], dtype="UInt64"),
            "int8": np.array([-1, 0, 1], dtype=np.int8),
            "uint64": np.array([0, 2**63, 2**64 - 1], dtype=np.uint64),
            "float32": np.array([0.1, np.nan, -3.5], dtype=np.float32),
            "float64": np.array([np.nan, 1e-300, 2.5]),
            "Float32": pd.array([0.25, None, 1e30], dtype="Float32"),
            "Float64": pd.array([None, -0.0, 7.0], dtype="Float64"),
            "float16": np.array([0.5, -2.0, 65504.0], dtype=np.float16),
            "bool": np.array([True, False, True]),
            "boolean": pd.array([None, True, False], dtype="boolean"),
            "category": pd.Categorical(["b", None, "a"], categories=["b", "a", "unused"]),
            "int_category": pd.Categorical([10, 20, None]),
            "str": pd.array(["x", None, "ÿ"], dtype="str"),
            "object_str": np.array([None, "p", "q"], dtype=object),
            "object_int": np.array([1, None, 3], dtype=object),
            "object_float": np.array([1, 2.5, None], dtype=object),
            "object_bool": np.array([True, None, False], dtype=object),
            "arrow_int": pd.Series([1, None, 3], dtype="int16[pyarrow]"),
        }
    )


@pytest.fixture(scope="module")
def typed_payload(typed_frame):
    return frame_to_ipc_batches(typed_frame)


class TestPandasTypes:
    @pytest.fixture
    def frame(self, typed_frame):
        return typed_frame

    @pytest.fixture
    def payload(self, typed_payload):
        return typed_payload

    @pytest.fixture
    def table(self, typed_payload):
        return decode(typed_payload)

    def test_numbers_keep_width_and_nulls(self, frame, payload, table):
        widths = {
            "Int8": pa.int8(), "Int16": pa.int16(), "Int32": pa.int32(), "Int64": pa.int64(),
            "UInt8": pa.uint8(), "UInt16": pa.uint16(), "UInt32": pa.uint32(), "UInt64": pa.uint64(),
            "int8": pa.int8(), "uint64": pa.uint64(), "float32": pa.float32(), "float64": pa.float64(),
            "Float32": pa.float32(), "Float64": pa.float64(), "arrow_int": pa.int16(),
        }
        meta = meta_by_name(payload)
        for name, arrow_type in widths.items():
            assert table.schema.field(name).type == arrow_type, name
            assert table.column(name).to_pylist() == expected_from_pandas(frame[name]), name
            assert meta[name]["kind"] == "numeric"
            assert meta[name]["null_count"] == int(frame[name].isna().sum()), name
        assert meta["Int64"]["dtype"] == "Int64" and meta["Int64"]["arrow_type"] == "int64"

    def test_float16_arrives_as_float32(self, frame, table):
        assert table.schema.field("float16").type == pa.float32()
        assert table.column("float16").to_pylist() == [float(v) for v in frame["float16"]]

    def test_booleans(self, frame, payload, table):
        for name in ("bool", "boolean", "object_bool"):
            assert table.schema.field(name).type == pa.bool_(), name
            assert table.column(name).to_pylist() == expected_from_pandas(frame[name]), name
            assert meta_by_name(payload)[name]["kind"] == "bool"

    def test_categoricals_keep_their_categories(self, frame, payload, table):
        column = table.column("category").chunk(0)
        assert column.type == DICTIONARY
        assert column.dictionary.to_pylist() == ["b", "a", "unused"]  # pandas' order, unused kept
        assert column.to_pylist() == ["b", None, "a"]
        assert table.column("int_category").to_pylist() == ["10", "20", None]
        assert meta_by_name(payload)["category"]["kind"] == "categorical"

    def test_strings_become_dictionaries(self, frame, payload, table):
        for name in ("str", "object_str"):
            assert table.schema.field(name).type == DICTIONARY, name
            assert table.column(name).to_pylist() == expected_from_pandas(frame[name]), name
            assert meta_by_name(payload)[name]["kind"] == "string"

    def test_object_numbers(self, table):
        assert table.schema.field("object_int").type == pa.int64()
        assert table.column("object_int").to_pylist() == [1, None, 3]
        assert table.schema.field("object_float").type == pa.float64()
        assert table.column("object_float").to_pylist() == [1.0, 2.5, None]


class TestTimes:
    def test_datetimes_as_int64_with_unit(self):
        frame = pd.DataFrame(
            {
                "ns": pd.to_datetime(["2031-03-01 00:00", None, "1969-12-31 23:59"]).as_unit("ns"),
                "s": pd.to_datetime(["2031-03-01 00:00", "1970-01-01 00:00", None]).as_unit("s"),
                "tz": pd.to_datetime(["2031-03-01 00:00", None, "2031-07-01 00:00"]).tz_localize("Europe/Paris").as_unit("us"),
            }
        )
        payload = frame_to_ipc_batches(frame)
        table = decode(payload)
        meta = meta_by_name(payload)
        for name, unit in (("ns", "ns"), ("s", "s"), ("tz", "us")):
            assert table.schema.field(name).type == pa.int64()
            assert meta[name]["unit"] == unit and meta[name]["kind"] == "datetime"
            assert table.column(name).to_pylist() == epoch_counts(frame[name]), name
        assert meta["tz"]["timezone"] == "Europe/Paris"
        assert "timezone" not in meta["ns"]
        # Source: Python's datetime module. 2031-03-01 00:00 in Paris is 23:00 UTC the day before.
        utc_instant = dt.datetime(2031, 2, 28, 23, 0, tzinfo=dt.timezone.utc)
        assert table.column("tz")[0].as_py() == int(utc_instant.timestamp()) * 10**6
        assert table.column("ns")[2].as_py() == -60 * 10**9

    def test_timedeltas_as_int64_with_unit(self):
        frame = pd.DataFrame({"d": pd.to_timedelta(["10min", None, "-1s"]).as_unit("ms")})
        payload = frame_to_ipc_batches(frame)
        table = decode(payload)
        assert meta_by_name(payload)["d"] | {} == {
            "name": "d", "dtype": "timedelta64[ms]", "kind": "timedelta", "unit": "ms",
            "arrow_type": "int64", "null_count": 1,
        }
        assert table.column("d").to_pylist() == [600_000, None, -1000]

    def test_dates_as_days(self):
        days = [dt.date(2031, 3, 1), None, dt.date(1969, 12, 31)]
        frame = pd.DataFrame({"day": np.array(days, dtype=object)})
        payload = frame_to_ipc_batches(frame)
        # Source: Python's datetime module (date subtraction gives whole days).
        expected = [None if d is None else (d - dt.date(1970, 1, 1)).days for d in days]
        column = decode(payload).column("day").combine_chunks()
        assert column.type == pa.date32()
        assert column.view(pa.int32()).to_pylist() == expected == [22339, None, -1]
        assert meta_by_name(payload)["day"]["unit"] == "day"
        assert meta_by_name(payload)["day"]["arrow_type"] == "date32[day]"


class TestOtherLibraries:
    def test_polars_types(self):
        frame = pl.DataFrame(
            {
                "i": pl.Series([1, None, 3], dtype=pl.Int16),
                "u": pl.Series([1, 2, None], dtype=pl.UInt64),
                "f": pl.Series([0.5, None, float("nan")], dtype=pl.Float32),
                "b": [True, None, False],
                "s": ["a", None, "b"],
                "c": pl.Series(["x", "y", None], dtype=pl.Categorical),
                "e": pl.Series(["lo", "hi", "lo"], dtype=pl.Enum(["lo", "hi"])),
                "t": pl.Series([0, None, 1_000_000]).cast(pl.Datetime("us", "UTC")),
                "d": pl.Series([0, 1, None]).cast(pl.Date),
                "du": pl.Series([5, None, 7]).cast(pl.Duration("ms")),
                "dec": pl.Series(["1.25", "2.50", None]).cast(pl.Decimal(10, 2)),
            }
        )
        payload = frame_to_ipc_batches(frame)
        table = decode(payload)
        assert table.column("i").type == pa.int16() and table.column("i").to_pylist() == [1, None, 3]
        assert table.column("u").to_pylist() == [1, 2, None]
        floats = table.column("f").to_pylist()
        assert floats[:2] == [0.5, None] and np.isnan(floats[2])  # polars keeps NaN distinct from null
        assert table.column("b").to_pylist() == [True, None, False]
        for name in ("s", "c"):
            assert table.column(name).type == DICTIONARY, name
        # An Enum's categories have an order, and the dictionary says so.
        assert table.column("e").type == pa.dictionary(pa.int32(), pa.string(), ordered=True)
        assert table.column("s").to_pylist() == ["a", None, "b"]
        assert table.column("c").to_pylist() == ["x", "y", None]
        assert table.column("e").to_pylist() == ["lo", "hi", "lo"]
        assert table.column("t").to_pylist() == [0, None, 1_000_000]
        assert table.column("d").combine_chunks().view(pa.int32()).to_pylist() == [0, 1, None]
        assert table.column("du").to_pylist() == [5, None, 7]
        assert table.column("dec").to_pylist() == [1.25, 2.5, None]
        meta = meta_by_name(payload)
        assert meta["t"]["timezone"] == "UTC" and meta["du"]["unit"] == "ms" and meta["d"]["unit"] == "day"
        assert meta["e"]["kind"] == "categorical" and meta["s"]["kind"] == "string"

    def test_arrow_types_and_chunked_dictionaries(self):
        table = pa.table(
            {
                "view": pa.array(["a", None, "b"], pa.string_view()),
                "large": pa.array(["a", "c", None], pa.large_string()),
                "cat": pa.chunked_array([pa.array(["a", "b"]).dictionary_encode(), pa.array(["c"]).dictionary_encode()]),
                "half": pa.array(np.array([1.0, 2.0, 3.0], dtype=np.float16)),
                "date64": pa.array([0, 86_400_000, None], pa.date64()),
                "ns": pa.array([1, None, 3], pa.timestamp("ns")),
            }
        )
        payload = frame_to_ipc_batches(table)
        decoded = decode(payload)
        assert decoded.column("view").to_pylist() == ["a", None, "b"]
        assert decoded.column("large").to_pylist() == ["a", "c", None]
        # Two chunks with different dictionaries arrive as one column with one dictionary.
        assert decoded.column("cat").type == DICTIONARY
        assert decoded.column("cat").to_pylist() == ["a", "b", "c"]
        assert decoded.column("half").type == pa.float32()
        assert decoded.column("date64").to_pylist() == [0, 86_400_000, None]
        assert meta_by_name(payload)["date64"]["unit"] == "ms"
        assert decoded.column("ns").to_pylist() == [1, None, 3]


class TestRefusals:
    def test_mixed_object_column_names_column_and_types(self):
        with pytest.raises(BridgeError) as caught:
            frame_to_ipc_batches(pd.DataFrame({"ok": [1, 2, 3], "x": np.array([1, "two", None], dtype=object)}))
        assert str(caught.value).startswith("Column 'x' mixes int and str;")
        assert caught.value.detail == {"column": "x", "types": ["int", "str"]}

    def test_three_types_listed(self):
        with pytest.raises(BridgeError, match=r"Column 'y' mixes float, int and str;"):
            frame_to_ipc_batches(pd.DataFrame({"y": np.array([1, 2.5, "z"], dtype=object)}))

    def test_bytes_and_containers(self):
        with pytest.raises(BridgeError, match=r"Column 'raw' holds bytes; decode them to str first"):
            frame_to_ipc_batches(pd.DataFrame({"raw": np.array([b"a", b"b"], dtype=object)}))
        with pytest.raises(BridgeError, match=r"Column 'lists' holds list values"):
            frame_to_ipc_batches(pd.DataFrame({"lists": pd.Series([[1], [2, 3]], dtype=object)}))

    def test_unsupported_arrow_type_is_named(self):
        with pytest.raises(BridgeError, match=r"Column 'nested' has type list<item: int64>"):
            frame_to_ipc_batches(pa.table({"nested": pa.array([[1], [2]])}))

    def test_complex_numbers(self):
        with pytest.raises(BridgeError, match=r"Column 'z' of type complex128 cannot be sent"):
            frame_to_ipc_batches(pd.DataFrame({"z": [1j, 2j]}))

    def test_unknown_and_ambiguous_columns(self):
        frame = pd.DataFrame([[1, 2, 3]], columns=["a", "b", "b"])
        with pytest.raises(BridgeError, match=r"The frame has no column 'nope'") as caught:
            frame_to_ipc_batches(frame, ["a", "nope"])
        assert caught.value.detail == {"column": "nope"}
        with pytest.raises(BridgeError, match=r"The frame has 2 columns named 'b'"):
            frame_to_ipc_batches(frame, ["b"])
        with pytest.raises(BridgeError, match=r"Column 'a' is requested twice"):
            frame_to_ipc_batches(frame, ["a", "a"])
        with pytest.raises(BridgeError, match=r"Choose at least one column"):
            frame_to_ipc_batches(frame, [])
        with pytest.raises(BridgeError, match=r"'columns' must be a list of column names"):
            frame_to_ipc_batches(frame, "a")

    @pytest.mark.parametrize("option, value", [("row_cap", 0), ("row_cap", -5), ("row_cap", "10"), ("row_cap", True), ("seed", -1), ("seed", 1.5)])
    def test_bad_options_are_named(self, option, value):
        frame = pd.DataFrame({"a": [1, 2]})
        wire_name = "sample_seed" if option == "seed" else option
        with pytest.raises(BridgeError, match=f"'{wire_name}' must be a whole number") as caught:
            frame_to_ipc_batches(frame, **{option: value})
        assert caught.value.detail == {"option": wire_name}

    def test_not_a_frame(self):
        with pytest.raises(BridgeError, match="Not a pandas, polars or Arrow frame: dict"):
            frame_to_ipc_batches({"a": [1]})


class TestNonStringColumnNames:
    def test_columns_are_requested_by_their_listed_names(self):
        frame = pd.DataFrame({0: [1, 2], ("a", "b"): [3.0, 4.0]})
        table = decode(frame_to_ipc_batches(frame, ["0", "('a', 'b')"]))
        assert table.column_names == ["0", "('a', 'b')"]
        assert table.column("0").to_pylist() == [1, 2]


@pytest.fixture(scope="module")
def batch_frame():
    """5000 rows of numbers, nullable floats, booleans, categories and strings."""
    rows = 5000
    numbers = np.arange(rows)
    return pd.DataFrame(
        {
            "row": numbers,
            "maybe": pd.array(np.where(numbers % 3 == 0, None, numbers / 7), dtype="Float64"),
            "flag": numbers % 5 == 0,
            "zone": pd.Categorical(np.array(["n", "s", "e", "w"])[numbers % 4]),
            "label": pd.array([f"item {i % 50}" for i in numbers], dtype="str"),
        }
    )


class TestBatches:
    @pytest.fixture
    def frame(self, batch_frame):
        return batch_frame

    @pytest.mark.parametrize("limit", [512, 4096, 65_536])
    def test_every_record_batch_within_limit(self, frame, limit):
        payload = frame_to_ipc_batches(frame, max_batch_bytes=limit)
        pieces = list(payload.iter_pieces())
        assert len(pieces) == payload.batch_count > 1
        record_sizes = []
        for index, piece in enumerate(pieces):
            found = messages(piece)
            kinds = [kind for kind, _ in found]
            # Dictionaries travel once, with the schema, in the first piece only.
            expected_kinds = ["schema", "dictionary", "dictionary", "record batch"] if index == 0 else ["record batch"]
            assert kinds == expected_kinds, (index, kinds)
            record_sizes.append(found[-1][1])
        assert max(record_sizes) <= limit
        assert pieces[-1].endswith(END_OF_STREAM)
        assert not any(piece.endswith(END_OF_STREAM) for piece in pieces[:-1])
        # Close to the limit, not needlessly small (all but the last batch above half of it).
        assert min(record_sizes[:-1]) > limit // 2
        table = pa.ipc.open_stream(b"".join(pieces)).read_all()
        assert table.num_rows == len(frame)
        assert table.column("row").to_pylist() == list(range(len(frame)))
        assert table.column("maybe").to_pylist() == expected_from_pandas(frame["maybe"])
        assert table.column("label").to_pylist() == frame["label"].tolist()

    def test_one_batch_when_it_fits(self, frame):
        payload = frame_to_ipc_batches(frame)
        assert payload.batch_count == 1
        (piece,) = payload.iter_pieces()
        assert len(piece) == payload.bytes_total

    def test_pieces_can_be_regenerated(self, frame):
        payload = frame_to_ipc_batches(frame, max_batch_bytes=4096)
        assert list(payload.iter_pieces()) == list(payload.iter_pieces())

    def test_limit_below_one_row(self, frame):
        with pytest.raises(BridgeError, match=r"One row of the selected columns takes \d+ bytes"):
            frame_to_ipc_batches(frame, max_batch_bytes=64)

    def test_empty_frame_still_sends_its_schema(self, frame):
        payload = frame_to_ipc_batches(frame.iloc[0:0])
        assert payload.batch_count == 1 and payload.rows == 0
        table = decode(payload)
        assert table.num_rows == 0
        assert table.schema.field("zone").type == DICTIONARY
        assert table.schema.field("row").type == pa.int64()


class TestSampling:
    @pytest.fixture
    def frame(self):
        return pd.DataFrame({"row": np.arange(10_000), "half": np.arange(10_000) / 2})

    def test_above_the_cap_a_sorted_seeded_sample(self, frame):
        payload = frame_to_ipc_batches(frame, row_cap=500, seed=11)
        rows = decode(payload).column("row").to_numpy()
        assert payload.sampled and payload.seed == 11
        assert payload.rows == 500 and payload.original_rows == 10_000
        assert len(np.unique(rows)) == 500
        assert np.all(np.diff(rows) > 0)  # the frame's row order is kept
        # The contract: numpy's default_rng(seed).choice without replacement, sorted.
        expected = np.sort(np.random.default_rng(11).choice(10_000, size=500, replace=False))
        np.testing.assert_array_equal(rows, expected)
        # Rows stay whole: the other column belongs to the same rows.
        np.testing.assert_array_equal(decode(payload).column("half").to_numpy(), rows / 2)

    def test_same_seed_same_rows_other_seed_other_rows(self, frame):
        first = decode(frame_to_ipc_batches(frame, row_cap=500, seed=3)).column("row").to_pylist()
        again = decode(frame_to_ipc_batches(frame, row_cap=500, seed=3)).column("row").to_pylist()
        other = decode(frame_to_ipc_batches(frame, row_cap=500, seed=4)).column("row").to_pylist()
        assert first == again
        assert first != other

    def test_every_library_samples_the_same_rows(self, frame):
        rows = [
            decode(frame_to_ipc_batches(source, row_cap=321, seed=5)).column("row").to_pylist()
            for source in (frame, pl.from_pandas(frame), pa.Table.from_pandas(frame, preserve_index=False))
        ]
        assert rows[0] == rows[1] == rows[2]

    def test_at_or_below_the_cap_nothing_is_sampled(self, frame):
        payload = frame_to_ipc_batches(frame, row_cap=10_000)
        assert not payload.sampled and payload.rows == payload.original_rows == 10_000
        assert sample_indices(10_000, 10_000, 0) is None

    def test_default_cap(self):
        assert FETCH_ROW_CAP_DEFAULT == 2_000_000
        payload = frame_to_ipc_batches(pd.DataFrame({"a": [1]}), row_cap=None, seed=None)
        assert payload.seed == 0 and not payload.sampled
