"""Reference checks of `polyadic analyze` against general-purpose libraries, computed at test time.

Data: the iris and wine tables that scikit-learn ships (sklearn.datasets.load_iris/load_wine),
written to CSV, Parquet and Arrow IPC in a temporary folder. Each check names its reference.
"""

from __future__ import annotations

import itertools
import math
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.feather as feather
import pytest
from scipy.stats import entropy as scipy_entropy
from sklearn.datasets import load_iris, load_wine
from sklearn.metrics import mutual_info_score

RULES = ["fd", "scott", "sturges", "rice", "sqrt", "doane"]
TOLERANCE = 1e-12


def load_table(name: str) -> pd.DataFrame:
    """A shipped scikit-learn table as a frame: the features, and the class as text."""
    bunch = load_iris(as_frame=True) if name == "iris" else load_wine(as_frame=True)
    frame = bunch.data.copy()
    frame["class"] = np.asarray(bunch.target_names)[bunch.target.to_numpy()]
    return frame


def write_table(frame: pd.DataFrame, folder: Path, fmt: str) -> Path:
    """Write a frame in one of the formats the CLI reads."""
    path = folder / f"table.{fmt}"
    if fmt == "csv":
        # pandas writes floats with repr(), the shortest text that reads back to the same double
        frame.to_csv(path, index=False)
    elif fmt == "parquet":
        frame.to_parquet(path, index=False)
    elif fmt == "arrow":
        feather.write_feather(frame, path, compression="uncompressed")
    elif fmt == "arrows":
        table = pa.Table.from_pandas(frame, preserve_index=False)
        with pa.OSFile(str(path), "wb") as sink, pa.ipc.new_stream(sink, table.schema) as writer:
            for batch in table.to_batches(max_chunksize=50):
                writer.write_batch(batch)
    return path


