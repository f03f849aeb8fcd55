"""Turn selected columns of a frame into an Arrow IPC stream for the front end.

The stream follows one contract (src/bridge/protocol.ts), whatever the source library:

* integers and floats keep their width (float16 becomes float32, decimals become float64);
  missing values are nulls in the validity bitmap;
* booleans stay booleans (nullable ones with validity);
* categoricals and strings become ``dictionary<int32, utf8>`` (one dictionary for the whole
  stream, so every record batch shares it);
* datetimes and timedeltas become ``int64`` counts; the unit (and time zone, if any) is stated
  in the column metadata of the reply. ``date32`` columns stay ``date32`` (days since the
  epoch, unit ``"day"``), as the CLI's file readers read them, so a date column fingerprints
  the same from the kernel and from a file; ``date64`` becomes ``int64`` milliseconds.

Everything here is a pure function of its arguments, so tests call it without a kernel.
"""

from __future__ import annotations

import io
import math
import os
from dataclasses import dataclass, field
from typing import Any, Iterator, Sequence

import numpy as np
import pyarrow as pa

from ._errors import BridgeError
from ._handover import create_private, handover_dir, new_token, publish, sweep
from ._listing import SCANNED_KINDS, column_label, frame_kind
from ._scan import ScanEngine, sample_indices

#: Largest serialized record batch the kernel sends in one comm message.
FETCH_BATCH_MAX_BYTES = 64 * 1024 * 1024
#: Largest record batch of a handover file: one batch as a rule, so the page's columns are
#: views of the received bytes (Arrow's 32-bit offsets cap a string dictionary, not this).
FILE_BATCH_MAX_BYTES = 1 << 62
#: Rows sent when a request names no cap; above it, a seeded random sample is sent.
FETCH_ROW_CAP_DEFAULT = 2_000_000
#: Seed of the row sample when a request names none, so repeated fetches agree.
DEFAULT_SAMPLE_SEED = 0

_DICTIONARY = pa.dictionary(pa.int32(), pa.string())


@dataclass
class FetchPayload:
    """The selected columns of a frame, split into record batches ready to stream."""

    #: Per-column metadata: name, dtype (as the source library names it), kind, arrow_type,
    #: null_count, and unit / timezone for datetimes and timedeltas.
    columns: list[dict[str, Any]]
    rows: int
    original_rows: int
    sampled: bool
    seed: int
    schema: pa.Schema
    batches: list[pa.RecordBatch] = field(repr=False)
    #: Exact length of the whole stream: the sum of the lengths of all pieces.
    bytes_total: int = 0

    @property
    def batch_count(self) -> int:
        """How many pieces (one record batch each) the stream is sent in."""
        return len(self.batches)

    def iter_pieces(self) -> Iterator[bytes]:
        """The stream in pieces, one record batch each; concatenated, they are one IPC stream.

        The first piece also holds the schema and the dictionaries; the last also holds the
        end-of-stream marker. Pieces are serialized one at a time, so only one is in memory.
        """
        return _iter_pieces(self.schema, self.batches)


class _PieceSink(io.RawIOBase):
    """A write-only file that keeps what the IPC writer wrote since the last ``drain()``."""

    def __init__(self) -> None:
        super().__init__()
        self._parts: list[Any] = []

    def writable(self) -> bool:
        return True

    def write(self, data: Any) -> int:
        # The writer hands over views of the table's own buffers; joining copies them once.
        self._parts.append(data)
        return len(memoryview(data))

    def drain(self) -> bytes:
        piece = b"".join(self._parts)
        self._parts = []
        return piece


def _write_options() -> pa.ipc.IpcWriteOptions:
    # Uncompressed: the front end's Arrow reader decodes without codecs (DESIGN.md §8).
    return pa.ipc.IpcWriteOptions(compression=None)


def _iter_pieces(schema: pa.Schema, batches: Sequence[pa.RecordBatch]) -> Iterator[bytes]:
    sink = _PieceSink()
    writer = pa.ipc.new_stream(sink, schema, options=_write_options())
    last = len(batches) - 1
    for index, batch in enumerate(batches):
        writer.write_batch(batch)
        if index == last:
            writer.close()
        yield sink.drain()


