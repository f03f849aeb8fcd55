/**
 * Benchmarks of the engine (`npm run bench`): time `analyze` on seeded synthetic tables, print
 * the median of several repeats, and run the numpy baseline (bench/numpy_baseline.py: the same
 * plug-in joint entropies with np.unique on combined codes) side by side when .venv/bin/python
 * exists. Timings are printed, never asserted.
 *
 * Options: --quick (fewer repeats, for a smoke run), --only NAME (one case), --no-numpy.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync, existsSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { createRequire } from 'node:module';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { performance } from 'node:perf_hooks';

import { tableToIPC, tableFromArrays } from 'apache-arrow';
import { build } from 'esbuild';
import { xoroshiro128plus } from 'pure-rand';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const results = join(root, 'bench', 'results');
const require = createRequire(import.meta.url);

const { values: flags } = parseArgs({
  options: {
    quick: { type: 'boolean', default: false },
    only: { type: 'string' },
    'no-numpy': { type: 'boolean', default: false }
  },
  strict: true
});

/** The cases: columns × rows, binning, largest order, repeats of the engine and of numpy. */
const CASES = [
  { name: 'lattice-16x10k-quantile4', columns: 16, rows: 10_000, bins: 'quantile:4', maxOrder: 16, repeats: 5, numpyRepeats: 1 },
  { name: 'lattice-16x10k-width8', columns: 16, rows: 10_000, bins: 'width:8', maxOrder: 16, repeats: 5, numpyRepeats: 1 },
  { name: 'order3-20x100k-quantile4', columns: 20, rows: 100_000, bins: 'quantile:4', maxOrder: 3, repeats: 5, numpyRepeats: 3 },
  { name: 'order2-12x1M-quantile4', columns: 12, rows: 1_000_000, bins: 'quantile:4', maxOrder: 2, repeats: 3, numpyRepeats: 3 },
  { name: 'order3-12x1M-quantile4', columns: 12, rows: 1_000_000, bins: 'quantile:4', maxOrder: 3, repeats: 3, numpyRepeats: 1 }
].filter(c => !flags.only || c.name === flags.only);

/**
 * Seeded synthetic table: a chain of Gaussian columns (each leans on the previous one), and a
 * last column that depends on the signs of the first two (an XOR-like triplet).
 */
function synthetic(columns, rows, seed) {
  let rng = xoroshiro128plus(seed);
  const uniform = () => ((rng.unsafeNext() >>> 0) + 0.5) / 4294967296;
  const gaussian = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
  const data = {};
  let previous = null;
  for (let j = 0; j < columns; j++) {
    const values = new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      values[i] = previous ? 0.6 * previous[i] + 0.8 * gaussian() : gaussian();
    }
    data[`x${String(j).padStart(2, '0')}`] = values;
    previous = values;
  }
  const names = Object.keys(data);
  const [a, b] = [data[names[0]], data[names[1]]];
  const last = data[names[columns - 1]];
  for (let i = 0; i < rows; i++) {
    last[i] = Math.sign(a[i]) * Math.sign(b[i]) * Math.abs(gaussian()) + 0.1 * gaussian();
  }
  return data;
}

