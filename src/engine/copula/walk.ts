/**
 * The Gaussian-copula lattice walk: the entropy of every multiplet up to a maximum order from
 * the covariance of the columns' normal scores, in the discrete walk's depth-first order and
 * layout (bitmask for the full lattice, combinatorial rank when order-limited), so the measures,
 * the statistics and a worker pool's split by first column work unchanged.
 *
 * A child's covariance is its parent's bordered by one row and column, so its Cholesky factor
 * is the parent's plus one row: l = L⁻¹ σ (forward substitution over the parent's k rows) and
 * d² = σ_jj − l·l, hence ln|Σ_child| = ln|Σ_parent| + ln d² (Golub & Van Loan, "Matrix
 * Computations", 4th ed., §4.2, the bordered form of the Cholesky factorisation). A multiplet
 * of order k costs O(k²), independent of the number of rows; the rows are read once, for the
 * covariance.
 */

import { PolyadicError } from '../errors';
import { ln } from '../detmath';
import { assembleLattice, ILattice, ILatticeInput, ISubtreeResult } from '../lattice';
import {
  checkMultipletCount,
  createIndexing,
  DEFAULT_MAX_MULTIPLETS,
  IMultipletIndexing,
  subtreeSize
} from '../multiplets';
import { covarianceMatrix, entropyOffsets, SINGULAR_TOLERANCE } from './gaussian';
import { scoresOfCodes } from './transform';

/** The estimator name of the Gaussian copula. */
export const COPULA_ESTIMATOR = 'gaussian-copula';

/** What the walk works from once the scores are known. */
export interface ICopulaWalkInput {
  /** n × n covariance of the normal scores, row-major. */
  covariance: Float64Array;
  /** Rows behind the covariance (for the bias correction), or null for none. */
  rows: number | null;
  indexing: IMultipletIndexing;
}

/** The Gaussian-copula lattice of a lattice input whose codes are rank codes (see transform.ts). */
export function computeCopulaLattice(input: ILatticeInput): ILattice {
  const walk = prepareCopulaWalk(input);
  const parts: ISubtreeResult[] = [];
  for (let root = 0; root < walk.indexing.columnCount; root++) {
    parts.push(walkCopulaTree(walk, root));
  }
  return assembleLattice(input, parts);
}

/** The subtree of multiplets whose smallest column is `root` (one worker's share). */
export function walkCopulaSubtree(input: ILatticeInput, root: number): ISubtreeResult {
  const walk = prepareCopulaWalk(input);
  if (!(Number.isInteger(root) && root >= 0 && root < walk.indexing.columnCount)) {
    throw new PolyadicError('internal', `No column ${root} to start a subtree at.`);
  }
  return walkCopulaTree(walk, root);
}

/** Check a lattice input, compute the normal scores and their covariance. */
export function prepareCopulaWalk(input: ILatticeInput): ICopulaWalkInput {
  const n = input.codes.length;
  if (n === 0) {
    throw new PolyadicError('usage', 'No column is selected.', { option: 'columns' });
  }
  if (input.bins.length !== n) {
    throw new PolyadicError('internal', `${n} code arrays but ${input.bins.length} bin counts.`);
  }
  if (!(Number.isInteger(input.maxOrder) && input.maxOrder >= 1)) {
    throw new PolyadicError('usage', `The maximum order must be a whole number ≥ 1, not ${input.maxOrder}.`, {
      option: 'maxOrder',
      value: String(input.maxOrder)
    });
  }
  const m = Math.min(input.maxOrder, n);
  checkMultipletCount(n, m, input.maxMultiplets ?? DEFAULT_MAX_MULTIPLETS);
  const rows = input.codes[0].length;
  if (!(rows > m)) {
    throw new PolyadicError(
      'input',
      `The Gaussian-copula estimator needs more rows than the largest order: ${rows} rows for order ${m}. ` +
        'Lower the maximum order or use more rows.',
      { option: 'maxOrder', value: String(m) }
    );
  }
  const scores = input.codes.map((codes, c) => {
    if (codes.length !== rows) {
      throw new PolyadicError('internal', `Column ${c} has ${codes.length} rows, column 0 has ${rows}.`);
    }
    return scoresOfCodes(codes, input.bins[c]);
  });
  return { covariance: covarianceMatrix(scores), rows, indexing: createIndexing(n, m) };
}

/**
 * ln|Σ_S| of every multiplet S whose smallest column is `root`, in the walk's order
 * (forEachInSubtree's), by extending the parent's Cholesky factor one row per child. With
 * `offsets` (per order, see entropyOffsets) it writes the entropy offsets[k] + ½ ln|Σ_S| instead.
 */
export function logDeterminantsOfSubtree(
  covariance: Float64Array,
  indexing: IMultipletIndexing,
  root: number,
  offsets?: Float64Array
): Float64Array {
  const n = indexing.columnCount;
  const m = indexing.maxOrder;
  const out = new Float64Array(subtreeSize(indexing, root));
  // Row t of the factor (members[0 … t]) at L[t·m … t·m + t]; a child overwrites its siblings' row.
  const L = new Float64Array(m * m);
  const logDet = new Float64Array(m + 1);
  const members = new Int32Array(m);
  let position = 0;
  const visit = (depth: number, column: number): void => {
    members[depth] = column;
    const row = depth * m;
    const base = column * n;
    let d2 = covariance[base + column];
    for (let t = 0; t < depth; t++) {
      const other = t * m;
      let s = covariance[base + members[t]];
      for (let u = 0; u < t; u++) {
        s -= L[row + u] * L[other + u];
      }
      const value = s / L[other + t];
      L[row + t] = value;
      d2 -= value * value;
    }
    if (!(d2 > SINGULAR_TOLERANCE * covariance[base + column])) {
      const columns = Array.from(members.subarray(0, depth + 1));
      throw new PolyadicError(
        'input',
        `The normal scores of the columns at positions ${columns.join(', ')} of the selection are linearly ` +
          'dependent, so their Gaussian entropy is −∞. Leave out one of them or use a discrete estimator.',
        { members: columns }
      );
    }
    L[row + depth] = Math.sqrt(d2);
    const value = logDet[depth] + ln(d2);
    logDet[depth + 1] = value;
    out[position++] = offsets ? offsets[depth + 1] + value / 2 : value;
    if (depth + 1 < m) {
      for (let next = column + 1; next < n; next++) {
        visit(depth + 1, next);
      }
    }
  };
  visit(0, root);
  return out;
}

/** Entropies (nats) of the subtree of `root`, in the walk's order. */
function walkCopulaTree(walk: ICopulaWalkInput, root: number): ISubtreeResult {
  const offsets = entropyOffsets(walk.indexing.maxOrder, walk.rows);
  const entropy = logDeterminantsOfSubtree(walk.covariance, walk.indexing, root, offsets);
  // Occupied cells mean nothing for a continuous estimator: zeros.
  return { root, entropy, occupied: new Int32Array(entropy.length) };
}
