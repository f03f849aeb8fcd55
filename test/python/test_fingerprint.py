"""The pdfp1 fingerprint in Python, in Node and in a browser: one fixture, three implementations.

The fixture is the invented greenhouse log (demo/generate.py) with a few columns added for the
hard cases: NaN and nulls, −0.0, a nullable integer, an int64 above 2^53, a pandas categorical,
booleans, a timestamp and a non-ASCII column name. It is written as Arrow IPC, Parquet and
CSV; the kernel side (polyadic.fingerprint, hashlib) fingerprints the frame, the CLI code
(src/cli/fingerprint.ts, WebCrypto in Node) the files, and the same TypeScript bundled for the
browser runs in headless Chromium (WebCrypto in a browser) on the Arrow bytes.

The known-answer bytes are the worked example of docs/fingerprint.md, written out by hand, and
each digest is also checked against OpenSSL (the ``openssl dgst`` command-line tool).
"""

from __future__ import annotations

import base64
import datetime as dt
import hashlib
import importlib.util
import json
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.feather as feather
import pyarrow.parquet as pq
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import polyadic  # noqa: E402
from polyadic.fingerprint import encode_column, fingerprint, fingerprint_table  # noqa: E402

_spec = importlib.util.spec_from_file_location("polyadic_demo_generate", ROOT / "demo" / "generate.py")
generate = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(generate)

CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]

# The worked example of docs/fingerprint.md: x = [1.5, −0, NaN, null], é = ["aé", "b", null].
X_BYTES = bytes(
    [0x01, 0x00, 0x00, 0x00, 0x78, 0x01, 0x04, 0x00, 0x00, 0x00]
    + [0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xF8, 0x3F]
    + [0x00] * 9
    + [0x01, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xF8, 0x7F] * 2
)
E_BYTES = bytes(
    [0x02, 0x00, 0x00, 0x00, 0xC3, 0xA9, 0x02, 0x03, 0x00, 0x00, 0x00]
    + [0x00, 0x03, 0x00, 0x00, 0x00, 0x61, 0xC3, 0xA9]
    + [0x00, 0x01, 0x00, 0x00, 0x00, 0x62]
    + [0x01]
)

#: Columns whose values survive a CSV round trip as the same kind (docs/fingerprint.md).
CSV_COLUMNS = [
    "air_temp_c",
    "humidity_a_pct",
    "flow_l_min",
    "visitor_zone",
    "Δ_temp_°C",
    "door_openings",
    "sensor_serial",
    "bed_zone",
]


def openssl_sha256(data: bytes) -> str | None:
    """SHA-256 by the openssl tool, or None when it is not installed."""
    tool = shutil.which("openssl")
    if tool is None:
        return None
    done = subprocess.run([tool, "dgst", "-sha256", "-r"], input=data, capture_output=True, check=True)
    return done.stdout.split()[0].decode()


@pytest.fixture(scope="module")
def frame() -> pd.DataFrame:
    greenhouse = generate.generate(rows=500, seed=20310301)
    rng = np.random.default_rng(11)
    delta = greenhouse["air_temp_c"].to_numpy() - 20.0
    delta[rng.choice(500, 25, replace=False)] = np.nan
    delta[3] = -0.0
    delta[4] = 0.0
    greenhouse["Δ_temp_°C"] = delta
    openings = pd.array(rng.integers(0, 6, 500), dtype="Int64")
    openings[rng.choice(500, 10, replace=False)] = pd.NA
    greenhouse["door_openings"] = openings
    # above 2^53: float64 conversion must round alike in numpy and in JavaScript
    greenhouse["sensor_serial"] = np.int64(2**53) + rng.integers(0, 7, 500)
    greenhouse["bed_zone"] = pd.Categorical(
        rng.choice(["west", "east", "north"], 500), categories=["west", "north", "east"]
    )
    return greenhouse


