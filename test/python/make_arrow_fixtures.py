"""Write Arrow IPC fixtures, encoded exactly as the kernel bridge sends them, for decoding tests.

Usage: ``python test/python/make_arrow_fixtures.py OUT_DIR`` (or set ``POLYADIC_ARROW_FIXTURES``
and pass no argument). Needs pandas, numpy and pyarrow (the repository's .venv has them).

Writes into OUT_DIR:

* ``<name>.arrows``: the whole stream of one fetch (all pieces concatenated);
* ``<name>.piece-<i>.arrows``: the pieces as the ``fetch_chunk`` messages carry them, in order
  (``tableFromIPC`` of the array of pieces must give the same table);
* ``manifest.json``: per fixture, the files, the ``fetch_done`` message the kernel would send
  (its ``columns`` say how each column was encoded) and the expected values per column.

Expected values are JSON: null for a missing value; 64-bit integers (int64, uint64, and
datetimes and timedeltas, which travel as int64) as decimal strings, so JavaScript can compare
them with BigInt without losing precision; dates (``date32``) as numbers of days since the
epoch; other numbers as numbers; categorical and string
columns as their string values; booleans as booleans.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import sys
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pyarrow as pa

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic._arrow import frame_to_ipc_batches  # noqa: E402

ENV_VAR = "POLYADIC_ARROW_FIXTURES"


def dtypes_frame() -> pd.DataFrame:
    """Five rows covering every column type the bridge sends, each with a missing value."""
    return pd.DataFrame(
        {
            "int8": pd.array([-128, 0, None, 5, 127], dtype="Int8"),
            "int16": pd.array([-32768, 1, 2, None, 32767], dtype="Int16"),
            "int32": pd.array([None, -1, 0, 1, 2_147_483_647], dtype="Int32"),
            "int64": pd.array([-(2**63), None, 0, 2**53 + 1, 2**63 - 1], dtype="Int64"),
            "uint8": pd.array([0, 255, None, 1, 2], dtype="UInt8"),
            "uint16": pd.array([0, 65535, 3, None, 2], dtype="UInt16"),
            "uint32": pd.array([0, 4_294_967_295, 3, 4, None], dtype="UInt32"),
            "uint64": pd.array([0, 2**64 - 1, None, 2**63, 7], dtype="UInt64"),
            "float32": pd.array([1.5, None, -0.25, 3.0, 1e30], dtype="Float32"),
            "float64": np.array([0.1, np.nan, -2.5, 1e-300, 6.02e23]),
            "float16": np.array([0.5, 1.0, -2.0, 65504.0, 0.0], dtype=np.float16),
            "bool": np.array([True, False, True, True, False]),
            "boolean": pd.array([True, None, False, True, None], dtype="boolean"),
            "category": pd.Categorical(["low", None, "high", "low", "mid"], categories=["low", "mid", "high"]),
            "string": pd.array(["alpha", None, "béta", "alpha", "γ"], dtype="str"),
            "object_str": np.array(["x", None, "y", "x", "z"], dtype=object),
            "datetime": pd.to_datetime(["2031-03-01 00:00", None, "2031-03-01 00:10", "1969-12-31 23:59", "2031-03-02 00:00"]).as_unit("ns"),
            "datetime_tz": pd.to_datetime(["2031-03-01 00:00", "2031-06-01 12:00", None, "2031-03-01 00:00", "2031-01-01 00:00"]).tz_localize("Europe/Paris").as_unit("us"),
            "timedelta": pd.to_timedelta(["10min", None, "-1s", "0s", "1D"]).as_unit("ms"),
            "date": np.array([dt.date(2031, 3, 1), None, dt.date(1970, 1, 1), dt.date(1969, 12, 31), dt.date(2031, 3, 2)], dtype=object),
        }
    )


def fixtures() -> dict[str, tuple[Any, dict[str, Any]]]:
    """Fixture name → (frame, keyword arguments of frame_to_ipc_batches)."""
    rows = 1000
    numbers = np.arange(rows)
    chunked = pd.DataFrame(
        {
            "row": numbers,
            "value": pd.array(np.where(numbers % 7 == 0, None, numbers * 0.5), dtype="Float64"),
            "zone": pd.Categorical(np.array(["north", "south", "east", "west"])[numbers % 4]),
        }
    )
    return {
        "dtypes": (dtypes_frame(), {}),
        "chunked": (chunked, {"max_batch_bytes": 4096}),
        "sampled": (chunked, {"row_cap": 100, "seed": 7}),
        "empty": (dtypes_frame().iloc[0:0], {}),
    }


def expected_values(array: pa.Array) -> list[Any]:
    """A column's decoded values in the manifest's JSON conventions (module docstring)."""
    if pa.types.is_dictionary(array.type):
        return array.to_pylist()
    if pa.types.is_date32(array.type):
        # days since the epoch, as the front end reads the int32 values
        return array.view(pa.int32()).to_pylist()
    if pa.types.is_integer(array.type) and array.type.bit_width == 64:
        return [None if v is None else str(v) for v in array.to_pylist()]
    return array.to_pylist()


def write_fixtures(out_dir: Path) -> dict[str, Any]:
    """Write every fixture and the manifest into ``out_dir``; return the manifest."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    manifest: dict[str, Any] = {"fixtures": []}
    for name, (frame, options) in fixtures().items():
        payload = frame_to_ipc_batches(frame, **options)
        pieces = list(payload.iter_pieces())
        piece_files = []
        for index, piece in enumerate(pieces):
            piece_file = f"{name}.piece-{index}.arrows"
            (out_dir / piece_file).write_bytes(piece)
            piece_files.append(piece_file)
        stream = b"".join(pieces)
        (out_dir / f"{name}.arrows").write_bytes(stream)
        table = pa.ipc.open_stream(stream).read_all().combine_chunks()
        manifest["fixtures"].append(
            {
                "name": name,
                "file": f"{name}.arrows",
                "pieces": piece_files,
                "fetch_done": {
                    "type": "fetch_done",
                    "request_id": f"fixture-{name}",
                    "name": name,
                    "rows": payload.rows,
                    "original_rows": payload.original_rows,
                    "sampled": payload.sampled,
                    "seed": payload.seed,
                    "columns": payload.columns,
                    "batch_count": payload.batch_count,
                    "bytes_total": payload.bytes_total,
                },
                "expected": {column: expected_values(table.column(column).combine_chunks()) for column in table.column_names},
            }
        )
    (out_dir / "manifest.json").write_text(json.dumps(manifest, indent=1, ensure_ascii=False) + "\n", encoding="utf-8")
    return manifest


def main(argv: list[str] | None = None) -> int:
    """Command line: write the fixtures into the directory given as argument or by the env var."""
    args = sys.argv[1:] if argv is None else argv
    target = args[0] if args else os.environ.get(ENV_VAR)
    if not target:
        print(f"usage: make_arrow_fixtures.py OUT_DIR (or set {ENV_VAR})", file=sys.stderr)
        return 2
    manifest = write_fixtures(Path(target))
    print(f"wrote {len(manifest['fixtures'])} fixtures to {target}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
