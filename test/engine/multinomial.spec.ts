/**
 * The bootstrap of weighted rows (an aggregated source's distinct rows with their counts): new
 * weights ~ Multinomial(N, w/N) drawn by stdlib's binomial in the conditional-binomial
 * construction. Checked against what is known outside the project:
 * - the multinomial's moments: E n_i = N p_i, Var n_i = N p_i (1 − p_i), Cov(n_i, n_j) = −N p_i p_j
 *   (any probability text, e.g. Johnson, Kotz & Balakrishnan 1997, Discrete Multivariate
 *   Distributions, ch. 35);
 * - the law: multinomial resampling of the weights is the row bootstrap of the expanded rows, so
 *   their bootstrap means, standard errors and percentile intervals agree within Monte Carlo error.
 * Every tolerance below is 4 standard errors of the compared quantity, with the standard error
 * written beside it (normal approximations of sampling distributions: common practice).
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyzeCodes, latticeInput, planEvidence } from '../../src/engine/analyze';
import type { IPreparedCodes } from '../../src/engine/binning';
import { indexOfColumns } from '../../src/engine/multiplets';
import { sortedWeightedTable } from '../../src/record/scan-fingerprint';
import { walkLattice } from '../../src/engine/walk';
import { keepWeightedRows, multinomialWeights, seededUniform } from '../../src/engine/statistics/multinomial';
import { resolveStatistics } from '../../src/engine/statistics/options';
import { IBootstrapBlockResult, runReplicateBlock } from '../../src/engine/statistics/replicates';
import type { IAnalyzeOptions, IColumnBinning } from '../../src/engine/types';

/** Mean, variance (n − 1) and excess kurtosis of a sample. */
function moments(values: ArrayLike<number>): { mean: number; variance: number; kurtosis: number } {
  const n = values.length;
  let mean = 0;
  for (let i = 0; i < n; i++) {
    mean += values[i] / n;
  }
  let m2 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const d = values[i] - mean;
    m2 += (d * d) / n;
    m4 += (d * d * d * d) / n;
  }
  return { mean, variance: (m2 * n) / (n - 1), kurtosis: m2 > 0 ? m4 / (m2 * m2) - 3 : 0 };
}

describe('seededUniform', () => {
  it('should give the same doubles in [0, 1) for a seed, others for another seed', () => {
    const a = seededUniform(5);
    const b = seededUniform(5);
    const c = seededUniform(6);
    const first = Array.from({ length: 1000 }, () => a());
    expect(Array.from({ length: 1000 }, () => b())).toEqual(first);
    expect(Array.from({ length: 1000 }, () => c())).not.toEqual(first);
    expect(Math.min(...first)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...first)).toBeLessThan(1);
    // mean of U(0, 1) is 1/2 with standard error sqrt(1/12 / 1000) ≈ 0.0091
    expect(Math.abs(moments(first).mean - 0.5)).toBeLessThan(4 * 0.0091);
  });
});

describe('multinomialWeights', () => {
  const weights = Int32Array.from([1, 5, 30, 64, 100]);
  const N = 200;
  const R = 4000;
  const draws = Array.from({ length: weights.length }, () => new Float64Array(R));
  const out = new Int32Array(weights.length);
  for (let r = 0; r < R; r++) {
    multinomialWeights(weights, 1000 + r, out);
    out.forEach((n, i) => (draws[i][r] = n));
  }

  it('should keep the total N in every draw, with whole non-negative counts', () => {
    for (let r = 0; r < R; r++) {
      let total = 0;
      for (let i = 0; i < weights.length; i++) {
        expect(Number.isInteger(draws[i][r]) && draws[i][r] >= 0).toBe(true);
        total += draws[i][r];
      }
      expect(total).toBe(N);
    }
  });

  it('should have the multinomial mean N·p and variance N·p(1 − p) for every row', () => {
    weights.forEach((w, i) => {
      const p = w / N;
      const variance = N * p * (1 - p);
      const found = moments(draws[i]);
      // standard error of the mean: sqrt(Var / R)
      expect(Math.abs(found.mean - N * p)).toBeLessThan(4 * Math.sqrt(variance / R));
      // standard error of the sample variance: Var · sqrt(2/(R − 1) + κ/R), κ the binomial's
      // excess kurtosis (1 − 6p(1 − p)) / (N p (1 − p))
      const kurtosis = (1 - 6 * p * (1 - p)) / variance;
      expect(Math.abs(found.variance - variance)).toBeLessThan(4 * variance * Math.sqrt(2 / (R - 1) + kurtosis / R));
    });
  });

  it('should have the multinomial covariance −N·p_i·p_j', () => {
    const [i, j] = [3, 4];
    const pi = weights[i] / N;
    const pj = weights[j] / N;
    const a = moments(draws[i]);
    const b = moments(draws[j]);
    let covariance = 0;
    for (let r = 0; r < R; r++) {
      covariance += ((draws[i][r] - a.mean) * (draws[j][r] - b.mean)) / (R - 1);
    }
    // standard error of a sample covariance, normal approximation: sqrt((σ_i² σ_j² + σ_ij²) / R)
    const vi = N * pi * (1 - pi);
    const vj = N * pj * (1 - pj);
    const cij = -N * pi * pj;
    expect(Math.abs(covariance - cij)).toBeLessThan(4 * Math.sqrt((vi * vj + cij * cij) / R));
  });

  it('should be the same for a seed and draw large totals', () => {
    expect(multinomialWeights(weights, 77)).toEqual(multinomialWeights(weights, 77));
    expect(multinomialWeights(weights, 77)).not.toEqual(multinomialWeights(weights, 78));
    const big = Int32Array.from([12_000_000, 25_000_000, 13_000_000]);
    const drawn = multinomialWeights(big, 3);
    expect(drawn.reduce((sum, n) => sum + n, 0)).toBe(50_000_000);
    // each within 6 binomial standard deviations (sd ≤ sqrt(N/4) ≈ 3536)
    big.forEach((w, i) => expect(Math.abs(drawn[i] - w)).toBeLessThan(6 * 3536));
  });

  it('should refuse a weight below 1, and drop the rows a resample gives weight 0', () => {
    expect(() => multinomialWeights(Int32Array.from([2, 0]), 1)).toThrow(/below 1/);
    const codes = [Int32Array.from([0, 1, 2, 3]), Int32Array.from([4, 5, 6, 7])];
    const kept = keepWeightedRows(codes, Int32Array.from([2, 0, 1, 0]), codes.map(() => new Int32Array(4)), new Int32Array(4));
    expect(kept.codes.map(column => Array.from(column))).toEqual([[0, 2], [4, 6]]);
    expect(Array.from(kept.weights)).toEqual([2, 1]);
  });
});

