/**
 * Benchmark of the lattice walk against its targets (`npm run bench`), on three seeded tables
 * of 4-level columns with planted dependence:
 *   (a) 20 columns × 10,000 rows, every order (1,048,575 multiplets);
 *   (b) 100 columns × 10,000 rows, order ≤ 3 (166,750 multiplets);
 *   (c) 10 columns × 1,000,000 rows, every order (1,023 multiplets).
 * For each: the engine's walk on all cores (worker threads walking the units the CLI's pool
 * plans, src/worker/units.ts), the bare pass on all cores over the same units (per multiplet one
 * plain loop over every row: child label = parent label · K + code, no counting), the numpy
 * baselines (np.unique per multiplet on one combined int64 code, and np.unique(axis=0) on the
 * stacked columns, bench/numpy_baseline.py; timed on the first multiplets of the walk's order and
 * extrapolated by the multiplet count), and the whole CLI run on the CSV
 * file with its peak memory (GNU time). Prints one table and one JSON line; asserts nothing.
 *
 * Options: --threads N (default: all cores), --repeats R (default 3), --only a|b|c,
 * --baseline DIR (also walk the engine of another checkout, e.g. an older commit, and time its
 * built CLI, DIR/bin/polyadic.cjs, interleaved with this one's, so that before and after see the
 * same load), --no-numpy, --no-cli.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism, cpus, loadavg } from 'node:os';
import { createRequire } from 'node:module';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { performance } from 'node:perf_hooks';
import { Worker } from 'node:worker_threads';

import { tableFromArrays, tableToIPC } from 'apache-arrow';
import { build } from 'esbuild';
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const results = join(root, 'bench', 'results');
const require = createRequire(import.meta.url);

const { values: flags } = parseArgs({
  options: {
    threads: { type: 'string' },
    repeats: { type: 'string', default: '3' },
    only: { type: 'string' },
    baseline: { type: 'string' },
    'no-numpy': { type: 'boolean', default: false },
    'no-cli': { type: 'boolean', default: false }
  },
  strict: true
});
const threads = Number(flags.threads ?? (typeof availableParallelism === 'function' ? availableParallelism() : cpus().length));
const repeats = Number(flags.repeats);
const baseline = flags.baseline ? resolve(flags.baseline) : null;
const cli = join(root, 'bin', 'polyadic.cjs');

/** The cases; numpyLimit: multiplets numpy is timed on before extrapolating (null: all). */
const CASES = [
  { name: 'a', label: '(a) 20 × 10,000, all orders', columns: 20, rows: 10_000, maxOrder: 20, numpyLimit: 2000 },
  { name: 'b', label: '(b) 100 × 10,000, order ≤ 3', columns: 100, rows: 10_000, maxOrder: 3, numpyLimit: 5000 },
  { name: 'c', label: '(c) 10 × 1,000,000, all orders', columns: 10, rows: 1_000_000, maxOrder: 10, numpyLimit: 100 }
].filter(c => !flags.only || c.name === flags.only);

/**
 * Seeded table of 4-level columns: most are uniform and independent; every fifth column from the
 * second is a noisy copy of the one before (half the rows), every fifth from the fourth the sum
 * modulo 4 of the two before the one before (three rows in four): pairs and triplets to find.
 */
function plantedCodes(columns, rows, seed) {
  const rng = xoroshiro128plus(seed);
  const draw = k => unsafeUniformIntDistribution(0, k - 1, rng);
  const codes = [];
  for (let j = 0; j < columns; j++) {
    const column = new Int32Array(rows);
    for (let i = 0; i < rows; i++) {
      if (j % 5 === 1) {
        column[i] = draw(2) ? codes[j - 1][i] : draw(4);
      } else if (j % 5 === 3) {
        column[i] = draw(4) ? (codes[j - 3][i] + codes[j - 2][i]) & 3 : draw(4);
      } else {
        column[i] = draw(4);
      }
    }
    codes.push(column);
  }
  return codes;
}

