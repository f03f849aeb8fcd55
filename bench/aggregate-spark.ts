/**
 * The Spark row of bench/aggregate.mjs: the notebook's path for a Spark DataFrame, run from
 * Node. A Jupyter server and an IPython kernel with this checkout's polyadic on its path; in
 * the kernel a local[2] SparkSession reads the Parquet file as a DataFrame; on this side
 * JupyterLab's own kernel connection (@jupyterlab/services over a websocket), the panel's
 * KernelBridge and KernelScanner, the engine's scan driver and the weighted walk, and the
 * result written as `polyadic analyze` writes its JSON. Prints one JSON line of timings.
 *
 * Bundled and started by bench/aggregate.mjs:
 *   node aggregate-spark.cjs --file F.parquet --out R.json --python PY --root CHECKOUT [--driver-memory 2g]
 */
import { ChildProcess, spawn } from 'child_process';
import { randomBytes } from 'crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'fs';
import * as net from 'net';
import { tmpdir } from 'os';
import * as path from 'path';
import { parseArgs } from 'util';

import { Kernel, KernelManager, KernelMessage, ServerConnection } from '@jupyterlab/services';
import { Signal } from '@lumino/signaling';

import { KernelBridge } from '../src/bridge/connector';
import type { IBridgeSession } from '../src/bridge/kernel';
import { KernelScanner } from '../src/bridge/kernel-scanner';
import { MAX_DISTINCT_ROWS, scanWeightedCodes, type ScanStage } from '../src/engine/aggregate/scan';
import { analyzeCodes } from '../src/engine/analyze';
import type { IAnalyzeOptions } from '../src/engine/types';
import { writeResult } from '../src/cli/output';

const { values } = parseArgs({
  options: {
    file: { type: 'string' },
    out: { type: 'string' },
    python: { type: 'string' },
    root: { type: 'string' },
    'driver-memory': { type: 'string', default: '2g' }
  },
  strict: true
});
for (const option of ['file', 'out', 'python', 'root'] as const) {
  if (values[option] === undefined) {
    console.error(`aggregate-spark: --${option} is required`);
    process.exit(2);
  }
}
const file = path.resolve(values.file!);
const driverMemory = values['driver-memory']!;
if (!/^[0-9]+[mg]$/.test(driverMemory)) {
  console.error(`aggregate-spark: --driver-memory must be a size like 512m or 2g, got '${driverMemory}'`);
  process.exit(2);
}

/** A session over one kernel connection, as a notebook's session context forwards its signals. */
class BenchSession implements IBridgeSession {
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
function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address() as net.AddressInfo;
      probe.close(() => resolve(address.port));
    });
  });
}

const seconds = (since: number): number => Number(((Date.now() - since) / 1000).toFixed(2));

let server: ChildProcess | null = null;
let serverLog = '';
let manager: KernelManager | null = null;
let kernel: Kernel.IKernelConnection | null = null;
let bridge: KernelBridge | null = null;
const folder = mkdtempSync(path.join(tmpdir(), 'polyadic-bench-spark-'));

/** Run a cell as a user would; fails with the kernel's error. */
async function cell(code: string): Promise<string> {
  const future = kernel!.requestExecute({ code, store_history: true });
  let stdout = '';
  future.onIOPub = (msg: KernelMessage.IIOPubMessage) => {
    if (msg.header.msg_type === 'stream') {
      stdout += (msg.content as KernelMessage.IStreamMsg['content']).text;
    }
  };
  const reply = await future.done;
  if (reply.content.status !== 'ok') {
    const error = reply.content as KernelMessage.IReplyErrorContent;
    throw new Error(`a kernel cell failed: ${error.ename}: ${error.evalue}`);
  }
  return stdout;
}

/** Poll until `condition` holds, or fail naming what was awaited. */
async function waitFor(what: string, condition: () => boolean, timeoutMs = 120_000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > end) {
      throw new Error(`timed out waiting for ${what}\n${serverLog.slice(-2000)}`);
    }
    await new Promise(resolve => setTimeout(resolve, 50));
  }
}

async function startServer(): Promise<ServerConnection.ISettings> {
  const port = await freePort();
  const token = randomBytes(16).toString('hex');
  server = spawn(
    values.python!,
    [
      '-m',
      'jupyter_server',
      '--ServerApp.ip=127.0.0.1',
      `--ServerApp.port=${port}`,
      '--ServerApp.port_retries=0',
      '--ServerApp.open_browser=False',
      '--ServerApp.terminals_enabled=False',
      // containers run as root; the server refuses to without this
      '--ServerApp.allow_root=True',
      `--ServerApp.root_dir=${folder}`,
      `--IdentityProvider.token=${token}`
    ],
    {
      cwd: folder,
      env: {
        ...process.env,
        JUPYTER_RUNTIME_DIR: path.join(folder, 'runtime'),
        PYTHONPATH: [values.root!, process.env.PYTHONPATH].filter(Boolean).join(path.delimiter)
      },
      stdio: ['ignore', 'pipe', 'pipe']
    }
  );
  server.stdout?.on('data', chunk => (serverLog += String(chunk)));
  server.stderr?.on('data', chunk => (serverLog = (serverLog + String(chunk)).slice(-20_000)));
  const baseUrl = `http://127.0.0.1:${port}/`;
  const end = Date.now() + 120_000;
  for (;;) {
    if (Date.now() > end || server.exitCode !== null) {
      throw new Error(`the Jupyter server did not start (python -m jupyter_server):\n${serverLog.slice(-3000)}`);
    }
    try {
      if ((await fetch(`${baseUrl}api/status`, { headers: { Authorization: `token ${token}` } })).ok) {
        break;
      }
    } catch {
      // not listening yet
    }
    await new Promise(resolve => setTimeout(resolve, 200));
  }
  return ServerConnection.makeSettings({ baseUrl, wsUrl: `ws://127.0.0.1:${port}/`, token, appendToken: true });
}

