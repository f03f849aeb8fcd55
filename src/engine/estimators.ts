/**
 * Entropy estimators from a count histogram, in nats.
 *
 * The lattice walk knows, for each multiplet, Σ n·ln n over its occupied cells, the number of
 * occupied cells K, the singletons f1 and the row count N without building a histogram object,
 * so the estimators take that summary ({@link ICountSummary}). Plug-in and Miller–Madow need
 * nothing else; Chao–Shen and shrinkage also read the counts themselves ({@link ICountCells}),
 * from a buffer the caller reuses. Rows alone in their cell may be left out of that buffer and
 * counted in `extraSingletons` instead (the walk drops them).
 */

import { PolyadicError } from './errors';
import type { EstimatorName, Units } from './types';
import { expm1, ln, log1p } from './detmath';

/** Every estimator name, in the order the user interface lists them. */
export const ESTIMATORS: readonly EstimatorName[] = ['plugin', 'miller-madow', 'chao-shen', 'shrinkage', 'gaussian-copula'];

/** What an estimator needs to know about a count histogram. */
export interface ICountSummary {
  /** N: number of rows. */
  total: number;
  /** K: number of occupied cells. */
  occupied: number;
  /** f1: number of cells holding exactly one row. */
  singletons: number;
  /** Σ n·ln n over the occupied cells (cells of one row add 0). */
  sumCountLogCount: number;
  /** Number of possible cells: the product of the columns' code counts. */
  possibleCells: number;
}

/** The counts of the occupied cells, for estimators that need them. */
export interface ICountCells {
  /** Counts; entries `0 … length − 1` are read, and must all be ≥ 1. */
  counts: ArrayLike<number>;
  length: number;
  /** Cells of one row that are not in `counts`. */
  extraSingletons: number;
}

/** Whether an estimator reads the counts, not only the summary. */
export function needsCounts(estimator: EstimatorName): boolean {
  return estimator === 'chao-shen' || estimator === 'shrinkage';
}

/** Check an estimator name from user input. */
export function checkEstimator(name: string): EstimatorName {
  if ((ESTIMATORS as readonly string[]).includes(name)) {
    return name as EstimatorName;
  }
  throw new PolyadicError(
    'usage',
    `Unknown estimator '${name}'; choose one of ${ESTIMATORS.map(e => `'${e}'`).join(', ')}.`,
    { option: 'estimator', value: name }
  );
}

/**
 * n·ln n for n = 0 … maxCount (0 for n ≤ 1), so a walk looks it up instead of calling log.
 * Every logarithm of the engine goes through detmath's `ln`, so a browser and Node give the same bits.
 */
export function countLogCountTable(maxCount: number): Float64Array {
  const table = new Float64Array(maxCount + 1);
  for (let n = 2; n <= maxCount; n++) {
    table[n] = n * ln(n);
  }
  return table;
}

/** Largest cell count (and row count) whose Σ n·ln n {@link countLogCountParts} sums exactly. */
export const MAX_COUNT = 2 ** 31 - 1;

/*
 * Σ n·ln n summed exactly, so that it does not depend on the order of the cells (a table and
 * its distinct rows with weights, or the same rows in another order, meet the cells in another
 * order). Each term t = n·ln n (n ≥ 2, so 1.38 < t < 2^36 for n ≤ MAX_COUNT, and t is a multiple
 * of 2^-52) is cut into three parts on fixed grids: hi a multiple of 2^-17, mid of 2^-35 below
 * 2^-17, lo of 2^-52 below 2^-35. Each part's running sum stays an integer multiple of its grid
 * below 2^53 grid steps (hi: Σ t ≤ N ln N < 2^36; mid: at most 2^31 terms below 2^-17; lo: at
 * most 2^31 terms below 2^-35), so every addition is exact, in any order; the three sums are
 * joined once, by {@link joinParts}. (Fixed-grid splitting for exact sums: common practice, as
 * in Demmel & Hida 2003, "Accurate and efficient floating point summation", SIAM J. Sci. Comput.)
 */
const HI_GRID = 2 ** 17;
const MID_GRID = 2 ** 35;

