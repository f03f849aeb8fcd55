/**
 * The pairwise-preserving null and connected information.
 *
 * The fitted tables are checked against statsmodels, computed at test time: the fitted values of
 * a Poisson GLM with every (k − 1)-way interaction on the contingency table are the maximum-
 * entropy fit to the (k − 1)-marginals (Bishop, Fienberg & Holland 1975, "Discrete Multivariate
 * Analysis", ch. 3). The Python used is $POLYADIC_PYTHON, else `python3` (`make test` puts the
 * virtual environment first on PATH); without statsmodels that test fails, saying so.
 */
import { spawnSync } from 'child_process';
import { existsSync } from 'fs';
import * as path from 'path';
import fc from 'fast-check';
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { connectedInformation, fitPairwisePreserving, MAX_FIT_CELLS } from '../../src/engine/maxent';
import { codedTable, expectPolyadic, naiveEntropy } from './helpers';

// The project's environment (the test extras hold statsmodels) unless POLYADIC_PYTHON says otherwise.
const VENV_PYTHON = path.join(__dirname, '..', '..', '.venv', 'bin', 'python');
const PYTHON = process.env.POLYADIC_PYTHON ?? (existsSync(VENV_PYTHON) ? VENV_PYTHON : 'python3');

const STATSMODELS_SCRIPT = `
import itertools, json, sys
import statsmodels
import statsmodels.api as sm
import numpy as np
import pandas as pd
import patsy
cases = json.load(sys.stdin)
out = []
for case in cases:
    shape = case['shape']
    k = len(shape)
    names = ['c%d' % c for c in range(k)]
    frame = pd.DataFrame(list(itertools.product(*[range(s) for s in shape])), columns=names)
    frame['count'] = case['counts']
    formula = 'count ~ (%s)**%d' % (' + '.join('C(%s)' % n for n in names), k - 1)
    y, X = patsy.dmatrices(formula, frame, return_type='dataframe')
    fit = sm.GLM(y, X, family=sm.families.Poisson()).fit(tol=1e-14, maxiter=500)
    fitted = np.asarray(fit.fittedvalues, dtype=float)
    counts = np.asarray(case['counts'], dtype=float)
    n = counts.sum()
    q = fitted / n
    p = counts / n
    entropy = lambda v: float(-(v[v > 0] * np.log(v[v > 0])).sum())
    out.append({'converged': bool(fit.converged), 'fitted': fitted.tolist(), 'connected': entropy(q) - entropy(p)})
json.dump({'statsmodels': statsmodels.__version__, 'results': out}, sys.stdout)
`;

interface IGlmReference {
  converged: boolean;
  fitted: number[];
  connected: number;
}

/** Poisson log-linear fits by statsmodels; throws (failing the test) when it cannot run. */
function statsmodelsFits(cases: { shape: number[]; counts: number[] }[]): IGlmReference[] {
  const run = spawnSync(PYTHON, ['-c', STATSMODELS_SCRIPT], { input: JSON.stringify(cases), encoding: 'utf8' });
  if (run.error || run.status !== 0) {
    throw new Error(
      `The statsmodels reference could not run with ${PYTHON} (set POLYADIC_PYTHON, or install the ` +
        `test extras, which include statsmodels): ${run.error?.message ?? run.stderr}`
    );
  }
  return (JSON.parse(run.stdout) as { results: IGlmReference[] }).results;
}

/** Seeded uniform integer generator. */
function integers(seed: number): (lo: number, hi: number) => number {
  const rng = xoroshiro128plus(seed);
  return (lo, hi) => unsafeUniformIntDistribution(lo, hi, rng);
}

/**
 * Seeded rows over `shape` with some higher-order dependence: in about a third of the rows the
 * last column is the sum of the others modulo its extent. Cells listed in `empty` get no rows.
 */
