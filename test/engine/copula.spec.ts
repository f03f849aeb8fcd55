/**
 * The Gaussian-copula estimator, checked against scipy and numpy computed at test time (the
 * source is named beside each check). The Python used is $POLYADIC_PYTHON, else the project's
 * `.venv`, else `python3` (`make test` puts the virtual environment first on PATH); without
 * scipy these tests fail, saying so.
 */
import { spawnSync } from 'child_process';
import { existsSync } from 'fs';
import * as path from 'path';

import { analyze } from '../../src/engine/analyze';
import {
  copulaNormalise,
  covarianceMatrix,
  digamma,
  gaussianEntropy,
  logDeterminantsOfSubtree,
  normalQuantile,
  rankCodes
} from '../../src/engine/copula';
import { computeCopulaLattice } from '../../src/engine/copula/walk';
import { assembleLattice } from '../../src/engine/lattice';
import { coinformationAll, computeMeasures } from '../../src/engine/measures';
import { createIndexing, forEachInSubtree, forEachMultiplet, indexOfColumns } from '../../src/engine/multiplets';
import type { ColumnView } from '../../src/engine/types';
import { walkUnit } from '../../src/worker/units';
import { categoricalColumn, expectPolyadic, numericColumn } from './helpers';

const VENV_PYTHON = path.join(__dirname, '..', '..', '.venv', 'bin', 'python');
const PYTHON = process.env.POLYADIC_PYTHON ?? (existsSync(VENV_PYTHON) ? VENV_PYTHON : 'python3');

/** Run a Python script on JSON input; its JSON output. Throws (failing the test) when it cannot run. */
function python<T>(script: string, input: unknown = null): T {
  const run = spawnSync(PYTHON, ['-c', script], {
    input: JSON.stringify(input),
    encoding: 'utf8',
    maxBuffer: 1 << 28
  });
  if (run.error || run.status !== 0) {
    throw new Error(
      `The reference needs Python with numpy and scipy (${PYTHON}): ${run.error?.message ?? run.stderr}`
    );
  }
  return JSON.parse(run.stdout) as T;
}

/** |a − b| ≤ tolerance · max(1, |b|). */
function close(a: number, b: number, tolerance: number): boolean {
  return Math.abs(a - b) <= tolerance * Math.max(1, Math.abs(b));
}

const LN2 = Math.log(2);

describe('normalQuantile', () => {
  it('should equal scipy.stats.norm.ppf in the centre and both tails (AS 241)', () => {
    const ps = [
      1e-300, 1e-100, 1e-20, 1e-10, 1e-5, 0.001, 0.01, 0.02425, 0.05, 0.074, 0.075, 0.1, 0.25, 0.4, 0.5, 0.5000001,
      0.6, 0.9, 0.925, 0.926, 0.99, 0.999999, 1 - 1e-12
    ];
    for (let i = 1; i < 200; i++) {
      ps.push(i / 200);
    }
    const reference = python<number[]>(
      `import json, sys
from scipy.stats import norm
json.dump([float(norm.ppf(p)) for p in json.load(sys.stdin)], sys.stdout)`,
      ps
    );
    const bad = ps.filter((p, i) => !(Math.abs(normalQuantile(p) - reference[i]) <= 1e-14 * Math.max(1, Math.abs(reference[i]))));
    expect(bad).toEqual([]);
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(1.5)).toBeNaN();
  });
});

describe('digamma', () => {
  it('should equal scipy.special.psi', () => {
    const xs = [0.001, 0.1, 0.5, 1, 1.5, 2, 3.7, 9.99, 10, 10.5, 23.5, 24, 24.5, 100, 4999.5, 1e6];
    const reference = python<number[]>(
      `import json, sys
from scipy.special import psi
json.dump([float(psi(x)) for x in json.load(sys.stdin)], sys.stdout)`,
      xs
    );
    xs.forEach((x, i) => expect(close(digamma(x), reference[i], 1e-13)).toBe(true));
    expect(digamma(0)).toBeNaN();
  });
});

