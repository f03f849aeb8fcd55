/**
 * From merged replicates to the evidence on every multiplet: surrogate p-values (co-information
 * and O-information), Benjamini–Hochberg q-values over each tested family, the null mean and
 * spread, the null band of each order, bootstrap percentile intervals with the share of
 * resamples of the same sign, and the pairwise-preserving null of the most extreme multiplets
 * (connected information, see ../maxent).
 *
 * Families. Surrogates keep every column's distribution, so a single column's entropy is the
 * same in every surrogate and is not tested: the co-information family is every multiplet of
 * order ≥ 2, and the O-information family every multiplet of order ≥ 3 (a pair's
 * O-information is 0 by definition). q-values are computed within each family.
 */

import { PolyadicError } from '../errors';
import { quantileSorted } from '../floatmath';
import type { ILattice } from '../lattice';
import type { IMeasureArrays } from '../measures';
import { forEachMultiplet, IMultipletIndexing, membersOfIndex } from '../multiplets';
import { MAX_BOOTSTRAP_VALUES, type IResolvedStatistics, type StatisticsTail } from './options';
import { bandReplicates, BOOTSTRAP_MEASURES, ReplicateAccumulator } from './replicates';
import { atFloor, ISharpened, MAX_SHARPENED } from './sharpen';

/** Evidence on every multiplet, by lattice index; NaN where a multiplet was not tested. */
export interface IMultipletEvidence {
  /** Surrogate p-value of co-information (the chosen tail). */
  pValue: Float64Array;
  /** Benjamini–Hochberg q-value of co-information over its family. */
  qValue: Float64Array;
  /** Mean and standard deviation of co-information over the surrogates (nats). */
  nullMean: Float64Array;
  nullSd: Float64Array;
  /** The same four for O-information (orders ≥ 3). */
  oPValue: Float64Array;
  oQValue: Float64Array;
  oNullMean: Float64Array;
  oNullSd: Float64Array;
  /** Surrogates behind each p-value: N, or the fresh surrogates of a sharpened multiplet. */
  pSurrogates: Float64Array;
  /** Lattice indices of the multiplets with bootstrap intervals, in the order of the arrays below. */
  bootstrapped: Int32Array;
  /**
   * Percentile intervals: `intervals[(j · 6 + m) · 2]` and `… + 1` are the low and high end of
   * measure m ({@link BOOTSTRAP_MEASURES}) of bootstrapped multiplet j (nats).
   */
  intervals: Float64Array;
  /** Share of resamples whose co-information has the observed sign (0 counts as its own sign). */
  sameSign: Float64Array;
}

/** Where the surrogate values of one order lie: the 2.5 % and 97.5 % quantiles and the mean (nats). */
export interface INullBand {
  order: number;
  low: number;
  high: number;
  mean: number;
  /** Surrogate values the band was computed from. */
  values: number;
}

/** Which multiplets a family of tests covers. */
export interface ITestFamily {
  orders: number[];
  count: number;
}

/** The evidence and what it was computed over. */
export interface IStatisticsOutcome {
  evidence: IMultipletEvidence;
  bands: INullBand[];
  families: { co_information: ITestFamily | null; o_information: ITestFamily | null };
  /** Multiplets whose p-values were sharpened. */
  sharpened: number;
}

/**
 * Lattice indices of the multiplets that get bootstrap intervals: `reported` when given (a
 * top-N cut), else every multiplet when B × multiplets fits {@link MAX_BOOTSTRAP_VALUES}, else
 * as many of the most extreme co-informations (order ≥ 2, lowest and highest alternately) as fit.
 */
export function chooseBootstrapped(
  indexing: IMultipletIndexing,
  coinformation: Float64Array,
  bootstrap: number,
  reported: number[] | null
): Int32Array {
  if (bootstrap <= 0) {
    return new Int32Array(0);
  }
  const fits = Math.max(1, Math.floor(MAX_BOOTSTRAP_VALUES / bootstrap));
  if (reported) {
    return Int32Array.from(reported.slice(0, fits)).sort();
  }
  const all: number[] = [];
  forEachMultiplet(indexing, index => all.push(index));
  if (all.length <= fits) {
    return Int32Array.from(all).sort();
  }
  const higher = all.filter(index => orderOf(indexing, index) >= 2);
  const ascending = higher.slice().sort((a, b) => coinformation[a] - coinformation[b] || a - b);
  const chosen = new Set<number>();
  for (let i = 0, j = ascending.length - 1; chosen.size < Math.min(fits, ascending.length); ) {
    chosen.add(ascending[i++]);
    if (chosen.size < fits && j >= i) {
      chosen.add(ascending[j--]);
    }
  }
  return Int32Array.from(chosen).sort();
}

/**
 * Benjamini–Hochberg adjusted p-values (Benjamini & Hochberg 1995, JRSS B 57:289–300): with the
 * p-values sorted ascending, q(i) = min over j ≥ i of p(j) / (j / m), at most 1. Written as
 * statsmodels' `multipletests(method='fdr_bh')` computes it (p divided by the empirical CDF
 * factor), so the two agree to the last bit.
 */
