/**
 * The front-end side of the kernel bridge: one {@link KernelBridge} per notebook session.
 *
 * It imports `polyadic` silently in the kernel (no output, no history, no name bound in the
 * user's namespace), opens the `polyadic` comm, keeps the kernel's listing of dataframes,
 * fetches columns as Arrow IPC pieces and sends multiplet tables back in chunks. It follows
 * the session: a restart or a new kernel re-imports and re-opens; an interrupted, cancelled or
 * refused request rejects with a {@link BridgeError} saying what happened and what to do.
 *
 * Why no request can hang: every request is settled by its last reply, by the kernel going
 * idle after handling it without a last reply (IOPub delivers a request's replies before the
 * idle status that ends it), by a restart or kernel change, by a lost connection, by the comm
 * closing, or by `dispose()`.
 */
import type { Kernel, KernelMessage } from '@jupyterlab/services';
import { JSONObject, UUID } from '@lumino/coreutils';
import type { IDisposable } from '@lumino/disposable';
import { ISignal, Signal } from '@lumino/signaling';

import type { IMultipletRow } from '../engine/types';
import { FetchAssembler, IFetchedFrame, IFetchProgress } from './decode';
import { encodeMultiplets, splitBytes } from './encode';
import { BridgeError, BridgeFailure } from './errors';
import type { IBridgeComm, IBridgeKernel, IBridgeSession } from './kernel';
import {
  COMM_TARGET,
  IBridgeErrorDetail,
  IFetchChunk,
  IFetchDone,
  IFrameInfo,
  ISkippedFrame,
  PROTOCOL_VERSION,
  RESULTS_CHUNK_MAX_BYTES
} from './protocol';

/** Where the bridge stands with the notebook's kernel. */
export type BridgeState = 'no-kernel' | 'not-python' | 'starting' | 'missing-package' | 'ready' | 'error';

/** The bridge's state and what to tell the user about it. */
export interface IBridgeStatus {
  state: BridgeState;
  /** One sentence (two at most) for the user; plain text, never HTML. */
  message: string;
  /** Shell commands that fix the problem, for the panel to show as code; often empty. */
  commands: string[];
  /** The kernel's language, once known. */
  language: string | null;
  /** Version of the `polyadic` package in the kernel, once imported. */
  kernelVersion: string | null;
}

/** The dataframes in the kernel's namespace, from the latest listing. */
export interface IListing {
  /** Frames sorted by name. */
  frames: IFrameInfo[];
  /** Frames that exist but could not be described, with the reason. */
  skipped: ISkippedFrame[];
  /** Version of the kernel's `polyadic` package. */
  version: string;
}

/** Options of {@link KernelBridge.fetch}. */
export interface IFetchOptions {
  /** Most rows to receive; above it the kernel sends a seeded sample. Default: the kernel's (2,000,000). */
  rowCap?: number;
  /** Seed of the row sample (numpy `default_rng`); default 0. */
  seed?: number;
  /** Called after every piece received. */
  onProgress?: (progress: IFetchProgress) => void;
}

/** How far an upload of results has come. */
export interface IResultsProgress {
  analysisId: string;
  chunksSent: number;
  chunkCount: number;
  bytesSent: number;
  bytesTotal: number;
}

/** Options of {@link KernelBridge.sendResults}. */
export interface ISendResultsOptions {
  /** Plain JSON kept with the table in the kernel (label, units, frame, …). */
  meta?: JSONObject;
  /** Largest chunk in bytes; default and maximum {@link RESULTS_CHUNK_MAX_BYTES}. */
  chunkBytes?: number;
  /** Called after every chunk the kernel acknowledged. */
  onProgress?: (progress: IResultsProgress) => void;
}

/** The kernel stored a multiplet table. */
export interface IResultsReceipt {
  analysisId: string;
  /** Multiplets in the stored table. */
  rows: number;
  chunks: number;
  bytes: number;
}

/**
 * The bridge between one notebook's kernel and the panel. Create it when the panel follows a
 * notebook; it connects at once and follows the session until disposed.
 */
