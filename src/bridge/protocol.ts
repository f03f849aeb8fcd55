/**
 * Messages of the `polyadic` comm between the side panel and the kernel (polyadic/bridge.py).
 *
 * Every message is the JSON `data` of a comm message with a `type` and a `request_id`; replies
 * echo the request's id, and pushes the kernel starts itself carry `request_id: null`. Arrow IPC
 * bytes travel only in the comm message's binary `buffers`, never in the JSON.
 *
 * Opening: the kernel registers the target when the `polyadic` package is imported, so the
 * front end imports it first: a silent execute request (no output, not stored in history, no
 * abort of queued cells) whose only user expression imports the package without binding a name
 * in the user's namespace (src/bridge/connector.ts), then opens the comm.
 * On open the kernel pushes a {@link IListingMessage}; it pushes another after every executed
 * cell whose listing differs from the last one sent.
 *
 * The front end sends these types as they are and reads every kernel message through the
 * checks of src/bridge/guards.ts, which are typed by these interfaces: changing a message here
 * fails to compile until its check follows.
 */
import type { JSONObject } from '@lumino/coreutils';

/** Name of the comm target (DESIGN.md glossary). */
export const COMM_TARGET = 'polyadic';

/** Version of this protocol; the kernel states its own in every listing. */
export const PROTOCOL_VERSION = 2;

/** Largest serialized record batch in one `fetch_chunk` (64 MiB). */
export const FETCH_BATCH_MAX_BYTES = 64 * 1024 * 1024;

/** Rows the kernel sends when a fetch names no `row_cap`; above it, a seeded sample. */
export const FETCH_ROW_CAP_DEFAULT = 2_000_000;

/**
 * Largest buffer in one `results_chunk` (8 MiB): the Jupyter server refuses browser→kernel
 * messages over 10 MiB, and the JSON part needs room too.
 */
export const RESULTS_CHUNK_MAX_BYTES = 8 * 1024 * 1024;

/** How the engine reads a column; `other` columns cannot be fetched. */
export type ColumnKind =
  | 'numeric'
  | 'categorical'
  | 'string'
  | 'bool'
  | 'datetime'
  | 'timedelta'
  | 'other';

/**
 * The library a frame comes from. `duckdb` (a DuckDBPyRelation) and `spark` (a PySpark
 * DataFrame) are scanned frames: their rows stay in that engine, which scans them.
 */
export type FrameKind = 'pandas' | 'polars' | 'arrow' | 'duckdb' | 'spark';

/** The frame kinds whose rows stay in an engine that scans them (DESIGN.md glossary: scanned frame). */
export type ScannedFrameKind = Extract<FrameKind, 'duckdb' | 'spark'>;

/** Whether frames of a kind are scanned frames. */
export function isScannedKind(kind: FrameKind): kind is ScannedFrameKind {
  return kind === 'duckdb' || kind === 'spark';
}

/** The product name of each scanning engine, as texts show it (a name: never translated). */
export const SCAN_ENGINE_NAMES: Readonly<Record<ScannedFrameKind, string>> = { duckdb: 'DuckDB', spark: 'Spark' };

/** The product name of a scanning engine named by the kernel (DuckDB unless it says Spark). */
export function scanEngineName(name: string | undefined): string {
  return name === 'spark' ? SCAN_ENGINE_NAMES.spark : SCAN_ENGINE_NAMES.duckdb;
}

/** Rows of a scanned frame the preview fetch samples (our choice): a seeded sample, never used by Run. */
export const SCAN_PREVIEW_ROWS = 100_000;

/** Distinct rows a group scan may return unless the request says otherwise (the kernel's default). */
export const SCAN_MAX_DISTINCT_ROWS_DEFAULT = 5_000_000;

/** The engine that scans a frame, and its version. */
export interface IScanEngineInfo {
  name: ScannedFrameKind;
  version: string;
}

/**
 * Resolution of a datetime or timedelta column: int64 counts of 's' … 'ns', or 'day' for a
 * date32 column, which keeps Arrow's own int32 days since the epoch.
 */
export type TimeUnit = 'day' | 's' | 'ms' | 'us' | 'ns';

/** One column as listed. */
export interface IListedColumn {
  /** Column name as the front end shows and requests it (non-string pandas keys as `str(key)`). */
  name: string;
  /** The source library's own type name, e.g. 'float64', 'Int64', 'category', 'String'. */
  dtype: string;
  kind: ColumnKind;
}