@pytest.fixture(scope="module")
def files(frame, tmp_path_factory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("fingerprint")
    arrow_path = folder / "greenhouse.arrow"
    feather.write_feather(pa.Table.from_pandas(frame, preserve_index=False), arrow_path, compression="uncompressed")
    parquet_path = folder / "greenhouse.parquet"
    frame.to_parquet(parquet_path, engine="pyarrow", index=False)
    csv_path = folder / "greenhouse.csv"
    frame[CSV_COLUMNS].to_csv(csv_path, index=False, lineterminator="\n")
    return {"arrow": arrow_path, "parquet": parquet_path, "csv": csv_path}


def _bundle(tmp: Path, entry: str, outfile: Path, platform: str) -> None:
    """Bundle TypeScript source given as text with esbuild (the repository's dev dependency).

    DuckDB's Node binding stays outside the bundle, as in scripts/build-cli.mjs: verify loads it
    only for `--via duckdb`, and its native `.node` files cannot be bundled.
    """
    node = shutil.which("node")
    if node is None:
        pytest.fail("node is not on PATH: the cross-language fingerprint test runs the TypeScript code with node")
    script = (
        "require('esbuild').build({stdin: {contents: process.env.ENTRY, resolveDir: process.env.ROOT, "
        "loader: 'ts', sourcefile: 'entry.ts'}, bundle: true, platform: process.env.PLATFORM, "
        "format: process.env.PLATFORM === 'node' ? 'cjs' : 'iife', conditions: process.env.PLATFORM === 'node' ? ['node'] : [], "
        "outfile: process.env.OUT, logLevel: 'error', external: ['@duckdb/node-api', '@duckdb/node-bindings']}).catch(e => { console.error(e.message); process.exit(1); });"
    )
    env = {"ENTRY": entry, "ROOT": str(ROOT), "PLATFORM": platform, "OUT": str(outfile), "PATH": str(Path(node).parent)}
    done = subprocess.run([node, "-e", script], cwd=ROOT, env=env, capture_output=True, text=True)
    if done.returncode != 0 or not outfile.exists():
        pytest.fail(f"bundling the {platform} entry failed:\n{done.stdout}\n{done.stderr}")


@pytest.fixture(scope="module")
def node_run(tmp_path_factory):
    """Run src/cli/fingerprint.ts (and orderHistogram) under node; returns parsed JSON output."""
    folder = tmp_path_factory.mktemp("node-fingerprint")
    bundle = folder / "fingerprint.cjs"
    entry = (
        "import { readFileSync, writeFileSync } from 'fs';\n"
        "import { decodePieces, fetchedFrame } from './src/bridge/decode';\n"
        "import { runFingerprint } from './src/cli/fingerprint';\n"
        "import { runVerify } from './src/cli/verify';\n"
        "import { analyze } from './src/engine/analyze';\n"
        "import { fingerprintColumns } from './src/record/fingerprint';\n"
        "import { recordFromResult } from './src/record/recordFromResult';\n"
        "import { orderHistogram } from './src/record/summary';\n"
        "import { RECORD_VERSION } from './src/record/types';\n"
        "const args = process.argv.slice(2);\n"
        "async function record(stream: string, done: string, options: string, out: string) {\n"
        "  // what the panel does after a run: decode the fetch, analyse, fingerprint, record\n"
        "  const frame = fetchedFrame(decodePieces([readFileSync(stream)]), JSON.parse(readFileSync(done, 'utf8')));\n"
        "  const opts = JSON.parse(options);\n"
        "  const result = analyze(frame.columns, opts);\n"
        "  const analysis = recordFromResult({ options: opts, result, source: { frame: frame.name, columns: frame.columns,\n"
        "    fingerprint: await fingerprintColumns(frame.columns) }, label: 'Kernel frame' });\n"
        "  writeFileSync(out, JSON.stringify({ cells: [], metadata: { polyadic: { version: RECORD_VERSION, analyses: [analysis] } },\n"
        "    nbformat: 4, nbformat_minor: 5 }));\n"
        "  process.stdout.write(JSON.stringify(analysis));\n"
        "}\n"
        "if (args[0] === 'histogram') {\n"
        "  process.stdout.write(JSON.stringify(orderHistogram(2, JSON.parse(args[1]))));\n"
        "} else if (args[0] === 'record') {\n"
        "  void record(args[1], args[2], args[3], args[4]);\n"
        "} else if (args[0] === 'verify') {\n"
        "  void runVerify(args.slice(1), process).then(code => { process.exitCode = code; });\n"
        "} else {\n"
        "  void runFingerprint(args, process).then(code => { process.exitCode = code; });\n"
        "}\n"
    )
    _bundle(folder, entry, bundle, "node")

    def run(*args: str, expect: int = 0, raw: bool = False):
        done = subprocess.run([shutil.which("node"), str(bundle), *args], capture_output=True, text=True)
        assert done.returncode == expect, f"node {args[0]} gave {done.returncode}: {done.stdout}\n{done.stderr}"
        return done if raw else json.loads(done.stdout)

    return run


# --- known answers ---------------------------------------------------------------------------


def test_encoding_is_the_worked_example_of_the_docs():
    assert encode_column("x", pa.array([1.5, -0.0, float("nan"), None], pa.float64())) == X_BYTES
    assert encode_column("é", pa.array(["aé", "b", None])) == E_BYTES
    # a dictionary column with its categories in another order encodes the same rows
    reordered = pa.DictionaryArray.from_arrays(pa.array([0, 1, None], pa.int32()), pa.array(["aé", "b"]))
    assert encode_column("é", reordered) == E_BYTES


def test_fingerprint_composes_as_documented():
    # the two columns of the worked example have different lengths, so each is a table of its own
    dx, de = hashlib.sha256(X_BYTES).digest(), hashlib.sha256(E_BYTES).digest()
    for name, array, digest in (("x", pa.array([1.5, -0.0, float("nan"), None]), dx), ("é", pa.array(["aé", "b", None]), de)):
        expected = hashlib.sha256(b"PDFP1" + bytes([1, 0, 0, 0]) + digest).hexdigest()
        assert fingerprint_table(pa.table({name: array})) == {
            "encoding": "pdfp1",
            "sha256": expected,
            "columns": [{"name": name, "sha256": digest.hex()}],
        }
        by_openssl = openssl_sha256(b"PDFP1" + bytes([1, 0, 0, 0]) + digest)
        if by_openssl is not None:
            assert by_openssl == expected
    two = pa.table({"x": pa.array([1.5, 2.0]), "y": pa.array(["a", "b"])})
    digests = [hashlib.sha256(encode_column(n, two.column(n))).digest() for n in ("x", "y")]
    assert fingerprint_table(two)["sha256"] == hashlib.sha256(b"PDFP1" + bytes([2, 0, 0, 0]) + b"".join(digests)).hexdigest()


def test_kernel_fingerprint_reads_values_as_the_engine_does():
    base = fingerprint(pd.DataFrame({"n": [1.0, 2.0, np.nan]}))["sha256"]
    # nullable integers with a missing value equal floats with NaN
    assert fingerprint(pd.DataFrame({"n": pd.array([1, 2, None], dtype="Int64")}))["sha256"] == base
    # booleans are the categories false/true, so they equal those strings
    flags = fingerprint(pd.DataFrame({"f": [True, False, None]}, dtype="boolean"))["sha256"]
    assert flags == fingerprint(pd.DataFrame({"f": ["true", "false", None]}, dtype=object))["sha256"]
    assert fingerprint(pd.DataFrame({"n": [1.0, 2.0, 3.0]}))["sha256"] != base


def test_row_cap_samples_as_the_bridge_does(frame):
    from polyadic._arrow import frame_to_ipc_batches

    payload = frame_to_ipc_batches(frame, ["air_temp_c", "bed_zone"], row_cap=100, seed=9)
    sent = pa.Table.from_batches(payload.batches)
    assert fingerprint(frame, ["air_temp_c", "bed_zone"], row_cap=100, sample_seed=9) == fingerprint_table(sent)


def test_unreadable_types_are_refused_naming_the_column():
    with pytest.raises(Exception, match="Column 'ratios' is a dictionary of float values"):
        fingerprint_table(pa.table({"ratios": pa.array([0.5, 1.5]).dictionary_encode()}))


# --- three implementations on one fixture ----------------------------------------------------


def test_node_agrees_on_arrow_and_parquet_files(frame, files, node_run):
    expected = polyadic.fingerprint(frame)
    assert [c["name"] for c in expected["columns"]] == list(frame.columns)
    for kind in ("arrow", "parquet"):
        got = node_run(str(files[kind]))
        assert got["rows"] == 500
        mismatched = [a["name"] for a, b in zip(expected["columns"], got["columns"]) if a != b]
        assert mismatched == [], f"{kind}: columns whose digests differ: {mismatched}"
        assert got["sha256"] == expected["sha256"], kind


def test_date_column_agrees_between_kernel_and_cli_on_parquet(frame, tmp_path):
    """A date column reads as days since the epoch in the kernel and in the CLI (Arrow's date32 unit)."""
    cli = ROOT / "bin" / "polyadic.cjs"
    node = shutil.which("node")
    if node is None or not cli.exists():
        pytest.fail("the built CLI is needed: run `npm run build:cli` (node bin/polyadic.cjs)")
    rng = np.random.default_rng(5)
    dated = frame[["air_temp_c", "bed_zone"]].copy()
    # one day per 144 rows (the log's 10-minute rows), a few missing, one before 1970
    days = [dt.date(2031, 3, 1) + dt.timedelta(days=i // 144) for i in range(len(dated))]
    for i in rng.choice(len(days), 7, replace=False):
        days[i] = None
    days[0] = dt.date(1969, 12, 31)
    dated["log_day"] = np.array(days, dtype=object)
    path = tmp_path / "dated.parquet"
    dated.to_parquet(path, engine="pyarrow", index=False)
    # Source: pyarrow's Parquet writer stores Python dates with the DATE logical type (date32).
    assert pq.read_schema(path).field("log_day").type == pa.date32()
    done = subprocess.run([node, str(cli), "fingerprint", str(path)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    from_file = json.loads(done.stdout)
    from_kernel = polyadic.fingerprint(dated)
    mismatched = [a["name"] for a, b in zip(from_kernel["columns"], from_file["columns"]) if a != b]
    assert mismatched == [], f"columns whose digests differ: {mismatched}"
    assert from_file["sha256"] == from_kernel["sha256"]
    # the same frame with dates as seconds (the old wire rule) must not match: the check can fail
    as_seconds = dated.assign(log_day=pd.to_datetime(dated["log_day"]).astype("datetime64[s]"))
    assert polyadic.fingerprint(as_seconds)["sha256"] != from_file["sha256"]


def test_node_agrees_on_a_csv_file(frame, files, node_run):
    expected = polyadic.fingerprint(frame, CSV_COLUMNS)
    got = node_run(str(files["csv"]), "--columns", ",".join(CSV_COLUMNS))
    mismatched = [a["name"] for a, b in zip(expected["columns"], got["columns"]) if a != b]
    assert mismatched == []
    assert got["sha256"] == expected["sha256"]


def test_node_tells_a_changed_cell(frame, tmp_path, node_run):
    changed = frame[CSV_COLUMNS].copy()
    changed.loc[17, "humidity_a_pct"] += 0.001
    path = tmp_path / "changed.csv"
    changed.to_csv(path, index=False, lineterminator="\n")
    got = node_run(str(path))
    expected = polyadic.fingerprint(frame, CSV_COLUMNS)
    assert got["sha256"] != expected["sha256"]
    assert [a["name"] for a, b in zip(expected["columns"], got["columns"]) if a != b] == ["humidity_a_pct"]


def test_browser_agrees_on_the_arrow_file(frame, files, tmp_path):
    if not CHROMIUM.exists():
        pytest.fail("/usr/bin/chromium is missing: the browser side of the fingerprint test needs Debian's chromium")
    script = tmp_path / "fingerprint.js"
    entry = (
        "import { tableFromIPC } from 'apache-arrow';\n"
        "import { columnsFromArrow } from './src/engine/table';\n"
        "import { fingerprintColumns } from './src/record/fingerprint';\n"
        "const out = document.getElementById('out')!;\n"
        "const text = atob(document.getElementById('data')!.textContent!.trim());\n"
        "const bytes = Uint8Array.from(text, c => c.charCodeAt(0));\n"
        "fingerprintColumns(columnsFromArrow(tableFromIPC(bytes)))\n"
        "  .then(f => { out.textContent = JSON.stringify({ secure: isSecureContext, ...f }); })\n"
        "  .catch(e => { out.textContent = 'ERROR ' + String(e); });\n"
    )
    _bundle(tmp_path, entry, script, "browser")
    data = base64.b64encode(files["arrow"].read_bytes()).decode()
    page = tmp_path / "fingerprint.html"
    # the page holds only base64 and our bundle; the result is read back from a <pre> as JSON
    page.write_text(
        "<!doctype html><html><body><pre id=\"out\">pending</pre>"
        f"<script type=\"text/plain\" id=\"data\">{data}</script>"
        f"<script>{script.read_text()}</script></body></html>",
        encoding="utf-8",
    )
    done = subprocess.run(
        [
            str(CHROMIUM),
            *CHROMIUM_FLAGS,
            f"--user-data-dir={tmp_path / 'profile'}",
            "--virtual-time-budget=20000",
            "--dump-dom",
            page.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=120,
    )
    start = done.stdout.find('<pre id="out">')
    assert start >= 0, f"chromium gave no page:\n{done.stderr[-2000:]}"
    shown = done.stdout[start + len('<pre id="out">') : done.stdout.find("</pre>", start)]
    assert not shown.startswith(("pending", "ERROR")), shown
    got = json.loads(shown.replace("&quot;", '"').replace("&amp;", "&").replace("&lt;", "<").replace("&gt;", ">"))
    expected = polyadic.fingerprint(frame)
    assert got.pop("secure") is True
    assert got == expected


# --- order histograms against numpy --------------------------------------------------------


@pytest.mark.parametrize(
    "values",
    [
        [0.0, 1.0, 2.0, 3.0],
        [0.7, 0.7, 0.7],
        list(np.random.default_rng(3).normal(-0.2, 0.3, 77)),
        list(np.random.default_rng(4).exponential(1.0, 1000) - 0.5),
    ],
)
def test_order_histogram_matches_numpy(values, node_run):
    # numpy.histogram computed at test time is the reference for src/record/summary.ts
    got = node_run("histogram", json.dumps(values))
    bins = min(20, max(1, int(np.ceil(np.sqrt(len(values))))))
    counts, edges = np.histogram(np.asarray(values), bins=bins)
    assert got["counts"] == counts.tolist()
    assert got["edges"] == edges.tolist()


# --- the panel's path, end to end -----------------------------------------------------------


def record_kernel_frame(frame, columns, options, node_run, tmp_path) -> tuple[Path, dict]:
    """What the panel does with a kernel frame: fetch it over the bridge, decode, analyse, record.

    Returns the notebook holding the record, and the recorded analysis.
    """
    from polyadic._arrow import frame_to_ipc_batches

    payload = frame_to_ipc_batches(frame, columns)
    stream = tmp_path / "fetch.arrows"
    stream.write_bytes(b"".join(payload.iter_pieces()))
    done = {
        "type": "fetch_done",
        "request_id": "r1",
        "name": "greenhouse",
        "rows": payload.rows,
        "original_rows": payload.original_rows,
        "sampled": payload.sampled,
        "seed": payload.seed,
        "columns": payload.columns,
        "batch_count": payload.batch_count,
        "bytes_total": payload.bytes_total,
    }
    done_path = tmp_path / "done.json"
    done_path.write_text(json.dumps(done))
    notebook = tmp_path / "greenhouse.ipynb"
    analysis = node_run("record", str(stream), str(done_path), json.dumps(options), str(notebook))
    return notebook, analysis


def test_record_of_a_kernel_frame_verifies_against_its_parquet_file(frame, files, node_run, tmp_path):
    """Bridge → front-end decoding → analyze → record → `polyadic verify` on the saved Parquet."""
    columns = ["valve_command", "flow_l_min", "leak_alarm", "humidity_a_pct", "humidity_b_pct", "bed_zone", "door_openings"]
    options = {"maxOrder": 3, "estimator": "miller-madow", "missing": "category"}
    notebook, analysis = record_kernel_frame(frame, columns, options, node_run, tmp_path)
    # the kernel's own fingerprint of the frame is the one the front end recorded
    assert analysis["source"]["fingerprint"]["sha256"] == polyadic.fingerprint(frame, columns)["sha256"]
    assert sorted(analysis["summary"]["synergy"][0]["columns"]) == ["flow_l_min", "leak_alarm", "valve_command"]

    run = node_run("verify", str(notebook), "--data", f"greenhouse={files['parquet']}", raw=True)
    assert "reproduced" in run.stdout and "1 of 1 analyses reproduce." in run.stdout

    changed = frame.copy()
    changed.loc[250, "humidity_b_pct"] += 0.5
    changed_path = tmp_path / "changed.parquet"
    changed.to_parquet(changed_path, engine="pyarrow", index=False)
    run = node_run("verify", str(notebook), "--data", f"greenhouse={changed_path}", expect=1, raw=True)
    assert "DATA CHANGED" in run.stdout and "values differ in column 'humidity_b_pct'" in run.stdout


def test_record_of_a_kernel_frame_verifies_against_to_csv_to_parquet_and_pyarrow_files(frame, node_run, tmp_path):
    """Booleans survive every writer: pandas' to_csv writes them as True/False, and verify reads them back as booleans."""
    flagged = frame.copy()
    # a nullable boolean with gaps: to_csv writes an empty cell, Parquet and Arrow a null
    ajar = pd.array(np.random.default_rng(8).integers(0, 2, len(flagged)).astype(bool), dtype="boolean")
    ajar[[5, 77, 301]] = pd.NA
    flagged["door_ajar"] = ajar
    columns = ["valve_command", "flow_l_min", "leak_alarm", "fan_on", "door_ajar", "humidity_a_pct", "bed_zone"]
    notebook, _ = record_kernel_frame(flagged, columns, {"maxOrder": 3, "missing": "category"}, node_run, tmp_path)

    written = {
        "to_csv": tmp_path / "greenhouse.csv",
        "to_parquet": tmp_path / "greenhouse.parquet",
        "pyarrow": tmp_path / "greenhouse.arrow",
    }
    flagged.to_csv(written["to_csv"], index=False)
    flagged.to_parquet(written["to_parquet"], index=False)
    feather.write_feather(pa.Table.from_pandas(flagged, preserve_index=False), written["pyarrow"], compression="uncompressed")
    # the writers' own spelling of a boolean, which the CSV reader must take for one
    first_row = written["to_csv"].read_text().splitlines()[1].split(",")
    assert {first_row[list(flagged.columns).index(name)] for name in ("valve_command", "leak_alarm", "fan_on")} <= {"True", "False"}
    for writer, path in written.items():
        run = node_run("verify", str(notebook), "--data", f"greenhouse={path}", raw=True)
        assert "1 of 1 analyses reproduce." in run.stdout, f"{writer}: {run.stdout}"

    # and a changed flag is noticed in the CSV, naming the column
    changed = flagged.copy()
    changed.loc[12, "leak_alarm"] = not changed.loc[12, "leak_alarm"]
    changed_path = tmp_path / "changed.csv"
    changed.to_csv(changed_path, index=False)
    run = node_run("verify", str(notebook), "--data", f"greenhouse={changed_path}", expect=1, raw=True)
    assert "values differ in column 'leak_alarm'" in run.stdout
