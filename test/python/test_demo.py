"""The demo generator: shape, determinism, and the planted structure, checked with numpy alone.

The information measures here are computed independently of the Polyadic engine: plug-in
entropies (Cover & Thomas 2006, eq. 2.1) of np.unique counts over binned codes, with the
engine's default binning (`auto`) reproduced by numpy — quantile:4 for the numeric columns, all
of which have more than 10 distinct values (edges from numpy.quantile's default linear
interpolation, bins assigned as numpy.histogram assigns them) and categorical codes for booleans
and strings.
"""

from __future__ import annotations

import importlib.util
import itertools
import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import scipy.stats

ROOT = Path(__file__).resolve().parents[2]
GENERATOR = ROOT / "demo" / "generate.py"
_spec = importlib.util.spec_from_file_location("polyadic_demo_generate", GENERATOR)
generate = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(generate)

TRIPLET = ("valve_command", "flow_l_min", "leak_alarm")
HUMIDITY_PAIR = ("humidity_a_pct", "humidity_b_pct")


def run_generator(out: Path, *args: str) -> None:
    done = subprocess.run(
        [sys.executable, str(GENERATOR), "--out", str(out), *args], capture_output=True, text=True
    )
    assert done.returncode == 0, done.stderr


@pytest.fixture(scope="module")
def written(tmp_path_factory) -> Path:
    """The demo CSV written by the command line with default rows and seed."""
    out = tmp_path_factory.mktemp("demo") / "greenhouse.csv"
    run_generator(out)
    return out


@pytest.fixture(scope="module")
def greenhouse(written) -> pd.DataFrame:
    return pd.read_csv(written, parse_dates=["timestamp"])


# --- binning and entropies, numpy only ------------------------------------------------------


def quantile4_codes(values: np.ndarray) -> np.ndarray:
    """Codes 0..3 of quantile:4: numpy.quantile edges (linear), numpy.histogram bin convention."""
    edges = np.quantile(values, [0.0, 0.25, 0.5, 0.75, 1.0], method="linear")
    # Distinct edges: the demo is designed without long runs of ties (module docstring of
    # demo/generate.py); duplicate edges would make quantile bins ill-defined.
    assert np.all(np.diff(edges) > 0), f"tied quartile edges {edges}"
    # numpy.histogram: every bin half-open [a, b) except the last, which includes its right edge.
    codes = np.searchsorted(edges, values, side="right") - 1
    codes[values == edges[-1]] = 3
    counts, _ = np.histogram(values, bins=edges)
    np.testing.assert_array_equal(np.bincount(codes, minlength=4), counts)
    return codes


def default_codes(frame: pd.DataFrame) -> dict[str, np.ndarray]:
    """Each column's codes under the engine's default binning."""
    codes = {}
    for name in frame.columns:
        column = frame[name]
        if pd.api.types.is_bool_dtype(column) or not (
            pd.api.types.is_numeric_dtype(column) or pd.api.types.is_datetime64_any_dtype(column)
        ):
            codes[name] = np.unique(column.astype(str).to_numpy(), return_inverse=True)[1]
        elif pd.api.types.is_datetime64_any_dtype(column):
            codes[name] = quantile4_codes(column.to_numpy().astype("int64").astype(float))
        else:
            codes[name] = quantile4_codes(column.to_numpy(dtype=float))
    return codes


def entropy_bits(codes: dict[str, np.ndarray], names: tuple[str, ...]) -> float:
    """Plug-in joint entropy in bits of the named columns' codes."""
    joint = np.stack([codes[n] for n in names], axis=1)
    _, counts = np.unique(joint, axis=0, return_counts=True)
    p = counts / counts.sum()
    return float(-(p * np.log2(p)).sum())


class Measures:
    """Mutual information of every pair and co-information of every triplet (Bell 2003)."""

    def __init__(self, codes: dict[str, np.ndarray]) -> None:
        self.codes = codes
        self._h: dict[tuple[str, ...], float] = {}

    def h(self, *names: str) -> float:
        key = tuple(sorted(names))
        if key not in self._h:
            self._h[key] = entropy_bits(self.codes, key)
        return self._h[key]

    def mi(self, a: str, b: str) -> float:
        return self.h(a) + self.h(b) - self.h(a, b)

    def co_information(self, a: str, b: str, c: str) -> float:
        # I(A;B;C) = −Σ_{∅≠T⊆S} (−1)^{|T|} H(T)  (DESIGN.md §3, Bell 2003)
        return (
            self.h(a) + self.h(b) + self.h(c)
            - self.h(a, b) - self.h(a, c) - self.h(b, c)
            + self.h(a, b, c)
        )


