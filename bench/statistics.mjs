/**
 * Benchmark of the statistics (`npm run bench:statistics`): 1,000 independence surrogates at
 * maximum order 3 on 20 columns × 2,000 rows (quantile:4), beside the plain run, with
 * `--threads 1` and `--threads 2`, through the built CLI (bin/polyadic.cjs), in one session.
 * Prints the median wall time of the repeats and the row visits per second; asserts nothing.
 *
 * Options: --surrogates N (default 1000), --repeats R (default 3), --quick (100 surrogates, 1 repeat).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync, mkdirSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { performance } from 'node:perf_hooks';

import { xoroshiro128plus } from 'pure-rand';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'bin', 'polyadic.cjs');
const { values: flags } = parseArgs({
  options: {
    surrogates: { type: 'string', default: '1000' },
    repeats: { type: 'string', default: '3' },
    quick: { type: 'boolean', default: false }
  },
  strict: true
});
const surrogates = flags.quick ? 100 : Number(flags.surrogates);
const repeats = flags.quick ? 1 : Number(flags.repeats);
const COLUMNS = 20;
const ROWS = 2000;

// Seeded Gaussian chain (each column leans on the previous one), written as CSV once.
let rng = xoroshiro128plus(2026);
const uniform = () => ((rng.unsafeNext() >>> 0) + 0.5) / 4294967296;
const gaussian = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
const lines = [Array.from({ length: COLUMNS }, (_, j) => `x${j}`).join(',')];
let previous = null;
const table = Array.from({ length: COLUMNS }, () => new Float64Array(ROWS));
for (let j = 0; j < COLUMNS; j++) {
  for (let i = 0; i < ROWS; i++) {
    table[j][i] = previous ? 0.6 * previous[i] + 0.8 * gaussian() : gaussian();
  }
  previous = table[j];
}
for (let i = 0; i < ROWS; i++) {
  lines.push(table.map(column => column[i].toPrecision(12)).join(','));
}
const folder = mkdtempSync(join(tmpdir(), 'polyadic-bench-'));
const data = join(folder, 'bench.csv');
writeFileSync(data, lines.join('\n') + '\n');

function time(args) {
  const times = [];
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    const done = spawnSync(process.execPath, [cli, 'analyze', data, '--max-order', '3', '--bins', 'quantile:4', ...args], {
      encoding: 'utf8',
      maxBuffer: 1 << 30
    });
    if (done.status !== 0) {
      throw new Error(`polyadic failed: ${done.stderr}`);
    }
    times.push((performance.now() - start) / 1000);
  }
  times.sort((a, b) => a - b);
  return times[times.length >> 1];
}

const multiplets = COLUMNS + (COLUMNS * (COLUMNS - 1)) / 2 + (COLUMNS * (COLUMNS - 1) * (COLUMNS - 2)) / 6;
const rows = [];
for (const threads of ['1', '2']) {
  const plain = time(['--threads', threads]);
  const tested = time(['--threads', threads, '--surrogates', String(surrogates), '--seed', '1']);
  const visits = multiplets * ROWS * surrogates;
  rows.push({ threads: Number(threads), plain_s: plain, surrogates, with_surrogates_s: tested, row_visits_per_s: visits / (tested - plain) });
}
console.log(`machine: ${cpus().length} cores, load ${loadavg().map(v => v.toFixed(2)).join(' ')}; ${COLUMNS} columns × ${ROWS} rows, order ≤ 3 (${multiplets} multiplets), median of ${repeats}`);
console.log('threads   plain run   with surrogates   surrogate row visits/s');
for (const row of rows) {
  console.log(
    `${String(row.threads).padStart(7)}   ${row.plain_s.toFixed(2).padStart(7)} s   ${row.with_surrogates_s.toFixed(2).padStart(13)} s   ${(row.row_visits_per_s / 1e9).toFixed(2).padStart(10)} G`
  );
}
mkdirSync(join(root, 'bench', 'results'), { recursive: true });
writeFileSync(join(root, 'bench', 'results', 'statistics.json'), JSON.stringify(rows, null, 2) + '\n');
console.log(JSON.stringify({ benchmark: 'statistics', rows }));
