"""numpy baseline of the benchmarks: plug-in joint entropies of every multiplet up to an order.

Usage: python bench/numpy_baseline.py DATA.arrow EDGES.json MAX_ORDER REPEATS [LIMIT [rows]]

Reads the synthetic table that bench/run.mjs wrote, bins each column with the edges the engine
reported (numpy.histogram's convention: [e_i, e_i+1), last bin closed), and for every subset in
lexicographic order computes H = -Σ p log2 p from np.unique over combined codes
(code(S ∪ {j}) = code(S)·K_j + c_j, one int64 per row). Prints JSON: the median time of the
repeats in milliseconds and the entropies, for run.mjs to compare with the engine. With LIMIT,
only the first LIMIT multiplets of the walk's order are timed (bench/walk.mjs extrapolates from
them to lattices that would take hours) and the entropies are left out. With `rows` after LIMIT,
each multiplet's cells come from np.unique(axis=0, return_counts=True) over its columns stacked
as rows (the plain way to write it) instead of one combined int64 code.
"""

from __future__ import annotations

import json
import statistics
import sys
import time

import numpy as np
import pyarrow.ipc as ipc


def bin_codes(x: np.ndarray, edges: np.ndarray) -> np.ndarray:
    codes = np.searchsorted(edges, x, side="right") - 1
    return np.clip(codes, 0, len(edges) - 2).astype(np.int64)


def entropy_bits(combined: np.ndarray) -> float:
    counts = np.unique(combined, return_counts=True)[1]
    p = counts / combined.size
    return float(-(p * np.log2(p)).sum())


def entropy_bits_of_rows(stacked: np.ndarray) -> float:
    counts = np.unique(stacked, axis=0, return_counts=True)[1]
    p = counts / stacked.shape[0]
    return float(-(p * np.log2(p)).sum())


def all_entropies(
    columns: list[np.ndarray], edges: list[np.ndarray], max_order: int, limit: int | None = None, by_rows: bool = False
):
    codes = [bin_codes(x, e) for x, e in zip(columns, edges)]
    sizes = [len(e) - 1 for e in edges]
    n = len(codes)
    out: list[tuple[tuple[int, ...], float]] = []

    def walk(subset: tuple[int, ...], combined: np.ndarray | None, start: int) -> None:
        for j in range(start, n):
            if limit is not None and len(out) >= limit:
                return
            child = codes[j] if combined is None else combined * sizes[j] + codes[j]
            members = subset + (j,)
            if by_rows:
                out.append((members, entropy_bits_of_rows(np.stack([codes[c] for c in members], axis=1))))
            else:
                out.append((members, entropy_bits(child)))
            if len(members) < max_order:
                walk(members, child, j + 1)

    walk((), None, 0)
    return out


def main() -> None:
    data_path, edges_path, max_order, repeats = sys.argv[1], sys.argv[2], int(sys.argv[3]), int(sys.argv[4])
    limit = int(sys.argv[5]) if len(sys.argv) > 5 else None
    by_rows = len(sys.argv) > 6 and sys.argv[6] == "rows"
    table = ipc.open_file(data_path).read_all()
    names = table.column_names
    columns = [table.column(name).to_numpy() for name in names]
    with open(edges_path, encoding="utf8") as handle:
        reported = json.load(handle)
    edges = [np.asarray(reported[name], dtype=float) for name in names]
    times = []
    result = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = all_entropies(columns, edges, max_order, limit, by_rows)
        times.append((time.perf_counter() - start) * 1000)
    print(
        json.dumps(
            {
                "median_ms": statistics.median(times),
                "repeats": repeats,
                "numpy": np.__version__,
                "multiplets": len(result),
                "entropies": [] if limit is not None else [[[names[j] for j in members], h] for members, h in result],
            }
        )
    )


if __name__ == "__main__":
    main()