/** The three exact parts of n·ln n (0 for n ≤ 1) into `into` at `at`, `at + 1`, `at + 2`. */
export function countLogCountPartsOf(n: number, into: Float64Array, at: number): void {
  if (n <= 1) {
    into[at] = 0;
    into[at + 1] = 0;
    into[at + 2] = 0;
    return;
  }
  const t = n * ln(n);
  const hi = Math.floor(t * HI_GRID) / HI_GRID;
  const rest = t - hi;
  const mid = Math.floor(rest * MID_GRID) / MID_GRID;
  into[at] = hi;
  into[at + 1] = mid;
  into[at + 2] = rest - mid;
}

/** The parts of n·ln n for n = 0 … maxCount, three per count (hi, mid, lo), interleaved. */
export function countLogCountParts(maxCount: number): Float64Array {
  const parts = new Float64Array(3 * (maxCount + 1));
  for (let n = 2; n <= maxCount; n++) {
    countLogCountPartsOf(n, parts, 3 * n);
  }
  return parts;
}

/** Σ n·ln n from the sums of its three parts. */
export function joinParts(hi: number, mid: number, lo: number): number {
  return hi + (mid + lo);
}

/** Σ n·ln n over counts (zeros and ones add 0), independent of their order. */
export function sumCountLogCount(counts: ArrayLike<number>, length: number = counts.length): number {
  const part = new Float64Array(3);
  let hi = 0;
  let mid = 0;
  let lo = 0;
  for (let i = 0; i < length; i++) {
    countLogCountPartsOf(counts[i], part, 0);
    hi += part[0];
    mid += part[1];
    lo += part[2];
  }
  return joinParts(hi, mid, lo);
}

/**
 * Entropy in nats from a summary (and, for Chao–Shen and shrinkage, the counts).
 *
 * - plug-in: ln N − (Σ n ln n) / N.
 * - Miller–Madow (Miller 1955, "Note on the bias of information estimates"): plug-in + (K − 1)/(2N).
 * - Chao–Shen (Chao & Shen 2003, Environ. Ecol. Stat. 10:429–443): coverage C = 1 − f1/N, with
 *   f1 = N − 1 when every row is a singleton (common practice, so that C > 0); p = C·n/N;
 *   H = −Σ p ln p / (1 − (1 − p)^N).
 * - shrinkage (Hausser & Strimmer 2009, JMLR 10:1469–1484, eq. 5 and 7): James–Stein shrinkage of
 *   the frequencies u = n/N toward the uniform t = 1/P over the P possible cells, intensity
 *   λ = (1 − Σu²) / ((N − 1) Σ(t − u)²) clipped to [0, 1] (1 when N = 1 or Σ(t − u)² = 0); the
 *   P − K empty cells each get λ·t.
 */
export function entropyNats(estimator: EstimatorName, summary: ICountSummary, cells?: ICountCells): number {
  const N = summary.total;
  if (N <= 0) {
    return 0;
  }
  switch (estimator) {
    case 'plugin':
      return pluginNats(summary);
    case 'miller-madow':
      return pluginNats(summary) + (summary.occupied - 1) / (2 * N);
    case 'chao-shen':
      return chaoShenNats(summary, requireCells(estimator, cells));
    case 'shrinkage':
      return shrinkageNats(summary, requireCells(estimator, cells));
    case 'gaussian-copula':
      throw new PolyadicError('internal', 'The Gaussian-copula estimator works from normal scores, not from counts.');
    default:
      throw new PolyadicError('usage', `Unknown estimator '${String(estimator)}'.`, {
        option: 'estimator',
        value: String(estimator)
      });
  }
}

/** Entropy in nats of a plain vector of counts (zeros allowed); `possibleCells` defaults to its length. */
export function entropyOfCounts(
  estimator: EstimatorName,
  counts: ArrayLike<number>,
  possibleCells: number = counts.length
): number {
  const occupiedCounts: number[] = [];
  let total = 0;
  let singletons = 0;
  for (let i = 0; i < counts.length; i++) {
    const n = counts[i];
    if (n > 0) {
      occupiedCounts.push(n);
      total += n;
      if (n === 1) {
        singletons++;
      }
    }
  }
  const sum = sumCountLogCount(occupiedCounts);
  const summary: ICountSummary = {
    total,
    occupied: occupiedCounts.length,
    singletons,
    sumCountLogCount: sum,
    possibleCells
  };
  return entropyNats(estimator, summary, { counts: occupiedCounts, length: occupiedCounts.length, extraSingletons: 0 });
}