describe('copulaNormalise', () => {
  it('should equal scipy.stats.norm.ppf(scipy.stats.rankdata(x) / (n + 1)), ties by average rank', () => {
    // Values with many ties (rounded) and without, seeded in numpy.
    const data = python<{ x: number[]; scores: number[] }[]>(
      `import json, sys
import numpy as np
from scipy.stats import norm, rankdata
rng = np.random.default_rng(7)
out = []
for x in [np.round(rng.normal(size=300), 1), rng.gamma(2.0, size=257), np.array([3.0, 1.0, 2.0, 2.0, 5.0, 1.0])]:
    n = len(x)
    out.append({'x': x.tolist(), 'scores': norm.ppf(rankdata(x) / (n + 1)).tolist()})
json.dump(out, sys.stdout)`
    );
    for (const { x, scores } of data) {
      const mine = copulaNormalise(x);
      const worst = Math.max(...scores.map((s, i) => Math.abs(mine[i] - s)));
      expect(worst).toBeLessThanOrEqual(1e-14);
    }
  });

  it('should give rank codes that keep the order and the ties', () => {
    const { codes, distinct } = rankCodes([2.5, -1, 2.5, 7, -1]);
    expect(Array.from(codes)).toEqual([1, 0, 1, 2, 0]);
    expect(distinct).toBe(3);
  });
});

describe('gaussianEntropy', () => {
  it('should equal scipy.stats.multivariate_normal(cov=…).entropy() for known covariances', () => {
    const cases = python<{ cov: number[]; k: number; entropy: number }[]>(
      `import json, sys
import numpy as np
from scipy.stats import multivariate_normal
rng = np.random.default_rng(3)
out = []
for cov in [np.array([[2.0]]), np.array([[1, 0, 0.6], [0, 1, 0.6], [0.6, 0.6, 1]]), None]:
    if cov is None:
        a = rng.normal(size=(6, 6))
        cov = a @ a.T + 0.5 * np.eye(6)
    out.append({'cov': cov.ravel().tolist(), 'k': cov.shape[0], 'entropy': float(multivariate_normal(cov=cov).entropy())})
json.dump(out, sys.stdout)`
    );
    for (const { cov, k, entropy } of cases) {
      expect(close(gaussianEntropy(cov, k), entropy, 1e-13)).toBe(true);
    }
  });

  it('should be unbiased with the correction over 500 seeded samples of n = 50 in 3 dimensions, and biased without it', () => {
    // Samples from numpy (seeded); the true entropy from scipy.stats.multivariate_normal.
    const reference = python<{ samples: number[][][]; truth: number }>(
      `import json, sys
import numpy as np
from scipy.stats import multivariate_normal
cov = np.array([[1.0, 0.5, 0.3], [0.5, 2.0, -0.4], [0.3, -0.4, 1.5]])
rng = np.random.default_rng(2017)
samples = [rng.multivariate_normal(np.zeros(3), cov, size=50).T.tolist() for _ in range(500)]
json.dump({'samples': samples, 'truth': float(multivariate_normal(cov=cov).entropy())}, sys.stdout)`
    );
    const corrected: number[] = [];
    const plain: number[] = [];
    for (const sample of reference.samples) {
      const cov = covarianceMatrix(sample.map(column => Float64Array.from(column)));
      corrected.push(gaussianEntropy(cov, 3, 50));
      plain.push(gaussianEntropy(cov, 3));
    }
    const summary = (values: number[]): { mean: number; se: number } => {
      const mean = values.reduce((a, b) => a + b, 0) / values.length;
      const variance = values.reduce((a, b) => a + (b - mean) ** 2, 0) / (values.length - 1);
      return { mean, se: Math.sqrt(variance / values.length) };
    };
    const withCorrection = summary(corrected);
    const without = summary(plain);
    expect(Math.abs(withCorrection.mean - reference.truth)).toBeLessThan(2 * withCorrection.se);
    expect(Math.abs(without.mean - reference.truth)).toBeGreaterThan(2 * without.se);
  });
});

