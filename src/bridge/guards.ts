/**
 * Checks of the messages the kernel sends (src/bridge/protocol.ts): one type guard per message
 * type, so the bridge narrows a reply instead of casting it, and a reply of the wrong shape is
 * refused with the field at fault named.
 *
 * The guards are built from field checks typed by the protocol's own interfaces: a shape lists
 * one check per field, and checks are invariant in their type. A message that gains, loses or
 * retypes a field, a column kind added to `ColumnKind`, or a message type added to
 * `KernelMessage` fails to compile here until its check follows.
 */
import type { JSONObject } from '@lumino/coreutils';

import { BridgeError } from './errors';
import {
  ColumnKind,
  FrameKind,
  IBridgeErrorDetail,
  IErrorMessage,
  IFetchChunk,
  IFetchDone,
  IFetchedColumn,
  IFetchFile,
  ICancelDone,
  IColumnDetails,
  IColumnFacts,
  IFrameInfo,
  IListedColumn,
  IScanDetails,
  IScanDone,
  IScanEngineInfo,
  IScanFacts,
  IScanProgress,
  ScanDouble,
  ScannedFrameKind,
  IListingMessage,
  IResultsAck,
  IResultsStored,
  ISkippedFrame,
  KernelMessage,
  KernelMessageOf,
  PROTOCOL_VERSION,
  TimeUnit
} from './protocol';
import {
  arrayOf,
  either,
  ICheck,
  isBoolean,
  isCount,
  isFiniteNumber,
  isRowOrNone,
  isKeyOf,
  isString,
  Known,
  literal,
  oneOf,
  optional,
  orNull,
  shape,
  withIndex
} from './check';
import { BRIDGE_TEXTS, type BridgeTexts } from './texts';

/** How the engine reads a column. */
export const isColumnKind: ICheck<ColumnKind> = oneOf<ColumnKind>({
  numeric: true,
  categorical: true,
  string: true,
  bool: true,
  datetime: true,
  timedelta: true,
  other: true
});

/** A listed column: name, the library's dtype and its kind. */
export const isListedColumn: ICheck<IListedColumn> = shape<IListedColumn>({
  name: isString,
  dtype: isString,
  kind: isColumnKind
});

/** The engine of a scanned frame and its version. */
export const isScanEngineInfo: ICheck<IScanEngineInfo> = shape<IScanEngineInfo>({
  name: oneOf<ScannedFrameKind>({ duckdb: true, spark: true }),
  version: isString
});

/** A frame of a listing. */
export const isFrameInfo: ICheck<IFrameInfo> = shape<IFrameInfo>({
  name: isString,
  kind: oneOf<FrameKind>({ pandas: true, polars: true, arrow: true, duckdb: true, spark: true }),
  rows: orNull(isCount),
  columns: arrayOf(isListedColumn),
  memory_bytes: orNull(isCount),
  engine: optional(isScanEngineInfo)
});

/** A frame the listing could not describe. */
export const isSkippedFrame: ICheck<ISkippedFrame> = shape<ISkippedFrame>({
  name: isString,
  reason: isString
});

/** A `listing` message (reply or push). */
export const isListingMessage: ICheck<IListingMessage> = shape<IListingMessage>({
  type: literal('listing'),
  request_id: orNull(isString),
  protocol: isCount,
  version: isString,
  frames: arrayOf(isFrameInfo),
  skipped: arrayOf(isSkippedFrame)
});

/** A `fetch_chunk` message (its bytes travel in the buffers, which the assembler checks). */
export const isFetchChunk: ICheck<IFetchChunk> = shape<IFetchChunk>({
  type: literal('fetch_chunk'),
  request_id: isString,
  name: isString,
  batch_index: isCount,
  batch_count: isCount,
  bytes_sent: isCount,
  bytes_total: isCount
});

/** A `fetch_file` message: the token of the handover file that holds the stream. */
export const isFetchFile: ICheck<IFetchFile> = shape<IFetchFile>({
  type: literal('fetch_file'),
  request_id: isString,
  name: isString,
  token: isString,
  bytes_total: isCount
});

/** How a fetched column was encoded, in a `fetch_done` message. */
export const isFetchedColumn: ICheck<IFetchedColumn> = shape<IFetchedColumn>({
  name: isString,
  dtype: isString,
  kind: oneOf<IFetchedColumn['kind']>({
    numeric: true,
    categorical: true,
    string: true,
    bool: true,
    datetime: true,
    timedelta: true
  }),
  arrow_type: isString,
  null_count: isCount,
  unit: optional(oneOf<TimeUnit>({ day: true, s: true, ms: true, us: true, ns: true })),
  timezone: optional(isString)
});

/** A `fetch_done` message. */
export const isFetchDone: ICheck<IFetchDone> = shape<IFetchDone>({
  type: literal('fetch_done'),
  request_id: isString,
  name: isString,
  rows: isCount,
  original_rows: isCount,
  sampled: isBoolean,
  seed: isCount,
  columns: arrayOf(isFetchedColumn),
  batch_count: isCount,
  bytes_total: isCount
});

/** A `results_ack` message. */
export const isResultsAck: ICheck<IResultsAck> = shape<IResultsAck>({
  type: literal('results_ack'),
  request_id: isString,
  analysis_id: isString,
  chunks_received: isCount,
  chunk_count: isCount
});

/** A `results_stored` message. */
export const isResultsStored: ICheck<IResultsStored> = shape<IResultsStored>({
  type: literal('results_stored'),
  request_id: isString,
  analysis_id: isString,
  rows: isCount
});