/** One frame in the kernel's namespace. */
export interface IFrameInfo {
  /** Variable name in the user's namespace. */
  name: string;
  kind: FrameKind;
  /** Rows; null for a scanned frame (counting them is a query or a job). */
  rows: number | null;
  columns: IListedColumn[];
  /** Approximate size in bytes (shallow: Python strings counted as pointers); null for a scanned frame. */
  memory_bytes: number | null;
  /** Only on scanned frames: the engine and its version. */
  engine?: IScanEngineInfo;
}

/** A frame that exists but could not be described, with the reason. */
export interface ISkippedFrame {
  name: string;
  reason: string;
}

// --- front end → kernel --------------------------------------------------------------------

/** Ask for the frames in the namespace; answered by a {@link IListingMessage}. */
export interface IListRequest {
  type: 'list';
  request_id: string;
}

/**
 * Ask for columns of a frame; answered by {@link IFetchChunk} messages, then
 * {@link IFetchDone} (or an {@link IErrorMessage} at any point).
 */
export interface IFetchRequest {
  type: 'fetch';
  request_id: string;
  /** Frame variable name, as listed. */
  name: string;
  /** Column names, as listed; omitted means every column. */
  columns?: string[];
  /** Most rows to send; above it a random sample of this many rows. Default {@link FETCH_ROW_CAP_DEFAULT}. */
  row_cap?: number;
  /** Seed of numpy's `default_rng` for the row sample; default 0. */
  sample_seed?: number;
  /**
   * How the stream travels: 'comm' (default) in {@link IFetchChunk} pieces; 'file' as a private
   * handover file announced by one {@link IFetchFile}, which the server's route
   * ({@link HANDOVER_ROUTE}) streams to the page. A kernel that cannot write one sends pieces.
   */
  delivery?: FetchDelivery;
}

/** How a fetched stream travels to the page. */
export type FetchDelivery = 'comm' | 'file';

/** Path of the Jupyter server's handover route under the base URL (polyadic/_server.py). */
export const HANDOVER_ROUTE = 'polyadic/handover';

/** Version of the handover route's replies that this front end reads. */
export const HANDOVER_ROUTE_VERSION = 1;

/** What `GET <base>/polyadic/handover` answers: whether the server can serve handover files. */
export interface IHandoverRouteInfo {
  version: number;
  available: boolean;
}

/**
 * One piece of a multiplet table's Arrow IPC stream (any cut of the bytes); `buffers[0]`
 * holds at most {@link RESULTS_CHUNK_MAX_BYTES} bytes. Once all `chunk_count` chunks are in,
 * their concatenation in `chunk_index` order is decoded. The table needs the fields of
 * `IMultipletRow` (src/engine/types.ts): `columns` as List<Utf8>, `order` an integer, the
 * measures as numbers; further columns (statistics) are kept as they are.
 */
export interface IResultsChunk {
  type: 'results_chunk';
  request_id: string;
  /** The analysis id of the record; `polyadic.results(id)` returns the table. */
  analysis_id: string;
  chunk_index: number;
  chunk_count: number;
  /** Plain JSON kept with the table (pandas `attrs['polyadic']`), e.g. label, units, frame. */
  meta?: JSONObject;
}

// --- scans of a scanned frame (front end → kernel) -----------------------------------------

/** What a binning rule needs of one numeric column beyond its facts. */
export type IDetailRequest = {
  name: string;
  /** 0-based ranks among the non-missing values. */
  ranks: number[];
  std: boolean;
  skewness: boolean;
  distinct: boolean;
};

/** One key of the group scan: the bin by `edges` (ascending, at least 2), or the value itself. */
export type IGroupKey = { name: string; edges: number[] } | { name: string; edges: null };

/** Ask for the facts of columns of a scanned frame; answered by {@link IScanFacts}. */
export interface IScanFactsRequest {
  type: 'scan';
  request_id: string;
  /** Frame variable name, as listed. */
  name: string;
  step: 'facts';
  columns: string[];
}

/** Ask for column details (order statistics, std, skewness, distinct values); answered by {@link IScanDetails}. */
export interface IScanDetailsRequest {
  type: 'scan';
  request_id: string;
  name: string;
  step: 'details';
  columns: IDetailRequest[];
}

/**
 * Ask for the grouped binned table: Arrow pieces or a handover file as a fetch's (echoing this
 * request), then {@link IScanDone}. Key columns `k0`, `k1`, … in request order (int32 for edge
 * keys, float64 for numeric and bool value keys, utf8 for text), then `weight` (int64 ≥ 1).
 */