export class KernelBridge implements IDisposable {
  /** Connect to the session's kernel (if any) and follow the session's kernel changes. */
  constructor(options: KernelBridge.IOptions) {
    this._session = options.sessionContext;
    this._session.kernelChanged.connect(this._onKernelChanged, this);
    this._session.statusChanged.connect(this._onStatusChanged, this);
    this._session.connectionStatusChanged.connect(this._onConnectionStatusChanged, this);
    this._session.disposed.connect(this.dispose, this);
    void this._connect();
  }

  /** The current state and its message. */
  get status(): IBridgeStatus {
    return this._status;
  }

  /** Emitted whenever {@link status} changes. */
  get statusChanged(): ISignal<this, IBridgeStatus> {
    return this._statusChanged;
  }

  /** The latest listing of the kernel's dataframes; null until the bridge is ready. */
  get listing(): IListing | null {
    return this._listing;
  }

  /** Emitted with every new listing (after each executed cell that changed it), and null when the kernel goes away. */
  get framesChanged(): ISignal<this, IListing | null> {
    return this._framesChanged;
  }

  /** Whether the bridge was disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Ask the kernel for a fresh listing. */
  refresh(): Promise<IListing> {
    return new Promise<IListing>((resolve, reject) => {
      const comm = this._readyComm(reject);
      if (comm === null) {
        return;
      }
      const id = this._nextId();
      this._send(comm, { type: 'list', request_id: id }, [], {
        what: 'the listing of dataframes',
        again: 'refresh the list',
        reply: data => {
          if (data.type !== 'listing') {
            throw Private.unexpected(data.type, 'listing');
          }
          resolve(this._takeListing(data));
          return true;
        },
        reject
      });
    });
  }

  /**
   * Fetch columns of a frame (all when `columns` is omitted). Resolves with engine column
   * views and what the panel and the record state: rows, sample, seed, time units.
   */
  fetch(name: string, columns?: readonly string[], options: IFetchOptions = {}): Promise<IFetchedFrame> {
    return new Promise<IFetchedFrame>((resolve, reject) => {
      const problem = Private.checkFetch(name, columns, options);
      if (problem !== null) {
        reject(problem);
        return;
      }
      const comm = this._readyComm(reject);
      if (comm === null) {
        return;
      }
      const id = this._nextId();
      const assembler = new FetchAssembler(name);
      const request: JSONObject = { type: 'fetch', request_id: id, name };
      if (columns !== undefined) {
        request.columns = [...columns];
      }
      if (options.rowCap !== undefined) {
        request.row_cap = options.rowCap;
      }
      if (options.seed !== undefined) {
        request.sample_seed = options.seed;
      }
      this._send(comm, request, [], {
        what: `the fetch of '${name}'`,
        again: `fetch '${name}' again`,
        reply: (data, buffers) => {
          if (data.type === 'fetch_chunk') {
            const progress = assembler.add(data as unknown as IFetchChunk, buffers[0]);
            options.onProgress?.(progress);
            return false;
          }
          if (data.type === 'fetch_done') {
            resolve(assembler.finish(data as unknown as IFetchDone));
            return true;
          }
          throw Private.unexpected(data.type, 'fetch_chunk or fetch_done');
        },
        onKernelError: detail => {
          // The listing the user chose from is out of date; show the current one.
          if (detail.frame !== undefined && detail.column === undefined) {
            this.refresh().catch(() => undefined);
          }
        },
        reject
      });
    });
  }

