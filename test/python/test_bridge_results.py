"""Multiplet tables sent back in chunks (polyadic/_results.py)."""

from __future__ import annotations

import random
import sys
import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pandas as pd
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic import _results  # noqa: E402
from polyadic._errors import BridgeError  # noqa: E402
from polyadic._results import (  # noqa: E402
    EVIDENCE_FIELDS,
    MULTIPLET_FIELDS,
    ResultsNotFound,
    ResultStore,
    decode_multiplets,
)


def multiplet_table(rows: int, salt: float = 0.0, extra: bool = True) -> pa.Table:
    """A multiplet table shaped as the front end sends it (columns as List<Utf8>)."""
    names = [[f"c{i}", f"c{i + 1}"] if i % 2 else [f"c{i}", f"c{i + 1}", f"c{i + 2}"] for i in range(rows)]
    data = {
        "columns": pa.array(names, pa.list_(pa.string())),
        "order": pa.array([len(n) for n in names], pa.int32()),
        "entropy": pa.array([1.0 + i + salt for i in range(rows)]),
        "co_information": pa.array([-0.5 * i - salt for i in range(rows)]),
        "total_correlation": pa.array([0.1 * i for i in range(rows)]),
        "dual_total_correlation": pa.array([0.2 * i for i in range(rows)]),
        "o_information": pa.array([-0.1 * i for i in range(rows)]),
        "s_information": pa.array([0.3 * i for i in range(rows)]),
    }
    if extra:
        data["p_value"] = pa.array([None if i == 0 else 1 / (i + 1) for i in range(rows)], pa.float64())
    return pa.table(data)


