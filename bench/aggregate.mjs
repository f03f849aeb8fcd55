#!/usr/bin/env node
/**
 * The DuckDB path beside the in-memory CLI on one Parquet file (issue 14): a seeded file of
 * ROWS rows × 10 numeric columns written by DuckDB (setseed, then random() and a shared latent
 * term so the columns depend on each other), then `polyadic analyze FILE --bins quantile:4` with
 * and without `--via duckdb`, full lattice, each timed with GNU time (wall time, peak resident
 * memory). Prints the figures and whether the two JSON outputs are the same bytes.
 *
 *   node bench/aggregate.mjs [--rows 50000000] [--dir /tmp] [--no-memory]   (--no-memory: DuckDB path only)
 */
import { spawnSync } from 'child_process';
import { existsSync, mkdirSync, readFileSync, statSync } from 'fs';
import { dirname, join, resolve } from 'path';
import { fileURLToPath } from 'url';
import { parseArgs } from 'util';

import { DuckDBInstance } from '@duckdb/node-api';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const { values } = parseArgs({
  options: { rows: { type: 'string' }, dir: { type: 'string' }, 'no-memory': { type: 'boolean' } }
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
  return ok ? readFileSync(out, 'utf8') : null;
}

console.log(`${rows.toLocaleString('en-US')} rows × 10 numeric columns, full lattice, quantile:4`);
const base = ['analyze', file, '--bins', 'quantile:4', '--threads', '1'];
const duck = timed('duckdb', [...base, '--via', 'duckdb']);
if (!values['no-memory']) {
  const memory = timed('in-memory', base);
  if (duck && memory) {
    console.log(`same JSON bytes: ${duck === memory}`);
  }
}