def write_handover(payload: FetchPayload) -> tuple[str, int]:
    """Write the payload's stream to a private handover file (polyadic/_handover.py).

    Returns the token that names the file and its length. Raises HandoverUnavailable or
    OSError when the directory cannot be used; the caller then sends the pieces on the comm.
    """
    folder = handover_dir()
    sweep(folder)
    token = new_token()
    partial = folder / f".{token}.partial"
    create_private(partial)
    try:
        # The file exists with mode 0600; opening it for writing keeps that mode.
        with pa.OSFile(os.fspath(partial), "w") as sink:
            writer = pa.ipc.new_stream(sink, payload.schema, options=_write_options())
            for batch in payload.batches:
                writer.write_batch(batch)
            writer.close()
            size = sink.tell()
        publish(partial, token)
    except BaseException:
        try:
            os.unlink(partial)
        except OSError:
            pass
        raise
    return token, size


def stream_size(schema: pa.Schema, batches: Sequence[pa.RecordBatch]) -> int:
    """Exact byte length of the IPC stream of ``batches``, without building it."""
    counter = pa.MockOutputStream()
    writer = pa.ipc.new_stream(counter, schema, options=_write_options())
    for batch in batches:
        writer.write_batch(batch)
    writer.close()
    return counter.size()


# --- choosing columns and rows -------------------------------------------------------------


def _select(obj: Any, kind: str, columns: Sequence[str] | None) -> tuple[Any, list[str]]:
    """The frame restricted to ``columns`` (by the names the listing reported), and the names."""
    if kind == "pandas":
        labels = [column_label(key) for key in obj.columns]
    elif kind == "polars":
        labels = list(obj.columns)
    else:
        labels = list(obj.column_names)
    if columns is None:
        columns = labels
    if isinstance(columns, (str, bytes)) or not all(isinstance(c, str) for c in columns):
        raise BridgeError("'columns' must be a list of column names.", option="columns")
    if len(columns) == 0:
        raise BridgeError("Choose at least one column.", option="columns")
    seen: set[str] = set()
    positions: list[int] = []
    for name in columns:
        if name in seen:
            raise BridgeError(f"Column {name!r} is requested twice.", column=name)
        seen.add(name)
        matches = [i for i, label in enumerate(labels) if label == name]
        if not matches:
            raise BridgeError(f"The frame has no column {name!r}.", column=name)
        if len(matches) > 1:
            raise BridgeError(
                f"The frame has {len(matches)} columns named {name!r}; rename them to tell them apart.",
                column=name,
            )
        positions.append(matches[0])
    if kind == "pandas":
        return obj.iloc[:, positions], list(columns)
    if kind == "polars":
        return obj.select(list(columns)), list(columns)
    return obj.select(positions), list(columns)


def _row_count(obj: Any, kind: str) -> int:
    if kind == "pandas":
        return len(obj)
    if kind == "polars":
        return obj.height
    return obj.num_rows


def _take(obj: Any, kind: str, indices: np.ndarray) -> Any:
    if kind == "pandas":
        return obj.iloc[indices]
    if kind == "polars":
        return obj[indices]
    return obj.take(pa.array(indices))


# --- column normalization -----------------------------------------------------------------


def _type_names(values: Any) -> list[str]:
    """Names of the Python types among the non-missing values of an object column."""
    import pandas as pd

    names: set[str] = set()
    for value in values:
        if value is None or value is pd.NA or value is pd.NaT:
            continue
        if isinstance(value, float) and math.isnan(value):
            continue
        names.add(type(value).__name__)
    return sorted(names)