def binary_entropy(p: float) -> float:
    return -p * math.log2(p) - (1 - p) * math.log2(1 - p)


# --- tests ----------------------------------------------------------------------------------


def test_shape_and_columns(greenhouse, written):
    assert len(greenhouse) >= 5000
    assert list(greenhouse.columns) == generate.COLUMNS
    assert written.with_suffix(".parquet").exists()
    # One row per 10 minutes, no gaps.
    steps = greenhouse["timestamp"].diff().dropna().unique()
    assert list(steps) == [pd.Timedelta(minutes=10)]
    for name in ("valve_command", "leak_alarm", "fan_on"):
        assert greenhouse[name].dtype == bool, name
    assert greenhouse.notna().all().all()


def test_parquet_matches_csv(greenhouse, written):
    parquet = pd.read_parquet(written.with_suffix(".parquet"))
    assert list(parquet.columns) == generate.COLUMNS
    # CSV text round-trips float64 exactly (shortest repr); datetime resolution may differ.
    pd.testing.assert_frame_equal(
        parquet.drop(columns="timestamp"), greenhouse.drop(columns="timestamp"), check_dtype=False
    )
    stamps = [frame["timestamp"].dt.strftime("%Y-%m-%dT%H:%M:%S").tolist() for frame in (parquet, greenhouse)]
    assert stamps[0] == stamps[1]


def test_same_seed_same_bytes(tmp_path, written):
    again = tmp_path / "again.csv"
    run_generator(again)
    assert again.read_bytes() == written.read_bytes()
    assert again.with_suffix(".parquet").read_bytes() == written.with_suffix(".parquet").read_bytes()


def test_other_seed_other_data(tmp_path, written):
    other = tmp_path / "other.csv"
    run_generator(other, "--seed", "1")
    assert other.read_bytes() != written.read_bytes()


def test_rows_option(tmp_path):
    small = tmp_path / "small.csv"
    run_generator(small, "--rows", "144")
    assert len(pd.read_csv(small)) == 144


def test_bad_rows_option_is_named(tmp_path):
    done = subprocess.run(
        [sys.executable, str(GENERATOR), "--out", str(tmp_path / "x.csv"), "--rows", "0"],
        capture_output=True,
        text=True,
    )
    assert done.returncode != 0
    assert "--rows" in done.stderr


def test_plugin_entropy_agrees_with_scipy(greenhouse):
    # Source: scipy.stats.entropy of the same counts, base 2.
    codes = default_codes(greenhouse)
    for name in ("air_temp_c", "valve_command", "visitor_zone", "timestamp"):
        counts = np.bincount(codes[name])
        assert entropy_bits(codes, (name,)) == pytest.approx(scipy.stats.entropy(counts, base=2), abs=1e-12)


@pytest.mark.parametrize("with_timestamp", [True, False], ids=["with-timestamp", "sensors-only"])
def test_planted_structure(greenhouse, with_timestamp):
    frame = greenhouse if with_timestamp else greenhouse.drop(columns="timestamp")
    measures = Measures(default_codes(frame))
    names = list(frame.columns)

    pairs = {pair: measures.mi(*pair) for pair in itertools.combinations(names, 2)}
    ranked_pairs = sorted(pairs, key=pairs.get, reverse=True)
    assert ranked_pairs[0] == HUMIDITY_PAIR, [(p, round(pairs[p], 3)) for p in ranked_pairs[:3]]
    # A clear winner, not a near tie (the runner-up is leaf wetness, which follows humidity).
    assert pairs[HUMIDITY_PAIR] - pairs[ranked_pairs[1]] > 0.3

    triplets = {t: measures.co_information(*t) for t in itertools.combinations(names, 3)}
    ranked_triplets = sorted(triplets, key=triplets.get)
    assert ranked_triplets[0] == TRIPLET, [(t, round(triplets[t], 3)) for t in ranked_triplets[:3]]
    assert triplets[TRIPLET] < -0.5
    assert triplets[TRIPLET] - triplets[ranked_triplets[1]] < -0.5

    # The synergy is invisible pairwise.
    for a, b in itertools.combinations(TRIPLET, 2):
        assert pairs[(a, b)] < 0.01, (a, b, pairs[(a, b)])

    # The humidity pair also tops the redundancy side over orders 2 and 3.
    assert pairs[HUMIDITY_PAIR] > max(triplets.values())


