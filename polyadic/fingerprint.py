"""The ``pdfp1`` fingerprint of a frame's columns, byte for byte as the front end computes it.

A Polyadic record keeps a SHA-256 fingerprint of the columns an analysis read, so that a change
of the data can be noticed (docs/fingerprint.md states the layout). The front end computes it
with WebCrypto on the columns it received from the kernel (src/record/fingerprint.ts); this
module computes the same value in the kernel with :mod:`hashlib`, from the same Arrow table the
bridge sends (``_arrow.frame_to_table``), so ``polyadic.fingerprint(df, [...])`` can be compared
with a record's ``source.fingerprint.sha256``.

:func:`fingerprint_table` fingerprints an Arrow table as it is, mirroring how the CLI reads an
Arrow file (src/engine/table.ts): booleans are the categories ``false``/``true``, strings and
dictionaries are categorical, numbers, dates, times, timestamps and durations are numeric in
their stored unit.
"""

from __future__ import annotations

import hashlib
import re
import struct
from typing import Any, Sequence

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

from ._arrow import frame_to_table, sample_indices
from ._errors import BridgeError

#: Name of the canonical encoding.
ENCODING = "pdfp1"
#: The bytes that start the fingerprint input.
MAGIC = b"PDFP1"
#: Kind byte of a numeric column.
KIND_NUMERIC = 0x01
#: Kind byte of a categorical column.
KIND_CATEGORICAL = 0x02
#: The canonical quiet NaN written for every missing numeric value.
CANONICAL_NAN = struct.pack("<Q", 0x7FF8000000000000)

_ROW = np.dtype([("flag", "u1"), ("value", "<f8")])  # 9 bytes, no padding
_SURROGATE = re.compile("[\ud800-\udfff]")


def _utf8(text: str) -> bytes:
    # JavaScript's TextEncoder writes a lone surrogate as U+FFFD; do the same
    return _SURROGATE.sub("\ufffd", text).encode("utf-8")


def _head(name: str, kind: int, rows: int) -> bytes:
    if rows > 0xFFFFFFFF:
        raise BridgeError(f"Column {name!r} has {rows} rows; a fingerprint covers at most 4294967295.", column=name)
    encoded = _utf8(name)
    return struct.pack("<I", len(encoded)) + encoded + bytes([kind]) + struct.pack("<I", rows)


def _numeric_values(array: pa.Array) -> np.ndarray:
    """float64 values of a numeric Arrow array (nulls as 0, masked separately)."""
    kind = array.type
    if pa.types.is_timestamp(kind) or pa.types.is_duration(kind) or pa.types.is_date64(kind) or pa.types.is_time64(kind):
        array = array.view(pa.int64())
    elif pa.types.is_date32(kind) or pa.types.is_time32(kind):
        array = array.view(pa.int32())
    elif pa.types.is_decimal(kind):
        array = array.cast(pa.float64(), safe=False)
    if array.null_count:
        array = pc.fill_null(array, 0)
    # integers convert with round-to-nearest-even, as JavaScript's Number(bigint) does
    return np.asarray(array.to_numpy(zero_copy_only=False)).astype("<f8")


def _encode_numeric(name: str, array: pa.Array) -> bytes:
    n = len(array)
    values = _numeric_values(array)
    missing = np.isnan(values)
    if array.null_count:
        missing |= np.asarray(array.is_null().to_numpy(zero_copy_only=False), dtype=bool)
    rows = np.empty(n, dtype=_ROW)
    rows["flag"] = missing
    values = values.copy()
    values[values == 0] = 0.0  # −0 → +0
    rows["value"] = values
    rows["value"][missing] = np.frombuffer(CANONICAL_NAN, dtype="<f8")[0]
    return _head(name, KIND_NUMERIC, n) + rows.tobytes()


def _category_text(value: Any, name: str) -> str:
    """A dictionary entry as the JavaScript reader turns it into text (String(entry))."""
    if isinstance(value, str):
        return value
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    raise BridgeError(
        f"Column {name!r} is a dictionary of {type(value).__name__} values; the fingerprint reads "
        "dictionaries of strings, integers or booleans. Convert the categories to strings first.",
        column=name,
    )


