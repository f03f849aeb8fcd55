"""Which data frames live in the user's namespace, and what their columns are.

Pure functions: they take objects and a namespace mapping and return plain JSON-ready dicts,
so tests call them without a kernel. Listing runs after every cell, so it must stay cheap:
no deep memory accounting, and type inference of object columns looks at a small head only.
"""

from __future__ import annotations

import sys
from typing import Any, Iterable, Mapping

import pyarrow as pa

from ._scan import duckdb_column_kind, duckdb_relation_type, spark_column_kind, spark_dataframe_types

#: Column kinds the front end knows (src/bridge/protocol.ts, ``ColumnKind``).
COLUMN_KINDS = ("numeric", "categorical", "string", "bool", "datetime", "timedelta", "other")

#: Names IPython keeps for its own use; never listed, even when they hold a frame.
IPYTHON_NAMES = frozenset({"In", "Out", "exit", "quit", "get_ipython"})

#: How many leading values of an object column the listing inspects to guess its kind.
OBJECT_SNIFF_ROWS = 1000


#: Frame kinds whose rows stay in an engine that scans them (scanned frames).
SCANNED_KINDS = ("duckdb", "spark")


def frame_kind(obj: Any) -> str | None:
    """'pandas', 'polars', 'arrow', 'duckdb' or 'spark' when ``obj`` is a frame the bridge knows.

    polars, DuckDB and PySpark are only consulted when the user already imported them: listing
    must not import them (it runs after every cell).
    """
    pd = sys.modules.get("pandas")
    if pd is not None and isinstance(obj, pd.DataFrame):
        return "pandas"
    pl = sys.modules.get("polars")
    if pl is not None and isinstance(obj, pl.DataFrame):
        return "polars"
    if isinstance(obj, pa.Table):
        return "arrow"
    relation = duckdb_relation_type()
    if relation is not None and isinstance(obj, relation):
        return "duckdb"
    spark_types = spark_dataframe_types()
    if spark_types and isinstance(obj, spark_types):
        return "spark"
    return None


def arrow_column_kind(dtype: pa.DataType) -> str:
    """The column kind of an Arrow type."""
    if pa.types.is_boolean(dtype):
        return "bool"
    if pa.types.is_integer(dtype) or pa.types.is_floating(dtype) or pa.types.is_decimal(dtype):
        return "numeric"
    if pa.types.is_dictionary(dtype):
        return "categorical"
    if pa.types.is_string(dtype) or pa.types.is_large_string(dtype) or pa.types.is_string_view(dtype):
        return "string"
    if pa.types.is_timestamp(dtype) or pa.types.is_date(dtype):
        return "datetime"
    if pa.types.is_duration(dtype):
        return "timedelta"
    return "other"


def _object_kind(values: Any) -> str:
    """Guess the kind of a pandas object column from its first few values."""
    import pandas as pd

    inferred = pd.api.types.infer_dtype(values[:OBJECT_SNIFF_ROWS], skipna=True)
    return {
        "string": "string",
        "empty": "string",
        "boolean": "bool",
        "integer": "numeric",
        "floating": "numeric",
        "mixed-integer-float": "numeric",
        "decimal": "numeric",
        "datetime": "datetime",
        "datetime64": "datetime",
        "date": "datetime",
        "timedelta": "timedelta",
        "timedelta64": "timedelta",
    }.get(inferred, "other")


def pandas_column_kind(dtype: Any, values: Any = None) -> str:
    """The column kind of a pandas dtype; object columns are judged by a small head of ``values``."""
    import pandas as pd

    if isinstance(dtype, pd.ArrowDtype):
        return arrow_column_kind(dtype.pyarrow_dtype)
    if isinstance(dtype, pd.CategoricalDtype):
        return "categorical"
    if isinstance(dtype, pd.StringDtype):
        return "string"
    if pd.api.types.is_bool_dtype(dtype):
        return "bool"
    if pd.api.types.is_datetime64_any_dtype(dtype):
        return "datetime"
    if pd.api.types.is_timedelta64_dtype(dtype):
        return "timedelta"
    if pd.api.types.is_complex_dtype(dtype):
        return "other"
    if pd.api.types.is_numeric_dtype(dtype):
        return "numeric"
    if dtype == object and values is not None:
        return _object_kind(values)
    return "other"