  /**
   * Send a multiplet table to the kernel, where `polyadic.results(analysisId)` returns it as a
   * pandas DataFrame. The Arrow IPC stream goes in chunks below the server's message limit,
   * each acknowledged before the next is sent.
   */
  async sendResults(
    analysisId: string,
    rows: readonly IMultipletRow[],
    options: ISendResultsOptions = {}
  ): Promise<IResultsReceipt> {
    const problem = Private.checkResults(analysisId, options);
    if (problem !== null) {
      throw problem;
    }
    const bytes = encodeMultiplets(rows);
    const chunks = splitBytes(bytes, options.chunkBytes ?? RESULTS_CHUNK_MAX_BYTES);
    let sent = 0;
    for (let index = 0; index < chunks.length; index++) {
      const reply = await this._sendResultsChunk(analysisId, index, chunks.length, chunks[index], options.meta);
      sent += chunks[index].byteLength;
      options.onProgress?.({
        analysisId,
        chunksSent: index + 1,
        chunkCount: chunks.length,
        bytesSent: sent,
        bytesTotal: bytes.byteLength
      });
      const last = index === chunks.length - 1;
      if (reply.type === 'results_stored') {
        if (!last) {
          throw new BridgeError(
            'protocol',
            `The kernel stored analysis '${analysisId}' after ${index + 1} of ${chunks.length} chunks; send it again.`,
            { option: 'analysisId' }
          );
        }
        const stored = reply.rows;
        if (typeof stored !== 'number' || stored !== rows.length) {
          throw new BridgeError(
            'protocol',
            `The kernel stored ${String(stored)} multiplets of analysis '${analysisId}' instead of ${rows.length}; send it again.`,
            { option: 'analysisId' }
          );
        }
        return { analysisId, rows: stored, chunks: chunks.length, bytes: bytes.byteLength };
      }
      if (last) {
        throw new BridgeError(
          'protocol',
          `The kernel did not store analysis '${analysisId}' after its last chunk; send it again.`,
          { option: 'analysisId' }
        );
      }
    }
    // splitBytes always returns at least one chunk, so the loop has returned or thrown.
    throw new BridgeError('protocol', `No chunk of analysis '${analysisId}' was sent.`);
  }

  /** Start over with the current kernel: re-import `polyadic` and re-open the comm (after `pip install`). */
  reconnect(): Promise<void> {
    if (this._isDisposed) {
      return Promise.resolve();
    }
    this._teardown('cancelled', null);
    return this._connect();
  }

  /** Reject every pending request, close the comm and stop following the session. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._teardown('disposed', null);
    this._isDisposed = true;
    Signal.disconnectReceiver(this);
    Signal.clearData(this);
  }

  // --- connecting ----------------------------------------------------------------------------

  /** Import `polyadic` in the session's kernel and open the comm; ready on the first listing. */
  private async _connect(): Promise<void> {
    const generation = ++this._generation;
    this._reconnectWanted = false;
    const kernel = this._session.isDisposed ? null : this._session.session?.kernel ?? null;
    this._kernel = kernel;
    if (kernel === null || kernel.isDisposed) {
      this._setStatus('no-kernel', Private.NO_KERNEL);
      return;
    }
    this._setStatus('starting', Private.STARTING);
    const stale = (): boolean => this._isDisposed || generation !== this._generation;
    try {
      const info = await kernel.info;
      if (stale()) {
        return;
      }
      const language = info.language_info?.name ?? '';
      this._language = language || null;
      if (language.toLowerCase() !== 'python') {
        this._setStatus('not-python', Private.notPython(language));
        return;
      }
      const reply = await kernel.requestExecute(Private.importRequest(), true).done;
      if (stale()) {
        return;
      }
      const imported = Private.importOutcome(reply.content);
      if (imported.state !== 'ready') {
        this._setStatus(imported.state, imported.message, imported.commands);
        return;
      }
      this._kernelVersion = imported.version;
      const comm = kernel.createComm(COMM_TARGET);
      this._comm = comm;
      comm.onMsg = msg => this._onCommMsg(comm, msg);
      comm.onClose = () => this._onCommClose(comm);
      const opened = comm.open({});
      // The kernel pushes a listing while it handles comm_open, so it arrives before the idle
      // status that settles `opened`: still starting then means the kernel refused the comm.
      const settle = (): void => {
        if (!stale() && this._comm === comm && this._status.state === 'starting') {
          this._refused(comm);
        }
      };
      opened.done.then(settle, settle);
    } catch (error) {
      if (stale()) {
        return;
      }
      this._setStatus(
        'error',
        `Polyadic could not connect to the kernel (${Private.errorText(error)}); restart the kernel and try again.`
      );
    }
  }

  /** The kernel closed or ignored the comm while it was opening. */
  private _refused(comm: IBridgeComm): void {
    this._forgetComm(comm);
    this._setStatus('error', Private.REFUSED);
  }