const names = count => Array.from({ length: count }, (_, j) => `x${String(j).padStart(3, '0')}`);

function writeCsv(path, codes) {
  const header = names(codes.length).join(',');
  const rows = codes[0].length;
  const chunks = [header + '\n'];
  const letters = ['a', 'b', 'c', 'd'];
  let lines = [];
  for (let i = 0; i < rows; i++) {
    lines.push(codes.map(column => letters[column[i]]).join(','));
    if (lines.length === 10_000) {
      chunks.push(lines.join('\n') + '\n');
      lines = [];
    }
  }
  if (lines.length) {
    chunks.push(lines.join('\n') + '\n');
  }
  writeFileSync(path, chunks.join(''));
}

/** Bundle a file of this checkout for Node, its relative imports resolved in `from` (the checkout measured). */
async function bundle(entry, outfile, from = root) {
  await build({
    stdin: { contents: readFileSync(entry, 'utf8'), resolveDir: join(from, relative(root, dirname(entry))), loader: 'ts', sourcefile: entry },
    nodePaths: [join(root, 'node_modules')],
    outfile,
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node18',
    logLevel: 'warning'
  });
  return outfile;
}

/** Threads that hold a table and walk units on request. */
class Crew {
  constructor(script, count) {
    this.workers = Array.from({ length: count }, () => new Worker(script));
  }

  async load(input) {
    await Promise.all(
      this.workers.map(
        worker =>
          new Promise(done => {
            worker.once('message', done);
            worker.postMessage({ type: 'table', input: { ...input, codes: input.codes.map(c => c.slice()) } });
          })
      )
    );
  }

  /** Walk the units (largest first, each idle thread taking the next); resolves to the wall ms. */
  run(kind, units) {
    return new Promise((done, fail) => {
      const start = performance.now();
      let next = 0;
      let pending = 0;
      let multiplets = 0;
      const give = worker => {
        if (next >= units.length) {
          if (pending === 0) {
            done({ ms: performance.now() - start, multiplets });
          }
          return;
        }
        const { multiplets: _size, ...unit } = units[next];
        pending++;
        worker.postMessage({ type: 'unit', id: next++, kind, unit });
      };
      for (const worker of this.workers) {
        worker.removeAllListeners('message');
        worker.removeAllListeners('error');
        worker.on('error', fail);
        worker.on('message', message => {
          pending--;
          multiplets += message.multiplets;
          give(worker);
        });
      }
      this.workers.forEach(give);
    });
  }

  close() {
    return Promise.all(this.workers.map(worker => worker.terminate()));
  }
}

