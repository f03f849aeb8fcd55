/**
 * The front-end side of the kernel bridge: one {@link KernelBridge} per notebook session, what
 * the panel calls. It lists the kernel's dataframes, fetches columns as Arrow IPC pieces and
 * sends multiplet tables back in chunks, checking its arguments first (the error names the
 * option at fault).
 *
 * The parts behind it: {@link BridgeConnection} (src/bridge/connection.ts) follows the session
 * and says where the bridge stands; {@link RequestChannel} (src/bridge/channel.ts) sends the
 * typed requests and matches their replies, read through the guards of src/bridge/guards.ts;
 * src/bridge/texts.ts holds what the user is told.
 */
import type { JSONObject } from '@lumino/coreutils';
import type { IDisposable } from '@lumino/disposable';
import { ISignal, Signal } from '@lumino/signaling';

import type { IMultipletRow } from '../engine/types';
import { BridgeConnection, IBridgeStatus, IListing } from './connection';
import { FetchAssembler, IFetchedFrame, IFetchProgress } from './decode';
import { encodeMultiplets, splitBytes } from './encode';
import { BridgeError, isBridgeError } from './errors';
import type { IBridgeSession } from './kernel';
import { IResultsAck, IResultsStored, RESULTS_CHUNK_MAX_BYTES } from './protocol';
import {
  badChunkBytes,
  badRowCap,
  badSeed,
  BAD_ANALYSIS_ID,
  COLUMNS_NOT_NAMES,
  EMPTY_FRAME_NAME,
  fetchRequest,
  LISTING_REQUEST,
  META_NOT_OBJECT,
  noChunkSent,
  noColumns,
  notStored,
  resultsRequest,
  storedEarly,
  storedOtherRows
} from './texts';