/** A double of a scan reply: a finite JSON number, or 'Infinity' / '-Infinity'. */
export const isScanDouble: ICheck<ScanDouble> = either<number, 'Infinity' | '-Infinity'>(
  isFiniteNumber,
  oneOf<'Infinity' | '-Infinity'>({ Infinity: true, '-Infinity': true })
);

/** One column's facts in a `scan_facts` message. */
export const isColumnFacts: ICheck<IColumnFacts> = shape<IColumnFacts>({
  name: isString,
  dtype: isString,
  kind: isColumnKind,
  missing_count: isCount,
  first_missing_row: isRowOrNone,
  count: isCount,
  levels: isCount,
  integer: orNull(isBoolean),
  rounded: isBoolean,
  infinite: orNull(shape<{ row: number; value: ScanDouble }>({ row: isCount, value: isScanDouble })),
  min: orNull(isScanDouble),
  max: orNull(isScanDouble)
});

/** A `scan_facts` message. */
export const isScanFacts: ICheck<IScanFacts> = shape<IScanFacts>({
  type: literal('scan_facts'),
  request_id: isString,
  name: isString,
  rows: isCount,
  engine: isScanEngineInfo,
  columns: arrayOf(isColumnFacts)
});

/** One column's details in a `scan_details` message. */
export const isColumnDetails: ICheck<IColumnDetails> = shape<IColumnDetails>({
  name: isString,
  order_statistics: arrayOf(isScanDouble),
  std: orNull(isFiniteNumber),
  skewness: orNull(isFiniteNumber),
  distinct: orNull(
    shape<{ values: (ScanDouble | string)[]; counts: number[] }>({
      values: arrayOf(either<ScanDouble, string>(isScanDouble, isString)),
      counts: arrayOf(isCount)
    })
  )
});

/** A `scan_details` message. */
export const isScanDetails: ICheck<IScanDetails> = shape<IScanDetails>({
  type: literal('scan_details'),
  request_id: isString,
  name: isString,
  columns: arrayOf(isColumnDetails)
});

/** A `scan_done` message. */
export const isScanDone: ICheck<IScanDone> = shape<IScanDone>({
  type: literal('scan_done'),
  request_id: isString,
  name: isString,
  rows: isCount,
  distinct_rows: isCount,
  batch_count: isCount,
  bytes_total: isCount,
  engine: isScanEngineInfo
});

/** A `scan_progress` message. */
export const isScanProgress: ICheck<IScanProgress> = shape<IScanProgress>({
  type: literal('scan_progress'),
  request_id: isString,
  name: isString,
  stage: isString
});

/** A `cancel_done` message. */
export const isCancelDone: ICheck<ICancelDone> = shape<ICancelDone>({
  type: literal('cancel_done'),
  request_id: isString,
  target: isString,
  cancelled: isBoolean
});

/** Where an error lies: a JSON object whose known fields have their declared types (others are free). */
export const isErrorDetail: ICheck<IBridgeErrorDetail> = withIndex<IBridgeErrorDetail>(
  shape<Known<IBridgeErrorDetail>>({
    frame: optional(isString),
    column: optional(isString),
    option: optional(isString),
    dtype: optional(isString),
    types: optional(arrayOf(isString)),
    fields: optional(arrayOf(isString)),
    field: optional(isString),
    traceback: optional(isString)
  })
);

/** An `error` message. */
export const isErrorMessage: ICheck<IErrorMessage> = shape<IErrorMessage>({
  type: literal('error'),
  request_id: orNull(isString),
  message: isString,
  detail: isErrorDetail
});

/** The check of every message type the kernel sends. */
export const KERNEL_MESSAGE_CHECKS: { readonly [T in KernelMessage['type']]: ICheck<KernelMessageOf<T>> } = {
  listing: isListingMessage,
  fetch_chunk: isFetchChunk,
  fetch_file: isFetchFile,
  fetch_done: isFetchDone,
  results_ack: isResultsAck,
  results_stored: isResultsStored,
  scan_facts: isScanFacts,
  scan_details: isScanDetails,
  scan_done: isScanDone,
  scan_progress: isScanProgress,
  cancel_done: isCancelDone,
  error: isErrorMessage
};

/** Whether a value names a message type the kernel sends. */
export function isKernelMessageType(value: unknown): value is KernelMessage['type'] {
  return isKeyOf(KERNEL_MESSAGE_CHECKS, value);
}

/**
 * A kernel message of a known type, checked. A listing of another protocol version is refused
 * for its version before its shape is looked at (the shape may have changed with it); any
 * other field that is not as protocol.ts says is refused by name. Both are 'protocol' errors,
 * told in `texts` (default: as written).
 */
export function readKernelMessage<T extends KernelMessage['type']>(
  type: T,
  data: JSONObject,
  texts: BridgeTexts = BRIDGE_TEXTS
): KernelMessageOf<T> {
  if (type === 'listing' && data.protocol !== PROTOCOL_VERSION) {
    throw new BridgeError('protocol', texts.protocolMismatch(data.protocol, PROTOCOL_VERSION));
  }
  const check: ICheck<KernelMessageOf<T>> = KERNEL_MESSAGE_CHECKS[type];
  if (check(data)) {
    return data;
  }
  const field = check.problem(data) ?? '';
  throw new BridgeError('protocol', texts.malformedMessage(type, field), { field });
}

