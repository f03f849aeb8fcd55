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
  let sum = 0;
  for (let i = 0; i < counts.length; i++) {
    const n = counts[i];
    if (n > 0) {
      occupiedCounts.push(n);
      total += n;
      if (n === 1) {
        singletons++;
      } else {
        sum += n * ln(n);
      }
    }
  }
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
  let H = 0;
  const counts = cells.counts;
  for (let i = 0; i < cells.length; i++) {
    H += term(counts[i]);
  }
  if (cells.extraSingletons > 0) {
    H += cells.extraSingletons * term(1);
  }
  return H;
}

function shrinkageNats(summary: ICountSummary, cells: ICountCells): number {
  const N = summary.total;
  const P = summary.possibleCells;
  const K = summary.occupied;
  const target = 1 / P;
  const counts = cells.counts;
  let sumSquares = 0;
  let misfit = 0;
  for (let i = 0; i < cells.length; i++) {
    const u = counts[i] / N;
    sumSquares += u * u;
    misfit += (target - u) * (target - u);
  }
  if (cells.extraSingletons > 0) {
    const u = 1 / N;
    sumSquares += cells.extraSingletons * u * u;
    misfit += cells.extraSingletons * (target - u) * (target - u);
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
  for (let i = 0; i < cells.length; i++) {
    H += shrunk(counts[i] / N);
  }
  if (cells.extraSingletons > 0) {
    H += cells.extraSingletons * shrunk(1 / N);
  }
  if (P > K) {
    H += (P - K) * shrunk(0);
  }
  return H;
}
