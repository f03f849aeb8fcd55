/**
 * A fake notebook session, kernel and comm for the connector specs. They behave as
 * JupyterLab's do where the bridge depends on it: replies arrive asynchronously, a request's
 * future settles after its replies (the kernel's idle status), a restart emits the status
 * first and then cancels futures and drops comms, a comm closed by the kernel runs `onClose`.
 * The kernel side answers with `respond`, which a spec can replace.
 */
import type { Kernel, KernelMessage } from '@jupyterlab/services';
import { JSONObject, JSONValue, PromiseDelegate } from '@lumino/coreutils';
import { Signal } from '@lumino/signaling';

import { BridgeError } from '../../src/bridge/errors';
import type { IBridgeComm, IBridgeKernel, IBridgeSession, MessageBuffers } from '../../src/bridge/kernel';
import { IFetchDone, IFrameInfo, PROTOCOL_VERSION } from '../../src/bridge/protocol';

/** Let queued replies and promise callbacks run. */
export async function flush(rounds = 5): Promise<void> {
  for (let i = 0; i < rounds; i++) {
    await new Promise(resolve => setImmediate(resolve));
  }
}

/** The rejection of a promise, which must be a BridgeError. */
export async function failure(promise: Promise<unknown>): Promise<BridgeError> {
  let caught: unknown = undefined;
  await promise.then(
    () => undefined,
    error => {
      caught = error;
    }
  );
  expect(caught).toBeInstanceOf(BridgeError);
  return caught as BridgeError;
}

/** A request's future: `finish` is the kernel's idle status, `cancel` a restart. */
export class FakeFuture {
  /** Settles after the replies. */
  get done(): Promise<unknown> {
    return this._done.promise;
  }

  /** Whether it settled. */
  settled = false;

  /** The kernel is idle again after the request. */
  finish(): void {
    if (!this.settled) {
      this.settled = true;
      this._done.resolve(undefined);
    }
  }

  /** The request was cancelled (JupyterLab's wording on restart). */
  cancel(): void {
    if (!this.settled) {
      this.settled = true;
      this._done.reject(new Error('Canceled future for comm_msg message before replies were done'));
    }
  }

  private _done = new PromiseDelegate<unknown>();
}

/** One message the front end sent on a comm. */
export interface ISent {
  data: JSONObject;
  buffers: MessageBuffers;
  future: FakeFuture;
}

/** A comm whose kernel side is {@link FakeKernel.respond}. */
export class FakeComm implements IBridgeComm {
  constructor(
    readonly kernel: FakeKernel,
    readonly targetName: string,
    readonly commId: string
  ) {}

  isDisposed = false;
  opened = false;
  closedByFrontEnd = false;
  readonly sent: ISent[] = [];
  onMsg: (msg: KernelMessage.ICommMsgMsg) => void | PromiseLike<void> = () => undefined;
  onClose: (msg: KernelMessage.ICommCloseMsg) => void | PromiseLike<void> = () => undefined;

  open(data?: JSONValue): FakeFuture {
    if (this.isDisposed) {
      throw new Error('Cannot open');
    }
    this.opened = true;
    const future = this.kernel.track(new FakeFuture());
    void Promise.resolve().then(() => this.kernel.onOpen(this, future, data));
    return future;
  }

  send(data: JSONValue, _metadata?: JSONObject, buffers: MessageBuffers = []): FakeFuture {
    if (this.isDisposed) {
      throw new Error('Cannot send');
    }
    const sent: ISent = { data: data as JSONObject, buffers, future: this.kernel.track(new FakeFuture()) };
    this.sent.push(sent);
    void Promise.resolve().then(() => {
      if (!this.isDisposed) {
        this.kernel.respond(this, sent);
      }
    });
    return sent.future;
  }

  close(): FakeFuture {
    if (this.isDisposed) {
      throw new Error('Cannot close');
    }
    this.closedByFrontEnd = true;
    void this.onClose({ content: { comm_id: this.commId, data: {} } } as KernelMessage.ICommCloseMsg);
    this.dispose();
    const future = new FakeFuture();
    future.finish();
    return future;
  }