describe('logDeterminantsOfSubtree', () => {
  // A random 10 × 10 covariance from numpy, and numpy.linalg.slogdet of every principal submatrix.
  const reference = python<{ cov: number[]; logdet: Record<string, number> }>(
    `import json, sys, itertools
import numpy as np
rng = np.random.default_rng(10)
a = rng.normal(size=(10, 40))
cov = np.cov(a)
out = {}
for k in range(1, 11):
    for s in itertools.combinations(range(10), k):
        sign, value = np.linalg.slogdet(cov[np.ix_(s, s)])
        assert sign > 0
        out[','.join(map(str, s))] = float(value)
json.dump({'cov': cov.ravel().tolist(), 'logdet': out}, sys.stdout)`
  );
  const cov = Float64Array.from(reference.cov);

  it('should equal numpy.linalg.slogdet of every subset of a random 10-column covariance to 1e-10 (full lattice)', () => {
    const indexing = createIndexing(10, 10);
    let checked = 0;
    for (let root = 0; root < 10; root++) {
      const values = logDeterminantsOfSubtree(cov, indexing, root);
      let position = 0;
      forEachInSubtree(indexing, root, (_index, members, order) => {
        const key = Array.from(members.subarray(0, order)).join(',');
        expect(Math.abs(values[position++] - reference.logdet[key])).toBeLessThanOrEqual(1e-10);
        checked++;
      });
    }
    expect(checked).toBe(1023);
  });

  it('should equal numpy.linalg.slogdet on an order-limited lattice (combinatorial rank layout)', () => {
    const indexing = createIndexing(10, 4);
    expect(indexing.kind).toBe('rank');
    for (let root = 0; root < 10; root++) {
      const values = logDeterminantsOfSubtree(cov, indexing, root);
      let position = 0;
      forEachInSubtree(indexing, root, (_index, members, order) => {
        const key = Array.from(members.subarray(0, order)).join(',');
        expect(Math.abs(values[position++] - reference.logdet[key])).toBeLessThanOrEqual(1e-10);
      });
    }
  });
});

