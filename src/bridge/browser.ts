/**
 * The bridge's transport in the browser: the frame worker, pre-bundled by
 * scripts/build-worker.mjs into a string (lib/bridge/frame-bundle.generated.js) and started
 * from a Blob URL, as the engine workers are (src/worker/browser.ts), and the Jupyter server's
 * handover route, reached through ServerConnection so the server's authentication goes along.
 */
import { ServerConnection } from '@jupyterlab/services';
import { URLExt } from '@jupyterlab/coreutils';

import { FRAME_WORKER_SOURCE } from './frame-bundle.generated';
import type { FrameResponse } from './frame-protocol';
import { HandoverRoute } from './handover';
import { FrameCodec, IFetchTransport, IFrameWorker } from './transport';

/** Start one frame worker. */
export function createFrameWorker(): IFrameWorker {
  const worker = new Worker(Private.scriptUrl(), { name: 'polyadic-frames' });
  return {
    post: (request, transfer) => worker.postMessage(request, transfer),
    listen: (onResponse, onFailure) => {
      worker.onmessage = (event: MessageEvent<FrameResponse>) => onResponse(event.data);
      worker.onerror = (event: ErrorEvent) => {
        event.preventDefault();
        onFailure(event.message || 'the worker script could not be started');
      };
      worker.onmessageerror = () => onFailure('a message from the worker could not be read');
    },
    terminate: () => worker.terminate()
  };
}

/** The transport of the page: a frame worker and this server's handover route. */
export function createFetchTransport(): IFetchTransport {
  const settings = ServerConnection.makeSettings();
  return {
    codec: new FrameCodec({ createWorker: createFrameWorker }),
    route: new HandoverRoute(path =>
      ServerConnection.makeRequest(URLExt.join(settings.baseUrl, path), { method: 'GET', cache: 'no-store' }, settings)
    )
  };
}

namespace Private {
  let url: string | null = null;

  /** One Blob URL for the page's lifetime (revoking it while a worker loads would fail it). */
  export function scriptUrl(): string {
    if (url === null) {
      url = URL.createObjectURL(new Blob([FRAME_WORKER_SOURCE], { type: 'text/javascript' }));
    }
    return url;
  }
}