export function benjaminiHochberg(pValues: ArrayLike<number>): Float64Array {
  const m = pValues.length;
  const order = Array.from({ length: m }, (_, i) => i).sort((a, b) => pValues[a] - pValues[b] || a - b);
  const q = new Float64Array(m);
  let running = Infinity;
  for (let rank = m - 1; rank >= 0; rank--) {
    const i = order[rank];
    const adjusted = pValues[i] / ((rank + 1) / m);
    running = Math.min(running, adjusted);
    q[i] = Math.min(1, running);
  }
  return q;
}

/** A surrogate p-value from the counts at or below and at or above the observed value. */
export function surrogatePValue(low: number, high: number, surrogates: number, tail: StatisticsTail): number {
  const below = (1 + low) / (surrogates + 1);
  const above = (1 + high) / (surrogates + 1);
  switch (tail) {
    case 'synergy':
      return below;
    case 'redundancy':
      return above;
    default:
      // Two-sided: twice the smaller tail, at most 1 (common practice for permutation tests).
      return Math.min(1, 2 * Math.min(below, above));
  }
}

/** Turn merged replicates into the evidence on every multiplet of the observed lattice. */
export function concludeStatistics(
  lattice: ILattice,
  observed: IMeasureArrays,
  accumulator: ReplicateAccumulator,
  statistics: IResolvedStatistics,
  bootstrapped: Int32Array,
  sharpen?: (index: number) => ISharpened
): IStatisticsOutcome {
  if (!accumulator.complete) {
    throw new PolyadicError('internal', 'Statistics concluded before every replicate block was merged.');
  }
  const indexing = lattice.indexing;
  const size = indexing.size;
  const nan = (): Float64Array => new Float64Array(size).fill(NaN);
  const evidence: IMultipletEvidence = {
    pValue: nan(),
    qValue: nan(),
    nullMean: nan(),
    nullSd: nan(),
    oPValue: nan(),
    oQValue: nan(),
    oNullMean: nan(),
    oNullSd: nan(),
    pSurrogates: nan(),
    bootstrapped,
    intervals: new Float64Array(bootstrapped.length * BOOTSTRAP_MEASURES.length * 2).fill(NaN),
    sameSign: new Float64Array(bootstrapped.length).fill(NaN)
  };
  const orders = new Uint8Array(size);
  forEachMultiplet(indexing, (index, _members, order) => {
    orders[index] = order;
  });
  let families: IStatisticsOutcome['families'] = { co_information: null, o_information: null };
  let bands: INullBand[] = [];
  let sharpened = 0;
  const N = statistics.surrogates;
  if (N > 0) {
    const coTested: number[] = [];
    const oTested: number[] = [];
    for (let i = 1; i < size; i++) {
      if (orders[i] >= 2) {
        coTested.push(i);
        evidence.pValue[i] = surrogatePValue(accumulator.coLow[i], accumulator.coHigh[i], N, statistics.tail);
        Private.moments(accumulator.coSum[i], accumulator.coSumSquares[i], N, evidence.nullMean, evidence.nullSd, i);
      }
      if (orders[i] >= 3) {
        oTested.push(i);
        evidence.oPValue[i] = surrogatePValue(accumulator.oLow[i], accumulator.oHigh[i], N, statistics.tail);
        Private.moments(accumulator.oSum[i], accumulator.oSumSquares[i], N, evidence.oNullMean, evidence.oNullSd, i);
      }
      if (orders[i] >= 2) {
        evidence.pSurrogates[i] = N;
      }
    }
    if (statistics.sharpen > 0 && sharpen) {
      sharpened = Private.sharpenFloor(accumulator, statistics, observed, evidence, orders, sharpen);
    }
    Private.adjust(coTested, evidence.pValue, evidence.qValue);
    Private.adjust(oTested, evidence.oPValue, evidence.oQValue);
    families = {
      co_information: coTested.length ? { orders: Private.range(2, indexing.maxOrder), count: coTested.length } : null,
      o_information: oTested.length ? { orders: Private.range(3, indexing.maxOrder), count: oTested.length } : null
    };
    bands = Private.bands(accumulator, orders, indexing.maxOrder, bandReplicates(N, size));
  }
  if (statistics.bootstrap > 0) {
    Private.intervals(accumulator, statistics, bootstrapped, observed, evidence);
  }
  return { evidence, bands, families, sharpened };
}

function orderOf(indexing: IMultipletIndexing, index: number): number {
  return membersOfIndex(indexing, index, new Int32Array(Math.max(1, indexing.maxOrder)));
}

