"""Scans of scanned frames (polyadic/_scan.py) on real DuckDB and real Spark local[2].

Every number is checked against numpy/pandas computed on the same column read in row order
(numpy.std, numpy.sort(x)[rank], numpy.unique(..., return_counts=True), numpy.histogram), for
both engines; then the same through the comm handler with a fake comm.
"""

from __future__ import annotations

import datetime as dt
import math
import queue
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import duckdb  # noqa: E402

from polyadic import _scan  # noqa: E402
from polyadic._arrow import scanned_to_ipc_batches  # noqa: E402
from polyadic._errors import BridgeError  # noqa: E402
from polyadic._listing import list_frames  # noqa: E402
from polyadic._results import ResultStore  # noqa: E402
from polyadic.bridge import KernelBridge  # noqa: E402

ROWS = 600
SCANNED = ["f", "g", "i", "big", "b", "s"]


def make_table(rows: int = ROWS, seed: int = 20240614) -> pa.Table:
    """A seeded frame: floats with None, NaN, −0.0 and 0.0; ±Inf; ints; wide ints; bools; text; times."""
    rng = np.random.default_rng(seed)
    f = rng.normal(3.0, 2.0, rows).round(3)
    f[[4, 50, 51]] = np.nan
    f[[10, 11]] = -0.0
    f[12] = 0.0
    f_null = np.zeros(rows, bool)
    f_null[[2, 77]] = True
    g = rng.uniform(-5, 5, rows)
    g[[30, 31]] = [np.inf, -np.inf]
    i = rng.integers(0, 5, rows)
    i_null = rng.random(rows) < 0.05
    big = rng.integers(-3, 3, rows).astype(np.int64) + (1 << 60)
    b = rng.random(rows) < 0.3
    b_null = np.zeros(rows, bool)
    b_null[100] = True
    s = rng.choice(["north", "south", "éast", "west", "Zed"], rows).astype(object)
    s[[5, 6]] = None
    t = [dt.datetime(2024, 1, 1) + dt.timedelta(minutes=10 * k) for k in range(rows)]
    return pa.table(
        {
            "f": pa.array(f, mask=f_null),
            "g": pa.array(g),
            "i": pa.array(i, mask=i_null),
            "big": pa.array(big),
            "b": pa.array(b, mask=b_null),
            "s": pa.array(list(s), type=pa.string()),
            "t": pa.array(t, type=pa.timestamp("us")),
        }
    )


TABLE = make_table()


def reference(name: str) -> dict:
    """numpy's view of a column: missing mask, and the non-missing values in row order."""
    column = TABLE.column(name).combine_chunks()
    valid = np.asarray(column.is_valid())
    if pa.types.is_string(column.type):
        values = np.array(column.to_pylist(), dtype=object)
        return {"missing": ~valid, "values": values[valid], "numeric": False}
    raw = column.fill_null(False if pa.types.is_boolean(column.type) else 0).to_numpy(zero_copy_only=False)
    numbers = raw.astype(np.float64)
    missing = ~valid | np.isnan(numbers)
    return {"missing": missing, "values": numbers[~missing], "raw": raw[~missing], "numeric": True}


@pytest.fixture(scope="module")
def duck_connection():
    connection = duckdb.connect()
    connection.execute("SET threads = 1")
    yield connection
    connection.close()


@pytest.fixture(params=["duckdb", "spark"])
def engine(request, duck_connection):
    if request.param == "duckdb":
        relation = duck_connection.from_arrow(TABLE)
        return _scan.scan_engine(relation, "frame", lambda: [duck_connection])
    spark = request.getfixturevalue("spark")
    return _scan.scan_engine(spark_frame(spark), "frame")


_SPARK_FRAMES: dict = {}


def spark_frame(spark):
    if "frame" not in _SPARK_FRAMES:
        _SPARK_FRAMES["frame"] = spark.createDataFrame(TABLE).cache()
    return _SPARK_FRAMES["frame"]


# --- facts ---------------------------------------------------------------------------------


