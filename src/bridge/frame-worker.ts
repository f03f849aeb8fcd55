/**
 * Entry of the bridge's frame worker: hands every message to a {@link FrameHost}. Bundled on
 * its own by scripts/build-worker.mjs, so it must import nothing the extension shares with
 * JupyterLab.
 */
import { FrameHost } from './frame-host';
import type { FrameRequest, FrameResponse } from './frame-protocol';

/** The part of a dedicated worker's global scope the entry uses. */
interface IWorkerScope {
  postMessage(message: FrameResponse, transfer: ArrayBuffer[]): void;
  onmessage: ((event: { data: FrameRequest }) => void) | null;
}

// a dedicated worker's global scope is its `self` and `globalThis`
const scope: IWorkerScope = globalThis as typeof globalThis & IWorkerScope;
const host = new FrameHost((response, transfer) => scope.postMessage(response, transfer));
scope.onmessage = event => host.handle(event.data);
