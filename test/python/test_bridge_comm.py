"""The comm glue (polyadic/bridge.py): a fake comm end to end, registration, and a real kernel."""

from __future__ import annotations

import os
import queue
import re
import sys
import time
import uuid
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic import _arrow, _results, bridge  # noqa: E402
from polyadic._results import ResultStore  # noqa: E402
from polyadic.bridge import COMM_TARGET, PROTOCOL_VERSION, KernelBridge  # noqa: E402


class FakeComm:
    """Records what the kernel sends; delivers what the test sends, like ipykernel's Comm."""

    def __init__(self) -> None:
        self.comm_id = uuid.uuid4().hex
        self.sent: list[tuple[dict, list]] = []
        self._on_msg = None
        self._on_close = None
        self.broken = False

    def send(self, data=None, metadata=None, buffers=None):
        if self.broken:
            raise RuntimeError("comm is closed")
        self.sent.append((data, [bytes(memoryview(b)) for b in buffers or []]))

    def on_msg(self, callback):
        self._on_msg = callback

    def on_close(self, callback):
        self._on_close = callback

    def deliver(self, data, buffers=None):
        self._on_msg({"content": {"comm_id": self.comm_id, "data": data}, "buffers": buffers or []})

    def close_from_front_end(self):
        self._on_close({"content": {"comm_id": self.comm_id, "data": {}}})

    def take(self):
        sent, self.sent = self.sent, []
        return sent


@pytest.fixture
def namespace():
    return {
        "greenhouse": pd.DataFrame(
            {"temp": np.linspace(10, 30, 1000), "valve": np.arange(1000) % 2 == 0, "zone": ["n", "s"] * 500}
        ),
        "not_a_frame": 42,
    }


@pytest.fixture
def store():
    return ResultStore()


@pytest.fixture
def opened(namespace, store):
    kernel_bridge = KernelBridge(lambda: namespace, store=store, max_batch_bytes=2048)
    comm = FakeComm()
    kernel_bridge.open_comm(comm, {"content": {"data": {}}})
    return kernel_bridge, comm