async function run(): Promise<Record<string, unknown>> {
  const started = Date.now();
  manager = new KernelManager({ serverSettings: await startServer() });
  await manager.ready;
  kernel = await manager.startNew({ name: 'python3' });
  bridge = new KernelBridge({ sessionContext: new BenchSession(kernel) });
  await waitFor('the bridge to be ready', () => bridge!.status.state === 'ready' || bridge!.status.state === 'error');
  if (bridge.status.state !== 'ready') {
    throw new Error(`the bridge did not connect: ${bridge.status.message}`);
  }
  const kernelReady = seconds(started);

  // What a user runs: a local[2] session, quiet, and the file as a DataFrame. JSON spells the
  // path as a valid Python string literal.
  const sessionStarted = Date.now();
  await cell(
    'from pyspark.sql import SparkSession\n' +
      'spark = (SparkSession.builder.master("local[2]").appName("polyadic-bench")\n' +
      '    .config("spark.ui.enabled", "false").config("spark.ui.showConsoleProgress", "false")\n' +
      `    .config("spark.driver.memory", ${JSON.stringify(driverMemory)}).getOrCreate())\n` +
      'spark.sparkContext.setLogLevel("ERROR")'
  );
  const sparkStart = seconds(sessionStarted);
  const version = (await cell('print(spark.version)')).trim();
  await cell(`big = spark.read.parquet(${JSON.stringify(file)})`);
  await waitFor('the Spark frame in the listing', () => (bridge!.listing?.frames ?? []).some(frame => frame.name === 'big'));
  const listed = bridge.listing!.frames.find(frame => frame.name === 'big')!;
  const names = listed.columns.map(column => column.name);

  // The panel's scanned run (src/panel/analysis/model.ts), then the CLI's output.
  const options: IAnalyzeOptions = { bins: 'quantile:4', columns: names };
  const stages: Partial<Record<ScanStage, number>> = {};
  let stageStarted = Date.now();
  let stage: ScanStage | null = null;
  const scanStarted = Date.now();
  const { prepared } = await scanWeightedCodes(new KernelScanner({ bridge, name: 'big' }), names, options, {
    maxDistinctRows: MAX_DISTINCT_ROWS,
    onStage: next => {
      if (stage !== null) {
        stages[stage] = seconds(stageStarted);
      }
      stage = next;
      stageStarted = Date.now();
    }
  });
  if (stage !== null) {
    stages[stage as ScanStage] = seconds(stageStarted);
  }
  const scan = seconds(scanStarted);
  const walkStarted = Date.now();
  const result = analyzeCodes(prepared, options);
  const walk = seconds(walkStarted);
  const parts: string[] = [];
  writeResult(result, result.multiplets, 'json', text => parts.push(text));
  writeFileSync(values.out!, parts.join(''));
  return {
    spark: version,
    rows: prepared.rows,
    distinct_rows: prepared.weights.length,
    kernel_ready_s: kernelReady,
    spark_start_s: sparkStart,
    scan_s: scan,
    stages_s: stages,
    walk_s: walk,
    // from the SparkSession cell to the result written
    wall_s: seconds(sessionStarted)
  };
}

async function stop(): Promise<void> {
  try {
    if (kernel !== null && !kernel.isDisposed) {
      await cell('spark.stop()').catch(() => undefined);
    }
    bridge?.dispose();
    await kernel?.shutdown().catch(() => undefined);
    manager?.dispose();
  } finally {
    if (server !== null && server.exitCode === null) {
      const exited = new Promise(resolve => server!.once('exit', resolve));
      server.kill('SIGTERM');
      await exited;
    }
    rmSync(folder, { recursive: true, force: true });
  }
}

async function main(): Promise<number> {
  // JupyterLab's kernel connection logs every status change at debug level.
  console.debug = () => undefined;
  try {
    console.log(JSON.stringify(await run()));
    return 0;
  } catch (error) {
    console.error(`aggregate-spark: ${error instanceof Error ? error.message : String(error)}`);
    return 1;
  } finally {
    await stop();
  }
}

void main().then(code => process.exit(code));
