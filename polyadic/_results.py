"""Multiplet tables sent back by the front end: reassembly of chunks and storage per analysis.

The browser cannot send one large message to the kernel (the server refuses messages over
10 MiB), so it cuts the Arrow IPC stream of a multiplet table into chunks. The chunks of one
analysis may arrive on different threads (comm handlers may run on kernel subshells), so every
access to the shared state holds one lock.
"""

from __future__ import annotations

import threading
from copy import deepcopy
from collections import OrderedDict
from dataclasses import dataclass, field
from typing import Any

import pyarrow as pa

from ._errors import BridgeError

#: Largest chunk the kernel accepts; the server's limit on a whole message is 10 MiB.
RESULTS_CHUNK_MAX_BYTES = 8 * 1024 * 1024
#: Unfinished uploads kept at once; the oldest is dropped beyond this.
MAX_PENDING_UPLOADS = 16
#: Most chunks one analysis may be cut into (8 MiB each: far above any real table).
MAX_CHUNK_COUNT = 100_000

#: Fields every multiplet row carries: the CLI's JSON multiplet fields (src/engine/types.ts).
MULTIPLET_FIELDS = (
    "columns",
    "order",
    "entropy",
    "co_information",
    "total_correlation",
    "dual_total_correlation",
    "o_information",
    "s_information",
)

#: Evidence fields a multiplet row may carry after the core ones, in the order the table has them
#: (the CLI's CSV order, src/results-format.ts ``EVIDENCE_FIELDS``). A table has those the
#: analysis computed; a value not computed for a multiplet is null in Arrow, NaN in pandas.
EVIDENCE_FIELDS = (
    "adequacy",
    "p_value",
    "q_value",
    "p_surrogates",
    "null_mean",
    "null_sd",
    "co_information_corrected",
    "o_information_p_value",
    "o_information_q_value",
    "o_information_null_mean",
    "o_information_null_sd",
    "ci_low",
    "ci_high",
    "same_sign",
    "entropy_ci_low",
    "entropy_ci_high",
    "total_correlation_ci_low",
    "total_correlation_ci_high",
    "dual_total_correlation_ci_low",
    "dual_total_correlation_ci_high",
    "o_information_ci_low",
    "o_information_ci_high",
    "s_information_ci_low",
    "s_information_ci_high",
    "connected_information",
    "connected_p_value",
)


class ResultsNotFound(LookupError):
    """No stored results match the request; the message lists the analyses that exist."""


@dataclass
class _Upload:
    count: int
    parts: dict[int, bytes] = field(default_factory=dict)
    meta: dict[str, Any] = field(default_factory=dict)


@dataclass
class ChunkOutcome:
    """What one chunk did: how many of the analysis' chunks are in, and the table when complete."""

    analysis_id: str
    received: int
    count: int
    table: Any = None  # a pandas DataFrame once the last chunk arrived

    @property
    def complete(self) -> bool:
        """Whether this chunk completed the analysis' table."""
        return self.table is not None


def _is_list_of_strings(dtype: pa.DataType) -> bool:
    is_list = pa.types.is_list(dtype) or pa.types.is_large_list(dtype) or pa.types.is_list_view(dtype)
    if not is_list:
        return False
    value = dtype.value_type
    return pa.types.is_string(value) or pa.types.is_large_string(value) or pa.types.is_string_view(value)


def decode_multiplets(stream: bytes) -> Any:
    """Decode an Arrow IPC stream of a multiplet table into a pandas DataFrame.

    ``columns`` becomes a tuple of column names per row (hashable, so it can index the frame);
    every other field keeps its values; an evidence field's nulls (not computed for that
    multiplet) become NaN. Raises BridgeError naming a missing or mistyped field.
    """
    try:
        table = pa.ipc.open_stream(pa.py_buffer(stream)).read_all()
    except pa.ArrowException as error:
        raise BridgeError(f"The multiplet table is not a readable Arrow IPC stream: {error}") from None
    missing = [name for name in MULTIPLET_FIELDS if name not in table.column_names]
    if missing:
        raise BridgeError(
            f"The multiplet table lacks the field(s) {', '.join(map(repr, missing))}.", fields=missing
        )
    if not _is_list_of_strings(table.schema.field("columns").type):
        raise BridgeError(
            f"The multiplet field 'columns' must be a list of strings, got {table.schema.field('columns').type}.",
            field="columns",
        )
    if not pa.types.is_integer(table.schema.field("order").type):
        raise BridgeError(
            f"The multiplet field 'order' must be an integer, got {table.schema.field('order').type}.",
            field="order",
        )
    evidence = [name for name in EVIDENCE_FIELDS if name in table.column_names]
    for name in (*MULTIPLET_FIELDS[2:], *evidence):
        dtype = table.schema.field(name).type
        # an evidence column of nulls only (nothing computed) may arrive typed as null
        if not (pa.types.is_floating(dtype) or pa.types.is_integer(dtype) or (name in evidence and pa.types.is_null(dtype))):
            raise BridgeError(f"The multiplet field {name!r} must be a number, got {dtype}.", field=name)
    frame = table.drop_columns(["columns"]).to_pandas()
    frame.insert(0, "columns", [tuple(names or ()) for names in table.column("columns").to_pylist()])
    return frame


