"""Shared pytest helpers: run the built `polyadic` CLI (bin/polyadic.cjs) with node.

The CLI bundle is built once per session with `npm run build:cli` when it is missing or older
than a source file under src/. A missing node or a failed build fails the tests that need the
CLI with a message saying what to do; nothing is skipped.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
CLI = ROOT / "bin" / "polyadic.cjs"


def _bundle_is_stale() -> bool:
    if not CLI.exists():
        return True
    built = CLI.stat().st_mtime
    return any(p.stat().st_mtime > built for p in (ROOT / "src").rglob("*.ts"))


@pytest.fixture(scope="session")
def polyadic_cli():
    """A function running `node bin/polyadic.cjs ARGS...`; returns the CompletedProcess."""
    node = shutil.which("node")
    if node is None:
        pytest.fail("node is not on PATH: the reference checks run the polyadic CLI with node")
    if _bundle_is_stale():
        npm = shutil.which("npm")
        if npm is None:
            pytest.fail("bin/polyadic.cjs is missing or stale and npm is not on PATH to build it")
        build = subprocess.run([npm, "run", "build:cli"], cwd=ROOT, capture_output=True, text=True)
        if build.returncode != 0 or not CLI.exists():
            pytest.fail(f"`npm run build:cli` failed:\n{build.stdout}\n{build.stderr}")

    def run(*args: str | Path) -> subprocess.CompletedProcess:
        return subprocess.run(
            [node, str(CLI), *map(str, args)], cwd=ROOT, capture_output=True, text=True
        )

    return run


@pytest.fixture(scope="session")
def polyadic_analyze(polyadic_cli):
    """A function running `polyadic analyze DATA ARGS...` that must succeed; returns the JSON."""

    def analyze(data: str | Path, *args: str) -> dict:
        done = polyadic_cli("analyze", data, "--format", "json", *args)
        assert done.returncode == 0, f"polyadic analyze failed ({done.returncode}): {done.stderr}"
        return json.loads(done.stdout)

    return analyze


@pytest.fixture(scope="session")
def spark():
    """One real local[2] SparkSession for the whole pytest session (Java 17 and pyspark needed).

    Small and quiet: no UI, two shuffle partitions, Python workers on this interpreter.
    """
    import os
    import sys

    if shutil.which("java") is None:
        pytest.fail("java is not on PATH: the Spark tests need a Java 17 runtime (apt-get install openjdk-17-jre-headless)")
    os.environ.setdefault("PYSPARK_PYTHON", sys.executable)
    os.environ.setdefault("PYSPARK_DRIVER_PYTHON", sys.executable)
    from pyspark.sql import SparkSession

    session = (
        SparkSession.builder.master("local[2]")
        .appName("polyadic-tests")
        .config("spark.ui.enabled", "false")
        .config("spark.sql.shuffle.partitions", "2")
        .config("spark.default.parallelism", "2")
        .config("spark.driver.memory", "1g")
        .config("spark.sql.execution.arrow.pyspark.enabled", "true")
        .config("spark.python.worker.reuse", "true")
        .getOrCreate()
    )
    session.sparkContext.setLogLevel("ERROR")
    yield session
    session.stop()
