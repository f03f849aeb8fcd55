/**
 * An engine "worker" that runs the handlers on the calling thread, for Node and jest, where
 * there is no Web Worker. It behaves like one where the pool can tell: messages are
 * structured-cloned (transferred buffers are detached from the sender), each request is handled
 * in a later task, in order, and nothing is delivered after `terminate()`. It does not free the
 * thread: a long walk blocks it, so the browser uses real workers (src/worker/browser.ts).
 */

import { WorkerHost } from './handlers';
import type { EngineRequest, EngineResponse, IEngineWorker } from './protocol';

/** The in-process stand-in for an engine worker. */
export class InProcessWorker implements IEngineWorker {
  /** Create the stand-in; its host keeps the runs' codes as a worker would. */
  constructor(options: InProcessWorker.IOptions = {}) {
    this._clone = options.clone ?? ((value, transfer) => structuredClone(value, { transfer }));
    this._host = new WorkerHost((response, transfer) => this._deliver(response, transfer));
  }

  /** Whether `terminate()` was called. */
  get isTerminated(): boolean {
    return this._terminated;
  }

  /** The host, so tests can see what it holds. */
  get host(): WorkerHost {
    return this._host;
  }

  /** Queue a request (a copy of it, with `transfer` detached from the sender). */
  post(request: EngineRequest, transfer: ArrayBuffer[]): void {
    if (this._terminated) {
      return;
    }
    const copy = this._clone(request, transfer);
    setTimeout(() => {
      if (!this._terminated) {
        this._host.handle(copy);
      }
    }, 0);
  }

  /** Set the receivers; failures never happen in-process (handler errors are responses). */
  listen(onResponse: (response: EngineResponse) => void): void {
    this._onResponse = onResponse;
  }

  /** Stop delivering requests and responses. */
  terminate(): void {
    this._terminated = true;
  }

  private _deliver(response: EngineResponse, transfer: ArrayBuffer[]): void {
    const copy = this._clone(response, transfer);
    setTimeout(() => {
      if (!this._terminated && this._onResponse) {
        this._onResponse(copy);
      }
    }, 0);
  }

  private _clone: <T>(value: T, transfer: ArrayBuffer[]) => T;
  private _host: WorkerHost;
  private _onResponse: ((response: EngineResponse) => void) | null = null;
  private _terminated = false;
}

/** Types of {@link InProcessWorker}. */
export namespace InProcessWorker {
  /** Options of the stand-in. */
  export interface IOptions {
    /**
     * How a message is copied (default structuredClone with the transfer list). jest's sandbox
     * needs its own: there, structuredClone returns typed arrays of Node's outer realm.
     */
    clone?: <T>(value: T, transfer: ArrayBuffer[]) => T;
  }
}