namespace Private {
  /**
   * Fresh surrogates for the multiplets at the p floor (co-information or O-information), the
   * farthest from their null mean in null standard deviations first, at most MAX_SHARPENED.
   */
  export function sharpenFloor(
    accumulator: ReplicateAccumulator,
    statistics: IResolvedStatistics,
    observed: IMeasureArrays,
    evidence: IMultipletEvidence,
    orders: Uint8Array,
    sharpen: (index: number) => ISharpened
  ): number {
    const tail = statistics.tail;
    const candidates: number[] = [];
    for (let i = 1; i < orders.length; i++) {
      if (orders[i] < 2) {
        continue;
      }
      const coFloor = atFloor(accumulator.coLow[i], accumulator.coHigh[i], tail);
      const oFloor = orders[i] >= 3 && atFloor(accumulator.oLow[i], accumulator.oHigh[i], tail);
      if (coFloor || oFloor) {
        candidates.push(i);
      }
    }
    const distance = (i: number): number => {
      const sd = evidence.nullSd[i];
      const gap = Math.abs(observed.coinformation[i] - evidence.nullMean[i]);
      return sd > 0 ? gap / sd : gap > 0 ? Infinity : 0;
    };
    candidates.sort((a, b) => distance(b) - distance(a) || a - b);
    const chosen = candidates.slice(0, MAX_SHARPENED);
    for (const i of chosen) {
      const fresh = sharpen(i);
      evidence.pValue[i] = surrogatePValue(fresh.coLow, fresh.coHigh, fresh.surrogates, tail);
      if (orders[i] >= 3) {
        evidence.oPValue[i] = surrogatePValue(fresh.oLow, fresh.oHigh, fresh.surrogates, tail);
      }
      evidence.pSurrogates[i] = fresh.surrogates;
    }
    return chosen.length;
  }

  export function range(from: number, to: number): number[] {
    const out: number[] = [];
    for (let k = from; k <= to; k++) {
      out.push(k);
    }
    return out;
  }

  /** Mean and sample standard deviation from a sum and a sum of squares of n values. */
  export function moments(
    sum: number,
    sumSquares: number,
    n: number,
    mean: Float64Array,
    sd: Float64Array,
    at: number
  ): void {
    const m = sum / n;
    mean[at] = m;
    sd[at] = n > 1 ? Math.sqrt(Math.max(0, (sumSquares - n * m * m) / (n - 1))) : NaN;
  }

  export function adjust(tested: number[], p: Float64Array, q: Float64Array): void {
    const values = tested.map(i => p[i]);
    const adjusted = benjaminiHochberg(values);
    tested.forEach((i, k) => {
      q[i] = adjusted[k];
    });
  }

  /** Per order, the 2.5 % and 97.5 % quantiles (numpy's linear rule) of the pooled surrogate values. */
  export function bands(
    accumulator: ReplicateAccumulator,
    orders: Uint8Array,
    maxOrder: number,
    replicates: number
  ): INullBand[] {
    const size = accumulator.size;
    const out: INullBand[] = [];
    for (let k = 2; k <= maxOrder; k++) {
      let count = 0;
      for (let i = 1; i < size; i++) {
        if (orders[i] === k) {
          count++;
        }
      }
      const values = new Float64Array(count * replicates);
      let at = 0;
      let sum = 0;
      for (let r = 0; r < replicates; r++) {
        const base = r * size;
        for (let i = 1; i < size; i++) {
          if (orders[i] === k) {
            const v = accumulator.band[base + i];
            values[at++] = v;
            sum += v;
          }
        }
      }
      if (values.length === 0) {
        continue;
      }
      values.sort();
      out.push({
        order: k,
        low: quantileSorted(values, 0.025),
        high: quantileSorted(values, 0.975),
        mean: sum / values.length,
        values: values.length
      });
    }
    return out;
  }

  /** Percentile intervals of level 1 − alpha and the same-sign share of co-information. */
  export function intervals(
    accumulator: ReplicateAccumulator,
    statistics: IResolvedStatistics,
    bootstrapped: Int32Array,
    observed: IMeasureArrays,
    evidence: IMultipletEvidence
  ): void {
    const B = statistics.bootstrap;
    const width = BOOTSTRAP_MEASURES.length;
    const J = bootstrapped.length;
    const column = new Float64Array(B);
    const lowQ = statistics.alpha / 2;
    const highQ = 1 - statistics.alpha / 2;
    for (let j = 0; j < J; j++) {
      for (let m = 0; m < width; m++) {
        for (let r = 0; r < B; r++) {
          column[r] = accumulator.bootstrap[(r * J + j) * width + m];
        }
        if (m === 1) {
          const sign = Math.sign(observed.coinformation[bootstrapped[j]]);
          let same = 0;
          for (let r = 0; r < B; r++) {
            if (Math.sign(column[r]) === sign) {
              same++;
            }
          }
          evidence.sameSign[j] = same / B;
        }
        column.sort();
        evidence.intervals[(j * width + m) * 2] = quantileSorted(column, lowQ);
        evidence.intervals[(j * width + m) * 2 + 1] = quantileSorted(column, highQ);
      }
    }
  }
}