export interface IScanGroupRequest {
  type: 'scan';
  request_id: string;
  name: string;
  step: 'group';
  columns: IGroupKey[];
  delivery?: FetchDelivery;
  /** Default {@link SCAN_MAX_DISTINCT_ROWS_DEFAULT}; above it an error with `detail.limit = 'distinct_rows'`. */
  max_distinct_rows?: number;
}

/** Any scan request. */
export type IScanRequest = IScanFactsRequest | IScanDetailsRequest | IScanGroupRequest;

/** Stop a running scan; answered by {@link ICancelDone} (the scan itself ends with an error, `detail.cancelled`). */
export interface ICancelRequest {
  type: 'cancel';
  request_id: string;
  /** The request_id of the running scan. */
  target: string;
}

/** Any message the front end sends. */
export type FrontEndRequest = IListRequest | IFetchRequest | IResultsChunk | IScanRequest | ICancelRequest;

// --- kernel → front end --------------------------------------------------------------------

/** The frames in the kernel's namespace: a reply to `list`, or a push (`request_id: null`). */
export interface IListingMessage {
  type: 'listing';
  request_id: string | null;
  /** The kernel's {@link PROTOCOL_VERSION}. */
  protocol: number;
  /** Version of the kernel's `polyadic` package. */
  version: string;
  /** Sorted by name. */
  frames: IFrameInfo[];
  skipped: ISkippedFrame[];
}

/**
 * One piece of the fetched Arrow IPC stream in `buffers[0]`. The pieces, concatenated in
 * `batch_index` order, are one stream (apache-arrow's `tableFromIPC` accepts the array of
 * pieces). Each piece holds whole IPC messages: the first also the schema and dictionaries,
 * every piece one record batch, the last also the end-of-stream marker.
 */
export interface IFetchChunk {
  type: 'fetch_chunk';
  request_id: string;
  name: string;
  batch_index: number;
  /** At least 1: an empty selection still sends one empty batch with the schema. */
  batch_count: number;
  /** Bytes sent so far, this piece included. */
  bytes_sent: number;
  /** Length of the whole stream. */
  bytes_total: number;
}

/**
 * The fetched stream waits in a handover file: `GET <base>/polyadic/handover/<token>` streams
 * it once (then the file is gone). Sent instead of the {@link IFetchChunk} pieces, before the
 * {@link IFetchDone}, whose `batch_count` is then 1 and `bytes_total` the file's length.
 */
export interface IFetchFile {
  type: 'fetch_file';
  request_id: string;
  name: string;
  /** The kernel's random token for the file (43 URL-safe characters). */
  token: string;
  /** Length of the file. */
  bytes_total: number;
}

/**
 * How a fetched column was encoded. Numbers keep their width (float16 arrives as float32,
 * decimals as float64); categoricals and strings arrive as Dictionary<Int32, Utf8>; datetimes
 * and timedeltas as Int64 counts of `unit`, except date32 columns, which arrive unchanged as
 * days (`unit` 'day'), as a file reader reads them. Missing values are nulls.
 */
export interface IFetchedColumn {
  name: string;
  /** The source library's type name, as listed. */
  dtype: string;
  /** Never 'other': such columns are refused with an error. */
  kind: Exclude<ColumnKind, 'other'>;
  /** Arrow type as sent, in pyarrow's spelling, e.g. 'int64', 'float', 'dictionary<…>'. */
  arrow_type: string;
  null_count: number;
  /** For `datetime` and `timedelta` columns. */
  unit?: TimeUnit;
  /** For time-zone-aware datetimes: the values are UTC instants, shown in this zone. */
  timezone?: string;
}

/** The last message of a fetch. */
export interface IFetchDone {
  type: 'fetch_done';
  request_id: string;
  name: string;
  /** Rows sent. */
  rows: number;
  /** Rows of the frame. */
  original_rows: number;
  /** Whether `rows` is a random sample of `original_rows` (frame row order kept). */
  sampled: boolean;
  /** Seed of the sample (reported even when not sampled). */
  seed: number;
  columns: IFetchedColumn[];
  batch_count: number;
  bytes_total: number;
}

/** A results chunk arrived; more are expected. */
export interface IResultsAck {
  type: 'results_ack';
  request_id: string;
  analysis_id: string;
  chunks_received: number;
  chunk_count: number;
}

/** The last results chunk arrived and the table was decoded and stored. */
export interface IResultsStored {
  type: 'results_stored';
  request_id: string;
  analysis_id: string;
  /** Multiplets in the stored table. */
  rows: number;
}