def _join_names(names: Sequence[str]) -> str:
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _object_to_arrow(values: np.ndarray, name: str) -> pa.Array:
    """Convert a pandas object column whose values share one type; refuse mixed columns."""
    import pandas as pd

    inferred = pd.api.types.infer_dtype(values, skipna=True)
    try:
        if inferred == "string":
            return pa.array(values, type=pa.string(), from_pandas=True)
        if inferred == "empty":
            return pa.nulls(len(values), _DICTIONARY)
        if inferred == "boolean":
            return pa.array(values, type=pa.bool_(), from_pandas=True)
        if inferred in ("floating", "mixed-integer-float", "decimal"):
            return pa.array(values, from_pandas=True).cast(pa.float64())
        if inferred in ("integer", "datetime", "datetime64", "date", "timedelta", "timedelta64"):
            return pa.array(values, from_pandas=True)
    except (pa.ArrowException, OverflowError, ValueError, TypeError) as error:
        raise BridgeError(
            f"Column {name!r} could not be converted ({inferred} values): {error}",
            column=name,
            types=_type_names(values),
        ) from None
    if inferred == "bytes":
        raise BridgeError(
            f"Column {name!r} holds bytes; decode them to str first.", column=name, types=["bytes"]
        )
    types = _type_names(values)
    if len(types) > 1:
        raise BridgeError(
            f"Column {name!r} mixes {_join_names(types)}; convert it to one type first "
            "(for example with .astype(str)).",
            column=name,
            types=types,
        )
    found = types[0] if types else inferred
    raise BridgeError(
        f"Column {name!r} holds {found} values, which Polyadic cannot analyse; "
        "convert them to numbers or strings first.",
        column=name,
        types=types,
    )


def _pandas_to_arrow(series: Any, name: str) -> pa.Array | pa.ChunkedArray:
    import pandas as pd

    dtype = series.dtype
    if isinstance(dtype, pd.CategoricalDtype):
        categorical = series.array
        codes = np.asarray(categorical.codes, dtype=np.int32)
        # The category labels as pandas prints them, so the panel shows what the user sees.
        dictionary = pa.array([str(c) for c in categorical.categories], type=pa.string())
        indices = pa.array(codes, mask=codes < 0)
        return pa.DictionaryArray.from_arrays(indices, dictionary, ordered=bool(categorical.ordered))
    if dtype == object:
        return _object_to_arrow(series.to_numpy(), name)
    try:
        return pa.array(series, from_pandas=True)
    except (pa.ArrowException, TypeError, ValueError) as error:
        raise BridgeError(
            f"Column {name!r} of type {dtype} cannot be sent: {error}", column=name, dtype=str(dtype)
        ) from None


def _unify(array: pa.Array | pa.ChunkedArray) -> pa.Array:
    """One contiguous array; chunks of a dictionary column first agree on one dictionary."""
    if isinstance(array, pa.Array):
        return array
    if array.num_chunks == 0:
        return pa.array([], type=array.type)
    if pa.types.is_dictionary(array.type) and array.num_chunks > 1:
        array = pa.Table.from_arrays([array], names=["c"]).unify_dictionaries().column(0)
    return array.combine_chunks()


def normalize_column(array: pa.Array | pa.ChunkedArray, name: str, dtype: str) -> tuple[pa.Array, dict[str, Any]]:
    """Bring one column to the wire contract (module docstring); return it with its metadata."""
    array = _unify(array)
    arrow_type = array.type
    meta: dict[str, Any] = {"name": name, "dtype": dtype}
    try:
        if pa.types.is_boolean(arrow_type):
            kind = "bool"
        elif pa.types.is_integer(arrow_type):
            kind = "numeric"
        elif pa.types.is_floating(arrow_type):
            kind = "numeric"
            if arrow_type == pa.float16():
                array = array.cast(pa.float32())
        elif pa.types.is_decimal(arrow_type):
            kind = "numeric"
            array = array.cast(pa.float64(), safe=False)
        elif pa.types.is_dictionary(arrow_type):
            kind = "categorical"
            dictionary = array.dictionary
            if dictionary.type != pa.string():
                dictionary = dictionary.cast(pa.string())
            array = pa.DictionaryArray.from_arrays(
                array.indices.cast(pa.int32()), dictionary, ordered=arrow_type.ordered
            )
        elif (
            pa.types.is_string(arrow_type)
            or pa.types.is_large_string(arrow_type)
            or pa.types.is_string_view(arrow_type)
        ):
            kind = "string"
            array = array.cast(pa.string()).dictionary_encode()
        elif pa.types.is_timestamp(arrow_type):
            kind = "datetime"
            meta["unit"] = arrow_type.unit
            if arrow_type.tz is not None:
                meta["timezone"] = arrow_type.tz
            array = array.view(pa.int64())
        elif pa.types.is_date32(arrow_type):
            # Arrow's own unit, as src/engine/table.ts reads a date32 column of a file.
            kind = "datetime"
            meta["unit"] = "day"
        elif pa.types.is_date64(arrow_type):
            kind = "datetime"
            meta["unit"] = "ms"
            array = array.view(pa.int64())
        elif pa.types.is_duration(arrow_type):
            kind = "timedelta"
            meta["unit"] = arrow_type.unit
            array = array.view(pa.int64())
        elif pa.types.is_null(arrow_type):
            kind = "categorical"
            array = pa.nulls(len(array), _DICTIONARY)
        else:
            raise BridgeError(
                f"Column {name!r} has type {arrow_type}, which Polyadic cannot analyse; "
                "convert it to numbers, strings or categories first.",
                column=name,
                dtype=dtype,
            )
    except pa.ArrowException as error:
        raise BridgeError(f"Column {name!r} could not be converted: {error}", column=name, dtype=dtype) from None
    meta["kind"] = kind
    meta["arrow_type"] = str(array.type)
    meta["null_count"] = int(array.null_count)
    return array, meta


