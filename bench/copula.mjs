/**
 * Benchmark of the Gaussian-copula estimator (`npm run bench:copula`): the full lattice (every
 * order, 2^20 − 1 multiplets) of 20 continuous columns × 10,000 rows.
 *
 * - In process (the engine bundled with esbuild): the ranking (prepareColumns), the Cholesky-
 *   extension walk alone (computeCopulaLattice, scores and covariance included), and the whole
 *   analyze() with top 10 (walk, every measure, selection).
 * - Through the built CLI (bin/polyadic.cjs, `--top 10` so the output stays small) with
 *   `--threads 1` and `--threads 2`, beside the same run at `--max-order 1` (reading the CSV,
 *   ranking, output: what the lattice adds is the difference).
 *
 * Prints the median wall time of the repeats; asserts nothing.
 *
 * Options: --repeats R (default 3), --quick (1 repeat).
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { performance } from 'node:perf_hooks';

import { build } from 'esbuild';
import { xoroshiro128plus } from 'pure-rand';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'bin', 'polyadic.cjs');
const { values: flags } = parseArgs({
  options: { repeats: { type: 'string', default: '3' }, quick: { type: 'boolean', default: false } },
  strict: true
});
const repeats = flags.quick ? 1 : Number(flags.repeats);
const COLUMNS = 20;
const ROWS = 10000;

// Seeded Gaussian chain (each column leans on the previous one), written as CSV once.
const rng = xoroshiro128plus(2017);
const uniform = () => ((rng.unsafeNext() >>> 0) + 0.5) / 4294967296;
const gaussian = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
const table = Array.from({ length: COLUMNS }, () => new Float64Array(ROWS));
for (let j = 0; j < COLUMNS; j++) {
  for (let i = 0; i < ROWS; i++) {
    table[j][i] = j > 0 ? 0.6 * table[j - 1][i] + 0.8 * gaussian() : gaussian();
  }
}
const lines = [Array.from({ length: COLUMNS }, (_, j) => `x${j}`).join(',')];
for (let i = 0; i < ROWS; i++) {
  lines.push(table.map(column => column[i].toPrecision(12)).join(','));
}
const folder = mkdtempSync(join(tmpdir(), 'polyadic-bench-'));
const data = join(folder, 'copula.csv');
writeFileSync(data, lines.join('\n') + '\n');

function time(args) {
  const times = [];
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    const done = spawnSync(process.execPath, [cli, 'analyze', data, '--estimator', 'gaussian-copula', '--top', '10', ...args], {
      encoding: 'utf8',
      maxBuffer: 1 << 28
    });
    if (done.status !== 0) {
      throw new Error(`polyadic failed: ${done.stderr}`);
    }
    times.push((performance.now() - start) / 1000);
  }
  times.sort((a, b) => a - b);
  return times[times.length >> 1];
}

const multiplets = 2 ** COLUMNS - 1;

// In process: the engine bundled once into the temporary folder.
const entry = join(folder, 'entry.ts');
writeFileSync(
  entry,
  `export { analyze, prepareColumns, latticeInput } from ${JSON.stringify(join(root, 'src/engine/analyze'))};\n` +
    `export { computeCopulaLattice } from ${JSON.stringify(join(root, 'src/engine/copula/walk'))};\n`
);
const engineFile = join(folder, 'engine.mjs');
await build({ entryPoints: [entry], bundle: true, format: 'esm', platform: 'node', outfile: engineFile, logLevel: 'error' });
const engine = await import(engineFile);
const columns = table.map((values, j) => ({ kind: 'numeric', name: `x${j}`, dtype: 'float64', values, missing: null }));
const options = { estimator: 'gaussian-copula', top: 10 };
const median = run => {
  const times = [];
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    run();
    times.push((performance.now() - start) / 1000);
  }
  times.sort((a, b) => a - b);
  return times[times.length >> 1];
};
const prepared = engine.prepareColumns(columns, options);
const input = engine.latticeInput(prepared, options);
const inProcess = {
  ranking_s: median(() => engine.prepareColumns(columns, options)),
  walk_s: median(() => engine.computeCopulaLattice(input)),
  analyze_s: median(() => engine.analyze(columns, options))
};

const rows = [];
for (const threads of ['1', '2']) {
  const baseline = time(['--threads', threads, '--max-order', '1']);
  const full = time(['--threads', threads]);
  rows.push({ threads: Number(threads), full_lattice_s: full, order_1_s: baseline });
}
console.log(
  `machine: ${cpus().length} cores, load ${loadavg().map(v => v.toFixed(2)).join(' ')}; gaussian-copula, ` +
    `${COLUMNS} columns × ${ROWS} rows, full lattice (${multiplets} multiplets), median of ${repeats}`
);
console.log(
  `in process: ranking ${inProcess.ranking_s.toFixed(3)} s; full-lattice walk ${inProcess.walk_s.toFixed(3)} s ` +
    `(${(multiplets / inProcess.walk_s / 1e6).toFixed(1)} M multiplets/s); analyze() with every measure ${inProcess.analyze_s.toFixed(3)} s`
);
console.log('CLI threads   full lattice   order 1 only');
for (const row of rows) {
  console.log(`${String(row.threads).padStart(11)}   ${row.full_lattice_s.toFixed(2).padStart(10)} s   ${row.order_1_s.toFixed(2).padStart(10)} s`);
}
const report = { benchmark: 'copula', columns: COLUMNS, rows: ROWS, multiplets, in_process: inProcess, cli: rows };
mkdirSync(join(root, 'bench', 'results'), { recursive: true });
writeFileSync(join(root, 'bench', 'results', 'copula.json'), JSON.stringify(report, null, 2) + '\n');
console.log(JSON.stringify(report));
