/**
 * Benchmark of the robustness run (`npm run bench:robustness`): the default robustness run on
 * the demo frame (demo/generate.py, every column but the timestamp, order ≤ 4, top 10) beside
 * one plain run of the same analysis with one and with two threads, through the built CLI
 * (bin/polyadic.cjs), in one session. Prints the median wall times, the number of variants, the
 * ratio to the plain run (target: at most the number of variants), and the verdicts on the
 * planted triplet and the humidity pair; asserts nothing.
 *
 * Options: --repeats R (default 3), --rows N (default the demo's 6,000), --quick (1 repeat).
 * The Python is $POLYADIC_PYTHON, else the project's .venv, else python3.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { performance } from 'node:perf_hooks';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'bin', 'polyadic.cjs');
const { values: flags } = parseArgs({
  options: {
    repeats: { type: 'string', default: '3' },
    rows: { type: 'string' },
    quick: { type: 'boolean', default: false }
  },
  strict: true
});
const repeats = flags.quick ? 1 : Number(flags.repeats);
const venv = join(root, '.venv', 'bin', 'python');
const python = process.env.POLYADIC_PYTHON ?? (existsSync(venv) ? venv : 'python3');

const folder = mkdtempSync(join(tmpdir(), 'polyadic-bench-robustness-'));
const data = join(folder, 'greenhouse.csv');
const generated = spawnSync(python, [join(root, 'demo', 'generate.py'), '--out', data, ...(flags.rows ? ['--rows', flags.rows] : [])], {
  encoding: 'utf8'
});
if (generated.status !== 0) {
  throw new Error(`demo/generate.py failed (${python}): ${generated.error?.message ?? generated.stderr}`);
}
const header = readFileSync(data, 'utf8').split('\n', 1)[0].split(',');
const columns = header.filter(name => name !== 'timestamp');
const base = ['--columns', columns.join(','), '--max-order', '4'];

function run(args) {
  const times = [];
  let stdout = '';
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    const done = spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', maxBuffer: 1 << 30 });
    if (done.status !== 0) {
      throw new Error(`polyadic ${args[0]} failed: ${done.stderr}`);
    }
    times.push((performance.now() - start) / 1000);
    stdout = done.stdout;
  }
  times.sort((a, b) => a - b);
  return { seconds: times[times.length >> 1], stdout };
}

const plain1 = run(['analyze', data, ...base, '--threads', '1', '--top', '10']);
const plain2 = run(['analyze', data, ...base, '--threads', '2', '--top', '10']);
const robust = run(['robustness', data, ...base, '--top', '10']);
const result = JSON.parse(robust.stdout);
const variants = result.variants.length - 1;

const n = columns.length;
const choose = (k) => { let c = 1; for (let i = 0; i < k; i++) c = (c * (n - i)) / (i + 1); return c; };
console.log(
  `machine: ${cpus().length} cores, load ${loadavg().map(v => v.toFixed(2)).join(' ')}; demo frame ${n} columns, ` +
    `order ≤ 4 (${result.multiplet_count} multiplets of order ≥ 2 = ${choose(2) + choose(3) + choose(4)}), median of ${repeats}`
);
console.log('run                                         wall (s)   × plain (1 thread)');
const line = (label, seconds) => console.log(`${label.padEnd(44)}${seconds.toFixed(2).padStart(8)}   ${(seconds / plain1.seconds).toFixed(2).padStart(8)}`);
line('plain analysis, 1 thread', plain1.seconds);
line('plain analysis, 2 threads', plain2.seconds);
line(`robustness, ${variants} variants + base (1 thread)`, robust.seconds);
console.log(`target: robustness ≤ ${variants} × plain = ${(variants * plain1.seconds).toFixed(2)} s (${robust.seconds <= variants * plain1.seconds ? 'met' : 'not met'})`);
console.log('variants:');
result.variants.slice(1).forEach((variant, i) => console.log(`  V${i + 1} ${variant.label}`));
const planted = [['valve_command', 'flow_l_min', 'leak_alarm'], ['humidity_a_pct', 'humidity_b_pct']];
for (const members of planted) {
  const key = [...members].sort().join('|');
  const verdict = result.verdicts.find(v => [...v.columns].sort().join('|') === key);
  console.log(`${members.join(', ')}: ${verdict ? `${verdict.table}, ranks ${verdict.ranks.join(' ')}; ${verdict.verdict}` : 'not among the base top 10'}`);
}
const robustCount = result.verdicts.filter(v => v.robust).length;
console.log(`${robustCount} of ${result.verdicts.length} followed multiplets robust`);
