/**
 * Messages between the page and the bridge's frame worker (src/bridge/frame-worker.ts), which
 * decodes fetched Arrow IPC streams and encodes multiplet tables off the main thread. Bytes
 * travel as transferred ArrayBuffers, never copied by structured clone; every request has an
 * id that its one reply echoes.
 */
import type { IColumnStats } from '../panel/data/stats';
import type { IScannedGroups } from '../engine/aggregate/scan';
import type { IBridgeErrorDetail, IFetchDone, IScanDone } from './protocol';
import type { BridgeFailure } from './errors';
import type { IFetchedFrame } from './decode';
import type { IMultipletColumns } from './encode';

/** Start collecting the bytes of stream `id`; `total` is its announced length. */
export interface IStreamOpen {
  type: 'open';
  id: number;
  total: number;
}

/** Consecutive bytes of stream `id` (the buffer is transferred and owned by the worker). */
export interface IStreamBytes {
  type: 'bytes';
  id: number;
  bytes: ArrayBuffer;
}

/** Every byte of stream `id` is in: decode it as the fetch `done` describes. */
export interface IStreamDecode {
  type: 'decode';
  id: number;
  done: IFetchDone;
  /** Whether the bytes were pieces of the comm (each a whole set of IPC messages) or a file's. */
  pieces: boolean;
}

/** Every byte of stream `id` is in: decode it as the grouped table of a scan that `done` ended. */
export interface IStreamDecodeGroups {
  type: 'decode-groups';
  id: number;
  done: IScanDone;
  pieces: boolean;
}

/** Forget stream `id` (the download failed or was abandoned). */
export interface IStreamDrop {
  type: 'drop';
  id: number;
}

/** Encode a multiplet table, given column-wise, as an Arrow IPC stream. */
export interface IEncodeRequest {
  type: 'encode';
  id: number;
  table: IMultipletColumns;
}

/** Any message the page sends to the frame worker. */
export type FrameRequest = IStreamOpen | IStreamBytes | IStreamDecode | IStreamDecodeGroups | IStreamDrop | IEncodeRequest;

/** The decoded frame of stream `id`, its typed arrays transferred, with each column's checklist facts. */
export interface IFrameDecoded {
  type: 'decoded';
  id: number;
  frame: IFetchedFrame;
  stats: IColumnStats[];
}

/** The key columns and weights of stream `id`'s grouped table, their typed arrays transferred. */
export interface IGroupsDecoded {
  type: 'groups';
  id: number;
  groups: IScannedGroups;
}

/** The IPC stream of an encode request, transferred. */
export interface IEncoded {
  type: 'encoded';
  id: number;
  bytes: ArrayBuffer;
}

/** A request failed; the error as the page rebuilds it. */
export interface IFrameFailed {
  type: 'failed';
  id: number;
  reason: BridgeFailure;
  message: string;
  detail: IBridgeErrorDetail;
}

/** Any message the frame worker sends. */
export type FrameResponse = IFrameDecoded | IGroupsDecoded | IEncoded | IFrameFailed;
