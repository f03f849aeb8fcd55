#!/usr/bin/env node
/**
 * The DuckDB path beside the in-memory CLI on one Parquet file (issue 14): a seeded file of
 * ROWS rows × 10 numeric columns written by DuckDB (setseed, then random() and a shared latent
 * term so the columns depend on each other), then `polyadic analyze FILE --bins quantile:4` with
 * and without `--via duckdb`, full lattice, each timed with GNU time (wall time, peak resident
 * memory). Then the same file through Spark as the notebook scans a Spark DataFrame
 * (bench/aggregate-spark.ts: a Jupyter server and kernel, a local[2] SparkSession reading the
 * file, polyadic's kernel bridge and the panel's KernelScanner, the weighted walk), its wall
 * time and the peak of the summed resident memory of its whole process tree (Node, the server,
 * the kernel, the JVM, Spark's Python workers), read from /proc every 0.5 s. Prints the
 * figures, whether the outputs are the same JSON bytes and every multiplet's entropy the same
 * bits, then one JSON line.
 *
 *   node bench/aggregate.mjs [--rows 50000000] [--dir /tmp] [--no-memory] [--no-spark] [--spark-memory 2g]
 *   (--no-memory: skip the in-memory CLI; --no-spark: skip Spark; --spark-memory: Spark's driver memory)
 * Python for the Spark row: POLYADIC_PYTHON, else .venv/bin/python.
 */
import { spawn, spawnSync } from 'child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, statSync } from 'fs';
import { dirname, join, resolve } from 'path';
import { fileURLToPath } from 'url';
import { parseArgs } from 'util';

import { DuckDBInstance } from '@duckdb/node-api';
import { build } from 'esbuild';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const { values } = parseArgs({
  options: {
    rows: { type: 'string' },
    dir: { type: 'string' },
    'no-memory': { type: 'boolean' },
    'no-spark': { type: 'boolean' },
    'spark-memory': { type: 'string', default: '2g' }
  },
  strict: true
});
const rows = Number(values.rows ?? 50_000_000);
const dir = resolve(values.dir ?? join(root, 'bench', 'results'));
mkdirSync(dir, { recursive: true });
const file = join(dir, `aggregate-${rows}.parquet`);
const cli = join(root, 'bin', 'polyadic.cjs');

