/**
 * The work of the bridge's frame worker, free of any worker API so jest and the in-process
 * fallback call it directly: collect the bytes of a fetched stream, decode them into column
 * views with their checklist facts, and encode multiplet tables. What it sends back lists the
 * buffers to transfer.
 */
import { columnStats } from '../panel/data/stats';
import { addColumn, TransferList } from '../worker/transfer';
import { fetchedFrame, decodePieces } from './decode';
import { encodeMultipletColumns } from './encode';
import { scannedGroups } from './scan-decode';
import { BridgeError, isBridgeError } from './errors';
import type { FrameRequest, FrameResponse } from './frame-protocol';
import { errorMessage } from '../engine/errors';

/** Serves frame requests; `reply` posts a response with the buffers it may transfer. */
export class FrameHost {
  /** Create a host that answers through `reply`. */
  constructor(private readonly _reply: (response: FrameResponse, transfer: ArrayBuffer[]) => void) {}

  /** Handle one request. */
  handle(request: FrameRequest): void {
    try {
      switch (request.type) {
        case 'open':
          this._streams.set(request.id, { total: request.total, parts: [], received: 0 });
          return;
        case 'bytes': {
          const stream = this._stream(request.id);
          stream.parts.push(new Uint8Array(request.bytes));
          stream.received += request.bytes.byteLength;
          return;
        }
        case 'drop':
          this._streams.delete(request.id);
          return;
        case 'decode-groups': {
          const groups = scannedGroups(decodePieces(this._complete(request)), request.done);
          const transfer: ArrayBuffer[] = [groups.weights.buffer as ArrayBuffer];
          for (const keys of groups.keys) {
            if (keys.kind !== 'texts') {
              transfer.push((keys.kind === 'bins' ? keys.codes : keys.values).buffer as ArrayBuffer);
              if (keys.valid !== null) {
                transfer.push(keys.valid.buffer as ArrayBuffer);
              }
            }
          }
          this._reply({ type: 'groups', id: request.id, groups }, transfer);
          return;
        }
        case 'decode': {
          const stream = this._stream(request.id);
          const pieces = this._complete(request);
          const frame = fetchedFrame(decodePieces(pieces), request.done, stream.received);
          const stats = frame.columns.map(column => columnStats(column));
          const transfer = new TransferList();
          for (const column of frame.columns) {
            addColumn(transfer, column);
          }
          this._reply({ type: 'decoded', id: request.id, frame, stats }, transfer.buffers);
          return;
        }
        case 'encode': {
          const bytes = encodeMultipletColumns(request.table);
          const own =
            bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? bytes : bytes.slice();
          this._reply({ type: 'encoded', id: request.id, bytes: own.buffer as ArrayBuffer }, [own.buffer as ArrayBuffer]);
          return;
        }
      }
    } catch (error) {
      this._streams.delete(request.id);
      const failure = isBridgeError(error) ? error : new BridgeError('protocol', errorMessage(error));
      this._reply(
        { type: 'failed', id: request.id, reason: failure.reason, message: failure.message, detail: { ...failure.detail } },
        []
      );
    }
  }

  /**
   * The bytes of a finished stream, checked complete and forgotten. A file's bytes arrive in
   * arbitrary cuts: joined into one buffer, a column of one record batch stays a view of it.
   * Comm pieces are whole IPC messages each.
   */
  private _complete(request: { id: number; done: { name: string }; pieces: boolean }): Uint8Array[] {
    const stream = this._stream(request.id);
    this._streams.delete(request.id);
    if (stream.received !== stream.total) {
      throw new BridgeError(
        'protocol',
        `The data of '${request.done.name}' arrived incomplete (${stream.received} of ${stream.total} bytes); fetch again.`,
        { frame: request.done.name }
      );
    }
    return request.pieces || stream.parts.length <= 1 ? stream.parts : [Private.join(stream.parts, stream.total)];
  }

  private _stream(id: number): Private.IStream {
    const stream = this._streams.get(id);
    if (stream === undefined) {
      throw new BridgeError('protocol', 'Bytes arrived for a fetch that was not opened; fetch again.');
    }
    return stream;
  }

  private _streams = new Map<number, Private.IStream>();
}

namespace Private {
  /** The bytes of one stream collected so far. */
  export interface IStream {
    total: number;
    parts: Uint8Array[];
    received: number;
  }

  /** One buffer holding `parts` in order. */
  export function join(parts: readonly Uint8Array[], total: number): Uint8Array {
    const whole = new Uint8Array(total);
    let at = 0;
    for (const part of parts) {
      whole.set(part, at);
      at += part.byteLength;
    }
    return whole;
  }
}
