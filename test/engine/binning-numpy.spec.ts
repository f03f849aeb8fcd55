/**
 * Binning against numpy itself, computed at test time: `numpy.histogram_bin_edges` for width:K
 * and the rules, `numpy.unique(numpy.quantile(x, numpy.linspace(0, 1, K + 1)))` for quantile:K,
 * and `numpy.histogram` on those edges for the row assignment. Edges must be identical to the
 * last bit. The Python used is $POLYADIC_PYTHON, else `python3`; without numpy the suite is
 * skipped under a name that says so.
 */
import { spawnSync } from 'child_process';
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { binColumn } from '../../src/engine/binning';
import { cubeRounded, log2Rounded, powRounded } from '../../src/engine/floatmath';
import { numericColumn } from './helpers';

const PYTHON = process.env.POLYADIC_PYTHON ?? 'python3';

const NUMPY_SCRIPT = `
import json, sys
import numpy as np
cases = json.load(sys.stdin)
out = []
for case in cases:
    a = np.array(case['values'], dtype=np.int64 if case['integer'] else np.float64)
    results = {}
    for spec in case['specs']:
        method, _, k = spec.partition(':')
        if method == 'quantile':
            edges = np.unique(np.quantile(a, np.linspace(0, 1, int(k) + 1)))
            if len(edges) == 1:
                edges = np.array([edges[0], edges[0]])
        else:
            edges = np.histogram_bin_edges(a, bins=int(k) if method == 'width' else method)
        counts, _ = np.histogram(a, bins=edges)
        results[spec] = {'edges': [float(e) for e in edges], 'counts': counts.tolist()}
    out.append(results)
json.dump({'numpy': np.__version__, 'results': out}, sys.stdout)
`;

function numpyAvailable(): boolean {
  const probe = spawnSync(PYTHON, ['-c', 'import numpy'], { encoding: 'utf8' });
  return probe.status === 0;
}

interface ICase {
  values: number[];
  integer: boolean;
  specs: string[];
}

const SPECS = [
  'width:1',
  'width:3',
  'width:7',
  'width:10',
  'fd',
  'scott',
  'sturges',
  'rice',
  'sqrt',
  'doane',
  'quantile:2',
  'quantile:4',
  'quantile:5',
  'quantile:10'
];

/** Seeded test data: sizes that make the rules' bin counts land on integers, and awkward shapes. */
function buildCases(): ICase[] {
  const rng = xoroshiro128plus(7);
  const uniform = (): number => (unsafeUniformIntDistribution(0, 2 ** 30 - 1, rng) + 0.5) / 2 ** 30;
  const normal = (): number => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
  const integer = (lo: number, hi: number): number => unsafeUniformIntDistribution(lo, hi, rng);
  const sizes = [1, 2, 3, 7, 8, 27, 64, 100, 125, 128, 343, 512, 1000, 1024, 1331, 4096, 8000, 8192, 9000, 20000];
  const cases: ICase[] = [];
  const add = (values: number[], isInteger = false): void => {
    cases.push({ values, integer: isInteger, specs: SPECS });
  };
  for (const n of sizes) {
    const scale = 10 ** (integer(-3, 4));
    const shift = normal() * 50;
    add(Array.from({ length: n }, () => normal() * scale + shift));
    add(Array.from({ length: n }, () => integer(-50, 50)), true);
    add(Array.from({ length: n }, () => Math.round(-Math.log(uniform()) * 10) / 10));
    add(Array.from({ length: n }, (_, i) => (i % 17) * 0.5));
    add(Array.from({ length: n }, (_, i) => (n === 1 ? 0 : -3 + (6 * i) / (n - 1))));
    add(Array.from({ length: n }, (_, i) => i + 1), true);
    add(Array.from({ length: n }, () => integer(0, 2) * 2.5 + 1));
  }
  add([5, 5, 5, 5, 5]);
  add([3, 3, 3], true);
  add([0.1, 0.2, 0.3]);
  return cases;
}