if (!existsSync(file)) {
  const started = Date.now();
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  await connection.run('SELECT setseed(0.14)');
  const columns = Array.from({ length: 10 }, (_, i) =>
    i < 6 ? `z + random() * ${i + 1} AS x${i}` : `random() * 10 AS x${i}`
  ).join(', ');
  await connection.run(
    `COPY (SELECT ${columns} FROM (SELECT random() AS z FROM range(${rows}))) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 1000000)`
  );
  connection.closeSync();
  instance.closeSync();
  console.log(`wrote ${file} (${(statSync(file).size / 2 ** 20).toFixed(0)} MiB) in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

function timed(label, args) {
  const out = join(dir, `aggregate-${label}.json`);
  const run = spawnSync('/usr/bin/time', ['-f', '%e %M', process.execPath, '--max-old-space-size=16384', cli, ...args, '--out', out], {
    encoding: 'utf8'
  });
  const last = run.stderr.trim().split('\n').pop() ?? '';
  const [wall, kb] = last.split(' ').map(Number);
  const ok = run.status === 0;
  console.log(
    `${label.padEnd(10)} ${ok ? `${wall.toFixed(1)} s wall, ${(kb / 2 ** 20).toFixed(2)} GiB peak resident` : `failed (exit ${run.status}): ${run.stderr.trim().split('\n').slice(-3, -1).join(' | ')}`}`
  );
  return { json: ok ? readFileSync(out, 'utf8') : null, wall, kb };
}

/** The summed VmRSS in KiB of process `pid` and all its descendants, from /proc. */
function treeResidentKb(pid) {
  const children = new Map();
  const resident = new Map();
  for (const entry of readdirSync('/proc')) {
    if (!/^[0-9]+$/.test(entry)) {
      continue;
    }
    try {
      const status = readFileSync(`/proc/${entry}/status`, 'utf8');
      const parent = Number(/^PPid:\s+(\d+)/m.exec(status)?.[1]);
      const rss = Number(/^VmRSS:\s+(\d+) kB/m.exec(status)?.[1] ?? 0);
      resident.set(Number(entry), rss);
      if (!children.has(parent)) {
        children.set(parent, []);
      }
      children.get(parent).push(Number(entry));
    } catch {
      // the process ended while the list was read
    }
  }
  let total = 0;
  const pending = [pid];
  while (pending.length > 0) {
    const next = pending.pop();
    total += resident.get(next) ?? 0;
    pending.push(...(children.get(next) ?? []));
  }
  return total;
}

/** The Spark row: the harness bundled with esbuild, run as a child, its tree sampled. */
async function sparkRun() {
  const python = process.env.POLYADIC_PYTHON ?? join(root, '.venv', 'bin', 'python');
  if (!existsSync(python)) {
    console.log(`spark      skipped: no Python at ${python}; create .venv or set POLYADIC_PYTHON`);
    return null;
  }
  const bundle = join(dir, 'aggregate-spark.cjs');
  await build({
    entryPoints: [join(root, 'bench', 'aggregate-spark.ts')],
    outfile: bundle,
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node18',
    // ws's optional native helpers
    external: ['bufferutil', 'utf-8-validate'],
    logLevel: 'warning'
  });
  const out = join(dir, 'aggregate-spark.json');
  const child = spawn(
    process.execPath,
    ['--max-old-space-size=16384', bundle, '--file', file, '--out', out, '--python', python, '--root', root,
      '--driver-memory', values['spark-memory']],
    { stdio: ['ignore', 'pipe', 'pipe'] }
  );
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', chunk => (stdout += chunk));
  child.stderr.on('data', chunk => (stderr = (stderr + chunk).slice(-20_000)));
  let peakKb = 0;
  const sample = () => {
    peakKb = Math.max(peakKb, treeResidentKb(child.pid));
  };
  const sampler = setInterval(sample, 500);
  const status = await new Promise(done => child.once('exit', code => done(code)));
  clearInterval(sampler);
  const line = stdout.trim().split('\n').pop() ?? '';
  if (status !== 0 || !line.startsWith('{')) {
    console.log(`spark      failed (exit ${status}): ${stderr.trim().split('\n').slice(-3).join(' | ')}`);
    return null;
  }
  const timings = JSON.parse(line);
  console.log(
    `spark      ${timings.wall_s.toFixed(1)} s wall from the SparkSession (start-up ${timings.spark_start_s.toFixed(1)} s, ` +
      `scan ${timings.scan_s.toFixed(1)} s, walk ${timings.walk_s.toFixed(1)} s; server and kernel before it ` +
      `${timings.kernel_ready_s.toFixed(1)} s), ${(peakKb / 2 ** 20).toFixed(2)} GiB peak resident (process tree)`
  );
  return { json: readFileSync(out, 'utf8'), timings, peakKb };
}

/** Whether two outputs have the same multiplets with the same entropies, bit for bit. */
function sameEntropies(a, b) {
  const left = JSON.parse(a).multiplets;
  const right = JSON.parse(b).multiplets;
  return (
    left.length === right.length &&
    left.every((row, i) => row.columns.join('\u0000') === right[i].columns.join('\u0000') && Object.is(row.entropy, right[i].entropy))
  );
}

console.log(`${rows.toLocaleString('en-US')} rows × 10 numeric columns, full lattice, quantile:4`);
const base = ['analyze', file, '--bins', 'quantile:4', '--threads', '1'];
const table = [];
const duck = timed('duckdb', [...base, '--via', 'duckdb']);
table.push({ path: 'duckdb', ...duck });
if (!values['no-memory']) {
  table.push({ path: 'in-memory', ...timed('in-memory', base) });
}
if (!values['no-spark']) {
  const spark = await sparkRun();
  table.push(
    spark === null
      ? { path: 'spark', json: null }
      : { path: 'spark', json: spark.json, wall: spark.timings.wall_s, kb: spark.peakKb, timings: spark.timings }
  );
}

// Every output against the first one that ran (the DuckDB path's, normally).
const reference = table.find(row => row.json !== null);
for (const row of table) {
  row.sameBytes = row.json !== null && reference !== undefined ? row.json === reference.json : null;
  row.sameEntropies = row.json !== null && reference !== undefined ? sameEntropies(row.json, reference.json) : null;
}
console.log(`\n| path | wall | peak memory | equal to ${reference?.path ?? '—'}? |`);
console.log('|---|---|---|---|');
for (const row of table) {
  const equal =
    row.json === null ? 'failed' : `JSON bytes ${row.sameBytes ? 'same' : 'differ'}, entropies ${row.sameEntropies ? 'same bits' : 'differ'}`;
  const wall = row.json === null ? '—' : `${row.wall.toFixed(1)} s`;
  const memory = row.json === null ? '—' : `${(row.kb / 2 ** 20).toFixed(2)} GiB${row.path === 'spark' ? ' (tree)' : ''}`;
  console.log(`| ${row.path} | ${wall} | ${memory} | ${equal} |`);
}
console.log(
  JSON.stringify({
    rows,
    file,
    reference: reference?.path ?? null,
    paths: table.map(row => ({
      path: row.path,
      ok: row.json !== null,
      wall_s: row.wall ?? null,
      peak_resident_gib: row.kb === undefined ? null : Number((row.kb / 2 ** 20).toFixed(3)),
      peak_memory_of: row.path === 'spark' ? 'process tree (summed VmRSS)' : 'largest process (GNU time %M)',
      same_json_bytes: row.sameBytes,
      same_entropies: row.sameEntropies,
      ...(row.timings ? { spark: row.timings } : {})
    }))
  })
);