/** A value in nats expressed in the chosen units. */
export function fromNats(nats: number, units: Units): number {
  return units === 'bits' ? nats / Math.LN2 : nats;
}

function pluginNats(summary: ICountSummary): number {
  const N = summary.total;
  return ln(N) - summary.sumCountLogCount / N;
}

function requireCells(estimator: EstimatorName, cells: ICountCells | undefined): ICountCells {
  if (!cells) {
    throw new PolyadicError('internal', `The ${estimator} estimator needs the cell counts.`);
  }
  return cells;
}

/**
 * The counts of the cells as (count, number of cells with it) runs in increasing count: sums
 * over the cells taken in this order do not depend on the order in which the cells were met.
 * Returns the number of runs; `Private.values` and `Private.multiplicity` hold them.
 */
function countRuns(cells: ICountCells): number {
  const length = cells.length;
  const sorted = Private.scratch(length);
  const counts = cells.counts;
  for (let i = 0; i < length; i++) {
    sorted[i] = counts[i];
  }
  const view = sorted.subarray(0, length);
  view.sort();
  const values = Private.values;
  const multiplicity = Private.multiplicity;
  let runs = 0;
  let ones = cells.extraSingletons;
  let i = 0;
  while (i < length && view[i] <= 1) {
    ones += view[i] === 1 ? 1 : 0;
    i++;
  }
  if (ones > 0) {
    values[runs] = 1;
    multiplicity[runs++] = ones;
  }
  while (i < length) {
    const value = view[i];
    let j = i + 1;
    while (j < length && view[j] === value) {
      j++;
    }
    values[runs] = value;
    multiplicity[runs++] = j - i;
    i = j;
  }
  return runs;
}

function chaoShenNats(summary: ICountSummary, cells: ICountCells): number {
  const N = summary.total;
  const f1 = summary.singletons === N ? N - 1 : summary.singletons;
  const coverage = 1 - f1 / N;
  const term = (n: number): number => {
    const p = (coverage * n) / N;
    if (p <= 0) {
      return 0;
    }
    // 1 − (1 − p)^N through log1p keeps precision when p is small.
    const unseen = -expm1(N * log1p(-p));
    return (-p * ln(p)) / unseen;
  };
  const runs = countRuns(cells);
  const { values, multiplicity } = Private;
  let H = 0;
  for (let r = 0; r < runs; r++) {
    H += multiplicity[r] * term(values[r]);
  }
  return H;
}

function shrinkageNats(summary: ICountSummary, cells: ICountCells): number {
  const N = summary.total;
  const P = summary.possibleCells;
  const K = summary.occupied;
  const target = 1 / P;
  const runs = countRuns(cells);
  const { values, multiplicity } = Private;
  let sumSquares = 0;
  let misfit = 0;
  for (let r = 0; r < runs; r++) {
    const u = values[r] / N;
    sumSquares += multiplicity[r] * u * u;
    misfit += multiplicity[r] * (target - u) * (target - u);
  }
  misfit += (P - K) * target * target;
  let lambda: number;
  if (N === 1 || misfit === 0) {
    lambda = 1;
  } else {
    lambda = (1 - sumSquares) / ((N - 1) * misfit);
    lambda = Math.min(1, Math.max(0, lambda));
  }
  const shrunk = (u: number): number => {
    const theta = lambda * target + (1 - lambda) * u;
    return theta > 0 ? -theta * ln(theta) : 0;
  };
  let H = 0;
  for (let r = 0; r < runs; r++) {
    H += multiplicity[r] * shrunk(values[r] / N);
  }
  if (P > K) {
    H += (P - K) * shrunk(0);
  }
  return H;
}

namespace Private {
  let sorted = new Int32Array(1024);
  /** Runs of {@link countRuns}: distinct counts and how many cells have each. */
  export let values = new Float64Array(1025);
  export let multiplicity = new Float64Array(1025);

  /** A scratch array for `length` counts (and the run arrays as long, plus one). */
  export function scratch(length: number): Int32Array {
    if (sorted.length < length) {
      const size = Math.max(length, 2 * sorted.length);
      sorted = new Int32Array(size);
      values = new Float64Array(size + 1);
      multiplicity = new Float64Array(size + 1);
    }
    return sorted;
  }
}