describe('analyze with the Gaussian copula', () => {
  /** Closed forms from a covariance (numpy.linalg.slogdet) and seeded samples of it (numpy). */
  interface IConvergence {
    truth: { co: number; o: number; tc: number; h1: number };
    samples: { n: number; columns: number[][] }[];
  }
  const sigma = [
    [1, 0, 0.6],
    [0, 1, 0.6],
    [0.6, 0.6, 1]
  ];
  const convergence = python<IConvergence>(
    `import json, sys, itertools
import numpy as np
cov = np.array(json.load(sys.stdin))
def h(s):
    s = list(s)
    return 0.5 * (len(s) * np.log(2 * np.pi * np.e) + np.linalg.slogdet(cov[np.ix_(s, s)])[1])
subsets = [s for k in (1, 2, 3) for s in itertools.combinations(range(3), k)]
co = -sum((-1) ** len(s) * h(s) for s in subsets)
tc = sum(h([i]) for i in range(3)) - h(range(3))
dtc = sum(h([j for j in range(3) if j != i]) for i in range(3)) - 2 * h(range(3))
rng = np.random.default_rng(44)
samples = [{'n': n, 'columns': rng.multivariate_normal(np.zeros(3), cov, size=n).T.tolist()} for n in (200, 2000, 20000)]
json.dump({'truth': {'co': co, 'o': tc - dtc, 'tc': tc, 'h1': h([0])}, 'samples': samples}, sys.stdout)`,
    sigma
  );

  it('should converge to the closed-form co-information and O-information of a trivariate Gaussian as n grows', () => {
    const errors = convergence.samples.map(({ n, columns }) => {
      const result = analyze(
        columns.map((values, c) => numericColumn(`x${c}`, values)),
        { estimator: 'gaussian-copula', units: 'nats' }
      );
      const triple = result.multiplets.find(row => row.order === 3);
      expect(triple).toBeDefined();
      return {
        n,
        co: Math.abs((triple?.co_information ?? NaN) - convergence.truth.co),
        o: Math.abs((triple?.o_information ?? NaN) - convergence.truth.o)
      };
    });
    // Sampling error shrinks as 1/√n: each error within 3/√n nats, and the largest sample the closest.
    for (const { n, co, o } of errors) {
      expect(co).toBeLessThan(3 / Math.sqrt(n));
      expect(o).toBeLessThan(3 / Math.sqrt(n));
    }
    expect(errors[2].co).toBeLessThan(errors[0].co);
    expect(errors[2].o).toBeLessThan(errors[0].o);
    // The planted structure is synergy (Z depends on X + Y): negative co-information.
    expect(convergence.truth.co).toBeLessThan(-0.05);
  });

  it('should report bits, copula-normalised columns and no adequacy', () => {
    const { columns } = convergence.samples[0];
    const bits = analyze(columns.map((values, c) => numericColumn(`x${c}`, values)), { estimator: 'gaussian-copula' });
    const nats = analyze(columns.map((values, c) => numericColumn(`x${c}`, values)), { estimator: 'gaussian-copula', units: 'nats' });
    expect(bits.estimator).toBe('gaussian-copula');
    expect(bits.multiplets[6].co_information).toBeCloseTo(nats.multiplets[6].co_information / LN2, 12);
    for (const column of bits.columns) {
      expect(column.binning).toEqual({ method: 'copula', spec: 'copula' });
      expect(column.bins).toBe(200);
    }
    expect(bits.multiplets.every(row => row.adequacy === undefined)).toBe(true);
    expect(bits.inadequate_count).toBeUndefined();
  });

  it('should give the lattice a worker pool assembles from units, bit for bit', () => {
    const columns: ColumnView[] = [];
    for (let c = 0; c < 6; c++) {
      columns.push(numericColumn(`c${c}`, Array.from({ length: 80 }, (_, i) => Math.sin(i * (c + 1.3)) + ((i * 7919) % 13) / 13)));
    }
    for (const maxOrder of [6, 3]) {
      const options = { estimator: 'gaussian-copula' as const, maxOrder };
      const prepared = analyze(columns, options);
      const input = {
        codes: columns.map(column => rankCodes((column as { values: Float64Array }).values).codes),
        bins: columns.map(column => rankCodes((column as { values: Float64Array }).values).distinct),
        maxOrder,
        estimator: 'gaussian-copula' as const
      };
      const whole = computeCopulaLattice(input);
      const parts = [...walkUnit(input, { first: 0, last: 0 }), ...walkUnit(input, { first: 1, last: 2 }), ...walkUnit(input, { first: 3, last: 5 })];
      const assembled = assembleLattice(input, parts);
      expect(Array.from(assembled.entropy)).toEqual(Array.from(whole.entropy));
      expect(prepared.multiplet_count).toBe(whole.indexing.size - 1);
    }
  });

  it('should give each multiplet the entropy of its own covariance (direct slogdet of the normal scores)', () => {
    const { columns } = convergence.samples[0];
    const input = {
      codes: columns.map(values => rankCodes(values).codes),
      bins: columns.map(values => rankCodes(values).distinct),
      maxOrder: 3,
      estimator: 'gaussian-copula' as const
    };
    const lattice = computeCopulaLattice(input);
    const scores = columns.map(values => copulaNormalise(values));
    forEachMultiplet(lattice.indexing, (index, members, order) => {
      const ids = Array.from(members.subarray(0, order));
      const cov = covarianceMatrix(ids.map(c => scores[c]));
      expect(close(lattice.entropy[index], gaussianEntropy(cov, order, 200), 1e-12)).toBe(true);
    });
    const co = coinformationAll(lattice);
    expect(co[indexOfColumns(lattice.indexing, [0, 1, 2])]).toBeCloseTo(computeMeasures(lattice).coinformation[7], 14);
  });

  it('should find the planted triplet through surrogates and give bootstrap intervals', () => {
    const { columns } = convergence.samples[1];
    const noise = Array.from({ length: columns[0].length }, (_, i) => Math.sin(i * 12.9898) * 43758.5453 % 1);
    const table = [...columns.map((values, c) => numericColumn(`x${c}`, values)), numericColumn('noise', noise)];
    const result = analyze(table, {
      estimator: 'gaussian-copula',
      units: 'nats',
      statistics: { surrogates: 99, bootstrap: 200, seed: 5 }
    });
    const row = (names: string[]) => result.multiplets.find(m => m.columns.join() === names.join());
    const planted = row(['x0', 'x1', 'x2']);
    expect(planted?.p_value).toBeCloseTo(2 / 100, 10);
    expect(planted?.ci_high as number).toBeLessThan(0);
    expect(planted?.ci_low as number).toBeLessThan(planted?.co_information as number);
    expect(planted?.same_sign).toBe(1);
    // Surrogates destroy dependence: the null of a pair is centred near 0 (within 3 of its spreads).
    const pair = row(['x0', 'noise']);
    expect(Math.abs(pair?.null_mean as number)).toBeLessThan(3 * (pair?.null_sd as number));
    expect(pair?.p_value as number).toBeGreaterThan(0.05);
    expect(result.statistics?.surrogates).toBe(99);
  });

  it('should sharpen p-values at their floor with the copula entropies', () => {
    const { columns } = convergence.samples[0];
    const result = analyze(columns.map((values, c) => numericColumn(`x${c}`, values)), {
      estimator: 'gaussian-copula',
      statistics: { surrogates: 19, sharpen: 199, seed: 1 }
    });
    const planted = result.multiplets.find(m => m.order === 3);
    expect(planted?.p_surrogates).toBe(199);
    expect(planted?.p_value).toBeCloseTo(2 / 200, 10);
  });
});