  /**
   * Stop using the current kernel: reject pending requests and drop the comm, telling the
   * kernel (`close`) unless the kernel closed it or is restarting, and so forgot it already.
   */
  private _teardown(reason: BridgeFailure, status: [BridgeState, string] | null): void {
    this._generation++;
    this._rejectAll(reason);
    const comm = this._comm;
    if (comm !== null) {
      this._forgetComm(comm);
      try {
        if (reason === 'restart' || reason === 'closed') {
          comm.dispose();
        } else {
          comm.close();
        }
      } catch {
        // The comm of a kernel whose connection is gone cannot send its close: nothing to tell.
      }
    }
    if (this._listing !== null) {
      this._listing = null;
      this._framesChanged.emit(null);
    }
    this._kernelVersion = null;
    if (status !== null) {
      this._setStatus(status[0], status[1]);
    }
  }

  /** Stop listening to a comm (its handlers stay but ignore it). */
  private _forgetComm(comm: IBridgeComm): void {
    if (this._comm === comm) {
      this._comm = null;
    }
  }

  private _onKernelChanged(): void {
    if (this._isDisposed) {
      return;
    }
    const kernel = this._session.session?.kernel ?? null;
    if (kernel === this._kernel && this._status.state !== 'no-kernel') {
      return;
    }
    this._teardown('kernel-changed', null);
    this._language = null;
    void this._connect();
  }

  private _onStatusChanged(_: unknown, status: Kernel.Status): void {
    if (this._isDisposed) {
      return;
    }
    if (status === 'restarting' || status === 'autorestarting') {
      this._teardown('restart', ['starting', Private.RESTARTING]);
      this._reconnectWanted = true;
    } else if (status === 'dead') {
      this._teardown('restart', ['error', Private.DEAD]);
      this._reconnectWanted = false;
    } else if ((status === 'idle' || status === 'busy') && this._reconnectWanted) {
      void this._connect();
    }
  }

  private _onConnectionStatusChanged(_: unknown, status: Kernel.ConnectionStatus): void {
    if (this._isDisposed) {
      return;
    }
    if (status === 'connecting' || status === 'disconnected') {
      const inUse = this._pending.size > 0 || this._comm !== null;
      if (inUse || this._status.state === 'starting') {
        // While still starting (or restarting), keep the message the user already sees.
        this._teardown('connection', inUse ? ['starting', Private.RECONNECTING] : null);
        this._reconnectWanted = true;
      }
    } else if (status === 'connected' && this._reconnectWanted) {
      void this._connect();
    }
  }

  // --- messages ------------------------------------------------------------------------------

  private _onCommMsg(comm: IBridgeComm, msg: KernelMessage.ICommMsgMsg): void {
    if (comm !== this._comm || this._isDisposed) {
      return;
    }
    const data = msg.content.data as Record<string, unknown> | null;
    if (typeof data !== 'object' || data === null || typeof data.type !== 'string') {
      console.warn('Polyadic: ignored a comm message without a type from the kernel.');
      return;
    }
    const id = data.request_id;
    if (id === null || id === undefined) {
      this._onPush(data);
      return;
    }
    const pending = typeof id === 'string' ? this._pending.get(id) : undefined;
    if (pending === undefined) {
      // A late reply to a request that was already cancelled (interrupt, lost connection).
      return;
    }
    try {
      if (data.type === 'error') {
        this._pending.delete(id as string);
        const detail = Private.detail(data.detail);
        pending.onKernelError?.(detail);
        pending.reject(new BridgeError('kernel', Private.kernelMessage(data.message), detail));
        return;
      }
      const last = pending.reply(data, (msg.buffers ?? []) as unknown[]);
      if (last) {
        this._pending.delete(id as string);
      }
    } catch (error) {
      this._pending.delete(id as string);
      pending.reject(error);
    }
  }

  /** A message the kernel started itself: a listing (on open and after cells). */
  private _onPush(data: Record<string, unknown>): void {
    if (data.type === 'listing') {
      try {
        this._takeListing(data);
      } catch (error) {
        this._teardown('protocol', ['error', Private.errorText(error)]);
      }
      return;
    }
    if (data.type === 'error') {
      console.warn(`Polyadic: the kernel reported an error outside any request: ${Private.kernelMessage(data.message)}`);
    }
  }

  /** Check and keep a listing; the first one on a new comm makes the bridge ready. */
  private _takeListing(data: Record<string, unknown>): IListing {
    const listing = Private.listing(data);
    if (this._status.state === 'starting') {
      this._kernelVersion = listing.version;
      this._setStatus('ready', Private.ready(listing.version));
    }
    this._listing = listing;
    this._framesChanged.emit(listing);
    return listing;
  }