function dependentRows(shape: number[], rows: number, seed: number, empty: number[][] = []): Int32Array[] {
  const draw = integers(seed);
  const k = shape.length;
  const columns = shape.map(() => [] as number[]);
  while (columns[0].length < rows) {
    const row = shape.map(extent => draw(0, extent - 1));
    if (draw(0, 2) === 0) {
      row[k - 1] = row.slice(0, k - 1).reduce((a, b) => a + b, 0) % shape[k - 1];
    }
    if (empty.some(cell => cell.every((code, c) => code === row[c]))) {
      continue;
    }
    row.forEach((code, c) => columns[c].push(code));
  }
  return columns.map(values => Int32Array.from(values));
}

/** Row-major counts over `shape` (last column fastest), by direct indexing. */
function countsOf(columns: ArrayLike<number>[], shape: number[]): number[] {
  const counts = new Array<number>(shape.reduce((a, b) => a * b, 1)).fill(0);
  for (let i = 0; i < columns[0].length; i++) {
    counts[columns.reduce((cell, codes, c) => cell * shape[c] + codes[i], 0)]++;
  }
  return counts;
}

/** Sums of a row-major table over every axis but `keep`, keyed by the kept coordinates. */
function marginalOf(table: ArrayLike<number>, shape: number[], keep: number[]): Map<string, number> {
  const sums = new Map<string, number>();
  for (let cell = 0; cell < table.length; cell++) {
    const coordinates: number[] = [];
    let rest = cell;
    for (let c = shape.length - 1; c >= 0; c--) {
      coordinates[c] = rest % shape[c];
      rest = Math.floor(rest / shape[c]);
    }
    const key = keep.map(c => coordinates[c]).join(',');
    sums.set(key, (sums.get(key) ?? 0) + table[cell]);
  }
  return sums;
}

/** Largest |fitted − data| over every (k − 1)-marginal, the data's counted from the rows. */
function marginalMisfit(columns: Int32Array[], fitted: ArrayLike<number>, shape: number[]): number {
  const N = columns[0].length;
  let worst = 0;
  for (let leave = 0; leave < shape.length; leave++) {
    const keep = shape.map((_, c) => c).filter(c => c !== leave);
    const data = new Map<string, number>();
    for (let i = 0; i < N; i++) {
      const key = keep.map(c => columns[c][i]).join(',');
      data.set(key, (data.get(key) ?? 0) + 1 / N);
    }
    for (const [key, value] of marginalOf(fitted, shape, keep)) {
      worst = Math.max(worst, Math.abs(value - (data.get(key) ?? 0)));
    }
  }
  return worst;
}

const NAMES = ['a', 'b', 'c', 'd', 'e'];
const names = (k: number): string[] => NAMES.slice(0, k);

/** Exact XOR: each (x, y) pair `copies` times, z = x xor y. */
function xorColumns(copies: number): Int32Array[] {
  const x: number[] = [];
  const y: number[] = [];
  for (let r = 0; r < copies; r++) {
    x.push(0, 0, 1, 1);
    y.push(0, 1, 0, 1);
  }
  return [Int32Array.from(x), Int32Array.from(y), Int32Array.from(x.map((v, i) => v ^ y[i]))];
}

/** Rows that realise a table of counts over `shape` exactly (cell by cell, row-major). */
function rowsOfCounts(counts: number[], shape: number[]): Int32Array[] {
  const columns = shape.map(() => [] as number[]);
  counts.forEach((n, cell) => {
    for (let r = 0; r < n; r++) {
      let rest = cell;
      for (let c = shape.length - 1; c >= 0; c--) {
        columns[c].push(rest % shape[c]);
        rest = Math.floor(rest / shape[c]);
      }
    }
  });
  return columns.map(values => Int32Array.from(values));
}

