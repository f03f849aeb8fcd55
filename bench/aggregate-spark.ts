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
import { mkdtempSync, rmSync, writeFileSync } from 'fs';
import { tmpdir } from 'os';
import * as path from 'path';
import { parseArgs } from 'util';

import { Kernel, KernelManager, KernelMessage } from '@jupyterlab/services';

import { KernelBridge } from '../src/bridge/connector';
import { KernelScanner } from '../src/bridge/kernel-scanner';
import { MAX_DISTINCT_ROWS, scanWeightedCodes, type ScanStage } from '../src/engine/aggregate/scan';
import { analyzeCodes } from '../src/engine/analyze';
import type { IAnalyzeOptions } from '../src/engine/types';
import { writeResult } from '../src/cli/output';
import { LiveServer, LiveSession, waitFor as waitUntil } from '../test/bridge/live-server';

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

const seconds = (since: number): number => Number(((Date.now() - since) / 1000).toFixed(2));

let server: LiveServer | null = null;
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
function waitFor(what: string, condition: () => boolean, timeoutMs = 120_000): Promise<void> {
  return waitUntil(what, condition, timeoutMs, () => server?.log ?? '');
}

async function run(): Promise<Record<string, unknown>> {
  const started = Date.now();
  server = await LiveServer.start({ python: values.python!, root: values.root!, folder, timeoutMs: 120_000 });
  manager = new KernelManager({ serverSettings: server.settings });
  await manager.ready;
  kernel = await manager.startNew({ name: 'python3' });
  bridge = new KernelBridge({ sessionContext: new LiveSession(kernel) });
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
    await server?.stop();
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
