"""Handover files (polyadic/_handover.py) and the server route that streams them (polyadic/_server.py).

The kernel side is called directly; the route is checked in a real Jupyter server started from
this environment in a throw-away root with private config and runtime directories, as a user
would run it after ``pip install``: the extension is enabled by the package's own config file.
"""

from __future__ import annotations

import json
import os
import shutil
import socket
import stat
import subprocess
import sys
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from polyadic import _handover  # noqa: E402
from polyadic._arrow import FILE_BATCH_MAX_BYTES, frame_to_ipc_batches, write_handover  # noqa: E402
from polyadic.bridge import KernelBridge  # noqa: E402
from polyadic._results import ResultStore  # noqa: E402


class RecordingComm:
    """Records what the kernel sends."""

    comm_id = "handover"

    def __init__(self) -> None:
        self.sent: list[tuple[dict, list]] = []

    def send(self, data=None, metadata=None, buffers=None):
        self.sent.append((data, [bytes(memoryview(b)) for b in buffers or []]))

    def on_msg(self, callback):
        pass

    def on_close(self, callback):
        pass


def greenhouse(rows: int = 1000) -> pd.DataFrame:
    rng = np.random.default_rng(7)
    return pd.DataFrame(
        {
            "air_temperature": rng.normal(22.0, 3.0, rows),
            "valve": pd.Categorical(rng.choice(["open", "shut"], rows)),
            "bed": rng.integers(1, 4, rows),
        }
    )


@pytest.fixture
def runtime(tmp_path, monkeypatch) -> Path:
    """A private Jupyter runtime directory for the test."""
    folder = tmp_path / "runtime"
    folder.mkdir(mode=0o700)
    monkeypatch.setenv("JUPYTER_RUNTIME_DIR", str(folder))
    return folder


# --- the kernel's side -----------------------------------------------------------------------


def test_write_handover_makes_a_private_file_holding_the_stream(runtime):
    frame = greenhouse()
    payload = frame_to_ipc_batches(frame, max_batch_bytes=FILE_BATCH_MAX_BYTES)
    token, size = write_handover(payload)
    assert _handover.is_token(token)
    folder = runtime / _handover.FOLDER_NAME
    assert stat.S_IMODE(os.lstat(folder).st_mode) == 0o700
    path = folder / f"{token}.arrows"
    assert stat.S_IMODE(os.lstat(path).st_mode) == 0o600
    assert path.stat().st_size == size == payload.bytes_total
    # No partial file is left behind, and the file is the stream pyarrow reads back.
    assert sorted(p.name for p in folder.iterdir()) == [path.name]
    table = pa.ipc.open_stream(path.read_bytes()).read_all()
    assert table.num_rows == len(frame)
    np.testing.assert_array_equal(table.column("air_temperature").to_numpy(), frame["air_temperature"].to_numpy())
    assert table.column("valve").to_pylist() == list(frame["valve"].astype(str))


def test_a_fetch_with_file_delivery_announces_the_token_then_the_done_message(runtime):
    bridge = KernelBridge(lambda: {"greenhouse": greenhouse()}, store=ResultStore())
    comm = RecordingComm()
    bridge.handle_message(
        comm, {"content": {"data": {"type": "fetch", "request_id": "r1", "name": "greenhouse", "delivery": "file"}}}
    )
    (announce, no_buffers), (done, _) = comm.sent
    assert announce["type"] == "fetch_file" and no_buffers == []
    assert done["type"] == "fetch_done"
    assert done["batch_count"] == 1 and done["bytes_total"] == announce["bytes_total"]
    path = runtime / _handover.FOLDER_NAME / f"{announce['token']}.arrows"
    assert path.stat().st_size == announce["bytes_total"]


def test_a_fetch_falls_back_to_comm_pieces_when_the_folder_is_not_private(runtime):
    folder = runtime / _handover.FOLDER_NAME
    folder.mkdir(mode=0o755)
    os.chmod(folder, 0o755)
    bridge = KernelBridge(lambda: {"greenhouse": greenhouse()}, store=ResultStore())
    comm = RecordingComm()
    bridge.handle_message(
        comm, {"content": {"data": {"type": "fetch", "request_id": "r1", "name": "greenhouse", "delivery": "file"}}}
    )
    types = [data["type"] for data, _ in comm.sent]
    assert types == ["fetch_chunk", "fetch_done"]
    assert list(folder.iterdir()) == []


def test_an_unknown_delivery_is_refused_naming_the_option(runtime):
    bridge = KernelBridge(lambda: {"greenhouse": greenhouse()}, store=ResultStore())
    comm = RecordingComm()
    bridge.handle_message(
        comm, {"content": {"data": {"type": "fetch", "request_id": "r1", "name": "greenhouse", "delivery": "../x"}}}
    )
    (error, _), = comm.sent
    assert error["type"] == "error" and error["detail"] == {"option": "delivery"}


def test_sweep_removes_only_files_past_their_expiry(runtime):
    folder = _handover.handover_dir()
    old = folder / f"{_handover.new_token()}.arrows"
    new = folder / f"{_handover.new_token()}.arrows"
    for path in (old, new):
        _handover.create_private(path)
    past = time.time() - _handover.EXPIRY_SECONDS - 5
    os.utime(old, (past, past))
    assert _handover.sweep(folder) == 1
    assert not old.exists() and new.exists()


