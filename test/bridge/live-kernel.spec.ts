/**
 * KernelBridge against a real Jupyter server and IPython kernel (the repository's Python),
 * through JupyterLab's own kernel connection (@jupyterlab/services, over a websocket): the
 * silent import, the comm on a subshell, listings pushed after cells, fetched values compared
 * with pandas and numpy in the same kernel, results read back with `polyadic.results`, scans of
 * a DuckDB relation and of a Spark DataFrame (local[2]) against the same frame analysed in
 * memory, and a restart in the middle of a fetch.
 */
import { Kernel, KernelManager, KernelMessage } from '@jupyterlab/services';

import { IBridgeStatus, KernelBridge } from '../../src/bridge/connector';
import { failure } from './fakes';
import { KernelScanner } from '../../src/bridge/kernel-scanner';
import { scanWeightedCodes } from '../../src/engine/aggregate/scan';
import { analyze, analyzeCodes } from '../../src/engine/analyze';
import type { IAnalyzeOptions, IMultipletRow } from '../../src/engine/types';
import { manifestValues, python, ROOT, tempFolder } from './helpers';
import { LiveServer, LiveSession, waitFor as waitUntil } from './live-server';

jest.setTimeout(120_000);

let server: LiveServer | null = null;
let manager: KernelManager;
let kernel: Kernel.IKernelConnection;
let session: LiveSession;
let bridge: KernelBridge;
/** The execution count of the last cell run before the bridge connected. */
let countBefore = 0;

/** Poll until `condition` holds, or fail naming what was awaited. */
function waitFor(what: string, condition: () => boolean, timeoutMs = 60_000): Promise<void> {
  return waitUntil(what, condition, timeoutMs, () => server?.log ?? '');
}

/** Run a cell as a user would; returns its execution count and what it printed. */
async function cell(code: string): Promise<{ count: number; stdout: string }> {
  const future = kernel.requestExecute({ code, store_history: true });
  let stdout = '';
  future.onIOPub = (msg: KernelMessage.IIOPubMessage) => {
    if (msg.header.msg_type === 'stream') {
      stdout += (msg.content as KernelMessage.IStreamMsg['content']).text;
    }
  };
  const reply = await future.done;
  const content = reply.content;
  if (content.status !== 'ok') {
    const error = content as KernelMessage.IReplyErrorContent;
    throw new Error(`cell failed: ${error.ename}: ${error.evalue}`);
  }
  return { count: content.execution_count ?? -1, stdout };
}

/** Print a Python expression as JSON in the kernel and parse it. */
async function evaluate<T>(expression: string): Promise<T> {
  return JSON.parse((await cell(`print(json.dumps(${expression}))`)).stdout) as T;
}

/** The greenhouse frame (DESIGN.md §6), seeded, with one column of each kind the bridge sends. */
const GREENHOUSE = `
import json
import numpy as np, pandas as pd
rng = np.random.default_rng(5)
n = 5000
greenhouse = pd.DataFrame({
    "air_temperature": np.where(rng.random(n) < 0.05, np.nan, rng.normal(21.0, 3.0, n)),
    "humidity_a": pd.array(np.where(rng.random(n) < 0.02, None, rng.integers(30, 90, n)), dtype="Int64"),
    "fan_on": rng.random(n) < 0.5,
    "bed": pd.Categorical(rng.choice(["north", "south", "west"], n), categories=["west", "north", "south"]),
    "operator": rng.choice(["ana", "Bo", "chen"], n).astype(object),
    "logged_at": pd.date_range("2031-03-01", periods=n, freq="10min"),
    "irrigation_time": pd.to_timedelta(rng.integers(0, 600, n), unit="s"),
})
`;

