/**
 * Bootstrap resamples of weighted rows (an aggregated source's distinct rows with their counts):
 * drawing N = Σw rows with replacement from the expanded rows puts, on distinct row i, a count
 * that is Multinomial(N, w/N) — so a resample draws the new weights from that law directly, and
 * never expands the rows.
 *
 * The multinomial is drawn by the conditional-binomial construction (Devroye 1986, Non-Uniform
 * Random Variate Generation, §XI.1): n_1 ~ Binomial(N, p_1), then n_i ~ Binomial(N − Σ_{j<i} n_j,
 * p_i / (1 − Σ_{j<i} p_j)), the last row taking what is left. The conditional probabilities are
 * ratios of integer weights (w_i / Σ_{j≥i} w_j), exact up to one rounding. Each binomial is
 * drawn by inversion (Devroye 1986, §II.2): the quantile of a uniform from the replicate's seeded
 * xoroshiro128+ (pure-rand), by stdlib's binomial quantile function
 * (@stdlib/stats-base-dists-binomial-quantile, pinned: a Cornish–Fisher start and a search on the
 * exact CDF), so a resample depends only on its seed. Not stdlib's binomial sampler
 * (@stdlib/random-base-binomial 0.2.2): its draws for n·p ≥ 10 are biased upwards (mean 30.46
 * for Binomial(194, 30/194), 40,000 draws; the moment test in multinomial.spec.ts fails with it).
 */

import binomialQuantile from '@stdlib/stats-base-dists-binomial-quantile';
import { xoroshiro128plus } from 'pure-rand';

import { PolyadicError } from '../errors';

/**
 * A generator of uniform doubles in [0, 1) with 53 random bits, from xoroshiro128+ seeded with
 * `seed`. pure-rand fills the generator's state from the seed's bits directly, so the first
 * outputs of nearby seeds are alike (the first binomial draw of consecutive seeds was off by half
 * its mean); the seed is mixed first (MurmurHash3's 32-bit finalizer, Appleby 2011) and the first
 * outputs are skipped (common practice).
 */
export function seededUniform(seed: number): () => number {
  let h = seed | 0;
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  h ^= h >>> 16;
  const rng = xoroshiro128plus(h);
  for (let i = 0; i < 16; i++) {
    rng.unsafeNext();
  }
  return () => {
    const high = (rng.unsafeNext() >>> 0) >>> 5; // 27 bits
    const low = (rng.unsafeNext() >>> 0) >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992;
  };
}

/**
 * New weights ~ Multinomial(N, w/N), N = Σw, drawn from the generator seeded with `seed`
 * (see the file comment), written into `out` (allocated when absent). Each weight must be ≥ 1.
 */
export function multinomialWeights(weights: Int32Array, seed: number, out?: Int32Array): Int32Array {
  const uniform = seededUniform(seed);
  const result = out ?? new Int32Array(weights.length);
  let trials = 0;
  for (let i = 0; i < weights.length; i++) {
    if (!(weights[i] >= 1)) {
      throw new PolyadicError('internal', `Row weight ${weights[i]} at row ${i} is below 1.`);
    }
    trials += weights[i];
  }
  let rest = trials;
  for (let i = 0; i < weights.length; i++) {
    const w = weights[i];
    let n: number;
    if (trials === 0) {
      n = 0;
    } else if (w === rest) {
      n = trials;
    } else {
      n = binomialQuantile(uniform(), trials, w / rest);
    }
    result[i] = n;
    trials -= n;
    rest -= w;
  }
  return result;
}

/**
 * The rows of weight ≥ 1 of weighted codes (a resample's rows of weight 0 drop out, as the walk
 * takes weights of 1 and above): each column's codes and the weights, compacted into `scratch`.
 */
export function keepWeightedRows(
  codes: Int32Array[],
  weights: Int32Array,
  scratch: Int32Array[],
  scratchWeights: Int32Array
): { codes: Int32Array[]; weights: Int32Array } {
  let kept = 0;
  for (let i = 0; i < weights.length; i++) {
    if (weights[i] > 0) {
      for (let c = 0; c < codes.length; c++) {
        scratch[c][kept] = codes[c][i];
      }
      scratchWeights[kept] = weights[i];
      kept++;
    }
  }
  return { codes: scratch.map(column => column.subarray(0, kept)), weights: scratchWeights.subarray(0, kept) };
}

/**
 * Weighted rows in ascending order of their codes (column 1 first): the order a resample draws
 * its weights in, so that a resample does not depend on the order the rows arrived in (DuckDB's
 * and Spark's `GROUP BY` give them in no fixed order). The walk's results do not depend on it.
 */
export function sortedByCodes(codes: Int32Array[], weights: Int32Array): { codes: Int32Array[]; weights: Int32Array } {
  const order = Int32Array.from({ length: weights.length }, (_x, i) => i).sort((a, b) => {
    for (let c = 0; c < codes.length; c++) {
      const d = codes[c][a] - codes[c][b];
      if (d !== 0) {
        return d;
      }
    }
    return 0;
  });
  return { codes: codes.map(column => Int32Array.from(order, i => column[i])), weights: Int32Array.from(order, i => weights[i]) };
}