/** Correct rounding by Python's decimal module at 60 digits (exact inputs, one final rounding). */
const DECIMAL_SCRIPT = `
import json, sys
from decimal import Decimal, getcontext
getcontext().prec = 60
data = json.load(sys.stdin)
ln2 = Decimal(2).ln()
out = {
  'log2': [float(Decimal(x).ln() / ln2) for x in data['log2']],
  'cbrt': [float((Decimal(1.0 / 3) * Decimal(x).ln()).exp()) for x in data['cbrt']],
  'mcbrt': [float((Decimal(-1.0 / 3) * Decimal(x).ln()).exp()) for x in data['cbrt']],
  'cube': [float(Decimal(x) ** 3) for x in data['cube']],
}
json.dump(out, sys.stdout)
`;

const available = numpyAvailable();
const describeNumpy = available ? describe : describe.skip;

describeNumpy(available ? 'binning against numpy' : `binning against numpy (skipped: no numpy for ${PYTHON})`, () => {
  describe('floatmath', () => {
    it('should round log2, cube roots and cubes correctly (Python decimal at 60 digits)', () => {
      const rng = xoroshiro128plus(11);
      const uniform = (): number => (unsafeUniformIntDistribution(0, 2 ** 30 - 1, rng) + 0.5) / 2 ** 30;
      const counts = Array.from({ length: 3000 }, (_, i) => (i < 1500 ? i + 1 : unsafeUniformIntDistribution(1, 1e9, rng)));
      const data = {
        log2: [...counts, ...Array.from({ length: 1500 }, () => 1 + uniform() * 20)],
        cbrt: [...counts, ...Array.from({ length: 1000 }, (_, k) => (k + 1) ** 3), ...counts.map(n => (24 * Math.sqrt(Math.PI)) / n)],
        cube: Array.from({ length: 3000 }, () => (uniform() - 0.5) * 12)
      };
      const run = spawnSync(PYTHON, ['-c', DECIMAL_SCRIPT], { input: JSON.stringify(data), encoding: 'utf8' });
      expect(run.status).toBe(0);
      const exact = JSON.parse(run.stdout) as Record<string, number[]>;
      const wrong = (name: string, ours: number[], reference: number[]): string[] =>
        ours.flatMap((v, i) => (v === reference[i] ? [] : [`${name}[${i}]: ${v} vs ${reference[i]}`]));
      expect([
        ...wrong('log2', data.log2.map(log2Rounded), exact.log2),
        ...wrong('cbrt', data.cbrt.map(x => powRounded(x, 1 / 3)), exact.cbrt),
        ...wrong('mcbrt', data.cbrt.map(x => powRounded(x, -1 / 3)), exact.mcbrt),
        ...wrong('cube', data.cube.map(cubeRounded), exact.cube)
      ]).toEqual([]);
    });
  });

  describe('#binColumn', () => {
    it('should give numpy’s edges to the last bit and numpy’s bin counts', () => {
      const cases = buildCases();
      const run = spawnSync(PYTHON, ['-c', NUMPY_SCRIPT], {
        input: JSON.stringify(cases),
        encoding: 'utf8',
        maxBuffer: 256 * 1024 * 1024
      });
      expect(run.stderr).toBe('');
      expect(run.status).toBe(0);
      const reference = JSON.parse(run.stdout) as {
        numpy: string;
        results: Record<string, { edges: number[]; counts: number[] }>[];
      };
      let compared = 0;
      const mismatches: string[] = [];
      cases.forEach((testCase, i) => {
        const column = numericColumn('x', testCase.values, testCase.integer ? 'int64' : 'float64');
        for (const spec of testCase.specs) {
          const expected = reference.results[i][spec];
          const binned = binColumn(column, spec);
          const edges = binned.binning.binning.edges ?? [];
          const counts = new Array<number>(binned.bins).fill(0);
          binned.codes.forEach(code => counts[code]++);
          compared++;
          const sameEdges = edges.length === expected.edges.length && edges.every((e, k) => e === expected.edges[k]);
          const sameCounts = counts.length === expected.counts.length && counts.every((c, k) => c === expected.counts[k]);
          if (!sameEdges || !sameCounts) {
            mismatches.push(`case ${i} (n=${testCase.values.length}, integer=${testCase.integer}) ${spec}`);
          }
        }
      });
      expect(compared).toBe(cases.length * SPECS.length);
      expect(mismatches).toEqual([]);
    });
  });
});
