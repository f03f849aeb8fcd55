/**
 * Work units of a lattice walk: how a pool splits the walk, and how one unit is walked.
 *
 * The subtree of multiplets whose smallest column is r involves only columns r … n − 1, so a unit
 * is walked on the input cut down to those columns: the walk's preparation (renumbering every
 * column's codes) then costs n − r columns, not n. The small subtrees at the end are walked
 * together as one lattice of the last columns, with one preparation.
 *
 * Splitting never changes a value: each subtree is walked with the same codes, the same rows in
 * the same order and the same arithmetic as in one whole walk, so the assembled lattice is the
 * same bit for bit for any number of workers (test/worker/units.spec.ts checks it against
 * computeLattice).
 */

import { PolyadicError } from '../engine/errors';
import type { ILatticeInput, ISubtreeResult } from '../engine/lattice';
import { walkLattice, walkLatticeSubtree } from '../engine/walk';
import { forEachInSubtree, IMultipletIndexing, subtreeSize } from '../engine/multiplets';
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
 * Split a lattice into units, largest first (ties: smaller first column first). Every subtree
 * with more than a 1/(UNITS_PER_WORKER · workers) share of the multiplets is a unit of its own;
 * the trailing subtrees below that share form one tail unit.
 */
export function planUnits(indexing: IMultipletIndexing, workers: number): IPlannedUnit[] {
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
    units.push({ first: root, last: root, multiplets: sizes[root] });
  }
  if (tail < n) {
    units.push({ first: tail, last: n - 1, multiplets: tailSize });
  }
  return units.sort((a, b) => b.multiplets - a.multiplets || a.first - b.first);
}

/** Number of multiplets of a unit. */
export function unitMultiplets(indexing: IMultipletIndexing, unit: IWorkUnit): number {
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
    const part = walkLatticeSubtree(Private.from(input, root), 0);
    parts.push({ root, entropy: part.entropy, occupied: part.occupied });
  }
  return parts;
}

namespace Private {
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
