/**
 * Speed check of the full lattice walk (not a test: nothing here asserts a time).
 *
 * Run from the repository root:
 *   npx esbuild test/engine/lattice-speed.ts --bundle --platform=node --outfile=/tmp/lattice-speed.js \
 *     && node /tmp/lattice-speed.js [rows] [columns] [repeats]
 *
 * Data: seeded, so runs compare; half the columns are noisy functions of earlier ones so the
 * partitions do not all split at the same depth.
 */

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyze } from '../../src/engine/analyze';
import { coinformationAll } from '../../src/engine/measures';
import { computeLattice } from '../../src/engine/lattice';
import { prepareColumns } from '../../src/engine/analyze';
import type { INumericColumn } from '../../src/engine/types';

const rows = Number(process.argv[2] ?? 10000);
const columnCount = Number(process.argv[3] ?? 16);
const repeats = Number(process.argv[4] ?? 5);

const rng = xoroshiro128plus(20240611);
const uniform = (): number => unsafeUniformIntDistribution(0, 2 ** 30 - 1, rng) / 2 ** 30;
const columns: INumericColumn[] = [];
for (let c = 0; c < columnCount; c++) {
  const values = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    values[i] = c % 2 === 1 ? columns[c - 1].values[i] as number + uniform() : uniform();
  }
  columns.push({ kind: 'numeric', name: `c${c}`, dtype: 'float64', values, missing: null });
}

const prepared = prepareColumns(columns, { bins: 'quantile:4' });
const time = (label: string, run: () => void): void => {
  // CPU time as well as wall time: on a shared machine the wall time includes waiting.
  const wall: number[] = [];
  const cpu: number[] = [];
  for (let r = 0; r < repeats; r++) {
    const startCpu = process.cpuUsage();
    const start = process.hrtime.bigint();
    run();
    wall.push(Number(process.hrtime.bigint() - start) / 1e6);
    const used = process.cpuUsage(startCpu);
    cpu.push((used.user + used.system) / 1e3);
  }
  const median = (values: number[]): string => values.sort((a, b) => a - b)[values.length >> 1].toFixed(1);
  console.log(`${label}: wall median ${median(wall)} ms (best ${wall[0].toFixed(1)}), CPU median ${median(cpu)} ms`);
};
console.log(`${rows} rows × ${columnCount} columns, quantile:4, all ${2 ** columnCount - 1} multiplets`);
// A yardstick for a shared or slow machine: 10^8 sequential Int32 additions, which take about
// 30–60 ms on an idle desktop CPU of recent years (common practice, no source).
const yardstick = new Int32Array(1e4).fill(1);
time('yardstick (10^8 sequential Int32 additions)', () => {
  let total = 0;
  for (let r = 0; r < 1e4; r++) {
    for (let i = 0; i < yardstick.length; i++) {
      total += yardstick[i];
    }
  }
  if (total !== 1e8) {
    throw new Error('yardstick');
  }
});
time('lattice walk', () => {
  computeLattice({ codes: prepared.codes, bins: prepared.bins, maxOrder: columnCount, estimator: 'plugin' });
});
time('lattice walk without shortcuts', () => {
  computeLattice({
    codes: prepared.codes,
    bins: prepared.bins,
    maxOrder: columnCount,
    estimator: 'plugin',
    dropSingletons: false,
    fillDistinct: false
  });
});
const lattice = computeLattice({ codes: prepared.codes, bins: prepared.bins, maxOrder: columnCount, estimator: 'plugin' });
time('co-information transform', () => {
  coinformationAll(lattice);
});
time('analyze, all orders (binning + walk + measures + one row per multiplet)', () => {
  analyze(columns, { bins: 'quantile:4', maxOrder: columnCount });
});