def test_tokens_are_random_and_nothing_else_names_a_file(runtime):
    tokens = {_handover.new_token() for _ in range(100)}
    assert len(tokens) == 100 and all(_handover.is_token(t) for t in tokens)
    for bad in ["", "../etc/passwd", "a" * 42, "a" * 44, "a/" + "b" * 41, None, 42]:
        assert not _handover.is_token(bad)
    with pytest.raises(ValueError):
        _handover.final_path(runtime, "../../x")


def test_a_folder_of_another_mode_or_a_link_is_refused(runtime, tmp_path):
    target = tmp_path / "elsewhere"
    target.mkdir(mode=0o700)
    (runtime / _handover.FOLDER_NAME).symlink_to(target)
    with pytest.raises(_handover.HandoverUnavailable, match="link"):
        _handover.handover_dir()


# --- the server route ------------------------------------------------------------------------


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    """A Jupyter server with a token, private directories, and the extension as pip enabled it."""
    top = tmp_path_factory.mktemp("server")
    home = {name: top / name for name in ("config", "data", "runtime", "root")}
    for folder in home.values():
        folder.mkdir(mode=0o700)
    port = free_port()
    token = uuid.uuid4().hex
    env = {
        **os.environ,
        "JUPYTER_CONFIG_DIR": str(home["config"]),
        "JUPYTER_DATA_DIR": str(home["data"]),
        "JUPYTER_RUNTIME_DIR": str(home["runtime"]),
        "JUPYTER_PLATFORM_DIRS": "1",
    }
    jupyter = Path(sys.executable).with_name("jupyter")
    if not jupyter.exists():
        pytest.skip(f"no jupyter beside {sys.executable}")
    log = open(top / "server.log", "wb")
    process = subprocess.Popen(
        [
            str(jupyter),
            "server",
            "--no-browser",
            "--ServerApp.ip=127.0.0.1",
            f"--ServerApp.port={port}",
            "--ServerApp.port_retries=0",
            f"--IdentityProvider.token={token}",
            f"--ServerApp.root_dir={home['root']}",
            *(["--allow-root"] if os.geteuid() == 0 else []),
        ],
        env=env,
        stdout=log,
        stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}/"
    deadline = time.time() + 60
    while True:
        try:
            urllib.request.urlopen(f"{base}api/status?token={token}", timeout=2)
            break
        except (urllib.error.URLError, ConnectionError):
            if time.time() > deadline or process.poll() is not None:
                process.kill()
                raise RuntimeError((top / "server.log").read_text())
            time.sleep(0.3)
    yield {"base": base, "token": token, "runtime": home["runtime"], "env": env}
    process.terminate()
    process.wait(timeout=30)
    log.close()
    shutil.rmtree(top, ignore_errors=True)


def get(server, path, auth=True):
    headers = {"Authorization": f"token {server['token']}"} if auth else {}
    request = urllib.request.Request(server["base"] + path, headers=headers)
    try:
        with urllib.request.urlopen(request, timeout=30) as response:
            return response.status, dict(response.headers), response.read()
    except urllib.error.HTTPError as error:
        return error.code, dict(error.headers), error.read()


def issue(server, frame) -> tuple[str, int]:
    """Write a handover file as the kernel would, into the server's runtime directory."""
    os.environ["JUPYTER_RUNTIME_DIR"] = str(server["runtime"])
    try:
        return write_handover(frame_to_ipc_batches(frame, max_batch_bytes=FILE_BATCH_MAX_BYTES))
    finally:
        del os.environ["JUPYTER_RUNTIME_DIR"]


def test_the_route_says_it_is_available(server):
    status, headers, body = get(server, "polyadic/handover")
    assert status == 200
    assert json.loads(body) == {"version": 1, "available": True}


def test_the_route_streams_a_file_once_then_it_is_gone(server):
    frame = greenhouse(20_000)
    token, size = issue(server, frame)
    status, headers, body = get(server, f"polyadic/handover/{token}")
    assert status == 200
    assert headers["Content-Type"] == "application/vnd.apache.arrow.stream"
    assert int(headers["Content-Length"]) == size == len(body)
    table = pa.ipc.open_stream(body).read_all()
    np.testing.assert_array_equal(table.column("bed").to_numpy(), frame["bed"].to_numpy())
    # Served once: the file is deleted, a second request finds nothing.
    folder = server["runtime"] / _handover.FOLDER_NAME
    assert [p.name for p in folder.iterdir()] == []
    assert get(server, f"polyadic/handover/{token}")[0] == 404


def test_the_route_needs_an_authenticated_user(server):
    token, _ = issue(server, greenhouse())
    status, _, _ = get(server, f"polyadic/handover/{token}", auth=False)
    assert status == 403
    # The refused request did not consume the file.
    assert (server["runtime"] / _handover.FOLDER_NAME / f"{token}.arrows").exists()
    assert get(server, f"polyadic/handover/{token}")[0] == 200


@pytest.mark.parametrize("bad", ["..%2F..%2Fetc%2Fpasswd", "short", "a" * 44, "%2E" * 15])
def test_the_route_refuses_anything_but_a_token(server, bad):
    status, _, _ = get(server, f"polyadic/handover/{bad}")
    assert status in (400, 404)


def test_the_route_does_not_serve_a_file_the_kernel_did_not_name_by_token(server):
    folder = server["runtime"] / _handover.FOLDER_NAME
    token = _handover.new_token()
    # A partial file of a stream still being written is not served under its token.
    _handover.create_private(folder / f".{token}.partial")
    try:
        assert get(server, f"polyadic/handover/{token}")[0] == 404
    finally:
        os.unlink(folder / f".{token}.partial")