  private _onCommClose(comm: IBridgeComm): void {
    if (comm !== this._comm || this._isDisposed) {
      return;
    }
    if (this._status.state === 'starting') {
      this._rejectAll('closed');
      this._refused(comm);
      return;
    }
    // Re-open once; a kernel that keeps closing the comm gets an error state instead of a loop.
    const now = Date.now();
    const again = now - this._lastKernelClose < Private.CLOSE_LOOP_MS;
    this._lastKernelClose = now;
    this._teardown('closed', again ? ['error', Private.CLOSED_AGAIN] : null);
    if (!again) {
      void this._connect();
    }
  }

  // --- requests ------------------------------------------------------------------------------

  /** The comm when the bridge is ready; otherwise rejects with the reason and returns null. */
  private _readyComm(reject: (error: BridgeError) => void): IBridgeComm | null {
    if (this._isDisposed) {
      reject(new BridgeError('disposed', 'Polyadic is no longer connected to this notebook.'));
      return null;
    }
    if (this._status.state !== 'ready' || this._comm === null) {
      const message =
        this._status.state === 'starting' || this._status.state === 'ready'
          ? 'Polyadic is still connecting to the kernel; try again in a moment.'
          : this._status.message;
      reject(new BridgeError('state', message));
      return null;
    }
    return this._comm;
  }

  /** Send one request and keep it pending until {@link Private.IPending.reply} says it is complete. */
  private _send(comm: IBridgeComm, request: JSONObject, buffers: ArrayBuffer[], pending: Private.IPending): void {
    const id = request.request_id as string;
    this._pending.set(id, pending);
    let future;
    try {
      future = comm.send(request, {}, buffers, true);
    } catch (error) {
      this._pending.delete(id);
      pending.reject(
        comm.isDisposed
          ? new BridgeError('closed', `The comm to the kernel is closed, so ${pending.what} could not start; ${pending.again}.`)
          : new BridgeError(
              'connection',
              `Polyadic could not start ${pending.what} (${Private.errorText(error)}); ${pending.again}.`
            )
      );
      return;
    }
    const settle = (cancelled: boolean): void => {
      const still = this._pending.get(id);
      if (still === undefined) {
        return;
      }
      this._pending.delete(id);
      still.reject(
        cancelled ? Private.failure('restart', still) : Private.failure('unanswered', still)
      );
    };
    future.done.then(
      () => settle(false),
      () => settle(true)
    );
  }

  /** Send one results chunk; resolves with the kernel's ack or stored reply. */
  private _sendResultsChunk(
    analysisId: string,
    index: number,
    count: number,
    chunk: Uint8Array,
    meta: JSONObject | undefined
  ): Promise<Record<string, unknown>> {
    return new Promise((resolve, reject) => {
      const comm = this._readyComm(reject);
      if (comm === null) {
        return;
      }
      const request: JSONObject = {
        type: 'results_chunk',
        request_id: this._nextId(),
        analysis_id: analysisId,
        chunk_index: index,
        chunk_count: count
      };
      if (meta !== undefined && index === 0) {
        request.meta = meta;
      }
      this._send(comm, request, [Private.ownBuffer(chunk)], {
        what: `the upload of the results of analysis '${analysisId}'`,
        again: 'send them again',
        reply: data => {
          if (data.type !== 'results_ack' && data.type !== 'results_stored') {
            throw Private.unexpected(data.type, 'results_ack or results_stored');
          }
          resolve(data);
          return true;
        },
        reject
      });
    });
  }

  /** Reject every pending request for one reason. */
  private _rejectAll(reason: BridgeFailure): void {
    const pending = [...this._pending.values()];
    this._pending.clear();
    for (const request of pending) {
      request.reject(Private.failure(reason, request));
    }
  }

  private _nextId(): string {
    this._counter += 1;
    return `${this._idPrefix}-${this._counter}`;
  }