def test_facts_equal_numpy(engine):
    facts = engine.facts(SCANNED)
    assert facts["rows"] == ROWS
    assert facts["engine"]["name"] == engine.name and facts["engine"]["version"]
    by_name = {c["name"]: c for c in facts["columns"]}
    for name in SCANNED:
        ref = reference(name)
        got = by_name[name]
        missing_rows = np.flatnonzero(ref["missing"])
        assert got["missing_count"] == len(missing_rows), name
        assert got["first_missing_row"] == (int(missing_rows[0]) if len(missing_rows) else -1), name
        assert got["count"] == len(ref["values"]), name
        # numpy.unique treats −0.0 and 0.0 as one value (they compare equal).
        assert got["levels"] == min(len(np.unique(ref["values"])), _scan.AUTO_MAX_LEVELS + 1), name
        if ref["numeric"]:
            x = ref["values"]
            finite_inf = np.flatnonzero(np.isinf(TABLE.column(name).to_numpy(zero_copy_only=False).astype(float)))
            if len(finite_inf):
                row = int(finite_inf[0])
                value = TABLE.column(name)[row].as_py()
                assert got["infinite"] == {"row": row, "value": "Infinity" if value > 0 else "-Infinity"}
            else:
                assert got["infinite"] is None
            expect_min, expect_max = float(np.min(x)), float(np.max(x))
            assert got["min"] == _scan.scan_double(expect_min), name
            assert got["max"] == _scan.scan_double(expect_max), name
            assert got["integer"] is bool(np.issubdtype(ref["raw"].dtype, np.integer) or ref["raw"].dtype == bool)
            rounded = bool(np.any(ref["raw"].astype(np.float64).astype(object) != ref["raw"].astype(object)))
            assert got["rounded"] is rounded, name
        else:
            assert got["min"] is None and got["max"] is None and got["infinite"] is None


def test_facts_wide_integers_are_flagged(engine):
    by_name = {c["name"]: c for c in engine.facts(["big", "i"])["columns"]}
    # 2^60 ± small offsets are not all doubles: numpy's float64 view changes some of them.
    assert by_name["big"]["rounded"] is True
    assert by_name["i"]["rounded"] is False


def test_facts_refuse_a_datetime_column_by_name(engine):
    with pytest.raises(BridgeError) as caught:
        engine.facts(["f", "t"])
    assert "'t'" in caught.value.message and "epoch seconds" in caught.value.message
    assert caught.value.detail["column"] == "t"
    assert caught.value.detail["kind"] == "datetime"


def test_facts_name_a_missing_column(engine):
    with pytest.raises(BridgeError) as caught:
        engine.facts(["nope"])
    assert caught.value.detail["column"] == "nope"


