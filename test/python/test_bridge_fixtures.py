"""The Arrow fixtures for the front end's decoding tests (test/python/make_arrow_fixtures.py).

The manifest's expected values are what the front end will compare its decoded columns with,
so they are checked here against the source frames through pandas, not through the bridge.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
SCRIPT = ROOT / "test" / "python" / "make_arrow_fixtures.py"
sys.path.insert(0, str(SCRIPT.parent))

import make_arrow_fixtures  # noqa: E402


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    """Fixtures written by the script run as the front-end tests run it: env var, no argument."""
    out = tmp_path_factory.mktemp("arrow-fixtures")
    env = dict(os.environ, POLYADIC_ARROW_FIXTURES=str(out))
    done = subprocess.run([sys.executable, str(SCRIPT)], env=env, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    return out, json.loads((out / "manifest.json").read_text(encoding="utf-8"))


def by_name(manifest):
    return {f["name"]: f for f in manifest["fixtures"]}


def as_manifest_value(value, wide: bool):
    if value is None:
        return None
    return str(int(value)) if wide else value


def test_usage_without_target(tmp_path):
    env = {k: v for k, v in os.environ.items() if k != make_arrow_fixtures.ENV_VAR}
    done = subprocess.run([sys.executable, str(SCRIPT)], env=env, capture_output=True, text=True, cwd=tmp_path)
    assert done.returncode == 2 and "usage: make_arrow_fixtures.py OUT_DIR" in done.stderr


def test_argument_form(tmp_path):
    done = subprocess.run([sys.executable, str(SCRIPT), str(tmp_path / "x")], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "x" / "manifest.json").exists()


def test_files_and_pieces_decode_alike(written):
    out, manifest = written
    assert sorted(by_name(manifest)) == ["chunked", "dtypes", "empty", "sampled"]
    for fixture in manifest["fixtures"]:
        whole = (out / fixture["file"]).read_bytes()
        pieces = [(out / name).read_bytes() for name in fixture["pieces"]]
        assert b"".join(pieces) == whole
        assert len(whole) == fixture["fetch_done"]["bytes_total"]
        assert len(pieces) == fixture["fetch_done"]["batch_count"]
        table = pa.ipc.open_stream(whole).read_all()
        assert table.num_rows == fixture["fetch_done"]["rows"]
        assert table.column_names == [c["name"] for c in fixture["fetch_done"]["columns"]]
        assert sorted(fixture["expected"]) == sorted(table.column_names)
    assert by_name(manifest)["chunked"]["fetch_done"]["batch_count"] > 1


def test_expected_values_match_the_source_frame(written):
    _, manifest = written
    source = make_arrow_fixtures.dtypes_frame()
    fixture = by_name(manifest)["dtypes"]
    expected = fixture["expected"]
    meta = {c["name"]: c for c in fixture["fetch_done"]["columns"]}
    for name in source.columns:
        series = source[name]
        missing = series.isna().tolist()
        if meta[name]["kind"] in ("datetime", "timedelta") and name != "date":
            values = series.array.asi8.tolist()
            wide = True
        elif name == "date":
            # Source: Python's datetime module; dates travel as Arrow's date32 days since the epoch.
            values = [None if d is None else (d - dt.date(1970, 1, 1)).days for d in series]
            wide = False
        else:
            values = series.astype(object).tolist()
            wide = meta[name]["arrow_type"] in ("int64", "uint64")
        if name in ("float16", "float32"):
            # float16 travels as float32; a float32 value reads back as the nearest float32.
            values = [None if m else float(np.float32(v)) for v, m in zip(values, missing)]
        assert expected[name] == [None if m else as_manifest_value(v, wide) for v, m in zip(values, missing)], name


def test_sampled_fixture_states_its_sample(written):
    _, manifest = written
    fixture = by_name(manifest)["sampled"]
    done = fixture["fetch_done"]
    assert (done["sampled"], done["rows"], done["original_rows"], done["seed"]) == (True, 100, 1000, 7)
    rows = [int(v) for v in fixture["expected"]["row"]]
    assert rows == sorted(rows) and len(set(rows)) == 100