describe('bootstrap of weighted rows', () => {
  // 3 columns of 3 codes over 1,200 rows, the third an XOR-like function of the first two with noise
  const rows = 1200;
  const rng = xoroshiro128plus(2026);
  const codes = [new Int32Array(rows), new Int32Array(rows), new Int32Array(rows)];
  for (let i = 0; i < rows; i++) {
    codes[0][i] = unsafeUniformIntDistribution(0, 2, rng);
    codes[1][i] = unsafeUniformIntDistribution(0, 2, rng);
    codes[2][i] = unsafeUniformIntDistribution(0, 4, rng) === 0 ? unsafeUniformIntDistribution(0, 2, rng) : (codes[0][i] + codes[1][i]) % 3;
  }
  // the distinct joint rows with their counts (equal rows merged)
  const grouped = sortedWeightedTable({ codes, weights: new Int32Array(rows).fill(1) });
  const prepared = (weighted: boolean): IPreparedCodes => {
    const names = ['a', 'b', 'c'];
    const binnings = names.map(name => ({ column: name, method: 'categorical', categories: ['0', '1', '2'] }) as unknown as IColumnBinning);
    return {
      names,
      codes: weighted ? [...grouped.codes] : codes,
      bins: [3, 3, 3],
      binnings,
      rows,
      rowsUsed: rows,
      rowIndex: null,
      warnings: [],
      ...(weighted ? { weights: grouped.weights } : {})
    };
  };
  const B = 2000;
  const options: IAnalyzeOptions = { maxOrder: 3, statistics: { bootstrap: B, seed: 14 } };

  const cache = new Map<boolean, { values: Float64Array; multiplets: number; positionOf: (names: string[]) => number }>();
  /** Every resample's six measures of every bootstrapped multiplet (one block of all B), computed once. */
  function replicateValues(weighted: boolean): { values: Float64Array; multiplets: number; positionOf: (names: string[]) => number } {
    const found = cache.get(weighted);
    if (found) {
      return found;
    }
    const codesOf = prepared(weighted);
    const lattice = walkLattice(latticeInput(codesOf, options));
    const plan = planEvidence(codesOf, options, lattice);
    const statistics = resolveStatistics(options.statistics)!;
    const block = runReplicateBlock(latticeInput(codesOf, options), plan.targets, statistics, { kind: 'bootstrap', index: 0, first: 0, count: B });
    const bootstrapped = Array.from(plan.targets.bootstrapped);
    // a multiplet's place among the bootstrapped ones (the values' layout), from its column names
    const positionOf = (names: string[]): number =>
      bootstrapped.indexOf(indexOfColumns(lattice.indexing, names.map(name => codesOf.names.indexOf(name))));
    const made = { values: (block as IBootstrapBlockResult).values, multiplets: bootstrapped.length, positionOf };
    cache.set(weighted, made);
    return made;
  }

  it('should aggregate to few distinct rows (the comparison is of two different draws)', () => {
    expect(grouped.weights.length).toBeLessThanOrEqual(27);
    expect(grouped.weights.length).toBeGreaterThan(10);
  });

  it('should give the bootstrap mean and standard error of the expanded rows within Monte Carlo error', () => {
    const weighted = replicateValues(true);
    const expanded = replicateValues(false);
    expect(weighted.multiplets).toBe(7);
    expect(expanded.multiplets).toBe(7);
    let compared = 0;
    for (let j = 0; j < 7; j++) {
      for (const m of [0, 1]) {
        // measure m (entropy, co-information) of multiplet j across the B resamples
        const pick = (values: Float64Array): Float64Array => Float64Array.from({ length: B }, (_x, r) => values[(r * 7 + j) * 6 + m]);
        const a = moments(pick(weighted.values));
        const b = moments(pick(expanded.values));
        // standard error of a bootstrap mean: sd / sqrt(B); of the difference of two: sqrt(2)·sd/sqrt(B)
        const sd = Math.sqrt((a.variance + b.variance) / 2);
        expect(Math.abs(a.mean - b.mean)).toBeLessThan(4 * Math.sqrt(2) * sd / Math.sqrt(B));
        // standard error of a sample sd (delta method): sd · sqrt((2/(B − 1) + κ/B) / 4), each estimate's own κ
        const seOf = (x: { variance: number; kurtosis: number }): number =>
          Math.sqrt(x.variance) * Math.sqrt((2 / (B - 1) + x.kurtosis / B) / 4);
        expect(Math.abs(Math.sqrt(a.variance) - Math.sqrt(b.variance))).toBeLessThan(4 * Math.hypot(seOf(a), seOf(b)));
        compared++;
      }
    }
    expect(compared).toBe(14);
  });

  it('should give the percentile intervals of the expanded rows within Monte Carlo error', () => {
    const weighted = analyzeCodes(prepared(true), options);
    const expanded = analyzeCodes(prepared(false), options);
    expect(weighted.multiplets.map(row => row.columns)).toEqual(expanded.multiplets.map(row => row.columns));
    /**
     * Standard error of a sample p-quantile of B values without assuming their shape: half the
     * distance between the order statistics at ranks B·p ∓ sqrt(B·p·(1 − p)) (the rank of the
     * sample quantile has that binomial spread; common practice, e.g. Wilcox 2012, Introduction
     * to Robust Estimation and Hypothesis Testing, §3.5).
     */
    const quantileSe = (values: Float64Array, p: number): number => {
      const sorted = Float64Array.from(values).sort();
      const spread = Math.sqrt(B * p * (1 - p));
      const at = (rank: number): number => sorted[Math.min(B - 1, Math.max(0, Math.round(rank)))];
      return (at(B * p + spread) - at(B * p - spread)) / 2;
    };
    const a = replicateValues(true);
    const b = replicateValues(false);
    weighted.multiplets.forEach((row, k) => {
      const other = expanded.multiplets[k];
      const co = (run: typeof a): Float64Array => {
        const j = run.positionOf(row.columns);
        expect(j).toBeGreaterThanOrEqual(0);
        return Float64Array.from({ length: B }, (_x, r) => run.values[(r * 7 + j) * 6 + 1]);
      };
      for (const [p, found, wanted] of [
        [0.025, row.ci_low, other.ci_low],
        [0.975, row.ci_high, other.ci_high]
      ] as const) {
        expect(found).not.toBeNull();
        // 4 standard errors of the difference of two independent sample quantiles, in bits
        const tolerance = (4 * Math.hypot(quantileSe(co(a), p), quantileSe(co(b), p))) / Math.LN2;
        expect(tolerance).toBeGreaterThan(0);
        expect(Math.abs((found as number) - (wanted as number))).toBeLessThan(tolerance);
      }
    });
  });

  it('should not depend on the order of the weighted rows', () => {
    const table = prepared(true);
    const reversed = { ...table, codes: table.codes.map(column => column.slice().reverse()), weights: table.weights!.slice().reverse() };
    const small = { ...options, statistics: { bootstrap: 30, seed: 8 } };
    expect(JSON.stringify(analyzeCodes(reversed, small))).toBe(JSON.stringify(analyzeCodes(table, small)));
  });

  it('should give the same bits for the same seed and the pairwise-preserving null of the expanded rows exactly', () => {
    const a = analyzeCodes(prepared(true), { ...options, statistics: { bootstrap: 50, seed: 3, beyondPairs: 1, fitDraws: 40 } });
    const b = analyzeCodes(prepared(true), { ...options, statistics: { bootstrap: 50, seed: 3, beyondPairs: 1, fitDraws: 40 } });
    expect(JSON.stringify(a)).toBe(JSON.stringify(b));
    // the fit and its parametric bootstrap need the joint counts only
    const expanded = analyzeCodes(prepared(false), { maxOrder: 3, statistics: { beyondPairs: 1, fitDraws: 40, seed: 3 } });
    const weighted = analyzeCodes(prepared(true), { maxOrder: 3, statistics: { beyondPairs: 1, fitDraws: 40, seed: 3 } });
    const triplet = (result: typeof a) => result.multiplets.find(row => row.columns.length === 3)!;
    expect(triplet(expanded).connected_information).not.toBeNull();
    expect(triplet(weighted).connected_information).toBe(triplet(expanded).connected_information);
    expect(triplet(weighted).connected_p_value).toBe(triplet(expanded).connected_p_value);
    expect(JSON.stringify(weighted)).toBe(JSON.stringify(expanded));
  });
});
