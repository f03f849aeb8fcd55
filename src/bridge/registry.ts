/**
 * One {@link KernelBridge} per notebook session, created when the panel first follows the
 * notebook and disposed with the session, so switching between notebooks neither re-imports
 * nor re-opens anything.
 */
import type { IDisposable } from '@lumino/disposable';

import { KernelBridge } from './connector';
import type { IBridgeSession } from './kernel';
import type { ITranslator } from '../translation';
import type { IFetchTransport } from './transport';

/** Keeps the bridge of each session the panel has followed. */
export class BridgeRegistry implements IDisposable {
  /**
   * Create an empty registry; its bridges move bytes through `transport` (default in process)
   * and speak through `translator` (default: the texts as written).
   */
  constructor(options: { transport?: IFetchTransport; translator?: ITranslator } = {}) {
    this._transport = options.transport;
    this._translator = options.translator;
  }

  /** The bridge of a session, created (and connected) on first use. */
  bridgeFor(sessionContext: IBridgeSession): KernelBridge {
    if (this._isDisposed) {
      throw new Error('The bridge registry was disposed.');
    }
    let bridge = this._bridges.get(sessionContext);
    if (bridge === undefined || bridge.isDisposed) {
      bridge = new KernelBridge({ sessionContext, transport: this._transport, translator: this._translator });
      this._bridges.set(sessionContext, bridge);
      sessionContext.disposed.connect(this._forget, this);
    }
    return bridge;
  }

  /** How many live bridges the registry holds. */
  get size(): number {
    return [...this._bridges.values()].filter(bridge => !bridge.isDisposed).length;
  }

  /** Whether the registry was disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Dispose every bridge. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    for (const [session, bridge] of this._bridges) {
      session.disposed.disconnect(this._forget, this);
      bridge.dispose();
    }
    this._bridges.clear();
  }

  /** A session was disposed: its bridge disposed itself; drop it. */
  private _forget(session: unknown): void {
    const bridge = this._bridges.get(session as IBridgeSession);
    if (bridge !== undefined) {
      bridge.dispose();
      this._bridges.delete(session as IBridgeSession);
    }
    (session as IBridgeSession).disposed.disconnect(this._forget, this);
  }

  private readonly _translator: ITranslator | undefined;
  private _transport: IFetchTransport | undefined;
  private _bridges = new Map<IBridgeSession, KernelBridge>();
  private _isDisposed = false;
}