# --- details -------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["f", "i", "big", "b"])
def test_details_equal_numpy(engine, name):
    x = reference(name)["values"]
    n = len(x)
    ranks = [0, n // 4, n // 2, n - 1]
    reply = engine.details([{"name": name, "ranks": ranks, "std": True, "skewness": True, "distinct": True}])
    got = reply["columns"][0]
    assert got["order_statistics"] == [_scan.scan_double(v) for v in np.sort(x)[ranks]]
    assert engine.rank_routes["sorted"] == 0  # from the buckets, not a whole-column sort
    s = np.std(x)
    assert got["std"] == float(s)  # numpy.std on the same values in row order: bit for bit
    if s == 0:
        assert got["skewness"] is None
    else:
        assert got["skewness"] == float(np.mean(((x - x.mean()) / s) ** 3))
    values, counts = np.unique(x + 0.0, return_counts=True)
    assert got["distinct"] == {"values": [float(v) for v in values], "counts": [int(c) for c in counts]}


def test_details_of_text_are_by_code_point(engine):
    x = reference("s")["values"]
    values, counts = np.unique(x.astype(str), return_counts=True)
    got = engine.details([{"name": "s", "ranks": [], "std": False, "skewness": False, "distinct": True}])
    assert got["columns"][0]["distinct"] == {"values": list(values), "counts": [int(c) for c in counts]}
    assert got["columns"][0]["std"] is None


def test_details_refuse_a_rank_past_the_end(engine):
    n = len(reference("f")["values"])
    with pytest.raises(BridgeError) as caught:
        engine.details([{"name": "f", "ranks": [n], "std": False, "skewness": False, "distinct": False}])
    assert caught.value.detail["column"] == "f"


def test_details_skewness_needs_std(engine):
    got = engine.details([{"name": "f", "ranks": [], "std": False, "skewness": True, "distinct": False}])
    assert got["columns"][0]["skewness"] is None


# --- group ---------------------------------------------------------------------------------


def test_group_codes_match_numpy_histogram(engine):
    x = reference("f")["values"]
    edges = np.histogram_bin_edges(x, bins=7)
    table, rows = engine.group([{"name": "f", "edges": [float(e) for e in edges]}])
    assert rows == ROWS
    assert table.schema.names == ["k0", "weight"]
    assert table.schema.field("k0").type == pa.int32() and table.schema.field("weight").type == pa.int64()
    weights = dict(zip(table.column("k0").to_pylist(), table.column("weight").to_pylist()))
    expected, _ = np.histogram(x, edges)
    assert [weights.get(code, 0) for code in range(len(expected))] == expected.tolist()
    assert weights.get(None, 0) == int(reference("f")["missing"].sum())
    assert sum(weights.values()) == ROWS


def test_group_codes_outside_the_edges_are_minus_one(engine):
    x = reference("g")["values"]  # ±Inf are outside any finite edges
    edges = [-2.0, -0.5, 0.0, 1.25, 2.0]
    table, _ = engine.group([{"name": "g", "edges": edges}])
    weights = dict(zip(table.column("k0").to_pylist(), table.column("weight").to_pylist()))
    expected, _ = np.histogram(x, edges)
    assert [weights.get(code, 0) for code in range(4)] == expected.tolist()
    assert weights[-1] == int(np.sum((x < edges[0]) | (x > edges[-1])))


def test_group_by_values_and_codes_matches_pandas(engine):
    edges = [0.0, 1.0, 2.5, 4.0]
    table, rows = engine.group(
        [{"name": "i", "edges": edges}, {"name": "s", "edges": None}, {"name": "b", "edges": None}, {"name": "f", "edges": None}]
    )
    assert [f.type for f in table.schema] == [pa.int32(), pa.string(), pa.float64(), pa.float64(), pa.int64()]
    frame = TABLE.select(["i", "s", "b", "f"]).to_pandas()
    i = frame["i"].to_numpy(dtype=float, na_value=np.nan)
    # numpy.histogram's rule by searchsorted: the last bin holds the last edge.
    code = np.searchsorted(edges, i, side="right") - 1
    code[i == edges[-1]] = len(edges) - 2
    code = np.where((i < edges[0]) | (i > edges[-1]), -1, code).astype(float)
    code[np.isnan(i)] = np.nan
    f = frame["f"].to_numpy(dtype=float, na_value=np.nan) + 0.0
    b = frame["b"].map({True: 1.0, False: 0.0}).astype(float)
    expect = (
        pd.DataFrame({"k0": code, "k1": frame["s"], "k2": b, "k3": f})
        .groupby(["k0", "k1", "k2", "k3"], dropna=False)
        .size()
    )
    got = table.to_pandas()
    got["k0"] = got["k0"].astype(float)
    got = got.set_index(["k0", "k1", "k2", "k3"])["weight"]
    assert dict(map(_normal, got.items())) == dict(map(_normal, expect.items()))
    assert rows == ROWS == int(got.sum())


def _normal(item):
    key, count = item
    return tuple("<null>" if v is None or pd.isna(v) else v for v in key), int(count)


def test_group_refuses_more_distinct_rows_than_the_limit(engine):
    with pytest.raises(BridgeError) as caught:
        engine.group([{"name": "g", "edges": None}], max_distinct_rows=10)
    assert caught.value.detail["limit"] == "distinct_rows"
    assert caught.value.detail["count"] == len(np.unique(reference("g")["values"]))


def test_group_refuses_bad_edges(engine):
    with pytest.raises(BridgeError) as caught:
        engine.group([{"name": "f", "edges": [2.0, 1.0]}])
    assert caught.value.detail["column"] == "f"


# --- preview sample ------------------------------------------------------------------------


def test_sample_is_seeded_and_in_row_order(engine):
    first = scanned_to_ipc_batches(engine, ["i", "s"], 50, 7)
    again = scanned_to_ipc_batches(engine, ["i", "s"], 50, 7)
    other = scanned_to_ipc_batches(engine, ["i", "s"], 50, 8)
    assert first.rows == 50 and first.sampled and first.original_rows == ROWS and first.seed == 7

    def rows_of(payload):
        table = pa.Table.from_batches(payload.batches)
        return list(zip(table.column("i").to_pylist(), table.column("s").to_pylist()))

    assert rows_of(first) == rows_of(again)
    assert rows_of(first) != rows_of(other)
    everything = scanned_to_ipc_batches(engine, ["i", "s"], 10_000, 7)
    assert not everything.sampled and everything.rows == ROWS
    all_rows = rows_of(everything)
    assert all_rows == list(zip(TABLE.column("i").to_pylist(), TABLE.column("s").to_pylist()))
    # A sample is a subsequence of the frame's rows: in row order.
    position = 0
    for row in rows_of(first):
        position = all_rows.index(row, position) + 1


def test_duckdb_sample_takes_numpys_seeded_rows(duck_connection):
    engine = _scan.scan_engine(duck_connection.from_arrow(TABLE), "frame", lambda: [duck_connection])
    payload = scanned_to_ipc_batches(engine, ["f"], 40, 3)
    picks = _scan.sample_indices(ROWS, 40, 3)
    assert pa.Table.from_batches(payload.batches).column("f").to_pylist() == TABLE.column("f").take(picks).to_pylist()


# --- listing -------------------------------------------------------------------------------


def test_listing_runs_no_spark_job(spark):
    frame = spark_frame(spark)
    tracker = spark.sparkContext.statusTracker()
    before = tracker.getJobIdsForGroup(None)
    frames, skipped = list_frames({"sdf": frame})
    assert tracker.getJobIdsForGroup(None) == before
    assert skipped == []
    (info,) = frames
    assert info["kind"] == "spark" and info["rows"] is None and info["memory_bytes"] is None
    assert info["engine"] == {"name": "spark", "version": spark.version}
    kinds = {c["name"]: (c["dtype"], c["kind"]) for c in info["columns"]}
    assert kinds["f"] == ("double", "numeric") and kinds["b"] == ("boolean", "bool")
    assert kinds["s"] == ("string", "string") and kinds["t"][1] == "datetime"


def test_listing_of_a_duckdb_relation(duck_connection):
    relation = duck_connection.sql("SELECT 1::BIGINT AS n, 'x' AS s, INTERVAL 1 DAY AS d, 1.5::DECIMAL(4,1) AS m")
    (info,), _ = list_frames({"rel": relation})
    assert info["kind"] == "duckdb" and info["rows"] is None and info["engine"]["version"] == duckdb.__version__
    assert [(c["dtype"], c["kind"]) for c in info["columns"]] == [
        ("BIGINT", "numeric"),
        ("VARCHAR", "string"),
        ("INTERVAL", "timedelta"),
        ("DECIMAL(4,1)", "numeric"),
    ]


# --- through the comm handler --------------------------------------------------------------


class RecordingComm:
    """Records what the kernel sends (from any thread), like ipykernel's Comm."""

    def __init__(self) -> None:
        self.comm_id = "scan-test"
        self.messages: queue.Queue = queue.Queue()
        # Messages read while waiting for another request, kept for a later until(): the scan
        # thread may answer before the handler thread does (a cancelled scan's error can arrive
        # before cancel_done).
        self._held: list[tuple[dict, list[bytes]]] = []

    def send(self, data=None, metadata=None, buffers=None):
        self.messages.put((data, [bytes(memoryview(b)) for b in buffers or []]))

    def on_msg(self, callback):
        pass

    def on_close(self, callback):
        pass

    def until(self, request_id, types, timeout=120.0):
        """Messages for ``request_id`` up to the first whose type is in ``types``."""
        out = []
        deadline = time.monotonic() + timeout
        held, self._held = self._held, []
        while True:
            if held:
                data, buffers = held.pop(0)
            else:
                data, buffers = self.messages.get(timeout=max(0.1, deadline - time.monotonic()))
            if data.get("request_id") != request_id:
                self._held.append((data, buffers))
                continue
            out.append((data, buffers))
            if data["type"] in types:
                self._held.extend(held)
                return out


def request(bridge, comm, data):
    bridge.handle_message(comm, {"content": {"data": data}})


@pytest.fixture(params=["duckdb", "spark"])
def served(request, duck_connection):
    if request.param == "duckdb":
        frame = duck_connection.from_arrow(TABLE)
    else:
        frame = spark_frame(request.getfixturevalue("spark"))
    namespace = {"frame": frame, "con": duck_connection}
    bridge = KernelBridge(lambda: namespace, store=ResultStore(), max_batch_bytes=1024)
    return bridge, RecordingComm(), namespace


def test_bridge_serves_facts_details_and_group(served):
    bridge, comm, _ = served
    request(bridge, comm, {"type": "scan", "request_id": "f1", "name": "frame", "step": "facts", "columns": ["f", "s"]})
    (*_, (facts, _)) = comm.until("f1", {"scan_facts", "error"})
    assert facts["type"] == "scan_facts" and facts["rows"] == ROWS
    assert [c["name"] for c in facts["columns"]] == ["f", "s"]
    assert facts["columns"][0]["missing_count"] == int(reference("f")["missing"].sum())

    request(
        bridge,
        comm,
        {"type": "scan", "request_id": "d1", "name": "frame", "step": "details",
         "columns": [{"name": "f", "ranks": [0], "std": True, "skewness": False, "distinct": False}]},
    )
    (*_, (details, _)) = comm.until("d1", {"scan_details", "error"})
    assert details["type"] == "scan_details"
    assert details["columns"][0]["std"] == float(np.std(reference("f")["values"]))

    edges = [float(e) for e in np.histogram_bin_edges(reference("f")["values"], bins=4)]
    request(
        bridge,
        comm,
        {"type": "scan", "request_id": "g1", "name": "frame", "step": "group",
         "columns": [{"name": "f", "edges": edges}, {"name": "s", "edges": None}]},
    )
    messages = comm.until("g1", {"scan_done", "error"})
    done = messages[-1][0]
    assert done["type"] == "scan_done", done
    pieces = [b for data, buffers in messages if data["type"] == "fetch_chunk" for b in buffers]
    assert len(pieces) == done["batch_count"] and sum(map(len, pieces)) == done["bytes_total"]
    table = pa.ipc.open_stream(b"".join(pieces)).read_all()
    assert table.schema.names == ["k0", "k1", "weight"]
    assert done["rows"] == ROWS == sum(table.column("weight").to_pylist())
    assert done["distinct_rows"] == table.num_rows
    assert done["engine"]["name"] in ("duckdb", "spark")
    assert bridge.running_scans() == []


def test_bridge_refuses_a_datetime_column_and_serves_the_next(served):
    bridge, comm, _ = served
    request(bridge, comm, {"type": "scan", "request_id": "t1", "name": "frame", "step": "facts", "columns": ["t"]})
    (*_, (error, _)) = comm.until("t1", {"scan_facts", "error"})
    assert error["type"] == "error" and error["detail"]["column"] == "t"
    request(bridge, comm, {"type": "scan", "request_id": "t2", "name": "frame", "step": "facts", "columns": ["i"]})
    assert comm.until("t2", {"scan_facts", "error"})[-1][0]["type"] == "scan_facts"


class WatchingComm(RecordingComm):
    """Records, as each message leaves, which scans the bridge still counts as running."""

    def __init__(self) -> None:
        super().__init__()
        self.bridge = None
        self.running_at_send: dict = {}

    def send(self, data=None, metadata=None, buffers=None):
        if data and data.get("type") in {"scan_facts", "scan_details", "scan_done", "error"}:
            self.running_at_send[data["request_id"]] = self.bridge.running_scans()
        super().send(data, metadata, buffers)


def test_bridge_frees_the_frame_before_the_last_reply_of_a_scan(served):
    # A client answering a scan's reply with the next scan of the same frame must not be told
    # that the first one is still running (the live-kernel spec met this race on Spark).
    bridge, _, _ = served
    comm = WatchingComm()
    comm.bridge = bridge
    request(bridge, comm, {"type": "scan", "request_id": "w1", "name": "frame", "step": "facts", "columns": ["i"]})
    assert comm.until("w1", {"scan_facts", "error"})[-1][0]["type"] == "scan_facts"
    request(bridge, comm, {"type": "scan", "request_id": "w2", "name": "frame", "step": "facts", "columns": ["nope"]})
    assert comm.until("w2", {"scan_facts", "error"})[-1][0]["type"] == "error"
    assert comm.running_at_send == {"w1": [], "w2": []}


def test_bridge_fetch_of_a_scanned_frame_is_a_seeded_sample(served):
    bridge, comm, _ = served
    request(bridge, comm, {"type": "fetch", "request_id": "p1", "name": "frame", "columns": ["f", "s"],
                           "row_cap": 100, "sample_seed": 5})
    messages = comm.until("p1", {"fetch_done", "error"})
    done = messages[-1][0]
    assert done["type"] == "fetch_done", done
    assert done["sampled"] is True and done["original_rows"] == ROWS and done["rows"] == 100 and done["seed"] == 5


def test_bridge_cancel_of_nothing(served):
    bridge, comm, _ = served
    request(bridge, comm, {"type": "cancel", "request_id": "c0", "target": "nothing"})
    (reply, _), = comm.until("c0", {"cancel_done"})
    assert reply == {"type": "cancel_done", "request_id": "c0", "target": "nothing", "cancelled": False}


def test_spark_job_failure_reports_sparks_message(spark):
    from pyspark.sql import functions as F

    good = spark_frame(spark)
    bad = good.select(
        F.when(F.col("i") == 3, F.raise_error(F.lit("polyadic test: row refused"))).otherwise(F.col("f")).alias("x")
    )
    namespace = {"bad": bad, "good": good}
    bridge = KernelBridge(lambda: namespace, store=ResultStore())
    comm = RecordingComm()
    request(bridge, comm, {"type": "scan", "request_id": "b1", "name": "bad", "step": "facts", "columns": ["x"]})
    (*_, (error, _)) = comm.until("b1", {"scan_facts", "error"})
    assert error["type"] == "error"
    assert error["message"].startswith("Spark stopped the scan of 'bad': ")
    assert "polyadic test: row refused" in error["detail"]["engine_message"]
    assert error["detail"]["engine"] == "spark" and len(error["detail"]["engine_message"]) <= 4000
    assert "\n" not in error["message"]
    # The bridge and the session still serve the next request.
    request(bridge, comm, {"type": "scan", "request_id": "b2", "name": "good", "step": "facts", "columns": ["i"]})
    assert comm.until("b2", {"scan_facts", "error"})[-1][0]["type"] == "scan_facts"
    assert good.count() == ROWS


def test_spark_cancel_stops_the_job_group(spark):
    from pyspark.sql import functions as F
    from pyspark.sql.types import DoubleType

    def slow(value):
        time.sleep(0.5)
        return float(value)

    slow_udf = F.udf(slow, DoubleType())
    frame = spark.range(0, 40, numPartitions=2).select(slow_udf(F.col("id")).alias("x"))
    namespace = {"slow": frame}
    bridge = KernelBridge(lambda: namespace, store=ResultStore())
    comm = RecordingComm()
    request(bridge, comm, {"type": "scan", "request_id": "s1", "name": "slow", "step": "facts", "columns": ["x"]})
    tracker = spark.sparkContext.statusTracker()
    group = None
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        engines = list(bridge._scans.values())
        if engines and tracker.getJobIdsForGroup(engines[0].job_group):
            group = engines[0].job_group
            break
        time.sleep(0.05)
    assert group is not None, "the slow scan never started a job in its job group"
    request(bridge, comm, {"type": "cancel", "request_id": "c1", "target": "s1"})
    (cancel, _), = comm.until("c1", {"cancel_done"})
    assert cancel["cancelled"] is True and cancel["target"] == "s1"
    (*_, (error, _)) = comm.until("s1", {"scan_facts", "error"})
    assert error["type"] == "error" and error["detail"]["cancelled"] is True
    jobs = [tracker.getJobInfo(j) for j in tracker.getJobIdsForGroup(group)]
    assert jobs and all(job is None or job.status != "RUNNING" for job in jobs)
    assert bridge.running_scans() == []


@pytest.fixture
def slow_duckdb(duck_connection):
    """A bridge serving a relation whose scan takes long (4·10^10 rows of a cross product)."""
    slow = duck_connection.sql("SELECT a.range * 1.0 + b.range AS x FROM range(200000) a, range(200000) b")
    namespace = {"slow": slow, "con": duck_connection}
    return KernelBridge(lambda: namespace, store=ResultStore()), RecordingComm()


def test_duckdb_cancel_interrupts_the_query(slow_duckdb, duck_connection):
    bridge, comm = slow_duckdb
    request(bridge, comm, {"type": "scan", "request_id": "q1", "name": "slow", "step": "facts", "columns": ["x"]})
    comm.until("q1", {"scan_progress"})
    time.sleep(0.3)
    request(bridge, comm, {"type": "cancel", "request_id": "c2", "target": "q1"})
    (cancel, _), = comm.until("c2", {"cancel_done"})
    assert cancel["cancelled"] is True
    (*_, (error, _)) = comm.until("q1", {"scan_facts", "error"})
    assert error["type"] == "error" and error["detail"]["cancelled"] is True, error
    # The user's connection still runs queries.
    assert duck_connection.sql("SELECT 41 + 1").fetchone()[0] == 42


def test_one_scan_per_frame_at_a_time(slow_duckdb):
    bridge, comm = slow_duckdb
    request(bridge, comm, {"type": "scan", "request_id": "o1", "name": "slow", "step": "facts", "columns": ["x"]})
    request(bridge, comm, {"type": "scan", "request_id": "o2", "name": "slow", "step": "facts", "columns": ["x"]})
    (busy, _), = comm.until("o2", {"error"})
    assert busy["detail"]["running"] == "o1"
    request(bridge, comm, {"type": "cancel", "request_id": "c3", "target": "o1"})
    (*_, (ended, _)) = comm.until("o1", {"error", "scan_facts"})
    assert ended["detail"]["cancelled"] is True
    assert bridge.running_scans() == []


# --- the line of an engine message a person reads first ---------------------------------------


def _python_traceback(error: BaseException) -> str:
    """The traceback Python's own traceback module prints for ``error`` (the reference layout)."""
    import traceback

    return "".join(traceback.format_exception(type(error), error, error.__traceback__))


def test_first_line_of_a_python_traceback_is_the_exception_line():
    # The layout is the one Python's traceback module prints, with a chained exception.
    try:
        try:
            {}["valve"]
        except KeyError:
            raise ValueError("sensor reading 17 is out of range\nsecond line")
    except ValueError as error:
        text = "An exception was thrown from the Python worker. Please see the stack trace below.\n" + _python_traceback(error)
    assert _scan.first_line(text) == "ValueError: sensor reading 17 is out of range"
    assert _scan.python_exception_line("[DIVIDE_BY_ZERO] Division by zero.\n  at x") is None
    assert _scan.first_line("\n  [DIVIDE_BY_ZERO] Division by zero.\nmore") == "[DIVIDE_BY_ZERO] Division by zero."


def test_spark_udf_failure_shows_the_udfs_own_line(spark):
    from pyspark.sql import functions as F
    from pyspark.sql.types import DoubleType

    def checked(value):
        if value == 17:
            raise ValueError(f"sensor reading {value} is out of range")
        return float(value)

    frame = spark.range(0, 60, numPartitions=2).select(F.udf(checked, DoubleType())(F.col("id")).alias("x"))
    namespace = {"bad": frame}
    bridge = KernelBridge(lambda: namespace, store=ResultStore())
    comm = RecordingComm()
    request(bridge, comm, {"type": "scan", "request_id": "u1", "name": "bad", "step": "facts", "columns": ["x"]})
    (*_, (error, _)) = comm.until("u1", {"scan_facts", "error"})
    assert error["type"] == "error"
    assert error["message"] == "Spark stopped the scan of 'bad': ValueError: sensor reading 17 is out of range"
    assert "Python worker" in error["detail"]["engine_message"]
    assert bridge.running_scans() == []


# --- a cancel that lands before the step's job has started -----------------------------------


def _run_in_thread(engine, step):
    """Run ``engine.run(step)`` on a thread of its own, as the bridge does; returns (thread, outcome)."""
    import threading

    outcome: dict = {}

    def target():
        try:
            outcome["result"] = engine.run(step)
        except BaseException as error:  # noqa: BLE001 - handed to the test
            outcome["error"] = error

    thread = threading.Thread(target=target, daemon=True)
    thread.start()
    return thread, outcome


def test_spark_cancel_before_the_job_starts_still_stops_it(spark):
    # cancelJobGroup stops only the group's active jobs: a cancel that came after the step's
    # check but before its job was submitted used to stop nothing, and the job ran to its end.
    import threading

    from pyspark.sql import functions as F
    from pyspark.sql.types import DoubleType

    def slow(value):
        time.sleep(0.25)
        return float(value)

    frame = spark.range(0, 400, numPartitions=2).select(F.udf(slow, DoubleType())(F.col("id")).alias("x"))
    engine = _scan.scan_engine(frame, "slow")
    column = engine.column("x")
    ready, go = threading.Event(), threading.Event()

    def step():
        ready.set()
        go.wait(30)
        return engine._aggregate([column])  # 50 s of UDF calls per partition when not stopped

    thread, outcome = _run_in_thread(engine, step)
    assert ready.wait(30)
    tracker = spark.sparkContext.statusTracker()
    engine.cancel()  # no job of the group is active yet
    assert tracker.getJobIdsForGroup(engine.job_group) == []
    go.set()
    thread.join(120)
    assert not thread.is_alive()
    assert isinstance(outcome.get("error"), _scan.ScanCancelled), outcome
    jobs = [tracker.getJobInfo(j) for j in tracker.getJobIdsForGroup(engine.job_group)]
    # the job was submitted after the cancel and was cancelled (FAILED), not run to SUCCEEDED
    assert jobs and [job.status for job in jobs if job is not None] == ["FAILED"] * len([j for j in jobs if j is not None])
    assert tracker.getActiveJobsIds() == []


def test_duckdb_cancel_before_the_query_starts_still_interrupts_it(slow_duckdb, duck_connection):
    import threading

    namespace = {"con": duck_connection}
    slow = duck_connection.sql("SELECT a.range * 1.0 + b.range AS x FROM range(200000) a, range(200000) b")
    engine = _scan.scan_engine(slow, "slow", lambda: list(namespace.values()))
    column = engine.column("x")
    ready, go = threading.Event(), threading.Event()

    def step():
        ready.set()
        go.wait(30)
        return engine._aggregate([column])  # 4·10^10 rows when not stopped

    thread, outcome = _run_in_thread(engine, step)
    assert ready.wait(30)
    engine.cancel()  # the connection is not even found yet: nothing to interrupt
    go.set()
    thread.join(60)
    if thread.is_alive():
        duck_connection.interrupt()
        thread.join(30)
        pytest.fail("the query started after the cancel ran on")
    assert isinstance(outcome.get("error"), _scan.ScanCancelled), outcome
    assert duck_connection.sql("SELECT 41 + 1").fetchone()[0] == 42
# --- order statistics by buckets (tiny limits so that every route runs) --------------------


def make_ranked_table(seed: int = 20240615) -> pa.Table:
    """x: ±Inf, negatives, a tie of 30 alone in its bucket, a heavy cluster, NaN/None; w: wide
    int64s with ties; c: one value with ±Inf around it; b: booleans."""
    rng = np.random.default_rng(seed)
    x = np.concatenate(
        [
            [-10.0, 10.0, -np.inf, -np.inf, -np.inf, np.inf, np.inf, np.nan],
            rng.uniform(-10, -2.5, 40).round(2),  # light buckets, with ties from the rounding
            0.5 + rng.uniform(0, 1e-9, 300),  # one heavy bucket, still heavy one level down
            np.full(30, 6.0),  # a one-value bucket
            rng.uniform(7.5, 10, 5),
        ]
    )
    n = x.size
    w = rng.integers(-(1 << 62), 1 << 62, n).astype(np.int64)
    w[:20] = w[20]
    c = np.full(n, 7.0)
    c[:2], c[2] = np.inf, -np.inf
    b = rng.random(n) < 0.4
    order = rng.permutation(n)
    mask = np.zeros(n, bool)
    mask[order[:3]] = True
    return pa.table(
        {
            "x": pa.array(x[order], mask=mask),
            "w": pa.array(w[order]),
            "c": pa.array(c[order]),
            "b": pa.array(b[order]),
        }
    )


RANKED = make_ranked_table()


@pytest.fixture(params=["duckdb", "spark"])
def ranked_engine(request, duck_connection):
    if request.param == "duckdb":
        scan = _scan.scan_engine(duck_connection.from_arrow(RANKED), "ranked", lambda: [duck_connection])
    else:
        spark = request.getfixturevalue("spark")
        if "ranked" not in _SPARK_FRAMES:
            _SPARK_FRAMES["ranked"] = spark.createDataFrame(RANKED).cache()
        scan = _scan.scan_engine(_SPARK_FRAMES["ranked"], "ranked")
    scan.rank_buckets, scan.rank_fetch_limit, scan.rank_depth = 8, 20, 1
    return scan


def ranked_reference(name: str) -> np.ndarray:
    column = RANKED.column(name).combine_chunks()
    values = column.fill_null(False if pa.types.is_boolean(column.type) else 0).to_numpy(zero_copy_only=False)
    values = values.astype(np.float64)[np.asarray(column.is_valid())]
    return values[~np.isnan(values)]


def test_every_rank_by_buckets_equals_numpy_sort(ranked_engine):
    names = ["x", "w", "c", "b"]
    requests = []
    for name in names:
        n = len(ranked_reference(name))
        requests.append({"name": name, "ranks": list(range(n)), "std": False, "skewness": False, "distinct": False})
    reply = ranked_engine.details(requests)
    for name, got in zip(names, reply["columns"]):
        # Source: numpy.sort of the same values read as float64.
        expect = [_scan.scan_double(v) for v in np.sort(ranked_reference(name))]
        assert got["order_statistics"] == expect, name
    routes = ranked_engine.rank_routes
    assert routes["one value"] == 1  # column c
    assert routes["bucket edge"] > 0 and routes["fetched"] > 0 and routes["heavy"] > 0
    # The heavy cluster is heavy again one level down: DuckDB ranks it with quantile_disc,
    # Spark (rank_depth 1) sorts it.
    if ranked_engine.name == "duckdb":
        assert routes["engine quantile"] > 0
    else:
        assert routes["sorted at depth"] > 0
    # No column fell back to a whole-column sort (the buckets were complete and in order).
    assert routes["sorted"] == 0


def test_a_few_ranks_by_buckets_equal_numpy_sort(ranked_engine):
    x = np.sort(ranked_reference("x"))
    ranks = [0, 2, 3, 5, 17, 60, 200, len(x) - 6, len(x) - 1]
    reply = ranked_engine.details([{"name": "x", "ranks": ranks, "std": False, "skewness": False, "distinct": False}])
    assert reply["columns"][0]["order_statistics"] == [_scan.scan_double(v) for v in x[ranks]]  # source: numpy.sort