def table_payload(
    table: pa.Table, metas: list[dict[str, Any]], original_rows: int, sampled: bool, seed: int, max_batch_bytes: int
) -> FetchPayload:
    """A payload of an Arrow table already in the wire layout."""
    batches = split_batches(table, max_batch_bytes)
    return FetchPayload(
        columns=metas,
        rows=table.num_rows,
        original_rows=original_rows,
        sampled=sampled,
        seed=seed,
        schema=table.schema,
        batches=batches,
        bytes_total=stream_size(table.schema, batches),
    )


def scanned_to_ipc_batches(
    engine: ScanEngine,
    columns: Sequence[str] | None,
    row_cap: Any,
    seed: Any,
    max_batch_bytes: int = FETCH_BATCH_MAX_BYTES,
) -> FetchPayload:
    """The preview of a scanned frame: a seeded sample of ``min(row_cap, rows)`` rows.

    The engine converts its rows to Arrow itself (DuckDB's Arrow reader, Spark's ``toArrow``);
    the columns are then brought to the wire contract like any other frame's.
    """
    if row_cap is None:
        raise BridgeError("A fetch of a scanned frame needs 'row_cap'.", option="row_cap")
    row_cap = _check_int(row_cap, "row_cap", 1)
    seed = DEFAULT_SAMPLE_SEED if seed is None else _check_int(seed, "sample_seed", 0)
    max_batch_bytes = _check_int(max_batch_bytes, "max_batch_bytes", 1)
    if columns is not None:
        columns = list(columns) if isinstance(columns, (list, tuple)) else columns
    table, original_rows = engine.sample(columns, row_cap, seed)
    dtypes = {c.name: c.dtype for c in engine.columns}
    arrays: list[pa.Array] = []
    metas: list[dict[str, Any]] = []
    for position, name in enumerate(table.column_names):
        array, meta = normalize_column(table.column(position), name, dtypes.get(name, str(table.schema.field(position).type)))
        arrays.append(array)
        metas.append(meta)
    normalized = pa.Table.from_arrays(arrays, names=table.column_names)
    return table_payload(
        normalized, metas, original_rows, normalized.num_rows < original_rows, seed, max_batch_bytes
    )


def frame_to_table(obj: Any, columns: Sequence[str] | None = None) -> tuple[pa.Table, list[dict[str, Any]]]:
    """The selected columns of a pandas, polars or Arrow frame as a normalized Arrow table."""
    kind = frame_kind(obj)
    if kind is None or kind in SCANNED_KINDS:
        raise BridgeError(f"Not a pandas, polars or Arrow frame: {type(obj).__name__}.")
    selected, names = _select(obj, kind, columns)
    return _convert(selected, kind, names)


def _convert(selected: Any, kind: str, names: list[str]) -> tuple[pa.Table, list[dict[str, Any]]]:
    arrays: list[pa.Array] = []
    metas: list[dict[str, Any]] = []
    if kind == "pandas":
        for position, name in enumerate(names):
            series = selected.iloc[:, position]
            array, meta = normalize_column(_pandas_to_arrow(series, name), name, str(series.dtype))
            arrays.append(array)
            metas.append(meta)
    else:
        if kind == "polars":
            dtypes = [str(dtype) for dtype in selected.schema.values()]
            table = selected.to_arrow()
        else:
            table = selected
            dtypes = [str(f.type) for f in table.schema]
        for position, name in enumerate(names):
            array, meta = normalize_column(table.column(position), name, dtypes[position])
            arrays.append(array)
            metas.append(meta)
    return pa.Table.from_arrays(arrays, names=names), metas


