/**
 * Engine workers in the browser. The worker is pre-bundled by scripts/build-worker.mjs into a
 * string (lib/worker/bundle.generated.js) and started from a Blob URL: it then imports nothing
 * through the extension's shared module scope (DESIGN.md §8) and needs no asset URL, so it works
 * inside a federated JupyterLab extension as built by `jupyter labextension build`.
 */

import { ENGINE_WORKER_SOURCE } from './bundle.generated';
import type { EngineResponse, IEngineWorker } from './protocol';

/** Start one engine worker (for `EnginePool`'s `createWorker`). */
export function createEngineWorker(): IEngineWorker {
  const worker = new Worker(Private.scriptUrl(), { name: 'polyadic-engine' });
  return {
    post: (request, transfer) => worker.postMessage(request, transfer),
    listen: (onResponse, onFailure) => {
      worker.onmessage = (event: MessageEvent<EngineResponse>) => onResponse(event.data);
      worker.onerror = (event: ErrorEvent) => {
        // Handled here: the pool reports it to the user as an error value.
        event.preventDefault();
        onFailure(event.message || 'the worker script could not be started');
      };
      worker.onmessageerror = () => onFailure('a message from the worker could not be read');
    },
    terminate: () => worker.terminate()
  };
}

namespace Private {
  let url: string | null = null;

  /**
   * One Blob URL for the page's lifetime, shared by every worker: revoking it while a worker
   * still loads would make that worker fail, and it costs only the script's size.
   */
  export function scriptUrl(): string {
    if (url === null) {
      url = URL.createObjectURL(new Blob([ENGINE_WORKER_SOURCE], { type: 'text/javascript' }));
    }
    return url;
  }
}