class TestFakeComm:
    def test_listing_pushed_on_open(self, opened):
        _, comm = opened
        ((message, buffers),) = comm.take()
        assert message["type"] == "listing" and message["request_id"] is None
        assert message["protocol"] == PROTOCOL_VERSION
        assert [f["name"] for f in message["frames"]] == ["greenhouse"]
        assert buffers == []

    def test_list_request(self, opened):
        _, comm = opened
        comm.take()
        comm.deliver({"type": "list", "request_id": "r1"})
        ((message, _),) = comm.take()
        assert message["type"] == "listing" and message["request_id"] == "r1"
        assert message["frames"][0]["columns"] == [
            {"name": "temp", "dtype": "float64", "kind": "numeric"},
            {"name": "valve", "dtype": "bool", "kind": "bool"},
            {"name": "zone", "dtype": "str", "kind": "string"},
        ]

    def test_fetch_streams_pieces_then_done(self, opened, namespace):
        _, comm = opened
        comm.take()
        comm.deliver({"type": "fetch", "request_id": "f1", "name": "greenhouse", "columns": ["zone", "temp"]})
        sent = comm.take()
        chunks, (done, done_buffers) = sent[:-1], sent[-1]
        assert len(chunks) > 1  # 2048-byte batches: several pieces
        assert done_buffers == []
        assert done["type"] == "fetch_done" and done["request_id"] == "f1"
        assert done["rows"] == done["original_rows"] == 1000 and done["sampled"] is False
        assert [c["name"] for c in done["columns"]] == ["zone", "temp"]
        assert done["batch_count"] == len(chunks)
        progress = [message["bytes_sent"] for message, _ in chunks]
        assert progress == sorted(progress) and progress[-1] == done["bytes_total"]
        for index, (message, buffers) in enumerate(chunks):
            assert message["type"] == "fetch_chunk" and message["batch_index"] == index
            assert message["batch_count"] == len(chunks) and len(buffers) == 1
        table = pa.ipc.open_stream(b"".join(b[0] for _, b in chunks)).read_all()
        assert table.column("temp").to_pylist() == namespace["greenhouse"]["temp"].tolist()
        assert table.column("zone").to_pylist() == namespace["greenhouse"]["zone"].tolist()

    def test_fetch_with_row_cap(self, opened):
        _, comm = opened
        comm.take()
        comm.deliver({"type": "fetch", "request_id": "f2", "name": "greenhouse", "row_cap": 100, "sample_seed": 9})
        done = comm.take()[-1][0]
        assert (done["rows"], done["original_rows"], done["sampled"], done["seed"]) == (100, 1000, True, 9)

    def test_frame_deleted_after_listing(self, opened, namespace):
        _, comm = opened
        comm.take()
        del namespace["greenhouse"]
        comm.deliver({"type": "fetch", "request_id": "f3", "name": "greenhouse"})
        ((message, _),) = comm.take()
        assert message["type"] == "error" and message["request_id"] == "f3"
        assert "no frame named 'greenhouse'" in message["message"]
        assert message["detail"] == {"frame": "greenhouse"}

    def test_private_names_cannot_be_fetched(self, opened, namespace):
        _, comm = opened
        comm.take()
        namespace["_"] = namespace["greenhouse"]
        comm.deliver({"type": "fetch", "request_id": "f7", "name": "_"})
        assert comm.take()[0][0]["detail"] == {"frame": "_"}

    def test_name_bound_to_something_else(self, opened):
        _, comm = opened
        comm.take()
        comm.deliver({"type": "fetch", "request_id": "f4", "name": "not_a_frame"})
        assert comm.take()[0][0]["detail"] == {"frame": "not_a_frame"}

    def test_mixed_column_error_reply(self, opened, namespace):
        _, comm = opened
        comm.take()
        namespace["messy"] = pd.DataFrame({"x": np.array([1, "a"], dtype=object)})
        comm.deliver({"type": "fetch", "request_id": "f5", "name": "messy"})
        ((message, _),) = comm.take()
        assert message["type"] == "error"
        assert message["message"].startswith("Column 'x' mixes int and str")
        assert message["detail"] == {"column": "x", "types": ["int", "str"]}

    def test_unexpected_failure_is_an_error_reply(self, opened, monkeypatch):
        _, comm = opened
        comm.take()

        def explode(*args, **kwargs):
            raise ZeroDivisionError("boom")

        monkeypatch.setattr(bridge, "frame_to_ipc_batches", explode)
        comm.deliver({"type": "fetch", "request_id": "f6", "name": "greenhouse"})
        ((message, _),) = comm.take()
        assert message["type"] == "error" and "ZeroDivisionError: boom" in message["message"]
        assert "Traceback" in message["detail"]["traceback"]

    @pytest.mark.parametrize(
        "data, text",
        [
            ({"type": "dance", "request_id": "x"}, "Unknown request type 'dance'"),
            ("just a string", "must be a JSON object"),
            ({"type": "fetch", "request_id": "x"}, "needs the frame's 'name'"),
            ({"type": "fetch", "request_id": "x", "name": "greenhouse", "row_cap": 0}, "'row_cap' must be a whole number"),
            ({"type": "results_chunk", "request_id": "x", "analysis_id": "a", "chunk_index": 0, "chunk_count": 1, "meta": 3}, "'meta' must be a JSON object"),
        ],
    )
    def test_bad_requests(self, opened, data, text):
        _, comm = opened
        comm.take()
        comm.deliver(data)
        ((message, _),) = comm.take()
        assert message["type"] == "error" and text in message["message"]
        assert message["request_id"] == (data.get("request_id") if isinstance(data, dict) else None)

    def test_results_round_trip(self, opened, store):
        _, comm = opened
        comm.take()
        table = pa.table(
            {
                "columns": pa.array([["a", "b"], ["a", "b", "c"]], pa.list_(pa.string())),
                "order": pa.array([2, 3], pa.int8()),
                **{name: pa.array([0.5, -0.25]) for name in _results.MULTIPLET_FIELDS[2:]},
            }
        )
        sink = pa.BufferOutputStream()
        with pa.ipc.new_stream(sink, table.schema) as writer:
            writer.write_table(table)
        data = sink.getvalue().to_pybytes()
        pieces = [data[i : i + 300] for i in range(0, len(data), 300)]
        for index, piece in enumerate(pieces):
            comm.deliver(
                {"type": "results_chunk", "request_id": f"u{index}", "analysis_id": "an-1", "chunk_index": index,
                 "chunk_count": len(pieces), "meta": {"label": "demo"}},
                [memoryview(piece)],
            )
        replies = [message for message, _ in comm.take()]
        assert [r["type"] for r in replies] == ["results_ack"] * (len(pieces) - 1) + ["results_stored"]
        assert replies[0]["chunks_received"] == 1 and replies[0]["chunk_count"] == len(pieces)
        assert replies[-1] == {"type": "results_stored", "request_id": f"u{len(pieces) - 1}", "analysis_id": "an-1", "rows": 2}
        frame = store.get("an-1")
        assert frame["columns"].tolist() == [("a", "b"), ("a", "b", "c")]
        assert frame.attrs["polyadic"]["label"] == "demo"

    def test_push_only_when_the_listing_changed(self, opened, namespace):
        kernel_bridge, comm = opened
        comm.take()
        kernel_bridge.push_listing()
        assert comm.take() == []
        namespace["second"] = pa.table({"a": [1, 2]})
        kernel_bridge.push_listing()
        ((message, _),) = comm.take()
        assert [f["name"] for f in message["frames"]] == ["greenhouse", "second"]

    def test_closed_comm_is_forgotten(self, opened, namespace):
        kernel_bridge, comm = opened
        comm.take()
        comm.close_from_front_end()
        assert kernel_bridge.comm_count == 0
        namespace["third"] = pd.DataFrame({"a": [1]})
        kernel_bridge.push_listing()
        assert comm.take() == []

    def test_a_failing_send_does_not_raise(self, opened, namespace):
        kernel_bridge, comm = opened
        comm.broken = True
        namespace["fourth"] = pd.DataFrame({"a": [1]})
        kernel_bridge.push_listing()
        comm.deliver({"type": "list", "request_id": "r"})


