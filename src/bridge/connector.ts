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

import { errorMessage } from '../engine/errors';
import type { IMultipletRow } from '../engine/types';
import { BridgeConnection, IBridgeStatus, IListing } from './connection';
import { rememberStats } from '../panel/data/stats';
import { FetchAssembler, IFetchedFrame, IFetchProgress } from './decode';
import { MultipletColumnsBuilder, splitBytes } from './encode';
import { BridgeError, isBridgeError } from './errors';
import type { IBridgeSession } from './kernel';
import type { IScannedGroups } from '../engine/aggregate/scan';
import {
  FetchDelivery,
  IDetailRequest,
  IFetchDone,
  IGroupKey,
  IResultsAck,
  IResultsStored,
  IScanDetails,
  IScanDone,
  IScanFacts,
  KernelMessage,
  RESULTS_CHUNK_MAX_BYTES
} from './protocol';
import { FrameCodec, IFetchTransport, IFrameStream } from './transport';
import { BridgeTexts } from './texts';
import { translationBundle, type ITranslator } from '../translation';

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

/** Options of the scan requests of {@link KernelBridge}. */
export interface IScanCallOptions {
  /** Called with each stage the kernel reports (`scan_progress`). */
  onStage?: (stage: string) => void;
  /** Called with the request's id once sent (what {@link KernelBridge.cancelScan} names). */
  sent?: (requestId: string) => void;
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
    this._texts = new BridgeTexts(translationBundle(options.translator));
    this._connection = new BridgeConnection({ sessionContext: options.sessionContext, texts: this._texts });
    this._transport = options.transport ?? Private.inProcess();
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
      { label: this._texts.LISTING_REQUEST, final: listing => this._connection.takeListing(listing) }
    );
  }

  /**
   * Fetch columns of a frame (all when `columns` is omitted). Resolves with engine column
   * views and what the panel and the record state: rows, sample, seed, time units.
   */
  async fetch(name: string, columns?: readonly string[], options: IFetchOptions = {}): Promise<IFetchedFrame> {
    const problem = Private.checkFetch(name, columns, options, this._texts);
    if (problem !== null) {
      throw problem;
    }
    const route = this._transport.route;
    // The server's route, unless it failed this session before (a kernel on another machine).
    const byFile = route !== null && this._fileWorks && (await route.available());
    const fetching = this._fetchOnce(name, columns, options, byFile ? 'file' : 'comm').catch(error => {
      if (byFile && error instanceof Private.FileFailed) {
        this._fileWorks = false;
        return this._fetchOnce(name, columns, options, 'comm');
      }
      throw error;
    });
    fetching.catch(error => {
      // The listing the user chose from is out of date; show the current one.
      if (isBridgeError(error) && error.reason === 'kernel' && error.detail.frame !== undefined && error.detail.column === undefined) {
        this.refresh().catch(() => undefined);
      }
    });
    return fetching;
  }

  /** One fetch request; with 'file', the bytes come from the server's route when the kernel wrote a file. */
  private async _fetchOnce(
    name: string,
    columns: readonly string[] | undefined,
    options: IFetchOptions,
    delivery: FetchDelivery
  ): Promise<IFetchedFrame> {
    const channel = this._connection.readyChannel();
    Private.mark('request');
    const assembler = new FetchAssembler(name);
    const codec = this._transport.codec;
    let stream: IFrameStream | null = null;
    let file: { token: string; total: number } | null = null;
    let done: IFetchDone;
    try {
      done = await channel.request(
        {
          type: 'fetch',
          name,
          ...(columns !== undefined ? { columns: [...columns] } : {}),
          ...(options.rowCap !== undefined ? { row_cap: options.rowCap } : {}),
          ...(options.seed !== undefined ? { sample_seed: options.seed } : {}),
          ...(delivery === 'file' ? { delivery } : {})
        },
        {
          label: this._texts.fetchRequest(name),
          progress: (reply, buffers) => {
            if (reply.type === 'fetch_file') {
              file = { token: reply.token, total: reply.bytes_total };
              return;
            }
            const { progress, piece } = assembler.accept(reply, buffers[0]);
            stream ??= codec.open(progress.bytesTotal);
            // JupyterLab may still hold the message: its bytes are copied, never moved.
            stream.push(piece, false);
            options.onProgress?.(progress);
          },
          final: reply => reply
        }
      );
    } catch (error) {
      (stream as IFrameStream | null)?.drop();
      throw error;
    }
    Private.mark('kernel-done');
    let decoded;
    const announced = file as { token: string; total: number } | null;
    if (announced !== null) {
      decoded = await this._download(name, announced, done, options, stream => stream.decode(done, false));
    } else {
      assembler.verify(done);
      stream ??= codec.open(0);
      decoded = await (stream as IFrameStream).decode(done, true);
    }
    Private.mark('decoded');
    decoded.frame.columns.forEach((column, i) => rememberStats(column, decoded.stats[i]));
    return decoded.frame;
  }

  /** Stream a handover file from the server into the codec; a failure of the route is a {@link Private.FileFailed}. */
  private async _download<T>(
    name: string,
    file: { token: string; total: number },
    done: { bytes_total: number },
    options: IFetchOptions,
    finish: (stream: IFrameStream) => Promise<T>
  ): Promise<T> {
    const route = this._transport.route;
    const stream = this._transport.codec.open(file.total);
    let received = 0;
    try {
      if (route === null) {
        throw new BridgeError('connection', 'No server route to fetch the data from.');
      }
      await route.download(file.token, bytes => {
        received += bytes.byteLength;
        // The body's parts belong to this reader alone: moved to the worker, not copied.
        stream.push(bytes, true);
        options.onProgress?.({
          frame: name,
          piecesReceived: 0,
          pieceCount: 1,
          bytesReceived: Math.min(received, file.total),
          bytesTotal: file.total
        });
      });
    } catch (error) {
      stream.drop();
      throw new Private.FileFailed(error);
    }
    Private.mark('received');
    if (received !== file.total || done.bytes_total !== file.total) {
      stream.drop();
      throw new Private.FileFailed(new BridgeError('connection', `${received} of ${file.total} bytes arrived.`));
    }
    return finish(stream);
  }

  /** The facts of columns of a scanned frame (scan-protocol.md, facts step). */
  scanFacts(name: string, columns: readonly string[], options: IScanCallOptions = {}): Promise<IScanFacts> {
    return this._connection.readyChannel().request(
      { type: 'scan', name, step: 'facts', columns: [...columns] },
      {
        label: this._texts.scanRequest(name),
        background: true,
        sent: options.sent,
        progress: reply => Private.stage(reply, options),
        final: reply => (reply.type === 'scan_facts' ? reply : Private.wrongReply(reply.type, 'scan_facts'))
      }
    );
  }

  /** The details binning rules need of numeric columns of a scanned frame (details step). */
  scanDetails(name: string, columns: readonly IDetailRequest[], options: IScanCallOptions = {}): Promise<IScanDetails> {
    return this._connection.readyChannel().request(
      { type: 'scan', name, step: 'details', columns: columns.map(column => ({ ...column, ranks: [...column.ranks] })) },
      {
        label: this._texts.scanRequest(name),
        background: true,
        sent: options.sent,
        progress: reply => Private.stage(reply, options),
        final: reply => (reply.type === 'scan_details' ? reply : Private.wrongReply(reply.type, 'scan_details'))
      }
    );
  }

  /**
   * The grouped binned table of a scanned frame (group step): the Arrow stream through the same
   * delivery as a fetch (the server's handover route, else comm pieces), decoded in the frame
   * worker into key columns and weights.
   */
  async scanGroup(
    name: string,
    keys: readonly IGroupKey[],
    options: IScanCallOptions & { maxDistinctRows?: number } = {}
  ): Promise<{ done: IScanDone; groups: IScannedGroups }> {
    const route = this._transport.route;
    const byFile = route !== null && this._fileWorks && (await route.available());
    try {
      return await this._scanGroupOnce(name, keys, options, byFile ? 'file' : 'comm');
    } catch (error) {
      if (byFile && error instanceof Private.FileFailed) {
        this._fileWorks = false;
        return this._scanGroupOnce(name, keys, options, 'comm');
      }
      throw error;
    }
  }

  /** Ask the kernel to stop the running scan `target` of frame `name`; resolves with whether one was stopped. */
  cancelScan(name: string, target: string): Promise<boolean> {
    return this._connection.readyChannel().request(
      { type: 'cancel', target },
      { label: this._texts.cancelRequest(name), final: reply => reply.cancelled }
    );
  }

  private async _scanGroupOnce(
    name: string,
    keys: readonly IGroupKey[],
    options: IScanCallOptions & { maxDistinctRows?: number },
    delivery: FetchDelivery
  ): Promise<{ done: IScanDone; groups: IScannedGroups }> {
    const channel = this._connection.readyChannel();
    const assembler = new FetchAssembler(name);
    const codec = this._transport.codec;
    let stream: IFrameStream | null = null;
    let file: { token: string; total: number } | null = null;
    let done: IScanDone;
    try {
      done = await channel.request(
        {
          type: 'scan',
          name,
          step: 'group',
          columns: keys.map(key => (key.edges === null ? { name: key.name, edges: null } : { name: key.name, edges: [...key.edges] })),
          ...(options.maxDistinctRows !== undefined ? { max_distinct_rows: options.maxDistinctRows } : {}),
          ...(delivery === 'file' ? { delivery } : {})
        },
        {
          label: this._texts.scanRequest(name),
          background: true,
          sent: options.sent,
          progress: (reply, buffers) => {
            if (reply.type === 'scan_progress') {
              options.onStage?.(reply.stage);
              return;
            }
            if (reply.type === 'fetch_file') {
              file = { token: reply.token, total: reply.bytes_total };
              return;
            }
            const { piece } = assembler.accept(reply, buffers[0]);
            stream ??= codec.open(reply.bytes_total);
            stream.push(piece, false);
          },
          final: reply => (reply.type === 'scan_done' ? reply : Private.wrongReply(reply.type, 'scan_done'))
        }
      );
    } catch (error) {
      (stream as IFrameStream | null)?.drop();
      throw error;
    }
    const announced = file as { token: string; total: number } | null;
    if (announced !== null) {
      const groups = await this._download(name, announced, done, {}, opened => opened.decodeGroups(done, false));
      return { done, groups };
    }
    assembler.verify(done);
    stream ??= codec.open(0);
    return { done, groups: await (stream as IFrameStream).decodeGroups(done, true) };
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
    const problem = Private.checkResults(analysisId, options, this._texts);
    if (problem !== null) {
      throw problem;
    }
    // Read in slices with a pause between them, so a table of many multiplets never holds the
    // page; the Arrow encoding and its UTF-8 run in the frame worker.
    const builder = new MultipletColumnsBuilder(rows.length);
    while (builder.done < rows.length) {
      const until = Date.now() + Private.SLICE_MS;
      while (builder.done < rows.length && Date.now() < until) {
        builder.add(rows, builder.done + Private.SLICE_ROWS);
      }
      if (builder.done < rows.length) {
        await Private.pause();
      }
    }
    const bytes = await this._transport.codec.encode(builder.finish());
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
          throw new BridgeError('protocol', this._texts.storedEarly(analysisId, index + 1, chunks.length), { option: 'analysisId' });
        }
        if (reply.rows !== rows.length) {
          throw new BridgeError('protocol', this._texts.storedOtherRows(analysisId, reply.rows, rows.length), { option: 'analysisId' });
        }
        return { analysisId, rows: reply.rows, chunks: chunks.length, bytes: bytes.byteLength };
      }
      if (last) {
        throw new BridgeError('protocol', this._texts.notStored(analysisId), { option: 'analysisId' });
      }
    }
    // splitBytes always returns at least one chunk, so the loop has returned or thrown.
    throw new BridgeError('protocol', this._texts.noChunkSent(analysisId));
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
      { label: this._texts.resultsRequest(analysisId), buffers: [Private.ownBuffer(chunk)], final: reply => reply }
    );
  }

  private readonly _texts: BridgeTexts;
  private _connection: BridgeConnection;
  private _transport: IFetchTransport;
  private _fileWorks = true;
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
    /** How bytes move (the page's frame worker and server route); default in process, comm only. */
    transport?: IFetchTransport;
    /** Translates what the bridge tells the user (default: as written). */
    translator?: ITranslator;
  }
}

