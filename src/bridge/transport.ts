/**
 * How fetched bytes reach the engine without freezing the page: a {@link FrameCodec} decodes
 * streams and encodes multiplet tables in the bridge's frame worker (src/bridge/frame-worker.ts)
 * or, where no worker can start (jest, Node), in process; a {@link IHandoverRoute} downloads a
 * kernel's handover file from the Jupyter server's route (src/bridge/handover.ts).
 */
import type { IDisposable } from '@lumino/disposable';

import type { IColumnStats } from '../panel/data/stats';
import type { IFetchedFrame } from './decode';
import type { IMultipletColumns } from './encode';
import { BridgeError } from './errors';
import { FrameHost } from './frame-host';
import type { FrameRequest, FrameResponse } from './frame-protocol';
import type { IFetchDone, IScanDone } from './protocol';
import type { IScannedGroups } from '../engine/aggregate/scan';

/** A decoded fetch: the frame and each column's checklist facts, computed beside the decoding. */
export interface IDecodedFrame {
  frame: IFetchedFrame;
  stats: IColumnStats[];
}

/** The bytes of one stream on their way to the decoder. */
export interface IFrameStream {
  /** Pass consecutive bytes on; with `transfer`, a view that owns its whole buffer is moved, not copied. */
  push(bytes: Uint8Array, transfer: boolean): void;
  /** Decode what was pushed; `pieces` when the bytes came as comm pieces (whole IPC messages each). */
  decode(done: IFetchDone, pieces: boolean): Promise<IDecodedFrame>;
  /** Decode what was pushed as the grouped table of a scan (src/bridge/scan-decode.ts). */
  decodeGroups(done: IScanDone, pieces: boolean): Promise<IScannedGroups>;
  /** Forget the stream. */
  drop(): void;
}

/** A dedicated worker running src/bridge/frame-worker.ts, as {@link FrameCodec} drives it. */
export interface IFrameWorker {
  post(request: FrameRequest, transfer: ArrayBuffer[]): void;
  listen(onResponse: (response: FrameResponse) => void, onFailure: (message: string) => void): void;
  terminate(): void;
}

/** Downloads handover files from the Jupyter server (polyadic/_server.py). */
export interface IHandoverRoute {
  /** Whether the server has the route and can serve files; asked once, then remembered. */
  available(): Promise<boolean>;
  /**
   * Stream the file of `token`, calling `onBytes` with each part as it arrives. Rejects with a
   * 'connection' {@link BridgeError} when the server does not have the file (it may run on
   * another machine than the kernel) or the transfer breaks.
   */
  download(token: string, onBytes: (bytes: Uint8Array) => void): Promise<void>;
}

/** What a bridge needs to move bytes: a codec, and the server route when there is one. */
export interface IFetchTransport {
  codec: FrameCodec;
  route: IHandoverRoute | null;
}

/**
 * Decodes fetched streams and encodes multiplet tables, in a worker when `createWorker` is
 * given (started on first use, restarted after a failure) and in process otherwise.
 */
export class FrameCodec implements IDisposable {
  /** Create a codec; without `createWorker` the work runs in process. */
  constructor(options: FrameCodec.IOptions = {}) {
    this._createWorker = options.createWorker ?? null;
  }

  /** Whether the codec was disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Start a stream of `total` bytes. */
  open(total: number): IFrameStream {
    const id = ++this._counter;
    this._post({ type: 'open', id, total }, []);
    let open = true;
    return {
      push: (bytes, transfer) => {
        const owns = transfer && bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength;
        const buffer = (owns ? bytes.buffer : bytes.slice().buffer) as ArrayBuffer;
        this._post({ type: 'bytes', id, bytes: buffer }, [buffer]);
      },
      decode: (done, pieces) => {
        open = false;
        return this._ask<IDecodedFrame>({ type: 'decode', id, done, pieces }, response =>
          response.type === 'decoded' ? { frame: response.frame, stats: response.stats } : null
        );
      },
      decodeGroups: (done, pieces) => {
        open = false;
        return this._ask<IScannedGroups>({ type: 'decode-groups', id, done, pieces }, response =>
          response.type === 'groups' ? response.groups : null
        );
      },
      drop: () => {
        if (open) {
          open = false;
          this._post({ type: 'drop', id }, []);
        }
      }
    };
  }

  /** Encode a column-wise multiplet table as an Arrow IPC stream (the table's buffers are moved). */
  encode(table: IMultipletColumns): Promise<Uint8Array> {
    const id = ++this._counter;
    const buffers = new Set<ArrayBuffer>();
    for (const view of [table.memberStart, table.members, table.order]) {
      buffers.add(view.buffer as ArrayBuffer);
    }
    for (const measure of table.measures) {
      buffers.add(measure.values.buffer as ArrayBuffer);
    }
    for (const extra of table.extras) {
      buffers.add(extra.values.buffer as ArrayBuffer).add(extra.present.buffer as ArrayBuffer);
    }
    return this._ask<Uint8Array>({ type: 'encode', id, table }, response =>
      response.type === 'encoded' ? new Uint8Array(response.bytes) : null
    , [...buffers]);
  }

  /** Stop the worker; what was pending fails. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this._stop('The bridge was closed.');
  }

  private _ask<T>(
    request: FrameRequest,
    read: (response: FrameResponse) => T | null,
    transfer: ArrayBuffer[] = []
  ): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      this._pending.set(request.id, {
        settle: response => {
          if (response.type === 'failed') {
            reject(new BridgeError(response.reason, response.message, response.detail));
            return;
          }
          const value = read(response);
          if (value === null) {
            reject(new BridgeError('protocol', `The frame worker answered a '${request.type}' with '${response.type}'.`));
          } else {
            resolve(value);
          }
        },
        reject
      });
      this._post(request, transfer);
    });
  }

  private _post(request: FrameRequest, transfer: ArrayBuffer[]): void {
    if (this._isDisposed) {
      this._pending.get(request.id)?.reject(new BridgeError('disposed', 'The bridge was closed.'));
      this._pending.delete(request.id);
      return;
    }
    if (this._createWorker === null) {
      this._host ??= new FrameHost(response => {
        // Answered on a later task, as a worker would, so callers never see a synchronous reply.
        setTimeout(() => this._onResponse(response), 0);
      });
      this._host.handle(request);
      return;
    }
    if (this._worker === null) {
      const worker = this._createWorker();
      worker.listen(
        response => this._onResponse(response),
        message => this._stop(`The bridge's decoding worker failed (${message}); fetch again.`)
      );
      this._worker = worker;
    }
    this._worker.post(request, transfer);
  }

  private _onResponse(response: FrameResponse): void {
    const pending = this._pending.get(response.id);
    if (pending !== undefined) {
      this._pending.delete(response.id);
      pending.settle(response);
    }
  }

  private _stop(message: string): void {
    this._worker?.terminate();
    this._worker = null;
    const pending = [...this._pending.values()];
    this._pending.clear();
    for (const entry of pending) {
      entry.reject(new BridgeError('connection', message));
    }
  }

  private _createWorker: (() => IFrameWorker) | null;
  private _worker: IFrameWorker | null = null;
  private _host: FrameHost | null = null;
  private _pending = new Map<number, { settle(response: FrameResponse): void; reject(error: unknown): void }>();
  private _counter = 0;
  private _isDisposed = false;
}

/** Types of {@link FrameCodec}. */
export namespace FrameCodec {
  /** Options of a codec. */
  export interface IOptions {
    /** Start a frame worker (in the browser: `createFrameWorker` of src/bridge/browser.ts). */
    createWorker?: () => IFrameWorker;
  }
}