describe('maxent', () => {
  describe('#fitPairwisePreserving', () => {
    it('should match every pairwise marginal of a three-column table to 1e-10', () => {
      const tables = [
        dependentRows([3, 4, 2], 400, 1),
        dependentRows([4, 4, 4], 2000, 2),
        dependentRows([2, 5, 3], 60, 3),
        // Empty pairwise cells: (a, b) = (0, 0) and (b, c) = (2, 1) never occur.
        dependentRows([3, 3, 3], 300, 4, [
          [0, 0, 0],
          [0, 0, 1],
          [0, 0, 2],
          [0, 2, 1],
          [1, 2, 1],
          [2, 2, 1]
        ])
      ];
      for (const columns of tables) {
        const fit = fitPairwisePreserving(columns);
        expect(fit.converged).toBe(true);
        expect(fit.maxMarginalError).toBeLessThanOrEqual(1e-12);
        // Marginals recomputed here from the rows, not taken from the fit.
        expect(marginalMisfit(columns, fit.fitted, fit.shape)).toBeLessThanOrEqual(1e-10);
        expect(fit.fitted.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
      }
    });

    it('should leave empty the cells of an empty pairwise marginal', () => {
      const columns = dependentRows([3, 3, 3], 300, 4, [
        [0, 0, 0],
        [0, 0, 1],
        [0, 0, 2]
      ]);
      const fit = fitPairwisePreserving(columns);
      expect(Array.from(fit.fitted.subarray(0, 3))).toEqual([0, 0, 0]);
    });

    it('should give the fitted values of the Poisson log-linear model of all (k − 1)-way terms (statsmodels)', () => {
      const cases = [
        { shape: [3, 4, 2], columns: dependentRows([3, 4, 2], 500, 11) },
        { shape: [2, 2, 2], columns: dependentRows([2, 2, 2], 200, 12) },
        // Empty cells whose marginals are all occupied: the fit is positive there.
        {
          shape: [4, 3, 3],
          columns: dependentRows([4, 3, 3], 300, 13, [
            [0, 0, 0],
            [1, 2, 1],
            [3, 1, 2],
            [2, 0, 1]
          ])
        },
        // Four columns: the fit to every three-way marginal (formula **3).
        { shape: [3, 2, 3, 2], columns: dependentRows([3, 2, 3, 2], 800, 14) }
      ];
      const tables = cases.map(({ shape, columns }) => ({ shape, counts: countsOf(columns, shape) }));
      expect(tables[2].counts.filter(n => n === 0).length).toBeGreaterThanOrEqual(4);
      const reference = statsmodelsFits(tables);
      cases.forEach(({ shape, columns }, t) => {
        const fit = fitPairwisePreserving(columns);
        expect(fit.shape).toEqual(shape);
        expect(reference[t].converged).toBe(true);
        const N = columns[0].length;
        const worst = reference[t].fitted.reduce(
          (max, expected, cell) => Math.max(max, Math.abs(N * fit.fitted[cell] - expected) / expected),
          0
        );
        expect(worst).toBeLessThanOrEqual(1e-8);
        // Connected information from statsmodels' fitted values, entropies by numpy.
        const ours = connectedInformation(columns, { names: names(shape.length) });
        expect(Math.abs(ours.value - reference[t].connected)).toBeLessThanOrEqual(1e-10);
      });
    });

    it('should report the used codes and renumber them densely in code order', () => {
      const fit = fitPairwisePreserving([
        Int32Array.from([7, 2, 7, 2, 9]),
        Int32Array.from([0, 0, 1, 1, 0]),
        Int32Array.from([3, 3, 3, 3, 3])
      ]);
      expect(fit.shape).toEqual([3, 2, 1]);
      expect(fit.levels.map(level => Array.from(level))).toEqual([[2, 7, 9], [0, 1], [3]]);
      expect(fit.rows).toBe(5);
      // Row-major over (a, b): (2,0) (2,1) (7,0) (7,1) (9,0) (9,1), counted by hand.
      expect(Array.from(fit.empirical)).toEqual([1, 1, 1, 1, 1, 0].map(n => n / 5));
    });

    it('should say it has not converged, not throw, when the cycles run out', () => {
      const columns = dependentRows([4, 4, 4], 500, 21);
      const fit = fitPairwisePreserving(columns, { maxIterations: 1 });
      expect(fit.converged).toBe(false);
      expect(fit.iterations).toBe(1);
      expect(fit.maxMarginalError).toBeGreaterThan(1e-12);
      expect(marginalMisfit(columns, fit.fitted, fit.shape)).toBeCloseTo(fit.maxMarginalError, 12);
    });

    it('should accept a table of exactly the cap and refuse one above it, naming the multiplet and its cells', () => {
      const rows = 4096;
      const at = [0, 1, 2].map(c => Int32Array.from({ length: rows }, (_, i) => [i % 16, i % 64, (i >> 6) % 64][c]));
      expect(fitPairwisePreserving(at).fitted.length).toBe(MAX_FIT_CELLS);
      const above = [0, 1, 2].map(() => Int32Array.from({ length: 41 }, (_, i) => i));
      const error = expectPolyadic(
        () => connectedInformation(above, { names: ['temp', 'rh', 'leak'] }),
        'limit',
        /\{temp, rh, leak\}/,
        /68921 cells/,
        /41 × 41 × 41/,
        /more coarsely/
      );
      expect(error.detail.cells).toBe(68921);
    });

    it('should refuse fewer than three columns, pointing to mutual information at order two', () => {
      const two = [Int32Array.from([0, 1]), Int32Array.from([1, 0])];
      expectPolyadic(() => fitPairwisePreserving(two, { names: ['x', 'y'] }), 'usage', /order 3/, /mutual information/);
      expectPolyadic(() => connectedInformation(two, { names: ['x', 'y'] }), 'usage', /\{x, y\} has order 2/);
    });

    it('should refuse ragged columns, bad codes, no rows and bad fit options, naming what is at fault', () => {
      const good = [Int32Array.from([0, 1, 0]), Int32Array.from([1, 1, 0]), Int32Array.from([0, 0, 1])];
      const ragged = [good[0], good[1], Int32Array.from([0, 1])];
      expectPolyadic(() => connectedInformation(ragged, { names: names(3) }), 'input', /'c' has 2 rows but 'a' has 3/);
      expectPolyadic(
        () => fitPairwisePreserving([good[0], [0, -1, 0], good[2]], { names: names(3) }),
        'input',
        /'b' row 1 has code -1/
      );
      expectPolyadic(() => fitPairwisePreserving([good[0], good[1], [0, 0.5, 1]]), 'input', /'column 3' row 1/);
      expectPolyadic(() => fitPairwisePreserving([[], [], []]), 'input', /no rows/);
      expectPolyadic(() => fitPairwisePreserving(good, { tolerance: -1 }), 'usage', /tolerance/);
      expectPolyadic(() => fitPairwisePreserving(good, { maxIterations: 0 }), 'usage', /cycles/);
      expectPolyadic(() => fitPairwisePreserving(good, { names: ['a', 'b'] }), 'internal', /3 code arrays but 2/);
    });
  });

  describe('#connectedInformation', () => {
    it('should give exactly one bit for XOR of two fair bits', () => {
      const result = connectedInformation(xorColumns(25), { names: ['x', 'y', 'z'] });
      // Pairwise marginals of XOR are uniform, so the fit is uniform over 8 cells: ln 8 − ln 4 = ln 2.
      expect(Math.abs(result.value - Math.LN2)).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(result.fitEntropy - Math.log(8))).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(result.dataEntropy - Math.log(4))).toBeLessThanOrEqual(1e-12);
      expect(result.converged).toBe(true);
      expect(result.pValue).toBeNull();
      expect(result.draws).toBe(0);
    });

    it('should give 0 for independent columns built as a full factorial, uniform or not', () => {
      const uniform = rowsOfCounts(new Array<number>(24).fill(1), [2, 3, 4]);
      expect(Math.abs(connectedInformation(uniform, { names: names(3) }).value)).toBeLessThanOrEqual(1e-12);
      // Counts f(a)·g(b)·h(c): a product distribution, inside the pairwise family.
      const f = [1, 2];
      const g = [1, 3, 2];
      const h = [2, 1, 1, 3];
      const product = f.flatMap(x => g.flatMap(y => h.map(z => x * y * z)));
      const result = connectedInformation(rowsOfCounts(product, [2, 3, 4]), { names: names(3) });
      expect(result.converged).toBe(true);
      expect(Math.abs(result.value)).toBeLessThanOrEqual(1e-12);
    });

    it('should give 0 for a table that is a product of pairwise factors', () => {
      // n(a,b,c) = u(a,b)·v(b,c)·w(a,c) lies in the pairwise log-linear family, so the fit is the data
      // (Amari 2001: no interaction above order 2).
      const u = [[1, 2, 1], [3, 1, 2]];
      const v = [[1, 2], [2, 1], [1, 3]];
      const w = [[2, 1], [1, 2]];
      const counts: number[] = [];
      for (let a = 0; a < 2; a++) {
        for (let b = 0; b < 3; b++) {
          for (let c = 0; c < 2; c++) {
            counts.push(u[a][b] * v[b][c] * w[a][c]);
          }
        }
      }
      const result = connectedInformation(rowsOfCounts(counts, [2, 3, 2]), { names: names(3) });
      expect(result.converged).toBe(true);
      expect(Math.abs(result.value)).toBeLessThanOrEqual(1e-12);
    });

    it('should report the plug-in entropies of the data and the fit, whose gap is the value', () => {
      const columns = dependentRows([3, 3, 4], 250, 31);
      const result = connectedInformation(columns, { names: names(3) });
      expect(result.dataEntropy).toBeCloseTo(naiveEntropy(columns, [0, 1, 2]), 12);
      // The value is computed as D(data ‖ fit), equal to the entropy gap at the fixed point.
      expect(Math.abs(result.value - (result.fitEntropy - result.dataEntropy))).toBeLessThanOrEqual(1e-12);
      expect(result.value).toBeGreaterThan(0.01);
      expect(result.cells).toBe(36);
      expect(result.rows).toBe(250);
    });

    it('should never be negative, and H(fit) ≥ H(data) (property)', () => {
      fc.assert(
        fc.property(codedTable(4, 30, 3, 3), table => {
          const result = connectedInformation(table.codes, { names: names(table.codes.length) });
          expect(result.value).toBeGreaterThanOrEqual(-1e-12);
          expect(result.fitEntropy).toBeGreaterThanOrEqual(result.dataEntropy - 1e-12);
        }),
        { numRuns: 150, seed: 20260301 }
      );
    });

    it('should not depend on the column order or on how codes are numbered (property)', () => {
      fc.assert(
        fc.property(
          codedTable(4, 30, 3, 3),
          fc.integer({ min: 0, max: 23 }),
          fc.integer({ min: 0, max: 1000 }),
          (table, which, shift) => {
            const k = table.codes.length;
            const base = connectedInformation(table.codes, { names: names(k) });
            // A fit stopped at the cycle cap depends on the order of the cycle; the fixed point does not.
            fc.pre(base.converged);
            const order = permutation(k, which);
            const permuted = connectedInformation(
              order.map(c => table.codes[c]),
              { names: order.map(c => NAMES[c]) }
            );
            // Codes reversed, spread apart and shifted; the largest far above any lookup table.
            const offset = (c: number): number => shift + (c === 0 ? 2 ** 30 : 0);
            const renumbered = connectedInformation(
              table.codes.map((codes, c) => codes.map(code => (table.bins[c] - 1 - code) * 7 + offset(c))),
              { names: names(k) }
            );
            expect(Math.abs(permuted.value - base.value)).toBeLessThanOrEqual(1e-12);
            expect(Math.abs(renumbered.value - base.value)).toBeLessThanOrEqual(1e-12);
          }
        ),
        { numRuns: 150, seed: 20260302 }
      );
    });

    it('should give the same bits for the same seed and other draws for another seed', () => {
      const columns = dependentRows([3, 3, 3], 200, 41);
      const options = { names: names(3), draws: 50, seed: 7 };
      const first = connectedInformation(columns, options);
      const again = connectedInformation(columns, options);
      const other = connectedInformation(columns, { ...options, seed: 8 });
      expect(Array.from(again.nullDraws)).toEqual(Array.from(first.nullDraws));
      expect(again.pValue).toBe(first.pValue);
      expect(again.nullMean).toBe(first.nullMean);
      expect(again.nullSd).toBe(first.nullSd);
      expect(other.value).toBe(first.value);
      const same = other.nullDraws.filter((x, b) => x === first.nullDraws[b]).length;
      expect(same).toBeLessThan(5);
    });

    it('should summarise the draws: p = (1 + #{draw ≥ observed}) / (B + 1), their mean and sd', () => {
      const columns = dependentRows([3, 2, 3], 120, 51);
      const result = connectedInformation(columns, { names: names(3), draws: 99, seed: 3 });
      const drawn = Array.from(result.nullDraws);
      expect(drawn.length).toBe(99);
      expect(result.pValue).toBeCloseTo((1 + drawn.filter(x => x >= result.value).length) / 100, 15);
      const mean = drawn.reduce((a, b) => a + b, 0) / 99;
      const sd = Math.sqrt(drawn.reduce((a, x) => a + (x - mean) ** 2, 0) / 98);
      expect(result.nullMean).toBeCloseTo(mean, 14);
      expect(result.nullSd).toBeCloseTo(sd, 14);
      expect(drawn.every(x => x >= -1e-12)).toBe(true);
      expect(result.drawsNotConverged).toBe(0);
      // One draw: a mean, no standard deviation.
      const single = connectedInformation(columns, { names: names(3), draws: 1, seed: 3 });
      expect(single.nullMean).toBe(single.nullDraws[0]);
      expect(single.nullSd).toBeNull();
    });

    it('should give p = 1/(B + 1) for XOR data', () => {
      const result = connectedInformation(xorColumns(25), { names: ['x', 'y', 'z'], draws: 199, seed: 5 });
      expect(result.pValue).toBe(1 / 200);
      // Draws from the uniform fit carry far less than the observed bit.
      expect(result.nullMean!).toBeLessThan(0.1 * Math.LN2);
    });

    it('should give a p-value in (0, 1] (property)', () => {
      fc.assert(
        fc.property(codedTable(4, 25, 3, 3), fc.integer({ min: 0, max: 2 ** 32 - 1 }), (table, seed) => {
          const result = connectedInformation(table.codes, { names: names(table.codes.length), draws: 9, seed });
          expect(result.pValue).toBeGreaterThan(0);
          expect(result.pValue).toBeLessThanOrEqual(1);
        }),
        { numRuns: 40, seed: 20260303 }
      );
    });

    it('should refuse a bad number of draws or a bad seed', () => {
      const columns = xorColumns(1);
      for (const draws of [2.5, -1, NaN, Infinity]) {
        expectPolyadic(
          () => connectedInformation(columns, { names: names(3), draws }),
          'usage',
          /draws must be a whole number ≥ 0/
        );
      }
      for (const seed of [-1, 1.5, 2 ** 32]) {
        expectPolyadic(() => connectedInformation(columns, { names: names(3), draws: 1, seed }), 'usage', /seed/);
      }
    });
  });
});

/** The `which`-th permutation of 0 … k − 1 (mod k!), by the factorial number system. */
function permutation(k: number, which: number): number[] {
  const pool = Array.from({ length: k }, (_, i) => i);
  const out: number[] = [];
  let rest = which;
  for (let n = k; n > 0; n--) {
    out.push(pool.splice(rest % n, 1)[0]);
    rest = Math.floor(rest / n);
  }
  return out;
}
