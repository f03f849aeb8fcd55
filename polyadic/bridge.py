"""Kernel side of the Polyadic bridge: the ``polyadic`` comm target.

The front end opens a comm to the target ``polyadic`` and sends JSON requests, each with a
``type`` and a ``request_id`` that the replies echo (message shapes: src/bridge/protocol.ts):

* ``list`` → ``listing``: the frames in the user's namespace. A listing is also pushed when a
  comm opens and after every executed cell (only when it changed).
* ``fetch`` → ``fetch_chunk`` messages carrying an Arrow IPC stream in their binary buffers,
  then ``fetch_done``. With ``delivery: "file"`` the stream goes to a private handover file
  instead (polyadic/_handover.py), named by the token of one ``fetch_file`` message, which the
  Jupyter server's ``polyadic`` route streams to the page; when no such file can be written,
  the pieces come on the comm as usual.
* ``results_chunk`` → ``results_ack`` per chunk, ``results_stored`` when a table is complete;
  :func:`results` then returns it as a pandas DataFrame.
* ``scan`` (scanned frames: DuckDB relations, Spark DataFrames) → ``scan_facts``,
  ``scan_details``, or the grouped table as a fetch's pieces then ``scan_done``. A scan runs
  on a background thread (one per frame at a time) and replies from it; ``cancel`` stops it
  (Spark job group, DuckDB interrupt) and answers ``cancel_done``. The numbers come from
  polyadic/_scan.py.

Anything that goes wrong is an ``error`` reply; no exception reaches the notebook's output.
The work is done by pure functions in ``_listing``, ``_arrow`` and ``_results``; this module
only routes messages. Handlers may run on a kernel subshell thread (ipykernel 7), so shared
state is guarded by locks.
"""

from __future__ import annotations

import logging
import threading
import traceback
from typing import Any, Callable, Mapping

from ._arrow import (
    FETCH_BATCH_MAX_BYTES,
    FILE_BATCH_MAX_BYTES,
    frame_to_ipc_batches,
    scanned_to_ipc_batches,
    table_payload,
    write_handover,
)
from ._errors import BridgeError
from ._handover import HandoverUnavailable
from ._listing import IPYTHON_NAMES, SCANNED_KINDS, frame_kind, list_frames
from ._results import ResultsNotFound, ResultStore
from ._scan import SCAN_STEPS, EngineFailure, ScanCancelled, ScanEngine, duckdb_connections, first_line, scan_engine

#: Name of the comm target the front end opens (DESIGN.md glossary).
COMM_TARGET = "polyadic"
#: Version of the message protocol; the front end compares it with its own.
PROTOCOL_VERSION = 2

_log = logging.getLogger("polyadic.bridge")

#: Multiplet tables sent back by the front ends of this kernel.
STORE = ResultStore()


def results(analysis_id: str | None = None) -> Any:
    """The multiplet table of the latest analysis (or of ``analysis_id``) as a pandas DataFrame.

    One row per multiplet, in the analysis' units (bits or nats). The columns, in this order:

    * ``columns``: a tuple of the multiplet's column names (hashable, so it can index the frame);
    * ``order``: how many columns (int32);
    * the measures (float64): ``entropy``, ``co_information`` (negative: synergy-dominated,
      positive: redundancy-dominated), ``total_correlation``, ``dual_total_correlation``,
      ``o_information``, ``s_information``;
    * the evidence the analysis computed (float64), in the CLI's CSV order
      (``polyadic._results.EVIDENCE_FIELDS``); a table has only the groups that were asked for:

      - ``adequacy``: rows per possible joint cell; below 1 the sample cannot fill the joint
        table and the measures are biased (always present);
      - with surrogates: ``p_value`` and ``q_value`` of co-information (surrogate p; q is the
        Benjamini–Hochberg adjusted p over all tested multiplets of order 2 and above: it
        controls the expected share of false discoveries among those called, not the chance
        that any one is false), ``p_surrogates`` (surrogates behind p, more when sharpened),
        ``null_mean`` and ``null_sd`` of the surrogate co-information,
        ``co_information_corrected`` (co-information minus the null mean), and the same for
        O-information: ``o_information_p_value``, ``o_information_q_value``,
        ``o_information_null_mean``, ``o_information_null_sd``;
      - with bootstrap resamples: the percentile interval of co-information ``ci_low`` /
        ``ci_high``, ``same_sign`` (the share of resamples with the observed sign), and
        ``<measure>_ci_low`` / ``<measure>_ci_high`` for entropy, total_correlation,
        dual_total_correlation, o_information and s_information;
      - with the pairwise-preserving null: ``connected_information`` and its
        ``connected_p_value``.

      A value not computed for a multiplet (a pair has no pairwise-preserving null; intervals
      cover only the bootstrapped multiplets; p of an order-1 multiplet) is NaN.

    ``attrs["polyadic"]`` holds the analysis id and what the panel sent with the table.
    Raises ResultsNotFound, listing the known ids, when there is nothing to return.
    """
    return STORE.get(analysis_id)


