"""Write the fetch benchmark's IPC stream with the kernel's encoder and time the Python side.

Usage: ``python bench/bridge/write_stream.py OUT_DIR ROWS COLUMNS REPEATS``. Builds a seeded
pandas frame of float64 columns, then times (median of REPEATS):

* ``pyarrow_write``: pyarrow alone writing the table (already Arrow) as one IPC stream;
* ``kernel_pieces``: the kernel's whole fetch path, ``frame_to_ipc_batches`` from the pandas
  frame plus serializing every piece (polyadic/_arrow.py), with the kernel's batch limit;

and writes the pieces as the kernel sends them (``kernel.piece-<i>.arrows``, one record batch of
at most 64 MiB each) and pyarrow's stream of one record batch (``single.piece-0.arrows``), plus
``timings.json``. Timings are printed, never asserted.
"""

from __future__ import annotations

import json
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic._arrow import frame_to_ipc_batches  # noqa: E402


def timed(repeats: int, work):
    """Median seconds of ``work()`` over ``repeats`` runs, and the last result."""
    seconds = []
    result = None
    for _ in range(repeats):
        start = time.perf_counter()
        result = work()
        seconds.append(time.perf_counter() - start)
    return statistics.median(seconds), result


def main(argv: list[str]) -> int:
    if len(argv) != 4:
        print("usage: write_stream.py OUT_DIR ROWS COLUMNS REPEATS", file=sys.stderr)
        return 2
    out = Path(argv[0])
    rows, columns, repeats = (int(value) for value in argv[1:])
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(2031)
    frame = pd.DataFrame({f"sensor_{j:02d}": rng.standard_normal(rows) for j in range(columns)})
    table = pa.Table.from_pandas(frame, preserve_index=False)

    def pyarrow_write() -> pa.Buffer:
        sink = pa.BufferOutputStream()
        with pa.ipc.new_stream(sink, table.schema) as writer:
            writer.write_table(table)
        return sink.getvalue()

    def kernel_pieces():
        payload = frame_to_ipc_batches(frame, row_cap=rows)
        return payload, list(payload.iter_pieces())

    write_seconds, stream = timed(repeats, pyarrow_write)
    kernel_seconds, (payload, pieces) = timed(repeats, kernel_pieces)
    for index, piece in enumerate(pieces):
        (out / f"kernel.piece-{index}.arrows").write_bytes(piece)
    # One record batch, as pyarrow writes the whole table: the case of zero-copy views.
    (out / "single.piece-0.arrows").write_bytes(stream.to_pybytes())
    timings = {
        "rows": rows,
        "columns": columns,
        "bytes": len(stream),
        "kernel_pieces": len(pieces),
        "pyarrow_write_seconds": write_seconds,
        "kernel_pieces_seconds": kernel_seconds,
        "pyarrow_version": pa.__version__,
        # The fetch_done message the kernel sends after the pieces (polyadic/bridge.py).
        "fetch_done": {
            "type": "fetch_done",
            "request_id": "bench",
            "name": "bench",
            "rows": payload.rows,
            "original_rows": payload.original_rows,
            "sampled": payload.sampled,
            "seed": payload.seed,
            "columns": payload.columns,
            "batch_count": payload.batch_count,
            "bytes_total": payload.bytes_total,
        },
    }
    (out / "timings.json").write_text(json.dumps(timings, indent=1) + "\n", encoding="utf-8")
    print(json.dumps({key: value for key, value in timings.items() if key != "fetch_done"}))
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
