/**
 * The request channel over one open `polyadic` comm: it sends requests typed by the protocol's
 * unions (src/bridge/protocol.ts), matches the kernel's replies to them by request id, reads
 * every reply through its type guard (src/bridge/guards.ts) and settles each request once.
 *
 * Why no request can hang: a request is settled by its final reply, by an error reply, by a
 * reply that does not follow the protocol, by the kernel going idle after handling it without
 * a final reply (IOPub delivers a request's replies before the idle status that ends it), by a
 * cancelled future (restart), or by {@link RequestChannel.close}, which the connection calls
 * whenever it stops using the comm.
 */
import type { KernelMessage as JupyterMessage } from '@jupyterlab/services';
import { JSONObject, UUID } from '@lumino/coreutils';

import { isKeyOf } from './check';
import { BridgeError } from './errors';
import { readKernelMessage } from './guards';
import type { IBridgeComm } from './kernel';
import type { FrontEndRequest, IListingMessage, IRequestReplies, KernelMessageOf } from './protocol';
import { BRIDGE_TEXTS, BridgeTexts, Interruption, IRequestLabel } from './texts';
import { errorMessage } from '../engine/errors';

/** The type of a request the front end sends. */
export type RequestType = FrontEndRequest['type'];

/** Every request without its `request_id`, which the channel assigns. */
export type RequestBodies = FrontEndRequest extends infer M ? (M extends unknown ? Omit<M, 'request_id'> : never) : never;

/** A request of type `K` without its `request_id`. */
export type RequestBody<K extends RequestType> = Extract<RequestBodies, { type: K }>;

/** A reply that reports progress on a request of type `K` (a piece of a fetch). */
export type ProgressReply<K extends RequestType> = KernelMessageOf<IRequestReplies[K]['progress']>;

/** The reply that completes a request of type `K`. */
export type FinalReply<K extends RequestType> = KernelMessageOf<IRequestReplies[K]['final']>;

/** Sends requests on one comm and matches the kernel's replies to them. */
export class RequestChannel {
  /** Take over a comm's messages (`onMsg`); the comm's opening and closing stay with the caller. */
  constructor(options: RequestChannel.IOptions) {
    this._comm = options.comm;
    this._texts = options.texts ?? BRIDGE_TEXTS;
    this._onListing = options.onListing;
    this._onProtocolError = options.onProtocolError;
    this._comm.onMsg = msg => this._onMessage(msg);
  }

  /** The comm the channel sends on. */
  get comm(): IBridgeComm {
    return this._comm;
  }

  /** Whether {@link close} was called. */
  get isClosed(): boolean {
    return this._isClosed;
  }

  /** How many requests wait for their final reply. */
  get pendingCount(): number {
    return this._pending.size;
  }

  /**
   * Send a request and resolve with what `options.final` makes of its final reply. Replies are
   * checked against the protocol before any handler sees them; an error reply rejects with a
   * 'kernel' {@link BridgeError} carrying the kernel's message and detail.
   */
  request<K extends RequestType, R>(body: RequestBody<K>, options: RequestChannel.IRequestOptions<K, R>): Promise<R> {
    return new Promise<R>((resolve, reject) => {
      const type: K = body.type;
      const expected = Private.REPLY_TYPES[type];
      const read = (data: JSONObject, buffers: readonly unknown[]): boolean => {
        const replyType: unknown = data.type;
        if (isKeyOf(expected.progress, replyType)) {
          const progress = readKernelMessage(replyType, data, this._texts);
          options.progress?.(progress, buffers);
          return false;
        }
        if (isKeyOf(expected.final, replyType)) {
          resolve(options.final(readKernelMessage(replyType, data, this._texts)));
          return true;
        }
        throw new BridgeError(
          'protocol',
          this._texts.unexpectedReply(String(replyType), [...Object.keys(expected.progress), ...Object.keys(expected.final)])
        );
      };
      const requestId = this._nextId();
      this._send({ ...body, request_id: requestId }, options.buffers ?? [], {
        label: options.label,
        read,
        reject,
        background: options.background === true
      });
      if (this._pending.has(requestId)) {
        options.sent?.(requestId);
      }
    });
  }

  /**
   * Reject every pending request for a reason that is not its own and stop reading the comm.
   * The caller closes or drops the comm itself.
   */
  close(reason: Interruption): void {
    this._isClosed = true;
    const pending = [...this._pending.values()];
    this._pending.clear();
    for (const request of pending) {
      request.reject(new BridgeError(reason, this._texts.INTERRUPTED[reason](request.label)));
    }
  }

  /** Send one request and keep it pending until its final reply. */
  private _send(request: FrontEndRequest, buffers: ArrayBuffer[], pending: Private.IPending): void {
    const id = request.request_id;
    this._pending.set(id, pending);
    let future;
    try {
      future = this._comm.send(Private.wire(request), {}, buffers, true);
    } catch (error) {
      this._pending.delete(id);
      pending.reject(
        this._comm.isDisposed
          ? new BridgeError('closed', this._texts.commClosed(pending.label))
          : new BridgeError('connection', this._texts.sendFailed(pending.label, Private.errorText(error)))
      );
      return;
    }
    const settle = (cancelled: boolean): void => {
      const still = this._pending.get(id);
      if (still === undefined || (!cancelled && still.background)) {
        return;
      }
      this._pending.delete(id);
      const reason = cancelled ? 'restart' : 'unanswered';
      still.reject(new BridgeError(reason, this._texts.INTERRUPTED[reason](still.label)));
    };
    future.done.then(
      () => settle(false),
      () => settle(true)
    );
  }

