/**
 * A lattice from the cell counts of each multiplet, for an engine that counts every multiplet
 * on its own (`GROUP BY … GROUPING SETS`, one set per multiplet) when the distinct joint rows
 * are too many to hand to the walk. Each multiplet's entropy is the estimator's value on its
 * occupied cells' counts; Σ n·ln n and the estimators' sums over cells do not depend on the
 * order of the cells (see lattice.ts), so the lattice is the walk's, bit for bit.
 */

import { PolyadicError } from '../errors';
import { entropyOfCounts } from '../estimators';
import type { ILattice } from '../lattice';
import { createIndexing, forEachMultiplet, IMultipletIndexing } from '../multiplets';
import type { EstimatorName } from '../types';

/** One multiplet to count: its lattice index and its columns (ascending). */
export interface IMultipletToCount {
  index: number;
  members: number[];
}

/** Fills a lattice multiplet by multiplet from cell counts (see the file comment). */
export class CellCountLattice {
  /**
   * @param bins code counts of the columns (the possible cells of a multiplet are their product)
   * @param rows rows counted: every multiplet's counts must add up to it
   */
  constructor(bins: number[], rows: number, maxOrder: number, estimator: EstimatorName) {
    if (estimator === 'gaussian-copula') {
      throw new PolyadicError('internal', 'The Gaussian-copula estimator does not work from cell counts.');
    }
    this._bins = bins.slice();
    this._rows = rows;
    this._estimator = estimator;
    this._indexing = createIndexing(bins.length, maxOrder);
    this._entropy = new Float64Array(this._indexing.size);
    this._occupied = new Int32Array(this._indexing.size);
    this._done = new Uint8Array(this._indexing.size);
    this._occupied[0] = rows > 0 ? 1 : 0;
    this._done[0] = 1;
  }

  /** Every multiplet of order 1 … maxOrder, in the walk's order. */
  multiplets(): IMultipletToCount[] {
    const out: IMultipletToCount[] = [];
    forEachMultiplet(this._indexing, (index, members, order) => {
      out.push({ index, members: Array.from(members.subarray(0, order)) });
    });
    return out;
  }

  /** Record a multiplet's occupied cells' counts (any order, each ≥ 1). */
  record(multiplet: IMultipletToCount, counts: ArrayLike<number>): void {
    let total = 0;
    for (let i = 0; i < counts.length; i++) {
      if (!(counts[i] >= 1)) {
        throw new PolyadicError('internal', `A cell of multiplet ${multiplet.members.join(',')} has count ${counts[i]}.`);
      }
      total += counts[i];
    }
    if (total !== this._rows) {
      throw new PolyadicError(
        'internal',
        `The cells of multiplet ${multiplet.members.join(',')} hold ${total} rows, not ${this._rows}.`
      );
    }
    let possible = 1;
    for (const column of multiplet.members) {
      possible *= this._bins[column];
    }
    this._entropy[multiplet.index] = entropyOfCounts(this._estimator, counts, possible);
    this._occupied[multiplet.index] = counts.length;
    this._done[multiplet.index] = 1;
  }

  /** The lattice, once every multiplet is recorded. */
  result(): ILattice {
    const missing = this._done.indexOf(0);
    if (missing >= 0) {
      throw new PolyadicError('internal', `Multiplet ${missing} of the lattice was not counted.`);
    }
    return {
      indexing: this._indexing,
      estimator: this._estimator,
      rows: this._rows,
      bins: this._bins.slice(),
      entropy: this._entropy,
      occupied: this._occupied
    };
  }

  private _bins: number[];
  private _rows: number;
  private _estimator: EstimatorName;
  private _indexing: IMultipletIndexing;
  private _entropy: Float64Array;
  private _occupied: Int32Array;
  private _done: Uint8Array;
}
