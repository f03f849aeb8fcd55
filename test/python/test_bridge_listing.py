"""Listing the frames of a namespace (polyadic/_listing.py)."""

from __future__ import annotations

import subprocess
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

from polyadic._listing import describe_frame, list_frames  # noqa: E402


def kinds(description):
    return {c["name"]: c["kind"] for c in description["columns"]}


class TestListFrames:
    def test_lists_every_library_and_skips_non_frames(self):
        namespace = {
            "pandas_frame": pd.DataFrame({"a": [1, 2]}),
            "polars_frame": pl.DataFrame({"a": [1, 2, 3]}),
            "arrow_table": pa.table({"a": [1]}),
            "a_series": pd.Series([1, 2]),
            "an_array": np.zeros(3),
            "a_lazy_frame": pl.DataFrame({"a": [1]}).lazy(),
            "a_batch": pa.record_batch({"a": [1]}),
            "a_dict": {"x": pd.DataFrame()},
            "a_number": 3,
        }
        frames, skipped = list_frames(namespace)
        assert [(f["name"], f["kind"], f["rows"]) for f in frames] == [
            ("arrow_table", "arrow", 1),
            ("pandas_frame", "pandas", 2),
            ("polars_frame", "polars", 3),
        ]
        assert skipped == []

    def test_skips_private_names_and_ipython_history(self):
        frame = pd.DataFrame({"a": [1]})
        namespace = {
            "_": frame,
            "__": frame,
            "_3": frame,
            "_hidden": frame,
            "Out": {3: frame},
            "In": ["", "frame"],
            "exit": frame,
            "visible": frame,
        }
        frames, _ = list_frames(namespace)
        assert [f["name"] for f in frames] == ["visible"]

    def test_hidden_names_only_while_bound_to_ipythons_object(self):
        ipython_object = pd.DataFrame({"a": [1]})
        users_frame = pd.DataFrame({"b": [2]})
        hidden = {"kept_by_ipython": ipython_object, "rebound": object()}
        namespace = {"kept_by_ipython": ipython_object, "rebound": users_frame}
        frames, _ = list_frames(namespace, hidden)
        assert [f["name"] for f in frames] == ["rebound"]

    def test_names_with_unusual_characters(self):
        frame = pd.DataFrame({"a": [1]})
        namespace = {"données_été": frame, "with space": frame, "名前": frame, "x'); alert(1) //": frame}
        frames, _ = list_frames(namespace)
        assert sorted(f["name"] for f in frames) == sorted(namespace)

    def test_a_frame_that_cannot_be_described_is_reported_not_fatal(self):
        class Broken(pd.DataFrame):
            def memory_usage(self, *args, **kwargs):
                raise RuntimeError("no memory for you")

        frames, skipped = list_frames({"fine": pd.DataFrame({"a": [1]}), "broken": Broken({"a": [1]})})
        assert [f["name"] for f in frames] == ["fine"]
        assert skipped == [{"name": "broken", "reason": "RuntimeError: no memory for you"}]

    def test_namespace_changing_during_listing_is_tolerated(self):
        # The listing runs on a comm thread while the main thread may rebind names; it works on
        # a snapshot, so a namespace that grows while being read does not raise.
        class Growing(dict):
            def items(self):
                snapshot = list(super().items())
                self[f"late_{len(self)}"] = pd.DataFrame()
                return snapshot

        frames, _ = list_frames(Growing(first=pd.DataFrame({"a": [1]})))
        assert [f["name"] for f in frames] == ["first"]