def test_triplet_matches_exclusive_or_with_noisy_alarm(greenhouse):
    # For V and R independent fair bits, F = V xor R and A = R flipped with probability e:
    # I(V;F) = 0 and I(V;F|A) = 1 − h(e), so I(V;F;A) = −(1 − h(e)); h is the binary entropy
    # (Cover & Thomas 2006, eq. 2.5). The demo's valve is not exactly fair and quartile bins
    # of the flow meter split each mode in two, so allow a small gap.
    measures = Measures(default_codes(greenhouse))
    expected = -(1.0 - binary_entropy(0.03))
    assert measures.co_information(*TRIPLET) == pytest.approx(expected, abs=0.05)


# --- the demo notebook ----------------------------------------------------------------------

NOTEBOOK = ROOT / "demo" / "greenhouse.ipynb"


def test_notebook_is_clean_and_current():
    nbformat = pytest.importorskip("nbformat")
    notebook = nbformat.read(NOTEBOOK, as_version=4)
    nbformat.validate(notebook)
    assert notebook.metadata.kernelspec.name == "python3"
    for cell in notebook.cells:
        if cell.cell_type == "code":
            assert cell.outputs == [] and cell.execution_count is None, cell.id
    # The committed file is what demo/build_notebook.py writes.
    spec = importlib.util.spec_from_file_location("polyadic_demo_build", ROOT / "demo" / "build_notebook.py")
    builder = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(builder)
    assert nbformat.writes(builder.build()) + "\n" == NOTEBOOK.read_text(encoding="utf-8")


def test_notebook_runs(tmp_path, monkeypatch):
    nbformat = pytest.importorskip("nbformat")
    nbclient = pytest.importorskip("nbclient")
    # Run a copy beside a copy of the generator, so the data it writes stays in tmp_path; the
    # kernel imports polyadic from this source tree.
    (tmp_path / "generate.py").write_bytes(GENERATOR.read_bytes())
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")])))
    notebook = nbformat.read(NOTEBOOK, as_version=4)
    client = nbclient.NotebookClient(
        notebook, timeout=120, kernel_name="python3", resources={"metadata": {"path": str(tmp_path)}}
    )
    client.execute()
    assert (tmp_path / "data" / "greenhouse.csv").exists()
    outputs = {cell.id: cell.outputs for cell in notebook.cells if cell.cell_type == "code"}
    head = outputs["load"][0]["data"]["text/plain"]
    assert "humidity_a_pct" in head and "timestamp" in head
    printed = "".join(o.get("text", "") for o in outputs["results"])
    assert "No Polyadic results yet" in printed


# --- the engine finds what numpy finds ------------------------------------------------------


def test_engine_tops_both_tables_with_the_planted_multiplets(written, greenhouse, polyadic_analyze):
    # The Parquet file keeps the timestamp a datetime, so it is binned as a number, as in the
    # panel. (In the CSV it is text; the CLI then treats it as an identifier.)
    result = polyadic_analyze(written.with_suffix(".parquet"), "--max-order", "3")
    multiplets = [m for m in result["multiplets"] if m["order"] >= 2]
    ranked = sorted(multiplets, key=lambda m: m["co_information"])
    assert tuple(ranked[0]["columns"]) == TRIPLET
    assert tuple(ranked[-1]["columns"]) == HUMIDITY_PAIR
    # Same numbers as the numpy computation above (plug-in estimator, the engine's default).
    measures = Measures(default_codes(greenhouse))
    assert ranked[0]["co_information"] == pytest.approx(measures.co_information(*TRIPLET), abs=1e-9)
    assert ranked[-1]["co_information"] == pytest.approx(measures.mi(*HUMIDITY_PAIR), abs=1e-9)