def _version() -> str:
    from . import __version__

    return __version__


class KernelBridge:
    """Serves the comms of one kernel: listing, fetching and receiving results."""

    def __init__(
        self,
        namespace: Callable[[], Mapping[str, Any]],
        hidden: Callable[[], Mapping[str, Any]] | None = None,
        store: ResultStore | None = None,
        max_batch_bytes: int = FETCH_BATCH_MAX_BYTES,
    ) -> None:
        self._namespace = namespace
        self._hidden = hidden or (lambda: {})
        self._store = store if store is not None else STORE
        self._max_batch_bytes = max_batch_bytes
        self._lock = threading.Lock()
        self._comms: dict[str, Any] = {}
        # The frames part of the listing last pushed to each comm, to skip unchanged pushes.
        self._pushed: dict[str, Any] = {}
        # Running scans by request id, and the frames they scan (one scan per frame at a time).
        self._scans: dict[Any, ScanEngine] = {}
        self._scanning: dict[str, Any] = {}

    # --- comm life cycle ---------------------------------------------------------------------

    def open_comm(self, comm: Any, open_msg: Any = None) -> None:
        """Comm target callback: adopt a comm the front end opened and send it a listing."""
        with self._lock:
            self._comms[comm.comm_id] = comm
        comm.on_msg(lambda msg: self.handle_message(comm, msg))
        comm.on_close(lambda msg: self.close_comm(comm))
        self._push_to(comm, self.listing_message(None))

    def close_comm(self, comm: Any) -> None:
        """Forget a comm the front end closed."""
        with self._lock:
            self._comms.pop(comm.comm_id, None)
            self._pushed.pop(comm.comm_id, None)

    @property
    def comm_count(self) -> int:
        """How many comms are open."""
        with self._lock:
            return len(self._comms)

    # --- messages ----------------------------------------------------------------------------

    def listing_message(self, request_id: Any) -> dict[str, Any]:
        """The ``listing`` message: every frame in the namespace."""
        frames, skipped = list_frames(self._namespace(), self._hidden())
        return {
            "type": "listing",
            "request_id": request_id,
            "protocol": PROTOCOL_VERSION,
            "version": _version(),
            "frames": frames,
            "skipped": skipped,
        }

    def push_listing(self) -> None:
        """Send a fresh listing to every open comm whose last listing differs."""
        with self._lock:
            comms = list(self._comms.values())
        if not comms:
            return
        message = self.listing_message(None)
        for comm in comms:
            self._push_to(comm, message)

    def _push_to(self, comm: Any, message: dict[str, Any]) -> None:
        state = (message["frames"], message["skipped"])
        with self._lock:
            if self._pushed.get(comm.comm_id) == state:
                return
            self._pushed[comm.comm_id] = state
        self._send(comm, message)

    def handle_message(self, comm: Any, msg: Mapping[str, Any]) -> None:
        """Serve one request from the front end; every failure becomes an ``error`` reply."""
        content = msg.get("content") or {}
        data = content.get("data")
        request_id = data.get("request_id") if isinstance(data, dict) else None
        try:
            if not isinstance(data, dict):
                raise BridgeError("A Polyadic request must be a JSON object with a 'type'.")
            kind = data.get("type")
            if kind == "list":
                self._send(comm, self.listing_message(request_id))
            elif kind == "fetch":
                self._fetch(comm, data, request_id)
            elif kind == "results_chunk":
                self._results_chunk(comm, data, msg.get("buffers") or [], request_id)
            elif kind == "scan":
                self._scan(comm, data, request_id)
            elif kind == "cancel":
                self._cancel(comm, data, request_id)
            else:
                raise BridgeError(f"Unknown request type {kind!r}.", option="type")
        except BridgeError as error:
            self._send_error(comm, request_id, error.message, error.detail)
        except EngineFailure as failure:
            self._send_engine_failure(comm, request_id, data.get("name"), failure)
        except Exception as error:  # noqa: BLE001 - must never reach the user's notebook
            _log.debug("polyadic request failed", exc_info=True)
            self._send_error(
                comm,
                request_id,
                f"Polyadic could not serve the request ({type(error).__name__}: {error}).",
                {"traceback": traceback.format_exc()},
            )

    def _frame(self, data: Mapping[str, Any], what: str) -> tuple[str, Any]:
        name = data.get("name")
        if not isinstance(name, str) or not name:
            raise BridgeError(f"A {what} request needs the frame's 'name'.", option="name")
        namespace = self._namespace()
        # Only names the listing could show: private names and IPython's history stay private.
        frame = None if name.startswith("_") or name in IPYTHON_NAMES else namespace.get(name)
        if frame is None or frame_kind(frame) is None:
            raise BridgeError(
                f"There is no frame named {name!r} in the kernel any more (deleted or replaced since "
                "the listing); refresh the list.",
                frame=name,
            )
        return name, frame

    def _engine(self, name: str, frame: Any) -> ScanEngine:
        return scan_engine(frame, name, lambda: duckdb_connections(self._namespace()))

    @staticmethod
    def _delivery(data: Mapping[str, Any]) -> str:
        delivery = data.get("delivery", "comm")
        if delivery not in ("comm", "file"):
            raise BridgeError(f"'delivery' must be 'comm' or 'file', got {delivery!r}.", option="delivery")
        return delivery

    def _fetch(self, comm: Any, data: Mapping[str, Any], request_id: Any) -> None:
        name, frame = self._frame(data, "fetch")
        delivery = self._delivery(data)
        if frame_kind(frame) in SCANNED_KINDS:
            engine = self._engine(name, frame)

            def build(max_batch_bytes: int) -> Any:
                return scanned_to_ipc_batches(
                    engine, data.get("columns"), data.get("row_cap"), data.get("sample_seed"), max_batch_bytes
                )

        else:

            def build(max_batch_bytes: int) -> Any:
                return frame_to_ipc_batches(
                    frame,
                    data.get("columns"),
                    row_cap=data.get("row_cap"),
                    seed=data.get("sample_seed"),
                    max_batch_bytes=max_batch_bytes,
                )

        payload, batch_count, bytes_total = self._deliver(comm, request_id, name, delivery, build)
        self._send_done(comm, request_id, name, payload, batch_count, bytes_total)

    def _deliver(
        self, comm: Any, request_id: Any, name: str, delivery: str, build: Callable[[int], Any]
    ) -> tuple[Any, int, int]:
        """Send a payload's stream as one handover file or as comm pieces; (payload, batches, bytes)."""
        if delivery == "file":
            payload = build(FILE_BATCH_MAX_BYTES)
            try:
                token, size = write_handover(payload)
            except (HandoverUnavailable, OSError):
                _log.debug("polyadic handover file unavailable; sending on the comm", exc_info=True)
                # Rare (no private runtime folder): convert again in comm-sized batches.
            else:
                comm.send(
                    data={
                        "type": "fetch_file",
                        "request_id": request_id,
                        "name": name,
                        "token": token,
                        "bytes_total": size,
                    }
                )
                return payload, 1, size
        payload = build(self._max_batch_bytes)
        sent = 0
        for index, piece in enumerate(payload.iter_pieces()):
            sent += len(piece)
            comm.send(
                data={
                    "type": "fetch_chunk",
                    "request_id": request_id,
                    "name": name,
                    "batch_index": index,
                    "batch_count": payload.batch_count,
                    "bytes_sent": sent,
                    "bytes_total": payload.bytes_total,
                },
                buffers=[piece],
            )
        return payload, payload.batch_count, payload.bytes_total

    # --- scans ---------------------------------------------------------------------------------

    def _scan(self, comm: Any, data: Mapping[str, Any], request_id: Any) -> None:
        name, frame = self._frame(data, "scan")
        if frame_kind(frame) not in SCANNED_KINDS:
            raise BridgeError(
                f"{name!r} is not a scanned frame (a DuckDB relation or a Spark DataFrame); fetch it instead.",
                frame=name,
            )
        step = data.get("step")
        if step not in SCAN_STEPS:
            raise BridgeError(f"'step' must be one of {', '.join(SCAN_STEPS)}, got {step!r}.", option="step")
        delivery = self._delivery(data) if step == "group" else "comm"
        engine = self._engine(name, frame)
        with self._lock:
            if name in self._scanning:
                raise BridgeError(
                    f"A scan of {name!r} is already running; wait for it or cancel it.",
                    frame=name,
                    running=self._scanning[name],
                )
            if request_id in self._scans:
                raise BridgeError(f"A scan with request id {request_id!r} is already running.", option="request_id")
            self._scanning[name] = request_id
            self._scans[request_id] = engine
        thread = threading.Thread(
            target=self._run_scan,
            args=(comm, dict(data), request_id, name, engine, step, delivery),
            name=f"polyadic-scan-{name}",
            daemon=True,
        )
        try:
            thread.start()
        except BaseException:
            self._end_scan(request_id, name)
            raise

    def _end_scan(self, request_id: Any, name: str) -> None:
        with self._lock:
            self._scans.pop(request_id, None)
            if self._scanning.get(name) == request_id:
                del self._scanning[name]

    def _run_scan(
        self, comm: Any, data: dict[str, Any], request_id: Any, name: str, engine: ScanEngine, step: str, delivery: str
    ) -> None:
        try:
            self._send(comm, {"type": "scan_progress", "request_id": request_id, "name": name, "stage": step})
            if step == "facts":
                body = engine.facts(data.get("columns"))
                reply = {"type": "scan_facts", "request_id": request_id, "name": name, **body}
            elif step == "details":
                body = engine.details(data.get("columns"))
                reply = {"type": "scan_details", "request_id": request_id, "name": name, **body}
            else:
                table, rows = engine.group(data.get("columns"), data.get("max_distinct_rows"))
                if engine.cancelled:
                    raise ScanCancelled()

                def build(max_batch_bytes: int) -> Any:
                    return table_payload(table, [], rows, False, 0, max_batch_bytes)

                _, batch_count, bytes_total = self._deliver(comm, request_id, name, delivery, build)
                reply = {
                    "type": "scan_done",
                    "request_id": request_id,
                    "name": name,
                    "rows": int(rows),
                    "distinct_rows": int(table.num_rows),
                    "batch_count": batch_count,
                    "bytes_total": bytes_total,
                    "engine": engine.engine_info(),
                }
            if engine.cancelled:
                raise ScanCancelled()
            # The frame is free again before its last message leaves: a client that answers the
            # reply with the next scan of the same frame must not find this one still running.
            self._end_scan(request_id, name)
            self._send(comm, reply)
        except ScanCancelled:
            self._end_scan(request_id, name)
            self._send_error(
                comm,
                request_id,
                f"The scan of {name!r} was cancelled.",
                {"cancelled": True, "engine": engine.name, "frame": name},
            )
        except EngineFailure as failure:
            self._end_scan(request_id, name)
            self._send_engine_failure(comm, request_id, name, failure)
        except BridgeError as error:
            self._end_scan(request_id, name)
            self._send_error(comm, request_id, error.message, error.detail)
        except Exception as error:  # noqa: BLE001 - a scan thread must never die silently
            _log.debug("polyadic scan failed", exc_info=True)
            self._end_scan(request_id, name)
            self._send_error(
                comm,
                request_id,
                f"Polyadic could not scan {name!r} ({type(error).__name__}: {error}).",
                {"traceback": traceback.format_exc(), "engine": engine.name},
            )
        finally:
            self._end_scan(request_id, name)

    def _cancel(self, comm: Any, data: Mapping[str, Any], request_id: Any) -> None:
        target = data.get("target")
        with self._lock:
            engine = self._scans.get(target)
        cancelled = False
        if engine is not None:
            engine.cancel()
            cancelled = True
        self._send(comm, {"type": "cancel_done", "request_id": request_id, "target": target, "cancelled": cancelled})

    def running_scans(self) -> list[Any]:
        """Request ids of the scans running now."""
        with self._lock:
            return list(self._scans)

    def _send_engine_failure(self, comm: Any, request_id: Any, name: Any, failure: EngineFailure) -> None:
        label = {"duckdb": "DuckDB", "spark": "Spark"}.get(failure.engine, failure.engine)
        self._send_error(
            comm,
            request_id,
            f"{label} stopped the scan of {name!r}: {first_line(failure.engine_message)}",
            {"engine": failure.engine, "engine_message": failure.engine_message, "frame": name},
        )

    def _send_done(
        self, comm: Any, request_id: Any, name: str, payload: Any, batch_count: int, bytes_total: int
    ) -> None:
        comm.send(
            data={
                "type": "fetch_done",
                "request_id": request_id,
                "name": name,
                "rows": payload.rows,
                "original_rows": payload.original_rows,
                "sampled": payload.sampled,
                "seed": payload.seed,
                "columns": payload.columns,
                "batch_count": batch_count,
                "bytes_total": bytes_total,
            }
        )

    def _results_chunk(self, comm: Any, data: Mapping[str, Any], buffers: list[Any], request_id: Any) -> None:
        meta = data.get("meta")
        if meta is not None and not isinstance(meta, dict):
            raise BridgeError("'meta' must be a JSON object.", option="meta")
        outcome = self._store.add_chunk(
            data.get("analysis_id"),
            data.get("chunk_index"),
            data.get("chunk_count"),
            buffers[0] if buffers else None,
            meta,
        )
        if outcome.complete:
            reply = {
                "type": "results_stored",
                "request_id": request_id,
                "analysis_id": outcome.analysis_id,
                "rows": int(len(outcome.table)),
            }
        else:
            reply = {
                "type": "results_ack",
                "request_id": request_id,
                "analysis_id": outcome.analysis_id,
                "chunks_received": outcome.received,
                "chunk_count": outcome.count,
            }
        self._send(comm, reply)

    def _send(self, comm: Any, message: dict[str, Any]) -> None:
        try:
            comm.send(data=message)
        except Exception:  # noqa: BLE001 - a closed comm must not break the kernel
            _log.debug("polyadic could not send %s", message.get("type"), exc_info=True)

    def _send_error(self, comm: Any, request_id: Any, message: str, detail: Mapping[str, Any]) -> None:
        self._send(comm, {"type": "error", "request_id": request_id, "message": message, "detail": dict(detail)})