  private _setStatus(state: BridgeState, message: string, commands: string[] = []): void {
    const next: IBridgeStatus = {
      state,
      message,
      commands,
      language: this._language,
      kernelVersion: state === 'ready' ? this._kernelVersion : null
    };
    const now = this._status;
    if (
      now.state === next.state &&
      now.message === next.message &&
      now.language === next.language &&
      now.kernelVersion === next.kernelVersion &&
      now.commands.join('\n') === next.commands.join('\n')
    ) {
      return;
    }
    this._status = next;
    this._statusChanged.emit(next);
  }

  private _session: IBridgeSession;
  private _kernel: IBridgeKernel | null = null;
  private _comm: IBridgeComm | null = null;
  private _generation = 0;
  private _reconnectWanted = false;
  private _lastKernelClose = -Infinity;
  private _language: string | null = null;
  private _kernelVersion: string | null = null;
  private _listing: IListing | null = null;
  private _pending = new Map<string, Private.IPending>();
  private _idPrefix = UUID.uuid4();
  private _counter = 0;
  private _isDisposed = false;
  private _status: IBridgeStatus = {
    state: 'no-kernel',
    message: Private.NO_KERNEL,
    commands: [],
    language: null,
    kernelVersion: null
  };
  private _statusChanged = new Signal<this, IBridgeStatus>(this);
  private _framesChanged = new Signal<this, IListing | null>(this);
}

/** Types of {@link KernelBridge}. */
export namespace KernelBridge {
  /** Options of a bridge. */
  export interface IOptions {
    /** The notebook's session context (JupyterLab's `ISessionContext` fits). */
    sessionContext: IBridgeSession;
  }
}

/** Module-private helpers. */
namespace Private {
  /** A request waiting for its replies. */
  export interface IPending {
    /** The request in words, for error messages: "the fetch of 'df'". */
    what: string;
    /** What the user does to retry: "fetch 'df' again". */
    again: string;
    /** Handle one reply (not an error); returns whether it was the last. Throws on a bad reply. */
    reply(data: Record<string, unknown>, buffers: unknown[]): boolean;
    /** Called with the detail of an error reply, before the request is rejected. */
    onKernelError?(detail: IBridgeErrorDetail): void;
    /** Settle the request as failed. */
    reject(error: unknown): void;
  }

  /** Two kernel-side closes within this many milliseconds count as a loop. */
  export const CLOSE_LOOP_MS = 5000;

  /** Message of the `no-kernel` state. */
  export const NO_KERNEL = 'This notebook has no kernel: start one to list its dataframes.';
  /** Message while importing and opening the comm. */
  export const STARTING = "Connecting to the notebook's kernel…";
  /** Message while the kernel restarts. */
  export const RESTARTING = 'The kernel is restarting; Polyadic reconnects when it is back.';
  /** Message while the websocket reconnects. */
  export const RECONNECTING = 'The connection to the kernel was lost; Polyadic reconnects when it is back.';
  /** Message after the kernel died. */
  export const DEAD = 'The kernel died: restart it to use Polyadic with this notebook.';
  /** Message when the kernel closed or ignored the comm it was asked to open. */
  export const REFUSED =
    "The kernel imported polyadic but did not open Polyadic's comm; restart the kernel and try again.";
  /** Message when the kernel closes the comm again right after it was re-opened. */
  export const CLOSED_AGAIN =
    "The kernel keeps closing Polyadic's comm; restart the kernel and try again.";
  /** The command that installs the package, and the one for a source checkout. */
  export const PIP_COMMANDS = ['pip install polyadic', 'pip install -e .'];

  /**
   * The expression that imports polyadic without binding a name in the user's namespace.
   * `invalidate_caches` lets an import succeed right after `pip install` in a running kernel.
   */
  export const IMPORT_EXPRESSION =
    "(__import__('importlib').invalidate_caches(), __import__('polyadic').__version__)[1]";

  /** The silent execute request that imports polyadic (no output, no history, no abort of queued cells). */
  export function importRequest(): KernelMessage.IExecuteRequestMsg['content'] {
    return {
      code: '',
      silent: true,
      store_history: false,
      allow_stdin: false,
      stop_on_error: false,
      user_expressions: { polyadic: IMPORT_EXPRESSION }
    };
  }

