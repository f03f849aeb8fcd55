/**
 * Gaussian-copula entropies of every subset of one multiplet's columns, for fresh surrogates of
 * that multiplet alone (statistics/sharpen.ts). A surrogate permutes a column's rank codes, which
 * leaves its normal scores the same set of numbers: the score of each code is computed once.
 */

import { PolyadicError } from '../errors';
import { createIndexing, forEachInSubtree, IMultipletIndexing } from '../multiplets';
import { covarianceMatrix, entropyOffsets } from './gaussian';
import { scoreTable } from './transform';
import { logDeterminantsOfSubtree } from './walk';

/** Entropies (nats) by bitmask of every subset of k columns of rank codes; scratch reused. */
export class CopulaSubsetEntropies {
  /** Score tables from the columns' codes (`bins` codes each); later calls may permute the rows. */
  constructor(codes: Int32Array[], bins: number[]) {
    const k = codes.length;
    if (k === 0 || k > 30) {
      throw new PolyadicError('internal', `Copula subset entropies of ${k} columns.`);
    }
    this._rows = codes[0].length;
    this._tables = codes.map((column, c) => scoreTable(column, bins[c]));
    this._scores = codes.map(() => new Float64Array(this._rows));
    this._indexing = createIndexing(k, k);
    this._offsets = entropyOffsets(k, this._rows);
    this._entropy = new Float64Array(1 << k);
  }

  /** The entropy of every subset (index = bitmask; 0 holds 0) of the columns as given. */
  entropies(codes: Int32Array[]): Float64Array {
    const rows = this._rows;
    codes.forEach((column, c) => {
      const table = this._tables[c];
      const scores = this._scores[c];
      for (let i = 0; i < rows; i++) {
        scores[i] = table[column[i]];
      }
    });
    const covariance = covarianceMatrix(this._scores);
    const indexing = this._indexing;
    for (let root = 0; root < indexing.columnCount; root++) {
      const values = logDeterminantsOfSubtree(covariance, indexing, root, this._offsets);
      // The full lattice is indexed by bitmask.
      let position = 0;
      forEachInSubtree(indexing, root, mask => {
        this._entropy[mask] = values[position++];
      });
    }
    return this._entropy;
  }

  private _rows: number;
  private _tables: Float64Array[];
  private _scores: Float64Array[];
  private _indexing: IMultipletIndexing;
  private _offsets: Float64Array;
  private _entropy: Float64Array;
}