function median(values) {
  const sorted = [...values].sort((x, y) => x - y);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

function countMultiplets(n, k) {
  let total = 0;
  let term = 1;
  for (let order = 1; order <= k; order++) {
    term = (term * (n - order + 1)) / order;
    total += term;
  }
  return Math.round(total);
}

async function loadEngine() {
  mkdirSync(results, { recursive: true });
  const outfile = join(results, 'engine.cjs');
  await build({
    stdin: { contents: "export { analyze } from './src/engine/analyze';", resolveDir: root, loader: 'ts' },
    outfile,
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node18',
    logLevel: 'warning'
  });
  return require(outfile);
}

function columnViews(data) {
  return Object.entries(data).map(([name, values]) => ({ kind: 'numeric', name, dtype: 'float64', values, missing: null }));
}

function runNumpy(python, testCase, dataPath, edgesPath) {
  const done = spawnSync(
    python,
    [join(root, 'bench', 'numpy_baseline.py'), dataPath, edgesPath, String(testCase.maxOrder), String(flags.quick ? 1 : testCase.numpyRepeats)],
    { encoding: 'utf8', maxBuffer: 1 << 30 }
  );
  if (done.status !== 0) {
    return { error: (done.stderr || done.stdout).trim().split('\n').pop() };
  }
  return JSON.parse(done.stdout);
}

const { analyze } = await loadEngine();
const python = join(root, '.venv', 'bin', 'python');
const withNumpy = !flags['no-numpy'] && existsSync(python);
if (!withNumpy) {
  console.log(flags['no-numpy'] ? 'numpy baseline: off (--no-numpy)' : `numpy baseline: skipped, ${python} not found`);
}

// timings are only comparable on an idle machine: print the load next to them
const loadAtStart = loadavg()[0];
const rows = [];
for (const testCase of CASES) {
  const data = synthetic(testCase.columns, testCase.rows, 20240611 + testCase.columns);
  const columns = columnViews(data);
  const options = { bins: testCase.bins, maxOrder: testCase.maxOrder, units: 'bits', estimator: 'plugin' };
  const repeats = flags.quick ? 1 : testCase.repeats;
  const times = [];
  let result;
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    result = analyze(columns, options);
    times.push(performance.now() - start);
  }
  const expected = countMultiplets(testCase.columns, testCase.maxOrder);
  const row = {
    case: testCase.name,
    rows: testCase.rows,
    columns: testCase.columns,
    max_order: testCase.maxOrder,
    multiplets: result.multiplet_count,
    engine_median_ms: median(times),
    engine_min_ms: Math.min(...times),
    repeats
  };
  if (result.multiplet_count !== expected) {
    row.note = `expected ${expected} multiplets`;
  }
  if (withNumpy) {
    const dataPath = join(results, `${testCase.name}.arrow`);
    const edgesPath = join(results, `${testCase.name}.edges.json`);
    writeFileSync(dataPath, tableToIPC(tableFromArrays(data), 'file'));
    writeFileSync(edgesPath, JSON.stringify(Object.fromEntries(result.columns.map(c => [c.name, c.binning.edges]))));
    const numpy = runNumpy(python, testCase, dataPath, edgesPath);
    if (numpy.error) {
      row.numpy_error = numpy.error;
    } else {
      row.numpy_median_ms = numpy.median_ms;
      row.numpy_repeats = numpy.repeats;
      // the same joint entropies from numpy: the largest difference is a correctness check
      const byKey = new Map(result.multiplets.map(m => [m.columns.join('\u0000'), m.entropy]));
      let largest = 0;
      let missing = 0;
      for (const [key, entropy] of numpy.entropies) {
        const ours = byKey.get(key.join('\u0000'));
        if (ours === undefined) {
          missing++;
        } else {
          largest = Math.max(largest, Math.abs(ours - entropy));
        }
      }
      row.max_abs_entropy_difference = largest;
      if (missing > 0) {
        row.note = `${missing} numpy multiplets not in the engine result`;
      }
    }
  }
  rows.push(row);
  console.log(JSON.stringify(row));
}

const machine = { node: process.version, cpus: cpus().length, load_at_start: loadAtStart, load_at_end: loadavg()[0] };
writeFileSync(join(results, 'latest.json'), JSON.stringify({ ...machine, cases: rows }, null, 2));

const fmt = value => (value === undefined ? '—' : value >= 100 ? value.toFixed(0) : value.toFixed(1));
console.log('\n| case | rows × cols | max order | multiplets | engine median ms (min) | numpy median ms | numpy / engine | max |ΔH| bits |');
console.log('|---|---|---|---|---|---|---|---|');
for (const row of rows) {
  const ratio = row.numpy_median_ms ? (row.numpy_median_ms / row.engine_median_ms).toFixed(1) + '×' : '—';
  const delta = row.max_abs_entropy_difference === undefined ? row.numpy_error ?? '—' : row.max_abs_entropy_difference.toExponential(1);
  console.log(
    `| ${row.case} | ${row.rows.toLocaleString('en')} × ${row.columns} | ${row.max_order} | ${row.multiplets} | ` +
      `${fmt(row.engine_median_ms)} (${fmt(row.engine_min_ms)}; n=${row.repeats}) | ${fmt(row.numpy_median_ms)}${row.numpy_repeats ? ` (n=${row.numpy_repeats})` : ''} | ${ratio} | ${delta} |`
  );
}
console.log(
  `\nnode ${process.version}, ${machine.cpus} CPUs, 1-minute load ${loadAtStart.toFixed(1)} at start and ` +
    `${machine.load_at_end.toFixed(1)} at end; results in ${join('bench', 'results', 'latest.json')}`
);
