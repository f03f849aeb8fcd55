/**
 * numpy's sums over a column that arrives in chunks (a DuckDB or Spark scan) instead of one
 * array: the same pairwise tree as {@link pairwiseSum}, so the result is the same to the last bit.
 *
 * Why this is possible: the shape of numpy's pairwise tree depends only on the number of values
 * (halving at a multiple of eight down to blocks of at most 128), so with the count known before
 * the scan, the leaves are fixed ranges. Each leaf is summed as its values arrive; the leaves are
 * joined along the tree at the end. Memory: one double per leaf (about n / 96).
 */

import { pairwiseSum } from '../floatmath';

/** Rows per block of numpy's pairwise summation (as in floatmath.ts). */
const PAIRWISE_BLOCK = 128;

/** Elements per chunk when numpy sums integers through its casting buffer (as in floatmath.ts). */
const CAST_BUFFER = 8192;

/**
 * `numpy.sum` of `count` float64 values pushed in row order, in any chunking (see the file
 * comment); `fromIntegers` as in {@link numpySum}.
 */
export class StreamingNumpySum {
  /** Expect `count` values; `fromIntegers` sums them in numpy's casting-buffer chunks. */
  constructor(count: number, fromIntegers = false) {
    this._count = count;
    this._fromIntegers = fromIntegers;
    // The leaves of every tree, in row order: one tree over all values, or one per buffer chunk.
    const lengths: number[] = [];
    if (fromIntegers) {
      for (let start = 0; start < count; start += CAST_BUFFER) {
        Private.leaves(Math.min(CAST_BUFFER, count - start), lengths);
      }
    } else {
      Private.leaves(count, lengths);
    }
    this._leafLengths = Int32Array.from(lengths);
    this._leafSums = new Float64Array(lengths.length);
    this._buffer = new Float64Array(PAIRWISE_BLOCK);
  }

  /** Values seen so far. */
  get seen(): number {
    return this._seen;
  }

  /** Add the next values in row order. */
  push(values: ArrayLike<number>): void {
    if (this._seen + values.length > this._count) {
      throw new RangeError(`More than the ${this._count} values announced were pushed.`);
    }
    for (let i = 0; i < values.length; i++) {
      this._buffer[this._filled++] = values[i];
      if (this._filled === this._leafLengths[this._leaf]) {
        this._leafSums[this._leaf] = pairwiseSum(this._buffer, 0, this._filled);
        this._leaf++;
        this._filled = 0;
      }
    }
    this._seen += values.length;
  }

  /** The sum, once every announced value was pushed. */
  result(): number {
    if (this._seen !== this._count) {
      throw new RangeError(`${this._seen} of the ${this._count} values announced were pushed.`);
    }
    const cursor = { leaf: 0 };
    if (!this._fromIntegers) {
      return 0 + Private.join(this._count, this._leafSums, cursor);
    }
    let sum = 0;
    for (let start = 0; start < this._count; start += CAST_BUFFER) {
      sum += Private.join(Math.min(CAST_BUFFER, this._count - start), this._leafSums, cursor);
    }
    return sum;
  }

  private _count: number;
  private _fromIntegers: boolean;
  private _leafLengths: Int32Array;
  private _leafSums: Float64Array;
  private _buffer: Float64Array;
  private _leaf = 0;
  private _filled = 0;
  private _seen = 0;
}

namespace Private {
  /** Append the leaf lengths of numpy's pairwise tree over n values, left to right. */
  export function leaves(n: number, out: number[]): void {
    if (n <= PAIRWISE_BLOCK) {
      if (n > 0) {
        out.push(n);
      }
      return;
    }
    let half = Math.floor(n / 2);
    half -= half % 8;
    leaves(half, out);
    leaves(n - half, out);
  }

  /** Join the leaf sums along the tree over n values (the leaves are taken from `cursor` on). */
  export function join(n: number, sums: Float64Array, cursor: { leaf: number }): number {
    if (n <= PAIRWISE_BLOCK) {
      return n > 0 ? sums[cursor.leaf++] : 0;
    }
    let half = Math.floor(n / 2);
    half -= half % 8;
    const left = join(half, sums, cursor);
    return left + join(n - half, sums, cursor);
  }
}