def codes_from_edges(x: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """Bin index of each value with numpy.histogram's convention: [e_i, e_i+1), last bin closed."""
    k = len(edges) - 1
    codes = np.searchsorted(edges, x, side="right") - 1
    codes[x == edges[-1]] = k - 1
    # the helper must agree with numpy.histogram itself before it is used as a reference
    np.testing.assert_array_equal(np.bincount(codes, minlength=k), np.histogram(x, bins=edges)[0])
    return codes


def codes_of(frame: pd.DataFrame, result: dict) -> dict[str, np.ndarray]:
    """Codes of every column of a result, rebuilt from the reported edges or categories."""
    codes = {}
    for column in result["columns"]:
        binning = column["binning"]
        values = frame[column["name"]].to_numpy()
        if binning.get("edges") is not None:
            codes[column["name"]] = codes_from_edges(values.astype(float), np.asarray(binning["edges"]))
        else:
            codes[column["name"]] = np.unique(values, return_inverse=True)[1]
    return codes


def by_columns(result: dict) -> dict[frozenset, dict]:
    """Multiplet rows keyed by their set of columns."""
    return {frozenset(row["columns"]): row for row in result["multiplets"]}


def joint_entropy_bits(*codes: np.ndarray) -> float:
    """Plug-in joint entropy in bits from numpy's joint histogram (np.unique over rows)."""
    _, counts = np.unique(np.stack(codes, axis=1), axis=0, return_counts=True)
    p = counts / counts.sum()
    return float(-(p * np.log2(p)).sum())


def ulps_apart(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distance in units in the last place between two float64 arrays of the same shape."""
    ia = np.asarray(a, dtype=np.float64).view(np.int64)
    ib = np.asarray(b, dtype=np.float64).view(np.int64)
    # map the sign-magnitude bit patterns onto one ordered integer line
    ia = np.where(ia < 0, np.int64(-(2**63)) - ia, ia)
    ib = np.where(ib < 0, np.int64(-(2**63)) - ib, ib)
    return np.abs(ia - ib)


@pytest.fixture(scope="module", params=["iris", "wine"])
def dataset(request, tmp_path_factory):
    frame = load_table(request.param)
    folder = tmp_path_factory.mktemp(request.param)
    return request.param, frame, write_table(frame, folder, "csv")


@pytest.mark.parametrize("fmt", ["csv", "parquet", "arrow", "arrows"])
def test_entropy_and_mutual_information_match_scipy_and_sklearn(fmt, tmp_path, polyadic_analyze):
    frame = load_table("iris")
    result = polyadic_analyze(write_table(frame, tmp_path, fmt), "--max-order", "2")
    assert result["rows"] == len(frame) == 150
    assert result["units"] == "bits"
    assert [c["name"] for c in result["columns"]] == list(frame.columns)
    rows = by_columns(result)
    codes = codes_of(frame, result)
    for name, c in codes.items():
        counts = np.bincount(c)
        # reference: scipy.stats.entropy(counts, base=2), the plug-in entropy of a histogram
        expected = scipy_entropy(counts[counts > 0], base=2)
        assert rows[frozenset([name])]["entropy"] == pytest.approx(expected, abs=TOLERANCE)
    for x, y in itertools.combinations(codes, 2):
        # reference: sklearn.metrics.mutual_info_score (plug-in MI in nats) / ln 2
        expected = mutual_info_score(codes[x], codes[y]) / math.log(2)
        assert rows[frozenset([x, y])]["co_information"] == pytest.approx(expected, abs=TOLERANCE)


def test_formats_give_the_same_result(tmp_path, polyadic_analyze):
    frame = load_table("wine")
    results = [
        polyadic_analyze(write_table(frame, tmp_path, fmt), "--max-order", "2")
        for fmt in ["csv", "parquet", "arrow", "arrows"]
    ]
    for other in results[1:]:
        assert other["columns"] == results[0]["columns"]
        assert other["multiplets"] == results[0]["multiplets"]


@pytest.mark.parametrize("rule", ["width:1", "width:7", "width:20", *RULES])
def test_rule_edges_match_numpy_histogram_bin_edges(rule, dataset, polyadic_analyze):
    name, frame, path = dataset
    result = polyadic_analyze(path, "--bins", rule, "--bin", "class=categorical", "--max-order", "2")
    rows = by_columns(result)
    numpy_bins = int(rule.split(":")[1]) if rule.startswith("width:") else rule
    inexact = []
    for column in result["columns"]:
        if column["name"] == "class":
            continue
        x = frame[column["name"]].to_numpy(dtype=float)
        # reference: numpy.histogram_bin_edges(x, bins=rule) (width:K is bins=K)
        expected = np.histogram_bin_edges(x, bins=numpy_bins)
        edges = np.asarray(column["binning"]["edges"], dtype=float)
        assert edges.shape == expected.shape, f"{name}/{column['name']} {rule}: {len(edges) - 1} bins, numpy {len(expected) - 1}"
        distance = ulps_apart(edges, expected)
        assert distance.max() <= 1, f"{name}/{column['name']} {rule}: edges {distance.max()} ulp from numpy"
        if distance.max() > 0:
            inexact.append(column["name"])
        assert column["bins"] == len(expected) - 1
        # reference: numpy.histogram(x, bins=edges) counts, through their plug-in entropy (scipy)
        counts = np.histogram(x, bins=edges)[0]
        expected_entropy = scipy_entropy(counts[counts > 0], base=2)
        assert rows[frozenset([column["name"]])]["entropy"] == pytest.approx(expected_entropy, abs=TOLERANCE)
        # row by row: MI with the class from numpy.histogram's assignment (sklearn.metrics.mutual_info_score)
        expected_mi = mutual_info_score(codes_from_edges(x, edges), frame["class"]) / math.log(2)
        assert rows[frozenset([column["name"], "class"])]["co_information"] == pytest.approx(expected_mi, abs=TOLERANCE)
    if inexact:
        warnings.warn(f"{name} {rule}: edges 1 ulp from numpy for {inexact}")


@pytest.mark.parametrize("k", [2, 3, 4, 5, 8, 10, 25])
def test_quantile_edges_match_numpy_quantile(k, dataset, polyadic_analyze):
    name, frame, path = dataset
    result = polyadic_analyze(path, "--bins", f"quantile:{k}", "--bin", "class=categorical", "--max-order", "2")
    rows = by_columns(result)
    for column in result["columns"]:
        if column["name"] == "class":
            continue
        x = frame[column["name"]].to_numpy(dtype=float)
        # reference: numpy.quantile(x, linspace(0, 1, K+1)) (numpy's default 'linear' method),
        # repeated edges dropped
        expected = np.unique(np.quantile(x, np.linspace(0, 1, k + 1)))
        edges = np.asarray(column["binning"]["edges"], dtype=float)
        assert edges.shape == expected.shape, f"{name}/{column['name']} quantile:{k}: {edges} vs numpy {expected}"
        assert ulps_apart(edges, expected).max() <= 1, f"{name}/{column['name']} quantile:{k}: {edges} vs {expected}"
        # reference: numpy.histogram(x, bins=edges) counts, through their plug-in entropy (scipy)
        counts = np.histogram(x, bins=edges)[0]
        expected_entropy = scipy_entropy(counts[counts > 0], base=2)
        assert rows[frozenset([column["name"]])]["entropy"] == pytest.approx(expected_entropy, abs=TOLERANCE)
        # row by row: MI with the class from numpy.histogram's assignment (sklearn.metrics.mutual_info_score)
        expected_mi = mutual_info_score(codes_from_edges(x, edges), frame["class"]) / math.log(2)
        assert rows[frozenset([column["name"], "class"])]["co_information"] == pytest.approx(expected_mi, abs=TOLERANCE)


def test_quantile_edges_drop_repeats(tmp_path, polyadic_analyze):
    # a column where most quantiles coincide, so numpy's quantile edges repeat
    rng = np.random.default_rng(20240611)
    frame = pd.DataFrame({"tied": np.r_[np.zeros(60), rng.normal(size=40)], "other": rng.normal(size=100)})
    path = tmp_path / "tied.csv"
    frame.to_csv(path, index=False)
    result = polyadic_analyze(path, "--bins", "quantile:10", "--max-order", "1")
    edges = np.asarray(result["columns"][0]["binning"]["edges"], dtype=float)
    # reference: numpy.quantile with numpy.unique dropping the repeated edges
    expected = np.unique(np.quantile(frame["tied"].to_numpy(), np.linspace(0, 1, 11)))
    assert len(expected) < 11
    assert ulps_apart(edges, expected).max() <= 1
    assert result["columns"][0]["bins"] == len(expected) - 1


def test_mutual_information_of_every_pair_matches_sklearn(dataset, polyadic_analyze):
    name, frame, path = dataset
    result = polyadic_analyze(path, "--bins", "quantile:4", "--bin", "class=categorical", "--max-order", "2")
    rows = by_columns(result)
    codes = codes_of(frame, result)
    for x, y in itertools.combinations(codes, 2):
        # reference: sklearn.metrics.mutual_info_score in nats, / ln 2 for bits
        expected = mutual_info_score(codes[x], codes[y]) / math.log(2)
        assert rows[frozenset([x, y])]["co_information"] == pytest.approx(expected, abs=TOLERANCE), (x, y)


def test_coinformation_of_triplets_matches_numpy_joint_histograms(dataset, polyadic_analyze):
    name, frame, path = dataset
    selected = [c for c in frame.columns if c != "class"][:4] + ["class"]
    result = polyadic_analyze(
        path, "--columns", ",".join(selected), "--bins", "quantile:3", "--bin", "class=categorical", "--max-order", "3"
    )
    rows = by_columns(result)
    codes = codes_of(frame, result)
    for triplet in itertools.combinations(selected, 3):
        c = [codes[name] for name in triplet]
        # reference: numpy joint histograms (np.unique over stacked codes), combined by
        # inclusion-exclusion: I(X;Y;Z) = ΣH(single) − ΣH(pair) + H(X,Y,Z)
        expected = (
            sum(joint_entropy_bits(ci) for ci in c)
            - sum(joint_entropy_bits(a, b) for a, b in itertools.combinations(c, 2))
            + joint_entropy_bits(*c)
        )
        row = rows[frozenset(triplet)]
        assert row["co_information"] == pytest.approx(expected, abs=TOLERANCE), triplet
        assert row["entropy"] == pytest.approx(joint_entropy_bits(*c), abs=TOLERANCE), triplet
        # reference: Watanabe (1960) total correlation from the same numpy histograms
        total = sum(joint_entropy_bits(ci) for ci in c) - joint_entropy_bits(*c)
        assert row["total_correlation"] == pytest.approx(total, abs=TOLERANCE), triplet


def test_nats_are_bits_times_ln2(dataset, polyadic_analyze):
    name, frame, path = dataset
    bits = by_columns(polyadic_analyze(path, "--max-order", "2"))
    nats = by_columns(polyadic_analyze(path, "--max-order", "2", "--units", "nats"))
    for key, row in bits.items():
        # 1 bit = ln 2 nats (Cover & Thomas 2006, §2.1)
        assert nats[key]["entropy"] == pytest.approx(row["entropy"] * math.log(2), abs=TOLERANCE)
        assert nats[key]["co_information"] == pytest.approx(row["co_information"] * math.log(2), abs=TOLERANCE)


def typed_table(rows: int = 300) -> pa.Table:
    """A seeded Arrow table with one column per type the readers handle, with nulls (and NaN)."""
    rng = np.random.default_rng(7)

    def pick(values, null_share=0.1):
        chosen = [values[i] for i in rng.integers(0, len(values), size=rows)]
        return [None if rng.random() < null_share else v for v in chosen]

    return pa.table(
        {
            "int8": pa.array(pick([-3, 0, 5]), pa.int8()),
            "int16": pa.array(pick([0, 300, -300, 7]), pa.int16()),
            "int32": pa.array(pick([0, 1, 2]), pa.int32()),
            "int64": pa.array(pick([0, 2**40, -(2**40)]), pa.int64()),
            "uint8": pa.array(pick([0, 200, 255]), pa.uint8()),
            "uint16": pa.array(pick([0, 65535]), pa.uint16()),
            "uint32": pa.array(pick([0, 4_000_000_000, 1]), pa.uint32()),
            "uint64": pa.array(pick([0, 2**50, 3]), pa.uint64()),
            "float32": pa.array(pick([0.0, 0.5, -1.25, float("nan")]), pa.float32()),
            "float64": pa.array(pick([0.0, 1e-300, 2.5, float("nan")]), pa.float64()),
            "bool": pa.array(pick([True, False]), pa.bool_()),
            "string": pa.array(pick(["dry", "wet", "", "soaked"]), pa.string()),
            "large_string": pa.array(pick(["a", "b"]), pa.large_string()),
            "dictionary": pa.array(pick(["open", "shut"])).dictionary_encode(),
            "timestamp": pa.array(pick([0, 10**9, 2 * 10**9]), pa.timestamp("ns")),
            "timestamp_tz": pa.array(pick([0, 1000]), pa.timestamp("ms", tz="UTC")),
            "date": pa.array(pick([19783, 19784, 19823]), pa.date32()),
            "duration": pa.array(pick([1, 2, 3]), pa.duration("us")),
        }
    )


def is_missing(value) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def labels_of(column: pa.ChunkedArray) -> np.ndarray:
    """Codes of a column with null and NaN as one more category (pandas.factorize keeps NA)."""
    values = [None if is_missing(v) else v for v in column.to_pylist()]
    return pd.factorize(pd.Series(values, dtype=object), use_na_sentinel=False)[0]


@pytest.mark.parametrize("fmt", ["parquet", "arrow", "arrows"])
def test_column_types_and_nulls_match_pandas(fmt, tmp_path, polyadic_analyze):
    table = typed_table()
    path = tmp_path / f"typed.{fmt}"
    if fmt == "parquet":
        import pyarrow.parquet as pq

        pq.write_table(table, path, row_group_size=70)
    elif fmt == "arrow":
        feather.write_feather(table, path, compression="uncompressed", chunksize=64)
    else:
        with pa.OSFile(str(path), "wb") as sink, pa.ipc.new_stream(sink, table.schema) as writer:
            for batch in table.to_batches(max_chunksize=45):
                writer.write_batch(batch)
    result = polyadic_analyze(path, "--bins", "categorical", "--missing", "category", "--max-order", "2")
    assert [c["name"] for c in result["columns"]] == table.column_names
    rows = by_columns(result)
    codes = {name: labels_of(table.column(name)) for name in table.column_names}
    for name, c in codes.items():
        # reference: scipy.stats.entropy of pandas.factorize counts, null/NaN as one category
        expected = scipy_entropy(np.bincount(c), base=2)
        assert rows[frozenset([name])]["entropy"] == pytest.approx(expected, abs=TOLERANCE), name
    for x, y in itertools.combinations(codes, 2):
        # reference: sklearn.metrics.mutual_info_score / ln 2
        expected = mutual_info_score(codes[x], codes[y]) / math.log(2)
        assert rows[frozenset([x, y])]["co_information"] == pytest.approx(expected, abs=TOLERANCE), (x, y)
    # under 'drop' a row is used only when no selected column is null or NaN
    dropped = polyadic_analyze(path, "--bins", "categorical", "--max-order", "1")
    missing = np.array([[is_missing(v) for v in table.column(name).to_pylist()] for name in table.column_names])
    assert dropped["rows"] == table.num_rows
    assert dropped["rows_used"] == int((~missing.any(axis=0)).sum())
