/**
 * Work units of a lattice walk: how a pool splits the walk, and how one unit is walked.
 *
 * A worker prepares a run's input once (renumbering every column's codes) and walks each of its
 * subtree units with the same walker. The small subtrees at the end are walked together as one
 * lattice of the last columns (they involve only those). A subtree larger than a
 * unit should be (in a full lattice, subtree 0 is half of it) is cut into runs of its slices by
 * second column, so that two or more workers share it evenly.
 *
 * Splitting never changes a value: each subtree is walked with the same codes, the same rows in
 * the same order and the same arithmetic as in one whole walk, so the assembled lattice is the
 * same bit for bit for any number of workers (test/worker/units.spec.ts checks it against
 * computeLattice).
 */

import { PolyadicError } from '../engine/errors';
import { ILatticeInput, ISubtreeResult, SubtreeWalk, subtreeWalker } from '../engine/lattice';
import { isContinuousEstimator, walkLattice, walkLatticeSubtree } from '../engine/walk';
import { forEachInSubtree, IMultipletIndexing, sliceSize, subtreeSize } from '../engine/multiplets';
import type { IWorkUnit } from './protocol';

/**
 * Units per worker that the planner aims for: enough that a worker finishing early finds more
 * work, few enough that messages stay rare (common practice for dynamic scheduling).
 */
export const UNITS_PER_WORKER = 8;

/** A unit with its number of multiplets. */
export interface IPlannedUnit extends IWorkUnit {
  multiplets: number;
}

/**
 * Split a lattice into units, largest first (ties: smaller first column first). The grain is a
 * 1/(UNITS_PER_WORKER · workers) share of the multiplets. Every subtree above two grains is cut
 * into runs of its slices by second column, each run as many slices as fit one grain (at least
 * one); the other subtrees are units of their own, but the trailing ones within one grain form
 * one tail.
 */
export function planUnits(indexing: IMultipletIndexing, workers: number, options: { slices?: boolean } = {}): IPlannedUnit[] {
  const sliceable = options.slices ?? true;
  const n = indexing.columnCount;
  const sizes: number[] = [];
  let total = 0;
  for (let root = 0; root < n; root++) {
    sizes.push(subtreeSize(indexing, root));
    total += sizes[root];
  }
  const grain = total / (UNITS_PER_WORKER * Math.max(1, workers));
  // Smallest t whose tail t … n − 1 holds at most one grain; the tail is never the whole lattice.
  let tail = n;
  let tailSize = 0;
  while (tail > 1 && tailSize + sizes[tail - 1] <= grain) {
    tail--;
    tailSize += sizes[tail];
  }
  const units: IPlannedUnit[] = [];
  for (let root = 0; root < tail; root++) {
    if (!sliceable || sizes[root] <= 2 * grain || indexing.maxOrder < 2 || root === n - 1) {
      units.push({ first: root, last: root, multiplets: sizes[root] });
      continue;
    }
    let from = root + 1;
    let run = 0;
    for (let second = root + 1; second < n; second++) {
      const size = sliceSize(indexing, root, second);
      if (run > 0 && run + size > grain) {
        units.push({ first: root, last: root, slices: [from, second - 1], multiplets: run });
        from = second;
        run = 0;
      }
      run += size;
    }
    units.push({ first: root, last: root, slices: [from, n - 1], multiplets: run });
  }
  if (tail < n) {
    units.push({ first: tail, last: n - 1, multiplets: tailSize });
  }
  return units.sort((a, b) => b.multiplets - a.multiplets || a.first - b.first || (a.slices?.[0] ?? 0) - (b.slices?.[0] ?? 0));
}

/** Number of multiplets of a unit. */
export function unitMultiplets(indexing: IMultipletIndexing, unit: IWorkUnit): number {
  if (unit.slices) {
    let total = 0;
    for (let second = unit.slices[0]; second <= unit.slices[1]; second++) {
      total += sliceSize(indexing, unit.first, second);
    }
    return total;
  }
  let total = 0;
  for (let root = unit.first; root <= unit.last; root++) {
    total += subtreeSize(indexing, root);
  }
  return total;
}

/** Walk one unit: one part per subtree, in increasing first column. */
export function walkUnit(input: ILatticeInput, unit: IWorkUnit): ISubtreeResult[] {
  const n = input.codes.length;
  const { first, last } = unit;
  if (!(Number.isInteger(first) && Number.isInteger(last) && first >= 0 && first <= last && last < n)) {
    throw new PolyadicError('internal', `Work unit ${first} … ${last} is not within columns 0 … ${n - 1}.`);
  }
  if (unit.slices) {
    if (first !== last) {
      throw new PolyadicError('internal', `Slices of work unit ${first} … ${last}, which is not one subtree.`);
    }
    return [Private.walkerOf(input)(first, unit.slices)];
  }
  if (last === n - 1 && first < last) {
    // The tail: one walk over the last columns, then cut into subtrees in the walk's order.
    const lattice = walkLattice(Private.from(input, first));
    const parts: ISubtreeResult[] = [];
    for (let root = first; root < n; root++) {
      parts.push(Private.extract(lattice.indexing, lattice.entropy, lattice.occupied, root - first, root));
    }
    return parts;
  }
  const parts: ISubtreeResult[] = [];
  for (let root = first; root <= last; root++) {
    parts.push(Private.walkerOf(input)(root));
  }
  return parts;
}

namespace Private {
  /**
   * One walker per input, prepared on its first unit: a worker walks many units of a run's
   * input, and renumbering every column's codes once is cheaper than once per unit.
   */
  const walkers = new WeakMap<ILatticeInput, SubtreeWalk>();

  export function walkerOf(input: ILatticeInput): SubtreeWalk {
    let walk = walkers.get(input);
    if (!walk) {
      // the Gaussian copula's walk has no slices: its units are whole subtrees (planUnits with slices off)
      walk = isContinuousEstimator(input.estimator)
        ? (root, slices) => {
            if (slices !== undefined) {
              throw new PolyadicError('internal', 'The Gaussian-copula walk takes whole subtrees, not slices.');
            }
            const part = walkLatticeSubtree(Private.from(input, root), 0);
            return { root, entropy: part.entropy, occupied: part.occupied };
          }
        : subtreeWalker(input);
      walkers.set(input, walk);
    }
    return walk;
  }

  /** The input cut down to columns `first` … n − 1 (the arrays are shared, not copied). */
  export function from(input: ILatticeInput, first: number): ILatticeInput {
    return { ...input, codes: input.codes.slice(first), bins: input.bins.slice(first) };
  }

  /** The entries of one subtree of a lattice, in the walk's order, labelled with its root in the full input. */
  export function extract(
    indexing: IMultipletIndexing,
    entropy: Float64Array,
    occupied: Int32Array,
    localRoot: number,
    root: number
  ): ISubtreeResult {
    const size = subtreeSize(indexing, localRoot);
    const partEntropy = new Float64Array(size);
    const partOccupied = new Int32Array(size);
    let position = 0;
    forEachInSubtree(indexing, localRoot, index => {
      partEntropy[position] = entropy[index];
      partOccupied[position] = occupied[index];
      position++;
    });
    return { root, entropy: partEntropy, occupied: partOccupied };
  }
}