function median(values) {
  const sorted = [...values].sort((x, y) => x - y);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

function runNumpy(python, testCase, codes, variant) {
  const dataPath = join(results, `walk-${testCase.name}.arrow`);
  const edgesPath = join(results, `walk-${testCase.name}.edges.json`);
  const columns = names(codes.length);
  writeFileSync(dataPath, tableToIPC(tableFromArrays(Object.fromEntries(columns.map((name, j) => [name, Float64Array.from(codes[j])]))), 'file'));
  // Integer codes 0 … 3 binned as they are: [−0.5, 0.5), [0.5, 1.5), …
  writeFileSync(edgesPath, JSON.stringify(Object.fromEntries(columns.map(name => [name, [-0.5, 0.5, 1.5, 2.5, 3.5]]))));
  const limit = variant === 'rows' ? Math.ceil(testCase.numpyLimit / 10) : testCase.numpyLimit;
  const args = [join(root, 'bench', 'numpy_baseline.py'), dataPath, edgesPath, String(testCase.maxOrder), '1', String(limit), variant];
  const done = spawnSync(python, args, {
    encoding: 'utf8',
    maxBuffer: 1 << 30
  });
  if (done.status !== 0) {
    return { error: (done.stderr || done.stdout).trim().split('\n').pop() };
  }
  return JSON.parse(done.stdout);
}

/** The whole CLI run on the CSV file: wall seconds and peak resident memory (GNU time). */
function runCli(cli, testCase, csv) {
  const args = [cli, 'analyze', csv, '--bins', 'categorical', '--max-order', String(testCase.maxOrder), '--format', 'csv', '--out', '/dev/null'];
  if (flags.threads) {
    args.push('--threads', String(threads));
  }
  const timed = existsSync('/usr/bin/time');
  const start = performance.now();
  const done = timed
    ? spawnSync('/usr/bin/time', ['-f', 'peak-kb %M', process.execPath, ...args], { encoding: 'utf8', maxBuffer: 1 << 30 })
    : spawnSync(process.execPath, args, { encoding: 'utf8', maxBuffer: 1 << 30 });
  const seconds = (performance.now() - start) / 1000;
  if (done.status !== 0) {
    return { error: done.stderr.trim().split('\n').pop() };
  }
  const peak = /peak-kb (\d+)/.exec(done.stderr ?? '');
  return { seconds, peakMb: peak ? Number(peak[1]) / 1024 : null };
}

mkdirSync(results, { recursive: true });
// The planner and the engine of each checkout measured, so an older checkout splits and walks as it did.
const planner = require(await bundle(join(root, 'bench', 'walk-plan.ts'), join(results, 'walk-plan.cjs')));
const script = await bundle(join(root, 'bench', 'walk-thread.ts'), join(results, 'walk-thread.cjs'));
const before = baseline && {
  planner: require(await bundle(join(root, 'bench', 'walk-plan.ts'), join(results, 'walk-plan-baseline.cjs'), baseline)),
  script: await bundle(join(root, 'bench', 'walk-thread.ts'), join(results, 'walk-thread-baseline.cjs'), baseline),
  cli: join(baseline, 'bin', 'polyadic.cjs')
};
const python = join(root, '.venv', 'bin', 'python');
const withNumpy = !flags['no-numpy'] && existsSync(python);
const loadAtStart = loadavg()[0];

const rows = [];
for (const testCase of CASES) {
  const codes = plantedCodes(testCase.columns, testCase.rows, 20261202 + testCase.columns);
  const input = { codes, bins: codes.map(() => 4), maxOrder: testCase.maxOrder, estimator: 'plugin', maxMultiplets: 2 ** 24 };
  const indexing = planner.createIndexing(testCase.columns, Math.min(testCase.maxOrder, testCase.columns));
  const units = planner.planUnits(indexing, threads);
  const multiplets = Number(planner.multipletCount(testCase.columns, testCase.maxOrder));
  const crew = new Crew(script, threads);
  await crew.load(input);
  const oldCrew = before && new Crew(before.script, threads);
  const oldUnits = before && before.planner.planUnits(indexing, threads);
  if (oldCrew) {
    await oldCrew.load(input);
  }
  const engineMs = [];
  const bareMs = [];
  const oldMs = [];
  for (let r = 0; r < repeats; r++) {
    // Interleaved, so a change of load on a shared machine touches all alike.
    engineMs.push((await crew.run('engine', units)).ms);
    bareMs.push((await crew.run('bare', units)).ms);
    if (oldCrew) {
      oldMs.push((await oldCrew.run('engine', oldUnits)).ms);
    }
  }
  await crew.close();
  await oldCrew?.close();
  const row = {
    case: testCase.name,
    label: testCase.label,
    multiplets,
    units: units.length,
    threads,
    walk_s: median(engineMs) / 1000,
    bare_s: median(bareMs) / 1000,
    repeats
  };
  if (oldCrew) {
    row.baseline_walk_s = median(oldMs) / 1000;
    row.baseline_over_bare = row.baseline_walk_s / row.bare_s;
    row.baseline_over_walk = row.baseline_walk_s / row.walk_s;
  }
  row.walk_over_bare = row.walk_s / row.bare_s;
  if (withNumpy) {
    // Two numpy loops: one combined int64 code per row (bench/numpy_baseline.py's default), and
    // np.unique(axis=0) over the stacked columns (the plain way).
    for (const [variant, key] of [['codes', 'numpy'], ['rows', 'numpy_rows']]) {
      const numpy = runNumpy(python, testCase, codes, variant);
      if (numpy.error) {
        row[`${key}_error`] = numpy.error;
      } else {
        row[`${key}_multiplets_timed`] = numpy.multiplets;
        row[`${key}_s`] = (numpy.median_ms / 1000) * (multiplets / numpy.multiplets);
        row[`${key}_over_walk`] = row[`${key}_s`] / row.walk_s;
      }
    }
  }
  if (!flags['no-cli']) {
    const csv = join(results, `walk-${testCase.name}.csv`);
    writeCsv(csv, codes);
    const run = runCli(cli, testCase, csv);
    if (run.error) {
      row.cli_error = run.error;
    } else {
      row.cli_s = run.seconds;
      row.cli_peak_mb = run.peakMb;
    }
    if (before) {
      const old = runCli(before.cli, testCase, csv);
      row.baseline_cli_s = old.seconds;
      row.baseline_cli_peak_mb = old.peakMb;
    }
  }
  rows.push(row);
}

const machine = { node: process.version, cpus: cpus().length, threads, load_at_start: loadAtStart, load_at_end: loadavg()[0], baseline };
writeFileSync(join(results, 'walk.json'), JSON.stringify({ ...machine, cases: rows }, null, 2));
const f = (value, digits = 2) => (value === undefined || value === null ? '—' : value.toFixed(digits));
console.log(
  `\n| case | multiplets | walk s (${threads} threads) | bare pass s | walk / bare | numpy s, int64 codes | numpy / walk | ` +
    `numpy s, unique(axis=0) | numpy / walk | CLI run s | CLI peak MB |`
);
console.log('|---|---|---|---|---|---|---|---|---|---|---|');
const numpyCell = (row, key) =>
  row[`${key}_s`] === undefined
    ? row[`${key}_error`] ?? '—'
    : `${f(row[`${key}_s`], 0)}${row[`${key}_multiplets_timed`] < row.multiplets ? ` (from ${row[`${key}_multiplets_timed`]})` : ''}`;
const ratioCell = (row, key) => (row[`${key}_over_walk`] === undefined ? '—' : f(row[`${key}_over_walk`], 0) + '×');
for (const row of rows) {
  console.log(
    `| ${row.label} | ${row.multiplets.toLocaleString('en')} | ${f(row.walk_s)} | ${f(row.bare_s)} | ${f(row.walk_over_bare)}× | ` +
      `${numpyCell(row, 'numpy')} | ${ratioCell(row, 'numpy')} | ${numpyCell(row, 'numpy_rows')} | ${ratioCell(row, 'numpy_rows')} | ` +
      `${row.cli_error ?? f(row.cli_s)} | ${f(row.cli_peak_mb, 0)} |`
  );
}
if (baseline) {
  console.log(`\nBaseline ${baseline}, in the same run:\n`);
  console.log('| case | baseline walk s | baseline walk / bare | baseline / this walk | baseline CLI run s | baseline CLI peak MB |');
  console.log('|---|---|---|---|---|---|');
  for (const row of rows) {
    console.log(
      `| ${row.label} | ${f(row.baseline_walk_s)} | ${f(row.baseline_over_bare)}× | ${f(row.baseline_over_walk)}× | ` +
        `${f(row.baseline_cli_s)} | ${f(row.baseline_cli_peak_mb, 0)} |`
    );
  }
}
console.log(
  `\nnode ${process.version}, ${machine.cpus} CPUs, ${threads} threads, median of ${repeats}; 1-minute load ` +
    `${loadAtStart.toFixed(1)} at start and ${machine.load_at_end.toFixed(1)} at end (a shared machine: compare ratios, not seconds)`
);
console.log(JSON.stringify({ benchmark: 'walk', ...machine, cases: rows }));