  dispose(): void {
    this.isDisposed = true;
  }

  /** The kernel sends a comm message. */
  push(data: JSONObject, buffers: DataView[] = []): void {
    if (this.isDisposed) {
      return;
    }
    void this.onMsg({ content: { comm_id: this.commId, data }, buffers } as unknown as KernelMessage.ICommMsgMsg);
  }

  /** The kernel closes the comm (JupyterLab runs onClose, then disposes the comm). */
  closeFromKernel(): void {
    void this.onClose({ content: { comm_id: this.commId, data: {} } } as KernelMessage.ICommCloseMsg);
    this.dispose();
  }
}

/** A frame the fake kernel can send: its listing entry, pieces and `fetch_done`. */
export interface IFakeFrame {
  info: IFrameInfo;
  pieces: DataView[];
  done: IFetchDone;
}

/** A kernel with a scripted kernel side. */
export class FakeKernel implements IBridgeKernel {
  constructor(readonly id: string, readonly language = 'python') {}

  isDisposed = false;
  /** The import's outcome: null imports fine, else the exception the expression raised. */
  importError: { ename: string; evalue: string } | null = null;
  /** Version the import reports and listings carry. */
  version = '0.1.0';
  /** Protocol version the listings carry. */
  protocol = PROTOCOL_VERSION;
  /** Frames in the namespace. */
  frames: Record<string, IFakeFrame> = {};
  /** Every execute request. */
  readonly executed: KernelMessage.IExecuteRequestMsg['content'][] = [];
  /** Every comm the front end created. */
  readonly comms: FakeComm[] = [];
  /** Results chunks received per analysis id. */
  readonly results = new Map<string, Uint8Array[]>();
  private _futures: FakeFuture[] = [];

  get info(): Promise<KernelMessage.IInfoReply> {
    return Promise.resolve({ language_info: { name: this.language } } as unknown as KernelMessage.IInfoReply);
  }

  /** The latest comm. */
  get comm(): FakeComm {
    return this.comms[this.comms.length - 1];
  }

  /** Remember a future so a restart can cancel it. */
  track(future: FakeFuture): FakeFuture {
    this._futures.push(future);
    return future;
  }

  requestExecute(content: KernelMessage.IExecuteRequestMsg['content']): {
    done: Promise<KernelMessage.IExecuteReplyMsg>;
  } {
    this.executed.push(content);
    const expression = this.importError
      ? { status: 'error', ename: this.importError.ename, evalue: this.importError.evalue, traceback: [] }
      : { status: 'ok', data: { 'text/plain': `'${this.version}'` }, metadata: {} };
    const reply = { content: { status: 'ok', execution_count: null, user_expressions: { polyadic: expression } } };
    return { done: Promise.resolve(reply as unknown as KernelMessage.IExecuteReplyMsg) };
  }

  createComm(targetName: string): FakeComm {
    const comm = new FakeComm(this, targetName, `comm-${this.comms.length + 1}`);
    this.comms.push(comm);
    return comm;
  }

  /** The listing message (a push when `requestId` is null). */
  listing(requestId: string | null = null): JSONObject {
    return {
      type: 'listing',
      request_id: requestId,
      protocol: this.protocol,
      version: this.version,
      frames: Object.values(this.frames).map(frame => frame.info) as unknown as JSONValue,
      skipped: []
    };
  }

  /** Kernel side of comm_open: push a listing, then go idle. */
  onOpen = (comm: FakeComm, future: FakeFuture, _data?: JSONValue): void => {
    comm.push(this.listing());
    future.finish();
  };

  /** Kernel side of a request; replaceable per spec. */
  respond = (comm: FakeComm, sent: ISent): void => {
    this.answer(comm, sent);
    sent.future.finish();
  };