beforeAll(async () => {
  // JupyterLab's kernel connection logs every status change at debug level.
  jest.spyOn(console, 'debug').mockImplementation(() => undefined);
  server = await LiveServer.start({ python: python(), root: ROOT, folder: tempFolder('server'), timeoutMs: 60_000 });
  manager = new KernelManager({ serverSettings: server.settings });
  await manager.ready;
  kernel = await manager.startNew({ name: 'python3' });
  countBefore = (await cell(GREENHOUSE)).count;
  session = new LiveSession(kernel);
  bridge = new KernelBridge({ sessionContext: session });
  await waitFor('the bridge to be ready', () => bridge.status.state === 'ready' || bridge.status.state === 'error');
});

afterAll(async () => {
  bridge?.dispose();
  try {
    await kernel?.shutdown();
  } catch {
    // The server may already be gone; it shuts its kernels down when it stops.
  }
  manager?.dispose();
  await server?.stop();
});

describe('KernelBridge with a real kernel', () => {
  it('should connect, list the frame, and leave the namespace and the history untouched', async () => {
    expect(bridge.status).toMatchObject({ state: 'ready', language: 'python' });
    expect(bridge.listing?.frames.map(frame => frame.name)).toEqual(['greenhouse']);
    // The name is split so that this cell's own text does not match.
    const next = await cell("name = 'poly' + 'adic'\nprint(json.dumps([name in globals(), [c for c in In[:-1] if name in c]]))");
    // The silent import ran no cell: the next user cell is numbered right after the last one.
    expect(next.count).toBe(countBefore + 1);
    expect(JSON.parse(next.stdout)).toEqual([false, []]);
  });

  it('should take the listing the kernel pushes after a cell', async () => {
    await cell('second = greenhouse.head(3)');
    await waitFor('the pushed listing', () => (bridge.listing?.frames.length ?? 0) === 2);
    expect(bridge.listing?.frames.map(frame => [frame.name, frame.rows])).toEqual([
      ['greenhouse', 5000],
      ['second', 3]
    ]);
  });

  it('should fetch every column with the values pandas holds', async () => {
    const frame = await bridge.fetch('greenhouse');
    // Reference: pandas in the same kernel (missing values as null, 64-bit counts as strings).
    const expected = await evaluate<Record<string, unknown[]>>(`{
      "air_temperature": [None if pd.isna(v) else float(v) for v in greenhouse.air_temperature],
      "humidity_a": [None if pd.isna(v) else str(int(v)) for v in greenhouse.humidity_a],
      "fan_on": [bool(v) for v in greenhouse.fan_on],
      "bed": [str(v) for v in greenhouse.bed],
      "operator": [str(v) for v in greenhouse.operator],
      "logged_at": [str(v) for v in greenhouse.logged_at.astype("int64")],
      "irrigation_time": [str(v) for v in greenhouse.irrigation_time.astype("int64")],
    }`);
    expect(frame.rows).toBe(5000);
    expect(frame.sampled).toBe(false);
    for (const [i, column] of frame.columns.entries()) {
      expect(manifestValues(column, frame.fields[i].kind === 'bool')).toEqual(expected[column.name]);
    }
    const fields = Object.fromEntries(frame.fields.map(field => [field.name, field]));
    // Reference: numpy's own reading of each column's resolution.
    const units = await evaluate<string[]>(
      '[np.datetime_data(greenhouse[c].dtype)[0] for c in ("logged_at", "irrigation_time")]'
    );
    expect(fields.logged_at).toMatchObject({ kind: 'datetime', unit: units[0], timezone: null });
    expect(fields.irrigation_time).toMatchObject({ kind: 'timedelta', unit: units[1] });
    const bed = frame.columns.find(column => column.name === 'bed');
    expect(bed?.kind === 'categorical' && bed.categories).toEqual(['west', 'north', 'south']);
  });

  it('should send the row cap and seed, and report the sample numpy drew', async () => {
    const frame = await bridge.fetch('greenhouse', ['logged_at'], { rowCap: 100, seed: 3 });
    expect(frame).toMatchObject({ rows: 100, originalRows: 5000, sampled: true, seed: 3 });
    // Reference: numpy's default_rng(3) choosing 100 of 5000 rows, in row order.
    const expected = await evaluate<string[]>(
      '[str(v) for v in greenhouse.logged_at.astype("int64").iloc[np.sort(np.random.default_rng(3).choice(5000, size=100, replace=False))]]'
    );
    expect(manifestValues(frame.columns[0])).toEqual(expected);
  });

  it('should reject a deleted frame with an error naming it', async () => {
    await cell('scratch = greenhouse.head(2)\ndel scratch');
    const error = await failure(bridge.fetch('scratch'));
    expect(error.reason).toBe('kernel');
    expect(error.detail.frame).toBe('scratch');
    expect(error.message).toContain("'scratch'");
  });

  it("should surface the kernel's error for a column of mixed types", async () => {
    await cell("mixed = pd.DataFrame({'reading': [1.5, 'high', None, 2]})");
    const error = await failure(bridge.fetch('mixed'));
    expect(error.reason).toBe('kernel');
    expect(error.detail.column).toBe('reading');
    expect(error.detail.types).toEqual(['float', 'int', 'str']);
  });

  it('should send results in chunks that polyadic.results reads back', async () => {
    const rows: IMultipletRow[] = Array.from({ length: 400 }, (_, i) => ({
      columns: ['valve_command', 'flow_meter', `leak_alarm_${i}`],
      order: 3,
      entropy: i / 3,
      co_information: -i / 5,
      total_correlation: i / 7,
      dual_total_correlation: i / 9,
      o_information: i / 7 - i / 9,
      s_information: i / 7 + i / 9
    }));
    const receipt = await bridge.sendResults('live-1', rows, { chunkBytes: 4096, meta: { frame: 'greenhouse' } });
    expect(receipt.chunks).toBeGreaterThan(3);
    expect(receipt.rows).toBe(400);
    await cell('import polyadic as _pd_test');
    const back = await evaluate<{ rows: Record<string, unknown>[]; attrs: Record<string, unknown> }>(
      '{"rows": [{k: (list(v) if isinstance(v, tuple) else v.item() if hasattr(v, "item") else v) for k, v in r.items()} ' +
        'for r in _pd_test.results("live-1").to_dict(orient="records")], "attrs": _pd_test.results("live-1").attrs["polyadic"]}'
    );
    expect(back.rows).toEqual(rows);
    expect(back.attrs).toEqual({ analysis_id: 'live-1', frame: 'greenhouse' });
  });

  it('should scan a DuckDB relation to the JSON of the same frame analysed in memory, and refuse a date column by name', async () => {
    // A relation over the seeded frame: NaN and nulls in a float, nullable integers, booleans, text.
    await cell(
      'import duckdb\n' +
        'scan_con = duckdb.connect()\n' +
        'rel = scan_con.from_df(greenhouse[["air_temperature", "humidity_a", "fan_on", "operator", "logged_at"]])'
    );
    await waitFor('the relation in the listing', () => (bridge.listing?.frames ?? []).some(frame => frame.name === 'rel'));
    const listed = bridge.listing!.frames.find(frame => frame.name === 'rel')!;
    expect(listed).toMatchObject({ kind: 'duckdb', rows: null, memory_bytes: null, engine: { name: 'duckdb' } });
    const names = ['air_temperature', 'humidity_a', 'fan_on', 'operator'];
    const inMemory = await bridge.fetch('greenhouse', names);
    for (const options of [
      { bins: 'quantile:4', missing: 'category', estimator: 'miller-madow' },
      { bins: 'doane', missing: 'drop', estimator: 'plugin', maxOrder: 3 }
    ] as IAnalyzeOptions[]) {
      const stages: string[] = [];
      const scanner = new KernelScanner({ bridge, name: 'rel', onStage: stage => stages.push(stage) });
      const { prepared } = await scanWeightedCodes(scanner, names, options);
      const viaScan = analyzeCodes(prepared, { ...options, columns: names });
      const expected = analyze(inMemory.columns, { ...options, columns: names });
      expect(viaScan.rows).toBe(5000);
      expect(JSON.stringify(viaScan.multiplets)).toBe(JSON.stringify(expected.multiplets));
      expect(viaScan.columns.map(column => column.binning)).toEqual(expected.columns.map(column => column.binning));
    }
    const refused = await scanWeightedCodes(new KernelScanner({ bridge, name: 'rel' }), ['logged_at'], {}).catch(error => error);
    expect(refused.detail.column).toBe('logged_at');
    expect(refused.message).toMatch(/logged_at/);
    // the kernel stays usable after the refused scan
    expect((await cell('print(1 + 1)')).stdout.trim()).toBe('2');
    await cell('del rel, scan_con');
  });

  it('should scan a Spark DataFrame to the JSON of the same frame analysed in memory, for every count estimator', async () => {
    // A local[2] SparkSession in the kernel, small and quiet, its Python workers on this interpreter.
    const started = Date.now();
    await cell(
      'import os, sys\n' +
        'os.environ.setdefault("PYSPARK_PYTHON", sys.executable)\n' +
        'os.environ.setdefault("PYSPARK_DRIVER_PYTHON", sys.executable)\n' +
        'from pyspark.sql import SparkSession, functions as F\n' +
        'spark = (SparkSession.builder.master("local[2]").appName("polyadic-live-kernel")\n' +
        '    .config("spark.ui.enabled", "false").config("spark.ui.showConsoleProgress", "false")\n' +
        '    .config("spark.sql.shuffle.partitions", "2")\n' +
        '    .config("spark.default.parallelism", "2").config("spark.driver.memory", "512m")\n' +
        '    .config("spark.sql.execution.arrow.pyspark.enabled", "true").getOrCreate())\n' +
        'spark.sparkContext.setLogLevel("ERROR")\n' +
        '# The seeded frame: NaN and nulls in a float, nullable integers, booleans, text. From pandas\n' +
        '# through Arrow, Spark slices the rows into its two partitions in order; collect() keeps them.\n' +
        'sdf = spark.createDataFrame(greenhouse[["air_temperature", "humidity_a", "fan_on", "operator"]]).cache()'
    );
    try {
      // The row order Spark keeps is the pandas frame's, and missing values stay missing.
      await cell(
        'spark_back = sdf.toPandas().astype(object)\n' +
          'pandas_side = greenhouse[list(spark_back.columns)].astype(object)\n' +
          'spark_back, pandas_side = spark_back.where(spark_back.notna(), None), pandas_side.where(pandas_side.notna(), None)'
      );
      const order = await evaluate<{ partitions: number; same: boolean }>(
        '{"partitions": sdf.rdd.getNumPartitions(), "same": bool(spark_back.equals(pandas_side))}'
      );
      console.log(`Spark session and frame ready: ${((Date.now() - started) / 1000).toFixed(1)} s`);
      expect(order).toEqual({ partitions: 2, same: true });
      await waitFor('the Spark frame in the listing', () => (bridge.listing?.frames ?? []).some(frame => frame.name === 'sdf'));
      const listed = bridge.listing!.frames.find(frame => frame.name === 'sdf')!;
      expect(listed).toMatchObject({ kind: 'spark', rows: null, memory_bytes: null, engine: { name: 'spark' } });
      const names = ['air_temperature', 'humidity_a', 'fan_on', 'operator'];
      const inMemory = await bridge.fetch('greenhouse', names);
      // The full lattice with missing values as their own code, and an order-limited run dropping
      // them. The scan reads no estimator (src/engine/aggregate/scan.ts), so each run is scanned
      // once and every count estimator is checked on the same scanned codes.
      const runs: IAnalyzeOptions[] = [
        { bins: 'quantile:4', missing: 'category' },
        { bins: 'doane', missing: 'drop', maxOrder: 2 }
      ];
      for (const run of runs) {
        const scanTimer = Date.now();
        const { prepared } = await scanWeightedCodes(new KernelScanner({ bridge, name: 'sdf' }), names, run);
        console.log(`Spark scan (${run.bins}, ${run.missing}): ${((Date.now() - scanTimer) / 1000).toFixed(1)} s`);
        for (const estimator of ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'] as const) {
          const options: IAnalyzeOptions = { ...run, estimator, columns: names };
          const viaScan = analyzeCodes(prepared, options);
          const expected = analyze(inMemory.columns, options);
          expect(viaScan.rows).toBe(5000);
          expect(viaScan.multiplets.length).toBe(expected.multiplets.length);
          expect(JSON.stringify(viaScan.multiplets)).toBe(JSON.stringify(expected.multiplets));
          expect(viaScan.columns.map(column => column.binning)).toEqual(expected.columns.map(column => column.binning));
          // The text column came through as its three categories; the order limit held.
          expect(viaScan.columns.find(column => column.name === 'operator')?.binning.categories).toHaveLength(3);
          expect(Math.max(...viaScan.multiplets.map(row => row.order))).toBe(run.maxOrder ?? names.length);
        }
      }
      // A Spark job failing mid-scan: some rows raise; the scan is rejected with Spark's own message.
      await cell(
        'bad = sdf.select(F.when(F.col("humidity_a") > 85, F.raise_error(F.lit("live test: humidity refused")))' +
          '.otherwise(F.col("air_temperature")).alias("air_temperature"))'
      );
      await waitFor('the failing frame in the listing', () => (bridge.listing?.frames ?? []).some(frame => frame.name === 'bad'));
      const failed = await scanWeightedCodes(new KernelScanner({ bridge, name: 'bad' }), ['air_temperature'], {
        bins: 'quantile:4'
      }).catch(error => error);
      expect(failed).toBeInstanceOf(Error);
      expect(failed.reason).toBe('kernel');
      expect(failed.message).toMatch(/^Spark stopped the scan of 'bad': /);
      expect(failed.detail.engine).toBe('spark');
      expect(failed.detail.engine_message).toContain('live test: humidity refused');
      // A later cell still runs, and the session still answers.
      expect((await cell('print(sdf.count())')).stdout.trim()).toBe('5000');
    } finally {
      await cell('spark.stop()\nfor _name in ("sdf", "bad", "spark_back", "pandas_side"):\n    globals().pop(_name, None)');
      console.log(`Spark scans in the live kernel: ${((Date.now() - started) / 1000).toFixed(1)} s`);
    }
  });

  it('should fetch while a cell runs (the comm has its own subshell) and stay ready after an interrupt', async () => {
    const running = kernel.requestExecute({
      code: 'import time\nfor _ in range(600):\n    time.sleep(0.05)',
      store_history: true
    });
    let cellDone = false;
    void running.done.then(() => (cellDone = true));
    await new Promise(resolve => setTimeout(resolve, 300));
    const frame = await bridge.fetch('greenhouse', ['air_temperature']);
    expect(frame.rows).toBe(5000);
    expect(cellDone).toBe(false);
    await kernel.interrupt();
    expect((await running.done).content.status).toBe('error');
    expect(bridge.status.state).toBe('ready');
    expect((await bridge.refresh()).frames.map(f => f.name)).toContain('greenhouse');
  });

  it('should reject a fetch cut by a restart, then re-import and re-open the comm', async () => {
    const states: IBridgeStatus['state'][] = [];
    bridge.statusChanged.connect((_, status) => states.push(status.state));
    const fetching = bridge.fetch('greenhouse');
    const restarted = kernel.restart();
    const error = await failure(fetching);
    expect(error.reason).toBe('restart');
    expect(error.message).toMatch(/during the fetch of 'greenhouse'/);
    await restarted;
    await waitFor('the bridge to be ready after the restart', () => bridge.status.state === 'ready');
    expect(states[0]).toBe('starting');
    // A fresh kernel: the frames are gone, and the new comm answers.
    const listing = await bridge.refresh();
    expect(listing.frames).toEqual([]);
    expect((await failure(bridge.fetch('greenhouse'))).detail.frame).toBe('greenhouse');
  });
});