class _ListingHook:
    """``post_run_cell`` callback that pushes a fresh listing; marked so re-imports replace it."""

    polyadic_listing_hook = True

    def __init__(self, bridge: KernelBridge) -> None:
        self.bridge = bridge

    def __call__(self, result: Any = None) -> None:
        try:
            self.bridge.push_listing()
        except Exception:  # noqa: BLE001 - a hook error would print below the user's cell
            _log.debug("polyadic listing push failed", exc_info=True)


_register_lock = threading.Lock()
#: The bridge registered in this process, and the shell it serves.
_active: tuple[Any, KernelBridge] | None = None


def register(shell: Any = None) -> KernelBridge | None:
    """Register the comm target and the listing hook in the running IPython kernel.

    Does nothing and returns None outside a kernel (plain Python, terminal IPython).
    Calling it again replaces the earlier registration instead of adding a second one.
    """
    global _active
    if shell is None:
        try:
            from IPython import get_ipython
        except ImportError:
            return None
        shell = get_ipython()
    manager = getattr(getattr(shell, "kernel", None), "comm_manager", None)
    if manager is None:
        return None
    with _register_lock:
        if _active is not None and _active[0] is shell:
            bridge = _active[1]  # already serving this shell: keep its open comms
        else:
            bridge = KernelBridge(
                namespace=lambda: shell.user_ns,
                hidden=lambda: getattr(shell, "user_ns_hidden", {}),
            )
        manager.register_target(COMM_TARGET, bridge.open_comm)
        # A hook left by an earlier copy of this module (importlib.reload) is replaced.
        for callback in list(shell.events.callbacks.get("post_run_cell", [])):
            if getattr(callback, "polyadic_listing_hook", False):
                shell.events.unregister("post_run_cell", callback)
        shell.events.register("post_run_cell", _ListingHook(bridge))
        _active = (shell, bridge)
    return bridge


__all__ = ["COMM_TARGET", "PROTOCOL_VERSION", "KernelBridge", "ResultsNotFound", "register", "results"]
