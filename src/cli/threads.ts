/**
 * Engine workers on Node's worker_threads for the CLI (`--threads N`). The bundle starts copies
 * of itself as worker threads; a copy that finds itself started so runs a WorkerHost on its
 * port instead of the command line. The pool (src/worker/pool.ts) is the browser's, so the
 * CLI's results are the panel's for any number of threads.
 */

import { availableParallelism, cpus } from 'os';
import { isMainThread, parentPort, Worker, workerData } from 'worker_threads';

import { WorkerHost } from '../worker/handlers';
import type { EngineRequest, EngineResponse, IEngineWorker } from '../worker/protocol';

/** The mark a thread started by {@link ThreadWorker} carries in its workerData. */
const WORKER_MARK = 'polyadic-engine-worker';

/** The machine's cores (at least 1): the CLI's default thread count. */
export function defaultThreads(): number {
  const cores = typeof availableParallelism === 'function' ? availableParallelism() : cpus().length;
  return Math.max(1, cores);
}

/**
 * When this thread is an engine worker started by {@link ThreadWorker}, serve requests on the
 * parent port and return true; in the main thread return false.
 */
export function serveIfWorkerThread(): boolean {
  if (isMainThread || !parentPort || (workerData as { mark?: string } | null)?.mark !== WORKER_MARK) {
    return false;
  }
  const port = parentPort;
  const host = new WorkerHost((response, transfer) => port.postMessage(response, transfer));
  port.on('message', (request: EngineRequest) => host.handle(request));
  return true;
}

/** An engine worker on a worker thread running `script` (the CLI bundle itself). */
export class ThreadWorker implements IEngineWorker {
  /** Start the thread. */
  constructor(script: string) {
    this._worker = new Worker(script, { workerData: { mark: WORKER_MARK } });
    // A worker thread must not keep the process alive once the CLI is done with it.
    this._worker.unref();
  }

  /** Send a request, transferring the listed buffers. */
  post(request: EngineRequest, transfer: ArrayBuffer[]): void {
    this._worker.postMessage(request, transfer);
  }

  /** Receive responses and failures. */
  listen(onResponse: (response: EngineResponse) => void, onFailure: (reason: string) => void): void {
    this._worker.on('message', onResponse);
    this._worker.on('error', error => onFailure(error.message));
    this._worker.on('exit', code => {
      if (!this._terminated && code !== 0) {
        onFailure(`the worker thread exited with code ${code}`);
      }
    });
  }

  /** Stop the thread. */
  terminate(): void {
    this._terminated = true;
    void this._worker.terminate();
  }

  private _worker: Worker;
  private _terminated = false;
}