class FakeShell:
    """The parts of an IPython shell that register() uses, with ipykernel's comm manager."""

    def __init__(self) -> None:
        from comm.base_comm import CommManager
        from IPython.core.events import EventManager, available_events

        self.kernel = SimpleNamespace(comm_manager=CommManager())
        self.events = EventManager(self, available_events)
        self.user_ns = {"frame": pd.DataFrame({"a": [1, 2]}), "Out": {}}
        self.user_ns_hidden = {"Out": self.user_ns["Out"]}


class TestRegister:
    def test_outside_a_kernel_nothing_happens(self):
        assert bridge.register() is None  # pytest runs without IPython
        assert bridge.register(SimpleNamespace()) is None

    def test_registers_target_and_one_hook(self, monkeypatch):
        monkeypatch.setattr(bridge, "_active", None)
        shell = FakeShell()
        first = bridge.register(shell)
        assert shell.kernel.comm_manager.targets[COMM_TARGET] == first.open_comm
        again = bridge.register(shell)
        assert again is first
        hooks = [cb for cb in shell.events.callbacks["post_run_cell"] if getattr(cb, "polyadic_listing_hook", False)]
        assert len(hooks) == 1

    def test_hook_left_by_an_earlier_copy_is_replaced(self, monkeypatch):
        monkeypatch.setattr(bridge, "_active", None)
        shell = FakeShell()
        bridge.register(shell)
        monkeypatch.setattr(bridge, "_active", None)  # as after importlib.reload
        bridge.register(shell)
        hooks = [cb for cb in shell.events.callbacks["post_run_cell"] if getattr(cb, "polyadic_listing_hook", False)]
        assert len(hooks) == 1

    def test_hook_pushes_listing_after_a_cell(self, monkeypatch):
        monkeypatch.setattr(bridge, "_active", None)
        shell = FakeShell()
        kernel_bridge = bridge.register(shell)
        comm = FakeComm()
        kernel_bridge.open_comm(comm)
        assert [f["name"] for f in comm.take()[0][0]["frames"]] == ["frame"]
        shell.user_ns["later"] = pd.DataFrame({"b": [1]})
        shell.events.trigger("post_run_cell", None)
        assert [f["name"] for f in comm.take()[0][0]["frames"]] == ["frame", "later"]

    def test_hook_never_raises(self, monkeypatch):
        monkeypatch.setattr(bridge, "_active", None)
        shell = FakeShell()
        kernel_bridge = bridge.register(shell)
        comm = FakeComm()
        kernel_bridge.open_comm(comm)
        shell.user_ns = None  # listing now fails inside the hook
        hook = next(cb for cb in shell.events.callbacks["post_run_cell"] if getattr(cb, "polyadic_listing_hook", False))
        hook(None)