  private _onMessage(msg: JupyterMessage.ICommMsgMsg): void {
    if (this._isClosed) {
      return;
    }
    const data = msg.content.data;
    if (typeof data !== 'object' || data === null || typeof data.type !== 'string') {
      console.warn(this._texts.UNTYPED_MESSAGE);
      return;
    }
    const id = data.request_id;
    if (id === null || id === undefined) {
      this._onPush(data);
      return;
    }
    const pending = typeof id === 'string' ? this._pending.get(id) : undefined;
    if (typeof id !== 'string' || pending === undefined) {
      // A late reply to a request that was already cancelled (interrupt, lost connection).
      return;
    }
    try {
      if (data.type === 'error') {
        this._pending.delete(id);
        const refusal = readKernelMessage('error', data, this._texts);
        pending.reject(new BridgeError('kernel', refusal.message || this._texts.REFUSED_WITHOUT_REASON, { ...refusal.detail }));
        return;
      }
      if (pending.read(data, msg.buffers ?? [])) {
        this._pending.delete(id);
      }
    } catch (error) {
      this._pending.delete(id);
      pending.reject(error);
    }
  }

  /** A message the kernel started itself: a listing (on open and after cells), or an error. */
  private _onPush(data: JSONObject): void {
    if (data.type === 'listing') {
      let listing: IListingMessage;
      try {
        listing = readKernelMessage('listing', data, this._texts);
      } catch (error) {
        this._onProtocolError(error instanceof BridgeError ? error : new BridgeError('protocol', Private.errorText(error)));
        return;
      }
      this._onListing(listing);
      return;
    }
    if (data.type === 'error') {
      const message = typeof data.message === 'string' && data.message ? data.message : this._texts.REFUSED_WITHOUT_REASON;
      console.warn(this._texts.errorOutsideRequest(message));
    }
  }

  private _nextId(): string {
    this._counter += 1;
    return `${this._idPrefix}-${this._counter}`;
  }

  private readonly _texts: BridgeTexts;
  private _comm: IBridgeComm;
  private _onListing: (listing: IListingMessage) => void;
  private _onProtocolError: (error: BridgeError) => void;
  private _pending = new Map<string, Private.IPending>();
  private _idPrefix = UUID.uuid4();
  private _counter = 0;
  private _isClosed = false;
}

/** Types of {@link RequestChannel}. */
export namespace RequestChannel {
  /** Options of a channel. */
  export interface IOptions {
    /** The open comm; the channel sets its `onMsg`. */
    comm: IBridgeComm;
    /** The texts of its failures (default: as written). */
    texts?: BridgeTexts;
    /** Called with every listing the kernel pushes (checked). */
    onListing(listing: IListingMessage): void;
    /** Called when a pushed listing does not follow the protocol. */
    onProtocolError(error: BridgeError): void;
  }

  /** How one request is described, sent and completed. */
  export interface IRequestOptions<K extends RequestType, R> {
    /** The request in words, for the errors that end it. */
    label: IRequestLabel;
    /** Binary buffers sent with the request (each its own ArrayBuffer). */
    buffers?: ArrayBuffer[];
    /** Called with each progress reply and the message's buffers as it arrives; a throw rejects the request. */
    progress?(reply: ProgressReply<K>, buffers: readonly unknown[]): void;
    /** The request's result, made from its final reply as it arrives; a throw rejects the request. */
    final(reply: FinalReply<K>): R;
    /** Called with the request's id once it is sent (a scan's id is what a cancel names). */
    sent?(requestId: string): void;
    /**
     * The kernel answers on a thread of its own (a scan): its going idle after taking the
     * request does not end it; a restart, a closed comm or the final reply still do.
     */
    background?: boolean;
  }
}

/** Module-private helpers. */
namespace Private {
  /**
   * The reply types of each request, as records whose keys list every member of the unions in
   * `IRequestReplies`: a request or reply type added there fails to compile until it is listed.
   */
  export const REPLY_TYPES: {
    readonly [K in RequestType]: {
      readonly progress: Readonly<Record<IRequestReplies[K]['progress'], true>>;
      readonly final: Readonly<Record<IRequestReplies[K]['final'], true>>;
    };
  } = {
    list: { progress: {}, final: { listing: true } },
    fetch: { progress: { fetch_chunk: true, fetch_file: true }, final: { fetch_done: true } },
    results_chunk: { progress: {}, final: { results_ack: true, results_stored: true } },
    scan: {
      progress: { fetch_chunk: true, fetch_file: true, scan_progress: true },
      final: { scan_facts: true, scan_details: true, scan_done: true }
    },
    cancel: { progress: {}, final: { cancel_done: true } }
  };

  /** A request waiting for its final reply. */
  export interface IPending {
    /** The request in words. */
    label: IRequestLabel;
    /** Read one reply (not an error); returns whether it was the final one. Throws on a bad reply. */
    read(data: JSONObject, buffers: readonly unknown[]): boolean;
    /** Settle the request as failed. */
    reject(error: unknown): void;
    /** Answered on a kernel thread: the kernel's idle does not end it. */
    background?: boolean;
  }

  /** A request as the comm sends it: plain JSON (every field of a request is JSON by type). */
  export function wire(request: FrontEndRequest): JSONObject {
    return { ...request };
  }

  /** The text of a thrown value. */
  export function errorText(error: unknown): string {
    return errorMessage(error);
  }
}