class ResultStore:
    """Multiplet tables per analysis id, reassembled from chunks; safe to use from any thread."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._pending: OrderedDict[str, _Upload] = OrderedDict()
        self._done: OrderedDict[str, Any] = OrderedDict()
        self._latest: str | None = None

    def add_chunk(
        self,
        analysis_id: Any,
        chunk_index: Any,
        chunk_count: Any,
        payload: Any,
        meta: dict[str, Any] | None = None,
    ) -> ChunkOutcome:
        """Take one chunk; when it is the last missing one, decode and store the table."""
        if not isinstance(analysis_id, str) or not analysis_id or len(analysis_id) > 200:
            raise BridgeError("'analysis_id' must be a non-empty string of at most 200 characters.", option="analysis_id")
        for option, value in (("chunk_count", chunk_count), ("chunk_index", chunk_index)):
            if isinstance(value, bool) or not isinstance(value, int):
                raise BridgeError(f"{option!r} must be a whole number, got {value!r}.", option=option)
        if not 1 <= chunk_count <= MAX_CHUNK_COUNT:
            raise BridgeError(
                f"'chunk_count' must be between 1 and {MAX_CHUNK_COUNT}, got {chunk_count}.", option="chunk_count"
            )
        if not 0 <= chunk_index < chunk_count:
            raise BridgeError(
                f"'chunk_index' {chunk_index} is outside 0…{chunk_count - 1}.", option="chunk_index"
            )
        if payload is None:
            raise BridgeError("A results chunk must carry its bytes in the message buffers.", option="buffers")
        data = bytes(memoryview(payload))
        if len(data) > RESULTS_CHUNK_MAX_BYTES:
            raise BridgeError(
                f"Results chunk {chunk_index} has {len(data)} bytes, above the limit of {RESULTS_CHUNK_MAX_BYTES}.",
                option="buffers",
            )

        with self._lock:
            upload = self._pending.get(analysis_id)
            if upload is None:
                upload = _Upload(count=chunk_count)
                self._pending[analysis_id] = upload
                while len(self._pending) > MAX_PENDING_UPLOADS:
                    self._pending.popitem(last=False)
            elif upload.count != chunk_count:
                del self._pending[analysis_id]
                raise BridgeError(
                    f"Analysis {analysis_id!r} was announced in {upload.count} chunks, now in {chunk_count}; "
                    "the upload was dropped, send it again.",
                    option="chunk_count",
                )
            previous = upload.parts.get(chunk_index)
            if previous is not None and previous != data:
                del self._pending[analysis_id]
                raise BridgeError(
                    f"Chunk {chunk_index} of analysis {analysis_id!r} arrived twice with different bytes; "
                    "the upload was dropped, send it again.",
                    option="chunk_index",
                )
            upload.parts[chunk_index] = data
            if meta and not upload.meta:
                upload.meta = dict(meta)
            received = len(upload.parts)
            if received < upload.count:
                return ChunkOutcome(analysis_id, received, upload.count)
            del self._pending[analysis_id]

        # Decoding can take a while; other threads keep feeding chunks meanwhile.
        table = decode_multiplets(b"".join(upload.parts[i] for i in range(upload.count)))
        table.attrs["polyadic"] = {"analysis_id": analysis_id, **upload.meta}
        with self._lock:
            self._done.pop(analysis_id, None)
            self._done[analysis_id] = table
            self._latest = analysis_id
        return ChunkOutcome(analysis_id, received, upload.count, table)

    def ids(self) -> list[str]:
        """Ids of the stored analyses, oldest first."""
        with self._lock:
            return list(self._done)

    def get(self, analysis_id: str | None = None) -> Any:
        """A copy of the stored table of ``analysis_id``, or of the latest analysis when None."""
        with self._lock:
            known = list(self._done)
            if analysis_id is None:
                if self._latest is None:
                    raise ResultsNotFound(
                        "No Polyadic results yet: run an analysis in the Polyadic panel first."
                    )
                table = self._done[self._latest]
            elif analysis_id in self._done:
                table = self._done[analysis_id]
            else:
                listing = ", ".join(map(repr, known)) if known else "none yet"
                raise ResultsNotFound(f"No Polyadic results with id {analysis_id!r}; known ids: {listing}.")
        copy = table.copy()
        copy.attrs = deepcopy(table.attrs)
        return copy