/** Module-private helpers. */
namespace Private {
  /** Rows read between two looks at the clock, and the longest slice of reading (ms). */
  export const SLICE_ROWS = 2048;
  export const SLICE_MS = 25;

  /** Let the page handle input and paint before the next slice. */
  export function pause(): Promise<void> {
    return new Promise(resolve => setTimeout(resolve, 0));
  }

  /**
   * A performance mark `polyadic:fetch:<step>` (request, kernel-done, received, decoded), so a
   * profile or the handover benchmark (bench/bridge/browser.mjs) sees where a fetch's time goes.
   */
  export function mark(step: string): void {
    if (typeof performance !== 'undefined' && typeof performance.mark === 'function') {
      performance.mark(`polyadic:fetch:${step}`);
    }
  }

  /** The handover route failed for this fetch: fetch again over the comm. */
  /** Pass a scan's stage on (its other progress replies carry the group table's bytes). */
  export function stage(reply: KernelMessage, options: IScanCallOptions): void {
    if (reply.type === 'scan_progress') {
      options.onStage?.(reply.stage);
    }
  }

  /** A final reply of another step than the one asked. */
  export function wrongReply(type: string, expected: string): never {
    throw new BridgeError('protocol', `The kernel answered a scan with '${type}' where '${expected}' was expected.`);
  }

