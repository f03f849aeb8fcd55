/**
 * Entry of the engine worker: hands every message to a {@link WorkerHost}. Bundled on its own by
 * scripts/build-worker.mjs, so it must import nothing the extension shares with JupyterLab.
 */

import { WorkerHost } from './handlers';
import type { EngineRequest } from './protocol';

/** The part of a dedicated worker's global scope the entry uses. */
interface IWorkerScope {
  postMessage(message: unknown, transfer: ArrayBuffer[]): void;
  onmessage: ((event: { data: EngineRequest }) => void) | null;
}

// a dedicated worker's global scope is its `self` and `globalThis`
const scope: IWorkerScope = globalThis as typeof globalThis & IWorkerScope;
const host = new WorkerHost((response, transfer) => scope.postMessage(response, transfer));
scope.onmessage = event => host.handle(event.data);