/**
 * A request failed. `message` is a sentence for the user; `detail` locates the problem
 * (`frame`, `column`, `option`, `types` found in a mixed column, `fields` missing from a
 * results table, or `traceback` for an unexpected failure).
 */
export interface IErrorMessage {
  type: 'error';
  request_id: string | null;
  message: string;
  detail: IBridgeErrorDetail;
}

/** Where a bridge error lies; every field optional. */
export interface IBridgeErrorDetail {
  frame?: string;
  column?: string;
  option?: string;
  dtype?: string;
  types?: string[];
  fields?: string[];
  field?: string;
  traceback?: string;
  [key: string]: unknown;
}

/** A double that may be infinite (JSON has no Inf); NaN never appears (NaN is missing). */
export type ScanDouble = number | 'Infinity' | '-Infinity';

/** What a scan knows of one column before binning. */
export interface IColumnFacts {
  name: string;
  /** The engine's own type name (DuckDB `DOUBLE`, Spark `double`, …). */
  dtype: string;
  kind: ColumnKind;
  /** Nulls, plus NaN in float columns. */
  missing_count: number;
  /** 0-based position in the frame's row order, −1 if none. */
  first_missing_row: number;
  /** Non-missing values. */
  count: number;
  /** Distinct non-missing values, counted only up to 11; −0 and 0 are one value. */
  levels: number;
  /** Numeric and bool columns (bool read as 0/1): numpy would see an integer dtype; null or false for text. */
  integer: boolean | null;
  rounded: boolean;
  /** The first ±Inf in row order. */
  infinite: { row: number; value: ScanDouble } | null;
  min: ScanDouble | null;
  max: ScanDouble | null;
}

/** The answer to a facts scan. */
export interface IScanFacts {
  type: 'scan_facts';
  request_id: string;
  name: string;
  rows: number;
  engine: IScanEngineInfo;
  columns: IColumnFacts[];
}

/** The answer for one {@link IDetailRequest}. */
export interface IColumnDetails {
  name: string;
  /** The rank-th smallest non-missing value, per requested rank. */
  order_statistics: ScanDouble[];
  /** Exactly numpy.std of the non-missing values as float64 in row order. */
  std: number | null;
  /** Exactly numpy.mean(((x − x.mean()) / std) ** 3); null if not asked or std is 0. */
  skewness: number | null;
  /** Ascending numbers (−0 as 0) or texts by code point, with the rows holding each. */
  distinct: { values: (ScanDouble | string)[]; counts: number[] } | null;
}

/** The answer to a details scan. */
export interface IScanDetails {
  type: 'scan_details';
  request_id: string;
  name: string;
  columns: IColumnDetails[];
}

/** The last message of a group scan, after its Arrow pieces or handover file. */
export interface IScanDone {
  type: 'scan_done';
  request_id: string;
  name: string;
  /** Input rows. */
  rows: number;
  distinct_rows: number;
  batch_count: number;
  bytes_total: number;
  engine: IScanEngineInfo;
}

/** A stage of a running scan, for the run line. */
export interface IScanProgress {
  type: 'scan_progress';
  request_id: string;
  name: string;
  stage: string;
}

/** The answer to a cancel: whether a scan was running and was stopped. */
export interface ICancelDone {
  type: 'cancel_done';
  request_id: string;
  target: string;
  cancelled: boolean;
}

/** Any message the kernel sends. */
export type KernelMessage =
  | IListingMessage
  | IFetchChunk
  | IFetchFile
  | IFetchDone
  | IResultsAck
  | IResultsStored
  | IScanFacts
  | IScanDetails
  | IScanDone
  | IScanProgress
  | ICancelDone
  | IErrorMessage;

/** The kernel message of one type. */
export type KernelMessageOf<T extends KernelMessage['type']> = Extract<KernelMessage, { type: T }>;

/**
 * The message types that answer each request: any number of `progress` replies, then one
 * `final` reply; an {@link IErrorMessage} may end any request instead.
 */
export interface IRequestReplies {
  list: { progress: never; final: 'listing' };
  fetch: { progress: 'fetch_chunk' | 'fetch_file'; final: 'fetch_done' };
  results_chunk: { progress: never; final: 'results_ack' | 'results_stored' };
  scan: { progress: 'fetch_chunk' | 'fetch_file' | 'scan_progress'; final: 'scan_facts' | 'scan_details' | 'scan_done' };
  cancel: { progress: never; final: 'cancel_done' };
}