class TestDescribeFrame:
    def test_pandas_columns_and_memory(self):
        frame = pd.DataFrame(
            {
                "int": [1, 2, 3],
                "nullable_int": pd.array([1, None, 3], dtype="Int64"),
                "float": [0.5, np.nan, 1.0],
                "flag": [True, False, True],
                "nullable_flag": pd.array([True, None, False], dtype="boolean"),
                "text": pd.array(["a", None, "b"], dtype="str"),
                "object_text": np.array(["a", None, "b"], dtype=object),
                "mixed": np.array(["a", 1, None], dtype=object),
                "category": pd.Categorical(["x", "y", "x"]),
                "when": pd.to_datetime(["2031-03-01", None, "2031-03-02"]),
                "when_tz": pd.date_range("2031-03-01", periods=3, tz="UTC"),
                "how_long": pd.to_timedelta(["1s", None, "2s"]),
                "complex": [1j, 2j, 3j],
                "arrow_backed": pd.Series([1, 2, 3], dtype="int32[pyarrow]"),
                0: [9, 9, 9],
            }
        )
        description = describe_frame(frame)
        assert description["kind"] == "pandas"
        assert description["rows"] == 3
        assert kinds(description) == {
            "int": "numeric",
            "nullable_int": "numeric",
            "float": "numeric",
            "flag": "bool",
            "nullable_flag": "bool",
            "text": "string",
            "object_text": "string",
            "mixed": "other",
            "category": "categorical",
            "when": "datetime",
            "when_tz": "datetime",
            "how_long": "timedelta",
            "complex": "other",
            "arrow_backed": "numeric",
            "0": "numeric",
        }
        dtypes = {c["name"]: c["dtype"] for c in description["columns"]}
        assert dtypes["nullable_int"] == "Int64" and dtypes["category"] == "category"
        # Source: pandas' own shallow count.
        assert description["memory_bytes"] == int(frame.memory_usage(index=True, deep=False).sum())

    def test_polars_columns_and_memory(self):
        frame = pl.DataFrame(
            {
                "i": pl.Series([1, None, 3], dtype=pl.Int16),
                "f": pl.Series([0.5, None, 1.0], dtype=pl.Float32),
                "b": [True, None, False],
                "s": ["a", None, "b"],
                "c": pl.Series(["x", "y", "x"], dtype=pl.Categorical),
                "e": pl.Series(["x", "y", "x"], dtype=pl.Enum(["x", "y"])),
                "t": pl.Series([1, 2, 3]).cast(pl.Datetime("us", "UTC")),
                "d": pl.Series([1, 2, 3]).cast(pl.Date),
                "du": pl.Series([1, 2, 3]).cast(pl.Duration("ms")),
                "dec": pl.Series([1, 2, 3]).cast(pl.Decimal(10, 2)),
                "l": [[1], [2], []],
            }
        )
        description = describe_frame(frame)
        assert description["kind"] == "polars" and description["rows"] == 3
        assert kinds(description) == {
            "i": "numeric",
            "f": "numeric",
            "b": "bool",
            "s": "string",
            "c": "categorical",
            "e": "categorical",
            "t": "datetime",
            "d": "datetime",
            "du": "timedelta",
            "dec": "numeric",
            "l": "other",
        }
        assert description["memory_bytes"] == frame.estimated_size()  # source: polars

    def test_arrow_columns_and_memory(self):
        table = pa.table(
            {
                "i": pa.array([1, None], pa.uint16()),
                "h": pa.array(np.array([1.0, 2.0], dtype=np.float16)),
                "b": pa.array([True, None]),
                "s": pa.array(["a", "b"], pa.large_string()),
                "v": pa.array(["a", "b"], pa.string_view()),
                "c": pa.array(["a", "b"]).dictionary_encode(),
                "t": pa.array([1, 2], pa.timestamp("s")),
                "d": pa.array([1, 2], pa.date32()),
                "du": pa.array([1, 2], pa.duration("ns")),
                "bin": pa.array([b"x", b"y"]),
            }
        )
        description = describe_frame(table)
        assert description["kind"] == "arrow" and description["rows"] == 2
        assert kinds(description) == {
            "i": "numeric",
            "h": "numeric",
            "b": "bool",
            "s": "string",
            "v": "string",
            "c": "categorical",
            "t": "datetime",
            "d": "datetime",
            "du": "timedelta",
            "bin": "other",
        }
        assert description["memory_bytes"] == table.get_total_buffer_size()  # source: pyarrow

    def test_refuses_non_frames(self):
        with pytest.raises(TypeError, match="not a pandas, polars or Arrow frame: list"):
            describe_frame([1, 2])


def test_listing_does_not_import_polars():
    # The listing runs after every cell; it must not pull in a library the user never imported.
    code = (
        "import sys; sys.path.insert(0, sys.argv[1]);"
        "import pandas as pd; from polyadic._listing import list_frames;"
        "frames, _ = list_frames({'x': pd.DataFrame({'a': [1]}), 'y': 1});"
        "assert [f['name'] for f in frames] == ['x'];"
        "print('polars' in sys.modules)"
    )
    done = subprocess.run([sys.executable, "-W", "ignore", "-c", code, str(ROOT)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "False"