describe('analyze with the Gaussian copula: bad input', () => {
  const x = Array.from({ length: 40 }, (_, i) => Math.cos(i * 1.7) + i / 40);
  const y = Array.from({ length: 40 }, (_, i) => Math.sin(i * 2.3));

  it('should refuse a constant column, naming it', () => {
    const error = expectPolyadic(
      () => analyze([numericColumn('x', x), numericColumn('flat', x.map(() => 3))], { estimator: 'gaussian-copula' }),
      'input',
      /'flat' is constant/,
      /Leave it out/
    );
    expect(error.detail.column).toBe('flat');
  });

  it('should refuse a categorical column in a mixed selection, naming it and suggesting a discrete estimator', () => {
    const labels = x.map(v => (v > 0 ? 'wet' : 'dry'));
    const error = expectPolyadic(
      () => analyze([numericColumn('x', x), categoricalColumn('leaf', labels)], { estimator: 'gaussian-copula' }),
      'usage',
      /'leaf' is categorical/,
      /mixes continuous and categorical/,
      /discrete estimator/
    );
    expect(error.detail.column).toBe('leaf');
  });

  it('should refuse a boolean column', () => {
    const flag = { ...categoricalColumn('fan', x.map(v => (v > 0 ? 'true' : 'false'))), dtype: 'bool' };
    expectPolyadic(() => analyze([numericColumn('x', x), flag], { estimator: 'gaussian-copula' }), 'usage', /'fan' is boolean/);
  });

  it('should refuse two columns with the same ranks, naming both', () => {
    expectPolyadic(
      () => analyze([numericColumn('celsius', x), numericColumn('fahrenheit', x.map(v => v * 1.8 + 32))], { estimator: 'gaussian-copula' }),
      'input',
      /'celsius' and 'fahrenheit' have the same ranks/
    );
  });

  it("should drop rows with a missing value and say so; refuse 'category'; honour 'error'", () => {
    const holed = x.map((v, i) => (i % 10 === 3 ? NaN : v));
    const result = analyze([numericColumn('x', holed), numericColumn('y', y)], { estimator: 'gaussian-copula', units: 'nats' });
    expect(result.rows_used).toBe(36);
    expect(result.columns[0].bins).toBe(36);
    expect(result.warnings.join(' ')).toMatch(/4 of 40 rows have a missing value .* left out before ranking/);
    // Ranks are taken over the kept rows only: x alone, without its missing rows, has the same entropy.
    const kept = holed.filter(v => !Number.isNaN(v));
    const alone = analyze([numericColumn('x', kept)], { estimator: 'gaussian-copula', units: 'nats' });
    expect(alone.multiplets[0].entropy).toBe(result.multiplets[0].entropy);
    expectPolyadic(
      () => analyze([numericColumn('x', holed), numericColumn('y', y)], { estimator: 'gaussian-copula', missing: 'category' }),
      'usage',
      /'category'/,
      /'drop'/
    );
    expectPolyadic(
      () => analyze([numericColumn('x', holed), numericColumn('y', y)], { estimator: 'gaussian-copula', missing: 'error' }),
      'input',
      /'x' has a missing value at row 3/
    );
  });

  it('should warn that binning specs are not used, and refuse the pairwise-preserving null', () => {
    const result = analyze([numericColumn('x', x), numericColumn('y', y)], {
      estimator: 'gaussian-copula',
      binsByColumn: { x: 'quantile:3' }
    });
    expect(result.warnings.join(' ')).toMatch(/does not bin.*for 'x' was not used/);
    expectPolyadic(
      () => analyze([numericColumn('x', x), numericColumn('y', y)], { estimator: 'gaussian-copula', statistics: { beyondPairs: 2 } }),
      'usage',
      /pairwise-preserving null/,
      /discrete estimator/
    );
  });

  it('should refuse fewer rows than the order needs', () => {
    expectPolyadic(
      () => analyze([numericColumn('a', [1, 2, 3]), numericColumn('b', [3, 1, 2]), numericColumn('c', [2, 3, 1])], { estimator: 'gaussian-copula' }),
      'input',
      /needs more rows than the largest order: 3 rows for order 3/
    );
  });
});
