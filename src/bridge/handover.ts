/**
 * The page's side of the Jupyter server's handover route (polyadic/_server.py): ask once
 * whether the server can serve handover files, then stream a file by the token the kernel
 * gave, part by part, as the response body arrives.
 */
import { BridgeError } from './errors';
import { HANDOVER_ROUTE, HANDOVER_ROUTE_VERSION } from './protocol';
import type { IHandoverRoute } from './transport';

/** Sends an authenticated GET to a path under the server's base URL (ServerConnection in the browser). */
export type RouteRequest = (path: string) => Promise<Response>;

/** The handover route of one Jupyter server. */
export class HandoverRoute implements IHandoverRoute {
  /** Create the route's client; `request` sends the server's authentication along. */
  constructor(private readonly _request: RouteRequest) {}

  /** Whether the server has the route and a private handover folder; asked once. */
  available(): Promise<boolean> {
    this._available ??= this._request(HANDOVER_ROUTE).then(
      async response => {
        if (!response.ok) {
          return false;
        }
        const info: unknown = await response.json();
        return (
          typeof info === 'object' &&
          info !== null &&
          Reflect.get(info, 'version') === HANDOVER_ROUTE_VERSION &&
          Reflect.get(info, 'available') === true
        );
      },
      () => false
    );
    return this._available;
  }

  /** Stream the file of `token`, handing each part to `onBytes`. */
  async download(token: string, onBytes: (bytes: Uint8Array) => void): Promise<void> {
    if (!/^[A-Za-z0-9_-]{43}$/.test(token)) {
      throw new BridgeError('protocol', 'The kernel named its data with a malformed token; fetch again.');
    }
    let response: Response;
    try {
      response = await this._request(`${HANDOVER_ROUTE}/${token}`);
    } catch (error) {
      throw new BridgeError('connection', `The server could not be reached for the data (${String(error)}).`);
    }
    if (!response.ok || response.body === null) {
      throw new BridgeError('connection', `The server did not hand the data over (HTTP ${response.status}).`);
    }
    const reader = response.body.getReader();
    for (;;) {
      const { done, value } = await reader.read();
      if (done) {
        return;
      }
      onBytes(value);
    }
  }

  private _available: Promise<boolean> | null = null;
}