def ipc_bytes(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    with pa.ipc.new_stream(sink, table.schema) as writer:
        writer.write_table(table)
    return sink.getvalue().to_pybytes()


def cut(data: bytes, size: int) -> list[bytes]:
    """Arbitrary byte cuts, as the browser makes them (not aligned with IPC messages)."""
    return [data[i : i + size] for i in range(0, len(data), size)]


class TestDecode:
    def test_fields_and_tuples(self):
        table = multiplet_table(5)
        frame = decode_multiplets(ipc_bytes(table))
        assert list(frame.columns) == [*MULTIPLET_FIELDS, "p_value"]
        assert frame["columns"].tolist() == [tuple(n) for n in table.column("columns").to_pylist()]
        assert frame["order"].tolist() == [3, 2, 3, 2, 3]
        pd.testing.assert_series_equal(
            frame["co_information"], pd.Series(table.column("co_information").to_pylist(), name="co_information")
        )
        assert pd.isna(frame["p_value"].iloc[0]) and frame["p_value"].iloc[1] == 0.5

    def test_missing_fields_are_named(self):
        table = multiplet_table(3).drop_columns(["o_information", "order"])
        with pytest.raises(BridgeError, match=r"lacks the field\(s\) 'order', 'o_information'") as caught:
            decode_multiplets(ipc_bytes(table))
        assert caught.value.detail == {"fields": ["order", "o_information"]}

    def test_wrong_types_are_named(self):
        table = multiplet_table(2).set_column(0, "columns", pa.array(["a", "b"]))
        with pytest.raises(BridgeError, match=r"'columns' must be a list of strings, got string"):
            decode_multiplets(ipc_bytes(table))
        table = multiplet_table(2).set_column(2, "entropy", pa.array(["x", "y"]))
        with pytest.raises(BridgeError, match=r"'entropy' must be a number, got string"):
            decode_multiplets(ipc_bytes(table))
        table = multiplet_table(2).set_column(1, "order", pa.array([1.0, 2.0]))
        with pytest.raises(BridgeError, match=r"'order' must be an integer, got double"):
            decode_multiplets(ipc_bytes(table))

    def test_garbage_bytes(self):
        with pytest.raises(BridgeError, match="not a readable Arrow IPC stream"):
            decode_multiplets(b"not arrow at all")


class TestStore:
    def test_chunks_in_any_order(self):
        store = ResultStore()
        table = multiplet_table(2000)
        chunks = cut(ipc_bytes(table), 1000)
        assert len(chunks) > 10
        order = list(range(len(chunks)))
        random.Random(1).shuffle(order)
        outcomes = [store.add_chunk("run-1", i, len(chunks), chunks[i], {"label": "first"}) for i in order]
        assert [o.complete for o in outcomes] == [False] * (len(chunks) - 1) + [True]
        assert [o.received for o in outcomes] == list(range(1, len(chunks) + 1))
        frame = store.get("run-1")
        assert len(frame) == 2000
        assert frame["columns"].iloc[3] == ("c3", "c4")
        assert frame.attrs["polyadic"] == {"analysis_id": "run-1", "label": "first"}
        pd.testing.assert_frame_equal(frame, store.get())

    def test_latest_and_by_id(self):
        store = ResultStore()
        for analysis_id, salt in (("a", 0.0), ("b", 10.0)):
            store.add_chunk(analysis_id, 0, 1, ipc_bytes(multiplet_table(3, salt)))
        assert store.get()["entropy"].iloc[0] == 11.0
        assert store.get("a")["entropy"].iloc[0] == 1.0
        assert store.ids() == ["a", "b"]
        # A re-sent analysis replaces the earlier table and becomes the latest.
        store.add_chunk("a", 0, 1, ipc_bytes(multiplet_table(3, 100.0)))
        assert store.get()["entropy"].iloc[0] == 101.0
        assert store.ids() == ["b", "a"]

    def test_returns_a_copy(self):
        store = ResultStore()
        store.add_chunk("a", 0, 1, ipc_bytes(multiplet_table(3)), {"label": "kept"})
        mine = store.get("a")
        mine["entropy"] = 0.0
        mine.attrs["polyadic"]["label"] = "changed"
        assert store.get("a")["entropy"].iloc[0] == 1.0
        assert store.get("a").attrs["polyadic"]["label"] == "kept"

    def test_clear_messages_when_nothing_matches(self):
        store = ResultStore()
        with pytest.raises(ResultsNotFound, match="No Polyadic results yet: run an analysis"):
            store.get()
        with pytest.raises(ResultsNotFound, match="No Polyadic results with id 'x'; known ids: none yet"):
            store.get("x")
        store.add_chunk("first", 0, 1, ipc_bytes(multiplet_table(1)))
        store.add_chunk("second", 0, 1, ipc_bytes(multiplet_table(1)))
        with pytest.raises(ResultsNotFound, match=r"No Polyadic results with id 'x'; known ids: 'first', 'second'\."):
            store.get("x")

    def test_duplicate_chunk_with_same_bytes_is_harmless(self):
        store = ResultStore()
        chunks = cut(ipc_bytes(multiplet_table(50)), 700)
        store.add_chunk("a", 0, len(chunks), chunks[0])
        again = store.add_chunk("a", 0, len(chunks), chunks[0])
        assert again.received == 1 and not again.complete
        for i in range(1, len(chunks)):
            store.add_chunk("a", i, len(chunks), chunks[i])
        assert len(store.get("a")) == 50

    @pytest.mark.parametrize(
        "analysis_id, index, count, message",
        [
            ("", 0, 1, "'analysis_id' must be a non-empty string"),
            (7, 0, 1, "'analysis_id' must be a non-empty string"),
            ("a", 1, 1, r"'chunk_index' 1 is outside 0…0"),
            ("a", -1, 2, r"'chunk_index' -1 is outside 0…1"),
            ("a", 0, 0, "'chunk_count' must be between 1 and"),
            ("a", "0", 1, "'chunk_index' must be a whole number"),
            ("a", 0, True, "'chunk_count' must be a whole number"),
        ],
    )
    def test_bad_chunk_fields_are_named(self, analysis_id, index, count, message):
        with pytest.raises(BridgeError, match=message):
            ResultStore().add_chunk(analysis_id, index, count, b"x")

    def test_missing_buffer(self):
        with pytest.raises(BridgeError, match="must carry its bytes in the message buffers"):
            ResultStore().add_chunk("a", 0, 1, None)

    def test_chunk_above_limit(self, monkeypatch):
        monkeypatch.setattr(_results, "RESULTS_CHUNK_MAX_BYTES", 100)
        with pytest.raises(BridgeError, match="Results chunk 0 has 101 bytes, above the limit of 100"):
            ResultStore().add_chunk("a", 0, 2, b"x" * 101)

    def test_count_changing_midway_drops_the_upload(self):
        store = ResultStore()
        chunks = cut(ipc_bytes(multiplet_table(50)), 700)
        store.add_chunk("a", 0, len(chunks), chunks[0])
        with pytest.raises(BridgeError, match=f"announced in {len(chunks)} chunks, now in {len(chunks) + 1}"):
            store.add_chunk("a", 1, len(chunks) + 1, chunks[1])
        # Dropped: starting over works.
        for i, chunk in enumerate(chunks):
            store.add_chunk("a", i, len(chunks), chunk)
        assert len(store.get("a")) == 50

    def test_conflicting_duplicate_drops_the_upload(self):
        store = ResultStore()
        store.add_chunk("a", 0, 2, b"one")
        with pytest.raises(BridgeError, match="arrived twice with different bytes"):
            store.add_chunk("a", 0, 2, b"two")

    def test_pending_uploads_are_bounded(self, monkeypatch):
        monkeypatch.setattr(_results, "MAX_PENDING_UPLOADS", 2)
        store = ResultStore()
        chunks = cut(ipc_bytes(multiplet_table(5)), 400)
        for analysis_id in ("old", "mid", "new"):
            store.add_chunk(analysis_id, 0, len(chunks), chunks[0])
        # "old" was dropped: its remaining chunks start a new upload that never completes.
        for i in range(1, len(chunks)):
            store.add_chunk("old", i, len(chunks), chunks[i])
            store.add_chunk("new", i, len(chunks), chunks[i])
        assert store.ids() == ["new"]


def test_many_threads_feeding_chunks():
    # Comm handlers may run on several kernel subshell threads at once (ipykernel 7).
    store = ResultStore()
    analyses = {f"run-{k}": multiplet_table(300 + k, salt=float(k)) for k in range(12)}
    work = []
    for analysis_id, table in analyses.items():
        chunks = cut(ipc_bytes(table), 512)
        work += [(analysis_id, i, len(chunks), chunk) for i, chunk in enumerate(chunks)]
    random.Random(7).shuffle(work)
    start = threading.Barrier(8)

    def feed(share):
        start.wait()
        return [store.add_chunk(*item) for item in share]

    with ThreadPoolExecutor(max_workers=8) as pool:
        outcomes = [o for batch in pool.map(feed, [work[i::8] for i in range(8)]) for o in batch]

    completions = [o.analysis_id for o in outcomes if o.complete]
    assert sorted(completions) == sorted(analyses)  # each analysis completed exactly once
    assert sorted(store.ids()) == sorted(analyses)
    for analysis_id, table in analyses.items():
        frame = store.get(analysis_id)
        assert frame["entropy"].tolist() == table.column("entropy").to_pylist()
        assert frame["columns"].tolist() == [tuple(n) for n in table.column("columns").to_pylist()]


def evidence_table(multiplets: list[dict]) -> pa.Table:
    """Rows as the front end sends them (src/bridge/encode.ts): core fields, then every evidence
    field any row carries, in EVIDENCE_FIELDS order, as float64 with nulls where not computed."""
    present = [name for name in EVIDENCE_FIELDS if any(name in row for row in multiplets)]
    data = {
        "columns": pa.array([row["columns"] for row in multiplets], pa.list_(pa.string())),
        "order": pa.array([row["order"] for row in multiplets], pa.int32()),
    }
    for name in MULTIPLET_FIELDS[2:]:
        data[name] = pa.array([row[name] for row in multiplets], pa.float64())
    for name in present:
        data[name] = pa.array([row.get(name) for row in multiplets], pa.float64())
    return pa.table(data)


@pytest.fixture(scope="module")
def analysed(polyadic_analyze, tmp_path_factory):
    """The CLI's rows of a small greenhouse drip line (an exclusive-or) with every kind of evidence."""
    rng = random.Random(5)
    lines = ["valve_command,flow_meter,leak_alarm,fan_on"]
    for _ in range(150):
        valve, forced = rng.randrange(2), rng.randrange(2)
        lines.append(f"{valve},{valve ^ forced},{forced},{rng.randrange(2)}")
    data = tmp_path_factory.mktemp("evidence") / "drip.csv"
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return polyadic_analyze(
        data, "--max-order", "3", "--surrogates", "19", "--bootstrap", "8", "--seed", "4",
        "--beyond-pairs", "1", "--fit-draws", "5", "--threads", "1",
    )["multiplets"]


class TestEvidenceColumns:
    def test_every_evidence_column_arrives_in_order(self, analysed):
        frame = decode_multiplets(ipc_bytes(evidence_table(analysed)))
        # the CLI computed every kind of evidence, so every evidence column is there
        assert list(frame.columns) == [*MULTIPLET_FIELDS, *EVIDENCE_FIELDS]
        assert all(str(frame[name].dtype) == "float64" for name in EVIDENCE_FIELDS)

    def test_values_and_nulls_arrive_as_computed(self, analysed):
        frame = decode_multiplets(ipc_bytes(evidence_table(analysed)))
        nulls = set()
        for i, row in enumerate(analysed):
            assert frame["columns"].iloc[i] == tuple(row["columns"])
            for name in EVIDENCE_FIELDS:
                value = row.get(name)
                if value is None:
                    assert pd.isna(frame[name].iloc[i]), (i, name)
                    nulls.add(name)
                else:
                    assert frame[name].iloc[i] == value, (i, name)
        # the fixture holds both kinds: a pair has no pairwise-preserving null, a single column no p
        assert {"p_value", "connected_information"} <= nulls
        assert frame["q_value"].notna().any() and frame["connected_information"].notna().any()

    def test_a_column_of_nulls_only(self):
        table = multiplet_table(3, extra=False).append_column("connected_p_value", pa.nulls(3))
        frame = decode_multiplets(ipc_bytes(table))
        assert frame["connected_p_value"].isna().all()

    def test_mistyped_evidence_is_named(self):
        table = multiplet_table(2, extra=False).append_column("q_value", pa.array(["low", "high"]))
        with pytest.raises(BridgeError, match=r"'q_value' must be a number, got string") as caught:
            decode_multiplets(ipc_bytes(table))
        assert caught.value.detail == {"field": "q_value"}


def test_results_documents_every_column():
    from polyadic.bridge import results

    doc = results.__doc__ or ""
    # the intervals of the measures other than co-information are documented as one pattern,
    # ``<measure>_ci_low`` / ``<measure>_ci_high``, with each measure named
    measures = ("entropy", "total_correlation", "dual_total_correlation", "o_information", "s_information")
    patterned = {f"{measure}_ci_{end}" for measure in measures for end in ("low", "high")}
    assert patterned <= set(EVIDENCE_FIELDS)
    assert "``<measure>_ci_low``" in doc and all(measure in doc for measure in measures)
    named = [*MULTIPLET_FIELDS, *(name for name in EVIDENCE_FIELDS if name not in patterned)]
    assert [name for name in named if f"``{name}``" not in doc] == []
