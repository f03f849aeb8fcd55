"""Checks of the statistics of `polyadic analyze` (surrogates, q-values), computed at test time.

- q-values against statsmodels' ``multipletests(method='fdr_bh')`` on the CLI's own p-values,
  over the family the CLI reports.
- Power and false discoveries on seeded data: a planted noisy XOR triplet (numpy's default
  generator) among independent fair bits, twelve columns in all.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from statsmodels.stats.multitest import multipletests


def xor_frame(seed: int, rows: int = 2000, noise_columns: int = 9, flip: float = 0.1) -> pd.DataFrame:
    """Columns a, b, c = a xor b with a share `flip` of the bits flipped, and independent fair bits."""
    rng = np.random.default_rng(seed)
    a = rng.integers(0, 2, rows)
    b = rng.integers(0, 2, rows)
    c = (a ^ b) ^ (rng.random(rows) < flip).astype(int)
    frame = pd.DataFrame({"a": a, "b": b, "c": c})
    for k in range(noise_columns):
        frame[f"n{k}"] = rng.integers(0, 2, rows)
    return frame


def run_json(polyadic_cli, *args) -> dict:
    done = polyadic_cli(*args)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_q_values_equal_statsmodels_fdr_bh(polyadic_cli, tmp_path: Path):
    path = tmp_path / "x.csv"
    xor_frame(5, rows=500, noise_columns=4).to_csv(path, index=False)
    result = run_json(
        polyadic_cli, "analyze", path, "--bins", "categorical", "--surrogates", "99", "--seed", "3", "--max-order", "4"
    )
    family = result["statistics"]["families"]["co_information"]
    tested = [m for m in result["multiplets"] if m["order"] in family["orders"]]
    assert len(tested) == family["count"]
    p = np.array([m["p_value"] for m in tested])
    reject, q, _, _ = multipletests(p, method="fdr_bh")
    # statsmodels divides by the empirical CDF factor as the engine does: equal to the last bit.
    assert [m["q_value"] for m in tested] == list(q)
    # O-information: its own family (orders 3 and up).
    o_family = result["statistics"]["families"]["o_information"]
    o_tested = [m for m in result["multiplets"] if m["order"] in o_family["orders"]]
    _, o_q, _, _ = multipletests(np.array([m["o_information_p_value"] for m in o_tested]), method="fdr_bh")
    assert [m["o_information_q_value"] for m in o_tested] == list(o_q)
    assert all(m["p_value"] is None and m["q_value"] is None for m in result["multiplets"] if m["order"] == 1)


def test_planted_xor_found_with_few_false_discoveries(polyadic_cli, tmp_path: Path):
    """40 seeded datasets: the XOR triplet at q < 0.05 in at least 95 %, mean false-discovery share under 5 %."""
    found = 0
    false_shares = []
    for seed in range(40):
        path = tmp_path / f"x{seed}.csv"
        xor_frame(1000 + seed).to_csv(path, index=False)
        result = run_json(
            polyadic_cli,
            "analyze",
            path,
            "--bins",
            "categorical",
            "--max-order",
            "3",
            "--surrogates",
            "199",
            "--sharpen",
            "9999",
            "--tail",
            "synergy",
            "--seed",
            str(seed),
            "--threads",
            "2",
        )
        assert result["statistics"]["families"]["co_information"]["count"] == 66 + 220
        discoveries = [m for m in result["multiplets"] if m["q_value"] is not None and m["q_value"] < 0.05]
        planted = [m for m in discoveries if sorted(m["columns"]) == ["a", "b", "c"]]
        found += len(planted)
        false_shares.append((len(discoveries) - len(planted)) / len(discoveries) if discoveries else 0.0)
    assert found >= 38, f"the planted triplet was found in {found} of 40 datasets"
    assert np.mean(false_shares) < 0.05, f"mean false-discovery share {np.mean(false_shares):.3f}"


@pytest.mark.parametrize("threads", ["1", "2"])
def test_same_seed_same_bytes_across_threads(polyadic_cli, tmp_path: Path, threads: str):
    path = tmp_path / "x.csv"
    xor_frame(9, rows=300, noise_columns=3).to_csv(path, index=False)
    args = ["analyze", path, "--bins", "categorical", "--surrogates", "40", "--bootstrap", "15", "--seed", "8"]
    one = polyadic_cli(*args, "--threads", "1")
    other = polyadic_cli(*args, "--threads", threads)
    assert one.returncode == 0 and other.returncode == 0
    assert one.stdout == other.stdout