  /** The standard answers of the kernel bridge, without going idle. */
  answer(comm: FakeComm, sent: ISent, options: { pieces?: number } = {}): void {
    const { data } = sent;
    const requestId = data.request_id as string;
    switch (data.type) {
      case 'list':
        comm.push(this.listing(requestId));
        return;
      case 'fetch': {
        const frame = this.frames[data.name as string];
        if (frame === undefined) {
          comm.push({
            type: 'error',
            request_id: requestId,
            message: `No frame '${String(data.name)}' in the fake kernel.`,
            detail: { frame: data.name as string }
          });
          return;
        }
        let sentBytes = 0;
        const count = Math.min(options.pieces ?? frame.pieces.length, frame.pieces.length);
        for (let index = 0; index < count; index++) {
          const piece = frame.pieces[index];
          sentBytes += piece.byteLength;
          comm.push(
            {
              type: 'fetch_chunk',
              request_id: requestId,
              name: frame.info.name,
              batch_index: index,
              batch_count: frame.pieces.length,
              bytes_sent: sentBytes,
              bytes_total: frame.done.bytes_total
            },
            [piece]
          );
        }
        if (count === frame.pieces.length) {
          comm.push({ ...(frame.done as unknown as JSONObject), request_id: requestId });
        }
        return;
      }
      case 'results_chunk': {
        const id = data.analysis_id as string;
        const parts = this.results.get(id) ?? [];
        const buffer = sent.buffers[0];
        parts[data.chunk_index as number] = ArrayBuffer.isView(buffer)
          ? new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength)
          : new Uint8Array(buffer);
        this.results.set(id, parts);
        const received = parts.filter(part => part !== undefined).length;
        if (received < (data.chunk_count as number)) {
          comm.push({
            type: 'results_ack',
            request_id: requestId,
            analysis_id: id,
            chunks_received: received,
            chunk_count: data.chunk_count as number
          });
        } else {
          comm.push({ type: 'results_stored', request_id: requestId, analysis_id: id, rows: this.storedRows(parts) });
        }
        return;
      }
      default:
        comm.push({ type: 'error', request_id: requestId, message: `Unknown request type '${String(data.type)}'.`, detail: {} });
    }
  }

  /** Rows of a stored results table; the connector spec sets it from what it sent. */
  storedRows: (parts: Uint8Array[]) => number = () => 0;

  /** What a restart does to the connection: cancel futures, drop comms (no onClose). */
  clearState(): void {
    for (const future of this._futures) {
      future.cancel();
    }
    this._futures = [];
    for (const comm of this.comms) {
      comm.dispose();
    }
  }
}

/** A notebook session holding a fake kernel (or any kernel of the bridge's shape). */
export class FakeSession<K extends IBridgeKernel = FakeKernel> implements IBridgeSession {
  constructor(kernel: K | null) {
    this.session = { kernel };
  }

  session: { kernel: K | null } | null;
  isDisposed = false;
  readonly kernelChanged = new Signal<this, unknown>(this);
  readonly statusChanged = new Signal<this, Kernel.Status>(this);
  readonly connectionStatusChanged = new Signal<this, Kernel.ConnectionStatus>(this);
  readonly disposed = new Signal<this, void>(this);

  /** The session's kernel. */
  get kernel(): K {
    const kernel = this.session?.kernel;
    if (!kernel) {
      throw new Error('the fake session has no kernel');
    }
    return kernel;
  }

  /** Switch to another kernel (or none). */
  changeKernel(kernel: K | null): void {
    const old = this.session?.kernel ?? null;
    this.session = { kernel };
    this.kernelChanged.emit({ name: 'kernel', oldValue: old, newValue: kernel });
  }

  /** A restart as JupyterLab reports it: the status first, then the cleared connection. */
  restart(): void {
    this.statusChanged.emit('restarting');
    (this.kernel as IBridgeKernel & { clearState?: () => void }).clearState?.();
  }

  /** The restarted kernel is back. */
  back(): void {
    this.statusChanged.emit('idle');
  }

  dispose(): void {
    this.isDisposed = true;
    this.disposed.emit();
  }
}
