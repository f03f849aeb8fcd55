/**
 * The base of the section models that only own signals: disposing one disconnects every
 * listener of its signals (and every connection it receives), once.
 */
import type { IDisposable } from '@lumino/disposable';
import { Signal } from '@lumino/signaling';

/** A model whose disposal is clearing its signal connections. */
export class SignalOwner implements IDisposable {
  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Disconnect every listener. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    Signal.clearData(this);
  }

  private _isDisposed = false;
}