def _encode_categorical(name: str, array: pa.Array) -> bytes:
    n = len(array)
    if pa.types.is_boolean(array.type):
        entries: list[Any] = ["false", "true"]
        codes = pc.cast(array, pa.int32())
    else:
        if not pa.types.is_dictionary(array.type):
            array = array.dictionary_encode()
        entries = array.dictionary.to_pylist()
        codes = array.indices
    pieces = []
    for entry in entries:
        if entry is None:
            pieces.append(b"\x01")
        else:
            text = _utf8(_category_text(entry, name))
            pieces.append(b"\x00" + struct.pack("<I", len(text)) + text)
    pieces.append(b"\x01")  # missing rows point here
    filled = pc.fill_null(codes.cast(pa.int64()), len(entries))
    index = filled.to_numpy(zero_copy_only=False).tolist()
    return _head(name, KIND_CATEGORICAL, n) + b"".join(map(pieces.__getitem__, index))


def encode_column(name: str, array: pa.Array | pa.ChunkedArray) -> bytes:
    """The canonical encoding of one column (docs/fingerprint.md)."""
    if isinstance(array, pa.ChunkedArray):
        array = array.combine_chunks() if array.num_chunks else pa.array([], type=array.type)
    kind = array.type
    if pa.types.is_boolean(kind) or pa.types.is_dictionary(kind):
        return _encode_categorical(name, array)
    if pa.types.is_string(kind) or pa.types.is_large_string(kind) or pa.types.is_string_view(kind):
        return _encode_categorical(name, array.cast(pa.string()))
    if pa.types.is_null(kind):
        return _encode_categorical(name, pa.nulls(len(array), pa.dictionary(pa.int32(), pa.string())))
    if (
        pa.types.is_integer(kind)
        or pa.types.is_floating(kind)
        or pa.types.is_decimal(kind)
        or pa.types.is_temporal(kind)
    ):
        return _encode_numeric(name, array)
    raise BridgeError(
        f"Column {name!r} has Arrow type {kind}, which Polyadic cannot read; convert it to numbers, "
        "strings, booleans or categories first.",
        column=name,
    )


def fingerprint_table(table: pa.Table) -> dict[str, Any]:
    """The fingerprint of every column of an Arrow table, in its column order.

    Returns ``{"encoding": "pdfp1", "sha256": <hex>, "columns": [{"name", "sha256"}, ...]}``,
    the shape the front end and ``polyadic fingerprint`` give.
    """
    digests = [hashlib.sha256(encode_column(name, table.column(i))).digest() for i, name in enumerate(table.column_names)]
    whole = hashlib.sha256(MAGIC + struct.pack("<I", len(digests)) + b"".join(digests)).hexdigest()
    return {
        "encoding": ENCODING,
        "sha256": whole,
        "columns": [{"name": name, "sha256": digest.hex()} for name, digest in zip(table.column_names, digests)],
    }


def fingerprint(
    frame: Any,
    columns: Sequence[str] | None = None,
    *,
    row_cap: int | None = None,
    sample_seed: int = 0,
) -> dict[str, Any]:
    """The fingerprint of columns of a pandas, polars or Arrow frame, as the panel computes it.

    The columns go through the same conversion the bridge applies before sending them (so
    categories, datetimes and nullable integers read as the panel reads them). With
    ``row_cap``, a frame with more rows is sampled as the bridge samples it (numpy's
    ``default_rng(sample_seed)``), to match a record whose ``source.sample`` states the cap and
    seed. See :func:`fingerprint_table` for the result.
    """
    table, _ = frame_to_table(frame, columns)
    if row_cap is not None:
        indices = sample_indices(table.num_rows, int(row_cap), int(sample_seed))
        if indices is not None:
            table = table.take(pa.array(indices))
    return fingerprint_table(table)


__all__ = ["ENCODING", "encode_column", "fingerprint", "fingerprint_table"]
