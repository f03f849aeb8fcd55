/**
 * The connection state machine of the kernel bridge: it follows one notebook session, imports
 * `polyadic` silently in its kernel (no output, no history, no name bound in the user's
 * namespace), opens the `polyadic` comm with a {@link RequestChannel} on it, keeps the kernel's
 * listing of dataframes and says where it stands ({@link IBridgeStatus}).
 *
 * A restart or a new kernel re-imports and re-opens; a lost connection reconnects when it is
 * back; a kernel that closes the comm gets it re-opened once. Whenever it stops using a comm it
 * closes the channel, which rejects what was pending with the reason (src/bridge/texts.ts).
 */
import type { Kernel, KernelMessage } from '@jupyterlab/services';
import type { IDisposable } from '@lumino/disposable';
import { ISignal, Signal } from '@lumino/signaling';

import { RequestChannel } from './channel';
import { isRecord } from './check';
import { BridgeError } from './errors';
import type { IBridgeKernel, IBridgeSession } from './kernel';
import { COMM_TARGET, IFrameInfo, IListingMessage, ISkippedFrame } from './protocol';
import { BRIDGE_TEXTS, BridgeTexts, Interruption, PIP_COMMANDS } from './texts';
import { errorMessage } from '../engine/errors';

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

/** Follows a notebook session's kernel and holds the request channel while the bridge is ready. */
export class BridgeConnection implements IDisposable {
  /** Connect to the session's kernel (if any) and follow the session's kernel changes. */
  constructor(options: BridgeConnection.IOptions) {
    this._session = options.sessionContext;
    this._texts = options.texts ?? BRIDGE_TEXTS;
    this._status = { state: 'no-kernel', message: this._texts.NO_KERNEL, commands: [], language: null, kernelVersion: null };
    this._session.kernelChanged.connect(this._onKernelChanged, this);
    this._session.statusChanged.connect(this._onStatusChanged, this);
    this._session.connectionStatusChanged.connect(this._onConnectionStatusChanged, this);
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

  /** The latest listing of the kernel's dataframes; null until ready. */
  get listing(): IListing | null {
    return this._listing;
  }

  /** Emitted with every new listing, and null when the kernel goes away. */
  get framesChanged(): ISignal<this, IListing | null> {
    return this._framesChanged;
  }

  /** Whether the connection was disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** The request channel when ready; otherwise throws a 'disposed' or 'state' {@link BridgeError}. */
  readyChannel(): RequestChannel {
    if (this._isDisposed) {
      throw new BridgeError('disposed', this._texts.NO_LONGER_CONNECTED);
    }
    if (this._status.state !== 'ready' || this._channel === null) {
      const message =
        this._status.state === 'starting' || this._status.state === 'ready' ? this._texts.STILL_CONNECTING : this._status.message;
      throw new BridgeError('state', message);
    }
    return this._channel;
  }

  /** Keep a listing (pushed or asked for); the first one on a new comm makes the bridge ready. */
  takeListing(message: IListingMessage): IListing {
    const listing: IListing = { frames: message.frames, skipped: message.skipped, version: message.version };
    if (this._status.state === 'starting') {
      this._kernelVersion = listing.version;
      this._setStatus('ready', this._texts.ready(listing.version));
    }
    this._listing = listing;
    this._framesChanged.emit(listing);
    return listing;
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

  /** Import `polyadic` in the session's kernel and open the comm; ready on the first listing. */
  private async _connect(): Promise<void> {
    const generation = ++this._generation;
    this._reconnectWanted = false;
    const kernel = this._session.isDisposed ? null : this._session.session?.kernel ?? null;
    this._kernel = kernel;
    if (kernel === null || kernel.isDisposed) {
      this._setStatus('no-kernel', this._texts.NO_KERNEL);
      return;
    }
    this._setStatus('starting', this._texts.STARTING);
    const stale = (): boolean => this._isDisposed || generation !== this._generation;
    try {
      const info = await kernel.info;
      if (stale()) {
        return;
      }
      const language = info.language_info?.name ?? '';
      this._language = language || null;
      if (language.toLowerCase() !== 'python') {
        this._setStatus('not-python', this._texts.notPython(language));
        return;
      }
      const reply = await kernel.requestExecute(Private.importRequest(), true).done;
      if (stale()) {
        return;
      }
      const imported = Private.importOutcome(reply.content, this._texts);
      if (imported.state !== 'ready') {
        this._setStatus(imported.state, imported.message, imported.commands);
        return;
      }
      this._kernelVersion = imported.version;
      const comm = kernel.createComm(COMM_TARGET);
      const channel = new RequestChannel({
        comm,
        texts: this._texts,
        onListing: listing => this.takeListing(listing),
        onProtocolError: error => this._teardown('protocol', ['error', error.message])
      });
      this._channel = channel;
      comm.onClose = () => this._onCommClose(channel);
      const opened = comm.open({});
      // The kernel pushes a listing while it handles comm_open, so it arrives before the idle
      // status that settles `opened`: still starting then means the kernel refused the comm.
      const settle = (): void => {
        if (!stale() && this._channel === channel && this._status.state === 'starting') {
          this._refused(channel);
        }
      };
      opened.done.then(settle, settle);
    } catch (error) {
      if (stale()) {
        return;
      }
      this._setStatus('error', this._texts.connectFailed(Private.errorText(error)));
    }
  }

  /** The kernel closed or ignored the comm while it was opening. */
  private _refused(channel: RequestChannel): void {
    this._forget(channel, 'closed');
    this._setStatus('error', this._texts.REFUSED);
  }

  /**
   * Stop using the current kernel: reject pending requests and drop the comm, telling the
   * kernel (`close`) unless the kernel closed it or is restarting, and so forgot it already.
   */
  private _teardown(reason: Interruption, status: [BridgeState, string] | null): void {
    this._generation++;
    const channel = this._channel;
    if (channel !== null) {
      this._forget(channel, reason);
      try {
        if (reason === 'restart' || reason === 'closed') {
          channel.comm.dispose();
        } else {
          channel.comm.close();
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

  /** Stop using a channel: its pending requests are rejected and its later messages ignored. */
  private _forget(channel: RequestChannel, reason: Interruption): void {
    if (this._channel === channel) {
      this._channel = null;
    }
    channel.close(reason);
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
      this._teardown('restart', ['starting', this._texts.RESTARTING]);
      this._reconnectWanted = true;
    } else if (status === 'dead') {
      this._teardown('restart', ['error', this._texts.DEAD]);
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
      // Requests are pending only on the current channel, so it is in use exactly when it exists.
      const inUse = this._channel !== null;
      if (inUse || this._status.state === 'starting') {
        // While still starting (or restarting), keep the message the user already sees.
        this._teardown('connection', inUse ? ['starting', this._texts.RECONNECTING] : null);
        this._reconnectWanted = true;
      }
    } else if (status === 'connected' && this._reconnectWanted) {
      void this._connect();
    }
  }

  private _onCommClose(channel: RequestChannel): void {
    if (channel !== this._channel || this._isDisposed) {
      return;
    }
    if (this._status.state === 'starting') {
      this._refused(channel);
      return;
    }
    // Re-open once; a kernel that keeps closing the comm gets an error state instead of a loop.
    const now = Date.now();
    const again = now - this._lastKernelClose < Private.CLOSE_LOOP_MS;
    this._lastKernelClose = now;
    this._teardown('closed', again ? ['error', this._texts.CLOSED_AGAIN] : null);
    if (!again) {
      void this._connect();
    }
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
  private _channel: RequestChannel | null = null;
  private readonly _texts: BridgeTexts;
  private _generation = 0;
  private _reconnectWanted = false;
  private _lastKernelClose = -Infinity;
  private _language: string | null = null;
  private _kernelVersion: string | null = null;
  private _listing: IListing | null = null;
  private _isDisposed = false;
  private _status: IBridgeStatus;
  private _statusChanged = new Signal<this, IBridgeStatus>(this);
  private _framesChanged = new Signal<this, IListing | null>(this);
}

/** Types of {@link BridgeConnection}. */
export namespace BridgeConnection {
  /** Options of a connection. */
  export interface IOptions {
    /** The notebook's session context (JupyterLab's `ISessionContext` fits). */
    sessionContext: IBridgeSession;
    /** The texts of the states and failures (default: as written). */
    texts?: BridgeTexts;
  }
}

/** Module-private helpers. */
namespace Private {
  /** Two kernel-side closes within this many milliseconds count as a loop. */
  export const CLOSE_LOOP_MS = 5000;

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
    content: KernelMessage.IExecuteReplyMsg['content'],
    texts: BridgeTexts
  ):
    | { state: 'ready'; version: string }
    | { state: 'missing-package' | 'error'; message: string; commands: string[] } {
    if (content.status !== 'ok') {
      return { state: 'error', message: texts.IMPORT_NOT_RUN, commands: [] };
    }
    const outcome = (content.user_expressions ?? {})['polyadic'];
    if (!isRecord(outcome)) {
      return { state: 'error', message: texts.IMPORT_UNREPORTED, commands: [] };
    }
    if (outcome.status === 'ok') {
      const data = isRecord(outcome.data) ? outcome.data : {};
      const text = data['text/plain'];
      return { state: 'ready', version: typeof text === 'string' ? text.replace(/^['"]|['"]$/g, '') : '' };
    }
    const ename = typeof outcome.ename === 'string' ? outcome.ename : 'Error';
    const evalue = typeof outcome.evalue === 'string' ? outcome.evalue : '';
    if (ename === 'ModuleNotFoundError' || ename === 'ImportError') {
      const itself = /No module named '?polyadic'?$/.test(evalue);
      return {
        state: 'missing-package',
        message: texts.missingPackage(itself ? '' : ` (${ename}: ${evalue})`),
        commands: [...PIP_COMMANDS]
      };
    }
    return { state: 'error', message: texts.importFailed(ename, evalue), commands: [] };
  }

  /** The text of a thrown value. */
  export function errorText(error: unknown): string {
    return errorMessage(error);
  }
}
