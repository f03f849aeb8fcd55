/**
 * A real Jupyter server and IPython kernel for Node-side tests and benchmarks (live-kernel.spec.ts,
 * bench/aggregate-spark.ts): the server on a free loopback port with a random token, this
 * checkout's polyadic on the kernel's path, and a session over one kernel connection as a
 * notebook's session context forwards its signals.
 */
import { ChildProcess, spawn } from 'child_process';
import { randomBytes } from 'crypto';
import * as net from 'net';
import * as path from 'path';

import { Kernel, ServerConnection } from '@jupyterlab/services';
import { Signal } from '@lumino/signaling';

import type { IBridgeSession } from '../../src/bridge/kernel';

/** A session over one kernel connection, as a notebook's session context forwards its signals. */
export class LiveSession implements IBridgeSession {
  constructor(readonly kernel: Kernel.IKernelConnection) {
    this.session = { kernel };
    kernel.statusChanged.connect((_, status) => this.statusChanged.emit(status));
    kernel.connectionStatusChanged.connect((_, status) => this.connectionStatusChanged.emit(status));
  }

  session: { kernel: Kernel.IKernelConnection | null } | null;
  isDisposed = false;
  readonly kernelChanged = new Signal<this, unknown>(this);
  readonly statusChanged = new Signal<this, Kernel.Status>(this);
  readonly connectionStatusChanged = new Signal<this, Kernel.ConnectionStatus>(this);
  readonly disposed = new Signal<this, void>(this);
}

/** A free TCP port on the loopback interface. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address() as net.AddressInfo;
      probe.close(() => resolve(address.port));
    });
  });
}

/** Poll until `condition` holds, or fail naming what was awaited (with the end of `log()`). */
export async function waitFor(what: string, condition: () => boolean, timeoutMs: number, log: () => string): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > end) {
      throw new Error(`timed out waiting for ${what}\n${log().slice(-2000)}`);
    }
    await new Promise(resolve => setTimeout(resolve, 50));
  }
}

/** A running Jupyter server. */
export class LiveServer {
  private constructor(
    private readonly _process: ChildProcess,
    readonly settings: ServerConnection.ISettings
  ) {
    _process.stdout?.on('data', chunk => this._append(chunk));
    _process.stderr?.on('data', chunk => this._append(chunk));
  }

  /**
   * Start `python -m jupyter_server` rooted at `folder` with `root` (a checkout) on the kernel's
   * PYTHONPATH; resolves once /api/status answers, fails with the server's output otherwise.
   */
  static async start(options: { python: string; root: string; folder: string; timeoutMs: number }): Promise<LiveServer> {
    const port = await freePort();
    const token = randomBytes(16).toString('hex');
    const child = spawn(
      options.python,
      [
        '-m',
        'jupyter_server',
        '--ServerApp.ip=127.0.0.1',
        `--ServerApp.port=${port}`,
        '--ServerApp.port_retries=0',
        '--ServerApp.open_browser=False',
        '--ServerApp.terminals_enabled=False',
        // CI containers run as root; the server refuses to without this.
        '--ServerApp.allow_root=True',
        `--ServerApp.root_dir=${options.folder}`,
        `--IdentityProvider.token=${token}`
      ],
      {
        cwd: options.folder,
        env: {
          ...process.env,
          JUPYTER_RUNTIME_DIR: path.join(options.folder, 'runtime'),
          PYTHONPATH: [options.root, process.env.PYTHONPATH].filter(Boolean).join(path.delimiter)
        },
        stdio: ['ignore', 'pipe', 'pipe']
      }
    );
    const baseUrl = `http://127.0.0.1:${port}/`;
    const server = new LiveServer(
      child,
      ServerConnection.makeSettings({ baseUrl, wsUrl: `ws://127.0.0.1:${port}/`, token, appendToken: true })
    );
    const end = Date.now() + options.timeoutMs;
    for (;;) {
      if (Date.now() > end || child.exitCode !== null) {
        await server.stop();
        throw new Error(`the Jupyter server did not start (python -m jupyter_server):\n${server.log.slice(-3000)}`);
      }
      try {
        if ((await fetch(`${baseUrl}api/status`, { headers: { Authorization: `token ${token}` } })).ok) {
          return server;
        }
      } catch {
        // not listening yet
      }
      await new Promise(resolve => setTimeout(resolve, 200));
    }
  }

  /** The end of what the server printed (its last 20,000 characters). */
  get log(): string {
    return this._log;
  }

  /** Stop the server (SIGTERM) and wait for it to exit. */
  async stop(): Promise<void> {
    if (this._process.exitCode === null && this._process.signalCode === null) {
      const exited = new Promise(resolve => this._process.once('exit', resolve));
      this._process.kill('SIGTERM');
      await exited;
    }
  }

  private _append(chunk: unknown): void {
    this._log = (this._log + String(chunk)).slice(-20_000);
  }

  private _log = '';
}