def test_constants_match_protocol_ts():
    # The TypeScript side states the same numbers (src/bridge/protocol.ts).
    source = (ROOT / "src" / "bridge" / "protocol.ts").read_text(encoding="utf-8")

    def constant(name):
        match = re.search(rf"export const {name} = ([^;]+);", source)
        assert match, name
        text = match.group(1).strip()
        if text.startswith("'"):
            return text.strip("'")
        value = 1
        for factor in text.replace("_", "").split("*"):
            value *= int(factor)
        return value

    assert constant("COMM_TARGET") == COMM_TARGET
    assert constant("PROTOCOL_VERSION") == PROTOCOL_VERSION
    assert constant("FETCH_BATCH_MAX_BYTES") == _arrow.FETCH_BATCH_MAX_BYTES
    assert constant("FETCH_ROW_CAP_DEFAULT") == _arrow.FETCH_ROW_CAP_DEFAULT
    assert constant("RESULTS_CHUNK_MAX_BYTES") == _results.RESULTS_CHUNK_MAX_BYTES


@pytest.fixture(scope="module")
def kernel():
    """An ipykernel started by jupyter_client that imports polyadic from this source tree."""
    manager_module = pytest.importorskip("jupyter_client.manager")
    pytest.importorskip("ipykernel")
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")])))
    km, kc = manager_module.start_new_kernel(kernel_name="python3", env=env)
    try:
        yield kc
    finally:
        kc.stop_channels()
        km.shutdown_kernel(now=True)


class TestRealKernel:
    """A real kernel, talked to with raw comm messages as the front end sends them."""

    @staticmethod
    def comm_messages(kc, until, timeout=20.0):
        """Comm messages from IOPub until ``until(messages)`` holds or the time runs out."""
        found = []
        end = time.monotonic() + timeout
        while time.monotonic() < end and not until(found):
            try:
                message = kc.get_iopub_msg(timeout=0.5)
            except queue.Empty:
                continue
            if message["msg_type"] == "comm_msg":
                found.append(message)
        return found

    @staticmethod
    def run(kc, code):
        reply = kc.execute(code, reply=True, timeout=60)
        assert reply["content"]["status"] == "ok", reply["content"]

    def test_import_open_list_fetch_and_push(self, kernel):
        kc = kernel
        self.run(kc, "import polyadic, pandas as pd\nframe = pd.DataFrame({'a': range(50), 's': list('xy') * 25})")
        comm_id = uuid.uuid4().hex
        kc.shell_channel.send(kc.session.msg("comm_open", {"comm_id": comm_id, "target_name": COMM_TARGET, "data": {}}))
        pushed = self.comm_messages(kc, lambda found: len(found) >= 1)
        assert pushed and pushed[0]["content"]["data"]["type"] == "listing"
        assert [f["name"] for f in pushed[0]["content"]["data"]["frames"]] == ["frame"]

        request = {"type": "fetch", "request_id": "k1", "name": "frame", "columns": ["s", "a"]}
        kc.shell_channel.send(kc.session.msg("comm_msg", {"comm_id": comm_id, "data": request}))
        replies = self.comm_messages(kc, lambda found: any(m["content"]["data"]["type"] == "fetch_done" for m in found))
        chunks = [m for m in replies if m["content"]["data"]["type"] == "fetch_chunk"]
        assert len(chunks) == 1 and len(chunks[0]["buffers"]) == 1
        table = pa.ipc.open_stream(bytes(chunks[0]["buffers"][0])).read_all()
        assert table.column("a").to_pylist() == list(range(50))
        assert table.column("s").to_pylist() == list("xy") * 25

        # A cell that adds a frame pushes a new listing.
        kc.execute("second = frame.head(3)")
        pushed = self.comm_messages(kc, lambda found: len(found) >= 1)
        assert [f["name"] for f in pushed[0]["content"]["data"]["frames"]] == ["frame", "second"]

        # Importing again, even reloading the modules, leaves exactly one listing hook.
        self.run(
            kc,
            "import importlib, polyadic, polyadic.bridge\n"
            "importlib.reload(polyadic)\n"
            "importlib.reload(polyadic.bridge).register()\n"
            "hooks = [cb for cb in get_ipython().events.callbacks['post_run_cell']"
            " if getattr(cb, 'polyadic_listing_hook', False)]\n"
            "assert len(hooks) == 1, hooks",
        )