# --- record batches ------------------------------------------------------------------------


def split_batches(table: pa.Table, max_batch_bytes: int) -> list[pa.RecordBatch]:
    """Slice ``table`` into record batches whose serialized size is at most ``max_batch_bytes``.

    Always at least one batch, so an empty table still carries its schema. Dictionaries are
    not counted: they travel once, before the first batch.
    """
    combined = table.combine_chunks()
    whole = combined.to_batches()
    if not whole:
        return [pa.RecordBatch.from_arrays([pa.array([], type=f.type) for f in table.schema], schema=table.schema)]
    if len(whole) > 1:  # a table without chunks in some column; not expected after combine
        whole = [pa.concat_batches(whole)]
    batch = whole[0]
    rows = batch.num_rows
    size = pa.ipc.get_record_batch_size(batch)
    if size <= max_batch_bytes:
        return [batch]
    # Walk the rows front to back: guess a slice length from the average row (net of the
    # per-message overhead) and shorten the slice until it fits.
    overhead = pa.ipc.get_record_batch_size(batch.slice(0, 0))
    room = max(1, max_batch_bytes - overhead)
    guess = max(1, int(rows * room / max(1, size - overhead)))
    out: list[pa.RecordBatch] = []
    start = 0
    while start < rows:
        length = min(guess, rows - start)
        piece = batch.slice(start, length)
        piece_size = pa.ipc.get_record_batch_size(piece)
        while piece_size > max_batch_bytes:
            if length == 1:
                raise BridgeError(
                    f"One row of the selected columns takes {piece_size} bytes, more than the "
                    f"batch limit of {max_batch_bytes} bytes.",
                    option="max_batch_bytes",
                )
            shorter = int(length * room / max(1, piece_size - overhead))
            length = min(max(1, shorter), length - 1)
            piece = batch.slice(start, length)
            piece_size = pa.ipc.get_record_batch_size(piece)
        out.append(piece)
        start += length
    return out


def _check_int(value: Any, option: str, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise BridgeError(f"{option!r} must be a whole number of at least {minimum}, got {value!r}.", option=option)
    return int(value)


def frame_to_ipc_batches(
    obj: Any,
    columns: Sequence[str] | None = None,
    row_cap: int | None = FETCH_ROW_CAP_DEFAULT,
    seed: int | None = DEFAULT_SAMPLE_SEED,
    max_batch_bytes: int = FETCH_BATCH_MAX_BYTES,
) -> FetchPayload:
    """Prepare the selected columns of ``obj`` for streaming (see :class:`FetchPayload`).

    Above ``row_cap`` rows, a random sample of ``row_cap`` rows drawn with numpy's
    ``default_rng(seed)`` is sent, in the frame's row order.
    """
    row_cap = FETCH_ROW_CAP_DEFAULT if row_cap is None else _check_int(row_cap, "row_cap", 1)
    seed = DEFAULT_SAMPLE_SEED if seed is None else _check_int(seed, "sample_seed", 0)
    max_batch_bytes = _check_int(max_batch_bytes, "max_batch_bytes", 1)
    kind = frame_kind(obj)
    if kind is None or kind in SCANNED_KINDS:
        raise BridgeError(f"Not a pandas, polars or Arrow frame: {type(obj).__name__}.")
    selected, names = _select(obj, kind, columns)
    original_rows = _row_count(selected, kind)
    indices = sample_indices(original_rows, row_cap, seed)
    if indices is not None:
        selected = _take(selected, kind, indices)
    table, metas = _convert(selected, kind, names)
    batches = split_batches(table, max_batch_bytes)
    return FetchPayload(
        columns=metas,
        rows=table.num_rows,
        original_rows=original_rows,
        sampled=indices is not None,
        seed=seed,
        schema=table.schema,
        batches=batches,
        bytes_total=stream_size(table.schema, batches),
    )