export type { BridgeState, IBridgeStatus, IListing } from './connection';

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
    this._connection = new BridgeConnection({ sessionContext: options.sessionContext });
    this._connection.statusChanged.connect((_, status) => this._statusChanged.emit(status), this);
    this._connection.framesChanged.connect((_, listing) => this._framesChanged.emit(listing), this);
    options.sessionContext.disposed.connect(this.dispose, this);
  }

  /** The current state and its message. */
  get status(): IBridgeStatus {
    return this._connection.status;
  }

  /** Emitted whenever {@link status} changes. */
  get statusChanged(): ISignal<this, IBridgeStatus> {
    return this._statusChanged;
  }

  /** The latest listing of the kernel's dataframes; null until the bridge is ready. */
  get listing(): IListing | null {
    return this._connection.listing;
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
  async refresh(): Promise<IListing> {
    return this._connection.readyChannel().request(
      { type: 'list' },
      { label: LISTING_REQUEST, final: listing => this._connection.takeListing(listing) }
    );
  }

  /**
   * Fetch columns of a frame (all when `columns` is omitted). Resolves with engine column
   * views and what the panel and the record state: rows, sample, seed, time units.
   */
  async fetch(name: string, columns?: readonly string[], options: IFetchOptions = {}): Promise<IFetchedFrame> {
    const problem = Private.checkFetch(name, columns, options);
    if (problem !== null) {
      throw problem;
    }
    const channel = this._connection.readyChannel();
    const assembler = new FetchAssembler(name);
    const fetching = channel.request(
      {
        type: 'fetch',
        name,
        ...(columns !== undefined ? { columns: [...columns] } : {}),
        ...(options.rowCap !== undefined ? { row_cap: options.rowCap } : {}),
        ...(options.seed !== undefined ? { sample_seed: options.seed } : {})
      },
      {
        label: fetchRequest(name),
        progress: (chunk, buffers) => {
          const progress = assembler.add(chunk, buffers[0]);
          options.onProgress?.(progress);
        },
        final: done => assembler.finish(done)
      }
    );
    fetching.catch(error => {
      // The listing the user chose from is out of date; show the current one.
      if (isBridgeError(error) && error.reason === 'kernel' && error.detail.frame !== undefined && error.detail.column === undefined) {
        this.refresh().catch(() => undefined);
      }
    });
    return fetching;
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
          throw new BridgeError('protocol', storedEarly(analysisId, index + 1, chunks.length), { option: 'analysisId' });
        }
        if (reply.rows !== rows.length) {
          throw new BridgeError('protocol', storedOtherRows(analysisId, reply.rows, rows.length), { option: 'analysisId' });
        }
        return { analysisId, rows: reply.rows, chunks: chunks.length, bytes: bytes.byteLength };
      }
      if (last) {
        throw new BridgeError('protocol', notStored(analysisId), { option: 'analysisId' });
      }
    }
    // splitBytes always returns at least one chunk, so the loop has returned or thrown.
    throw new BridgeError('protocol', noChunkSent(analysisId));
  }

  /** Start over with the current kernel: re-import `polyadic` and re-open the comm (after `pip install`). */
  reconnect(): Promise<void> {
    return this._connection.reconnect();
  }

  /** Reject every pending request, close the comm and stop following the session. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._connection.dispose();
    this._isDisposed = true;
    Signal.disconnectReceiver(this);
    Signal.clearData(this);
  }

  /** Send one results chunk; resolves with the kernel's ack or stored reply. */
  private async _sendResultsChunk(
    analysisId: string,
    index: number,
    count: number,
    chunk: Uint8Array,
    meta: JSONObject | undefined
  ): Promise<IResultsAck | IResultsStored> {
    return this._connection.readyChannel().request(
      {
        type: 'results_chunk',
        analysis_id: analysisId,
        chunk_index: index,
        chunk_count: count,
        ...(meta !== undefined && index === 0 ? { meta } : {})
      },
      { label: resultsRequest(analysisId), buffers: [Private.ownBuffer(chunk)], final: reply => reply }
    );
  }

  private _connection: BridgeConnection;
  private _isDisposed = false;
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
  /** Check the arguments of a fetch; the error names the option at fault. */
  export function checkFetch(
    name: unknown,
    columns: readonly unknown[] | undefined,
    options: IFetchOptions
  ): BridgeError | null {
    if (typeof name !== 'string' || name === '') {
      return usage(EMPTY_FRAME_NAME, 'name');
    }
    if (columns !== undefined) {
      if (!Array.isArray(columns) || columns.some(column => typeof column !== 'string')) {
        return usage(COLUMNS_NOT_NAMES, 'columns');
      }
      if (columns.length === 0) {
        return usage(noColumns(name), 'columns');
      }
    }
    const { rowCap, seed } = options;
    if (rowCap !== undefined && (!Number.isSafeInteger(rowCap) || rowCap < 1)) {
      return usage(badRowCap(rowCap), 'rowCap');
    }
    if (seed !== undefined && (!Number.isSafeInteger(seed) || seed < 0)) {
      return usage(badSeed(seed), 'seed');
    }
    return null;
  }

  /** Check the arguments of sendResults; the error names the option at fault. */
  export function checkResults(analysisId: unknown, options: ISendResultsOptions): BridgeError | null {
    if (typeof analysisId !== 'string' || analysisId === '' || analysisId.length > 200) {
      return usage(BAD_ANALYSIS_ID, 'analysisId');
    }
    const { chunkBytes, meta } = options;
    if (
      chunkBytes !== undefined &&
      (!Number.isSafeInteger(chunkBytes) || chunkBytes < 1 || chunkBytes > RESULTS_CHUNK_MAX_BYTES)
    ) {
      return usage(badChunkBytes(chunkBytes, RESULTS_CHUNK_MAX_BYTES), 'chunkBytes');
    }
    if (meta !== undefined && (typeof meta !== 'object' || meta === null || Array.isArray(meta))) {
      return usage(META_NOT_OBJECT, 'meta');
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
}