  /** What the import reply says: ready with a version, or the state and message to show. */
  export function importOutcome(
    content: KernelMessage.IExecuteReplyMsg['content']
  ):
    | { state: 'ready'; version: string }
    | { state: 'missing-package' | 'error'; message: string; commands: string[] } {
    if (content.status !== 'ok') {
      return {
        state: 'error',
        message: 'The kernel could not run the silent import of polyadic; restart the kernel and try again.',
        commands: []
      };
    }
    const outcome = (content.user_expressions ?? {})['polyadic'] as Record<string, unknown> | undefined;
    if (typeof outcome !== 'object' || outcome === null) {
      return {
        state: 'error',
        message: 'The kernel did not report whether polyadic could be imported; restart the kernel and try again.',
        commands: []
      };
    }
    if (outcome.status === 'ok') {
      const data = (outcome.data ?? {}) as Record<string, unknown>;
      const text = typeof data['text/plain'] === 'string' ? (data['text/plain'] as string) : '';
      return { state: 'ready', version: text.replace(/^['"]|['"]$/g, '') };
    }
    const ename = typeof outcome.ename === 'string' ? outcome.ename : 'Error';
    const evalue = typeof outcome.evalue === 'string' ? outcome.evalue : '';
    if (ename === 'ModuleNotFoundError' || ename === 'ImportError') {
      const itself = /No module named '?polyadic'?$/.test(evalue);
      const cause = itself ? '' : ` (${ename}: ${evalue})`;
      return {
        state: 'missing-package',
        message:
          `The kernel cannot import polyadic${cause}: run \`pip install polyadic\` in the kernel's environment ` +
          '(from a source checkout, `pip install -e .`), then try again.',
        commands: [...PIP_COMMANDS]
      };
    }
    return {
      state: 'error',
      message: `Importing polyadic in the kernel failed (${ename}: ${evalue}); restart the kernel and try again.`,
      commands: []
    };
  }

  /** The state message of a kernel in another language. */
  export function notPython(language: string): string {
    const runs = language ? ` this notebook's kernel runs ${language}` : " this notebook's kernel is not Python";
    return `Python kernels only, for now:${runs}.`;
  }

  /** The state message once connected. */
  export function ready(version: string): string {
    return `Connected to the kernel (polyadic ${version}).`;
  }

  /** The error a pending request gets for a failure that is not its own. */
  export function failure(reason: BridgeFailure, request: IPending): BridgeError {
    const { what, again } = request;
    switch (reason) {
      case 'restart':
        return new BridgeError(
          reason,
          `The kernel restarted or stopped during ${what}, which was cancelled; once it is back, ` +
            `run the cells that build your data, then ${again}.`
        );
      case 'kernel-changed':
        return new BridgeError(reason, `The notebook's kernel changed during ${what}, which was cancelled; ${again}.`);
      case 'closed':
        return new BridgeError(
          reason,
          `The kernel closed Polyadic's comm during ${what}; Polyadic reconnects by itself, so ${again} in a moment.`
        );
      case 'connection':
        return new BridgeError(
          reason,
          `The connection to the kernel was lost during ${what}; ${again} once it is back.`
        );
      case 'unanswered':
        return new BridgeError(
          reason,
          `The kernel stopped before answering ${what} (was it interrupted?); ${again}.`
        );
      case 'cancelled':
        return new BridgeError(reason, `Polyadic reconnected to the kernel during ${what}, which was cancelled; ${again}.`);
      case 'disposed':
        return new BridgeError(reason, `Polyadic stopped following this notebook during ${what}.`);
      default:
        return new BridgeError(reason, `${what} failed: the kernel's replies did not follow the protocol; ${again}.`);
    }
  }

  /** The error for a reply of the wrong type. */
  export function unexpected(type: unknown, expected: string): BridgeError {
    return new BridgeError(
      'protocol',
      `The kernel replied '${String(type)}' where ${expected} was expected; check that the polyadic package ` +
        'in the kernel matches this extension.'
    );
  }

  /** A kernel error's message, as text. */
  export function kernelMessage(message: unknown): string {
    return typeof message === 'string' && message ? message : 'The kernel refused the request without saying why.';
  }

  /** A kernel error's detail as a plain object. */
  export function detail(value: unknown): IBridgeErrorDetail {
    return typeof value === 'object' && value !== null && !Array.isArray(value)
      ? { ...(value as IBridgeErrorDetail) }
      : {};
  }

  /** Check a listing message and keep what the panel needs. */
  export function listing(data: Record<string, unknown>): IListing {
    if (data.protocol !== PROTOCOL_VERSION) {
      throw new BridgeError(
        'protocol',
        `The kernel's polyadic package speaks bridge protocol ${String(data.protocol)} and this extension ` +
          `speaks ${PROTOCOL_VERSION}: install the polyadic package of the same version as the extension, ` +
          'then restart the kernel.'
      );
    }
    const frames = data.frames;
    const skipped = data.skipped ?? [];
    const wellFormed =
      Array.isArray(frames) &&
      frames.every(
        frame =>
          typeof frame === 'object' &&
          frame !== null &&
          typeof frame.name === 'string' &&
          typeof frame.rows === 'number' &&
          Array.isArray(frame.columns)
      ) &&
      Array.isArray(skipped);
    if (!wellFormed) {
      throw new BridgeError(
        'protocol',
        "The kernel's listing of dataframes did not follow the protocol; check that the polyadic package " +
          'in the kernel matches this extension.'
      );
    }
    return {
      frames: frames as IFrameInfo[],
      skipped: skipped as ISkippedFrame[],
      version: typeof data.version === 'string' ? data.version : ''
    };
  }

  /** Check the arguments of a fetch; the error names the option at fault. */
  export function checkFetch(
    name: unknown,
    columns: readonly unknown[] | undefined,
    options: IFetchOptions
  ): BridgeError | null {
    if (typeof name !== 'string' || name === '') {
      return usage("Choose a dataframe to fetch: the frame's name is empty.", 'name');
    }
    if (columns !== undefined) {
      if (!Array.isArray(columns) || columns.some(column => typeof column !== 'string')) {
        return usage('The columns to fetch must be a list of column names.', 'columns');
      }
      if (columns.length === 0) {
        return usage(`Choose at least one column of '${name}' to fetch.`, 'columns');
      }
    }
    const { rowCap, seed } = options;
    if (rowCap !== undefined && (!Number.isSafeInteger(rowCap) || rowCap < 1)) {
      return usage(`The row cap must be a whole number of at least 1, got ${String(rowCap)}.`, 'rowCap');
    }
    if (seed !== undefined && (!Number.isSafeInteger(seed) || seed < 0)) {
      return usage(`The sample seed must be a whole number of at least 0, got ${String(seed)}.`, 'seed');
    }
    return null;
  }

  /** Check the arguments of sendResults; the error names the option at fault. */
  export function checkResults(analysisId: unknown, options: ISendResultsOptions): BridgeError | null {
    if (typeof analysisId !== 'string' || analysisId === '' || analysisId.length > 200) {
      return usage('The analysis id must be a non-empty text of at most 200 characters.', 'analysisId');
    }
    const { chunkBytes, meta } = options;
    if (
      chunkBytes !== undefined &&
      (!Number.isSafeInteger(chunkBytes) || chunkBytes < 1 || chunkBytes > RESULTS_CHUNK_MAX_BYTES)
    ) {
      return usage(
        `The chunk size must be a whole number of bytes from 1 to ${RESULTS_CHUNK_MAX_BYTES}, got ${String(chunkBytes)}.`,
        'chunkBytes'
      );
    }
    if (meta !== undefined && (typeof meta !== 'object' || meta === null || Array.isArray(meta))) {
      return usage('The results metadata must be a JSON object.', 'meta');
    }
    return null;
  }

  function usage(message: string, option: string): BridgeError {
    return new BridgeError('usage', message, { option });
  }

  /**
   * The chunk as an ArrayBuffer of its own. JupyterLab's message serializer writes a view's
   * whole underlying buffer, so a view into the full IPC stream would send all of it.
   */
  export function ownBuffer(chunk: Uint8Array): ArrayBuffer {
    if (chunk.byteOffset === 0 && chunk.byteLength === chunk.buffer.byteLength && chunk.buffer instanceof ArrayBuffer) {
      return chunk.buffer;
    }
    return chunk.slice().buffer as ArrayBuffer;
  }

  /** The text of a thrown value. */
  export function errorText(error: unknown): string {
    return error instanceof Error ? error.message : String(error);
  }
}