  export class FileFailed extends Error {
    constructor(readonly cause: unknown) {
      super(errorMessage(cause));
    }
  }

  let shared: IFetchTransport | null = null;

  /** The transport of bridges made without one: decoding in process, the comm only. */
  export function inProcess(): IFetchTransport {
    shared ??= { codec: new FrameCodec(), route: null };
    return shared;
  }

  /** Check the arguments of a fetch; the error names the option at fault. */
  export function checkFetch(
    name: unknown,
    columns: readonly unknown[] | undefined,
    options: IFetchOptions,
    texts: BridgeTexts
  ): BridgeError | null {
    if (typeof name !== 'string' || name === '') {
      return usage(texts.EMPTY_FRAME_NAME, 'name');
    }
    if (columns !== undefined) {
      if (!Array.isArray(columns) || columns.some(column => typeof column !== 'string')) {
        return usage(texts.COLUMNS_NOT_NAMES, 'columns');
      }
      if (columns.length === 0) {
        return usage(texts.noColumns(name), 'columns');
      }
    }
    const { rowCap, seed } = options;
    if (rowCap !== undefined && (!Number.isSafeInteger(rowCap) || rowCap < 1)) {
      return usage(texts.badRowCap(rowCap), 'rowCap');
    }
    if (seed !== undefined && (!Number.isSafeInteger(seed) || seed < 0)) {
      return usage(texts.badSeed(seed), 'seed');
    }
    return null;
  }

  /** Check the arguments of sendResults; the error names the option at fault. */
  export function checkResults(analysisId: unknown, options: ISendResultsOptions, texts: BridgeTexts): BridgeError | null {
    if (typeof analysisId !== 'string' || analysisId === '' || analysisId.length > 200) {
      return usage(texts.BAD_ANALYSIS_ID, 'analysisId');
    }
    const { chunkBytes, meta } = options;
    if (
      chunkBytes !== undefined &&
      (!Number.isSafeInteger(chunkBytes) || chunkBytes < 1 || chunkBytes > RESULTS_CHUNK_MAX_BYTES)
    ) {
      return usage(texts.badChunkBytes(chunkBytes, RESULTS_CHUNK_MAX_BYTES), 'chunkBytes');
    }
    if (meta !== undefined && (typeof meta !== 'object' || meta === null || Array.isArray(meta))) {
      return usage(texts.META_NOT_OBJECT, 'meta');
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