def polars_column_kind(dtype: Any) -> str:
    """The column kind of a polars dtype."""
    import polars as pl

    if dtype == pl.Boolean:
        return "bool"
    if dtype == pl.Categorical or dtype == pl.Enum:
        return "categorical"
    if dtype == pl.String:
        return "string"
    if dtype.is_numeric():
        return "numeric"
    if dtype == pl.Datetime or dtype == pl.Date:
        return "datetime"
    if dtype == pl.Duration:
        return "timedelta"
    return "other"


def column_label(key: Any) -> str:
    """The name the front end shows for a column key (pandas allows non-string keys)."""
    return key if isinstance(key, str) else str(key)


def describe_scanned(obj: Any, kind: str) -> dict[str, Any]:
    """Describe a scanned frame from its schema alone: no query, no Spark job.

    Its rows and bytes are unknown (null): counting them is a query or a job.
    """
    if kind == "duckdb":
        import duckdb

        columns = [
            {"name": name, "dtype": str(dtype), "kind": duckdb_column_kind(str(dtype))}
            for name, dtype in zip(obj.columns, obj.types)
        ]
        engine = {"name": "duckdb", "version": str(duckdb.__version__)}
    else:
        columns = [
            {"name": f.name, "dtype": f.dataType.simpleString(), "kind": spark_column_kind(f.dataType)}
            for f in obj.schema.fields
        ]
        engine = {"name": "spark", "version": str(obj.sparkSession.version)}
    return {"kind": kind, "rows": None, "columns": columns, "memory_bytes": None, "engine": engine}


def describe_frame(obj: Any) -> dict[str, Any]:
    """Describe one frame: kind, rows, columns (name, dtype, kind) and approximate bytes.

    Scanned frames (DuckDB, Spark) have null rows and bytes and name their engine.
    Raises TypeError when ``obj`` is not a frame the bridge knows.
    """
    kind = frame_kind(obj)
    if kind in SCANNED_KINDS:
        return describe_scanned(obj, kind)
    if kind == "pandas":
        columns = []
        for i, (key, dtype) in enumerate(zip(obj.columns, obj.dtypes)):
            head = obj.iloc[:OBJECT_SNIFF_ROWS, i].to_numpy() if dtype == object else None
            columns.append({"name": column_label(key), "dtype": str(dtype), "kind": pandas_column_kind(dtype, head)})
        rows = len(obj)
        # deep=False: counting the bytes of every Python string is O(rows); listing runs after
        # every cell, so object columns are counted as pointers only.
        memory = int(obj.memory_usage(index=True, deep=False).sum())
    elif kind == "polars":
        columns = [
            {"name": name, "dtype": str(dtype), "kind": polars_column_kind(dtype)}
            for name, dtype in obj.schema.items()
        ]
        rows = obj.height
        memory = int(obj.estimated_size())
    elif kind == "arrow":
        columns = [
            {"name": field.name, "dtype": str(field.type), "kind": arrow_column_kind(field.type)}
            for field in obj.schema
        ]
        rows = obj.num_rows
        memory = int(obj.get_total_buffer_size())
    else:
        raise TypeError(f"not a pandas, polars or Arrow frame: {type(obj).__name__}")
    return {"kind": kind, "rows": int(rows), "columns": columns, "memory_bytes": memory}


def _visible_names(namespace: Mapping[str, Any], hidden: Mapping[str, Any]) -> Iterable[tuple[str, Any]]:
    # A snapshot: the namespace may change on the main thread while a comm handler lists it.
    for name, value in list(namespace.items()):
        if not isinstance(name, str) or name.startswith("_") or name in IPYTHON_NAMES:
            continue
        if name in hidden and hidden[name] is value:
            continue
        yield name, value


def list_frames(
    namespace: Mapping[str, Any], hidden: Mapping[str, Any] | None = None
) -> tuple[list[dict[str, Any]], list[dict[str, str]]]:
    """Every frame in ``namespace`` (sorted by name), and the frames that could not be described.

    Skips names starting with '_' (IPython's output history lives there), IPython's own names,
    and names in ``hidden`` still bound to the object IPython put there.
    """
    frames: list[dict[str, Any]] = []
    skipped: list[dict[str, str]] = []
    for name, value in _visible_names(namespace, hidden or {}):
        if frame_kind(value) is None:
            continue
        try:
            frames.append({"name": name, **describe_frame(value)})
        except Exception as error:  # noqa: BLE001 - one odd frame must not hide the others
            skipped.append({"name": name, "reason": f"{type(error).__name__}: {error}"})
    frames.sort(key=lambda frame: frame["name"])
    return frames, skipped
