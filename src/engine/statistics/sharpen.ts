/**
 * Sharpening: fresh surrogates for the few multiplets whose surrogate p-value sits at its floor.
 *
 * With N lattice surrogates no p-value goes below 1/(N + 1), so among m tested multiplets no
 * Benjamini–Hochberg q goes below m/(N + 1): with 286 triplets and pairs and 199 surrogates the
 * strongest synergy in the data can never reach q < 0.05. Walking the whole lattice m/α times
 * is out of reach, but a multiplet at the floor needs only its own subsets: each fresh surrogate
 * shuffles k − 1 of its columns (shuffling all k gives the same joint distribution up to a
 * common reordering of the rows, to which every entropy is blind) and re-counts its 2^k − k − 1
 * subsets of two or more columns. The sharpened p-value uses the fresh surrogates alone, never
 * the first N that selected the multiplet (that would bias it downwards); it is a permutation
 * p-value in its own right, so BH over the family stays valid (Benjamini & Hochberg 1995
 * assume only valid p-values).
 */

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { CopulaSubsetEntropies } from '../copula/subsets';
import { countLogCountParts, entropyNats, ICountSummary, joinParts, needsCounts } from '../estimators';
import { popcount } from '../measures';
import type { EstimatorName } from '../types';
import { tieTolerance } from './replicates';
import type { StatisticsTail } from './options';

/** Most multiplets sharpened in one analysis (the most extreme first). */
export const MAX_SHARPENED = 64;

/** Largest joint table counted through a flat array; larger ones use a Map. */
const FLAT_CELLS = 1 << 20;

/** What sharpening found for one multiplet. */
export interface ISharpened {
  /** Fresh surrogates with co-information at or below, at or above the observed value. */
  coLow: number;
  coHigh: number;
  /** The same for O-information (0 for a pair, whose O-information is 0). */
  oLow: number;
  oHigh: number;
  surrogates: number;
}

/**
 * Co-information and O-information (nats) of a multiplet from its subsets' entropies, and the
 * counts of `surrogates` fresh surrogates at or beyond the observed values.
 */
export function sharpenMultiplet(
  codes: Int32Array[],
  bins: number[],
  estimator: EstimatorName,
  surrogates: number,
  seed: number
): ISharpened {
  const k = codes.length;
  const rows = codes[0].length;
  const counter: Private.ISubsetMeasures =
    estimator === 'gaussian-copula' ? new Private.CopulaSubsets(codes, bins) : new Private.SubsetCounter(bins, estimator, rows);
  const observed = counter.measures(codes);
  const shuffled = codes.map((column, c) => (c === 0 ? column : new Int32Array(column)));
  const rng = xoroshiro128plus(seed | 0);
  let coLow = 0;
  let coHigh = 0;
  let oLow = 0;
  let oHigh = 0;
  const coGamma = tieTolerance(observed.co);
  const oGamma = tieTolerance(observed.o);
  for (let s = 0; s < surrogates; s++) {
    for (let c = 1; c < k; c++) {
      const target = shuffled[c];
      for (let i = rows - 1; i > 0; i--) {
        const j = unsafeUniformIntDistribution(0, i, rng);
        const value = target[i];
        target[i] = target[j];
        target[j] = value;
      }
    }
    const m = counter.measures(shuffled);
    coLow += m.co <= observed.co + coGamma ? 1 : 0;
    coHigh += m.co >= observed.co - coGamma ? 1 : 0;
    if (k >= 3) {
      oLow += m.o <= observed.o + oGamma ? 1 : 0;
      oHigh += m.o >= observed.o - oGamma ? 1 : 0;
    }
  }
  return { coLow, coHigh, oLow, oHigh, surrogates };
}

/** Whether a first-stage p-value is at its floor: no surrogate on the tested side(s) reached the observed value. */
export function atFloor(low: number, high: number, tail: StatisticsTail): boolean {
  return tail === 'synergy' ? low === 0 : tail === 'redundancy' ? high === 0 : Math.min(low, high) === 0;
}

namespace Private {
  /** Co-information and O-information (nats) of a multiplet's columns as given. */
  export interface ISubsetMeasures {
    measures(codes: Int32Array[]): { co: number; o: number };
  }

  /**
   * Co-information and O-information from the entropies of every subset of k columns, indexed
   * by bitmask (index 0 unused).
   */
  export function measuresOfSubsets(entropy: Float64Array, k: number): { co: number; o: number } {
    const full = (1 << k) - 1;
    // Co-information I(S) = −Σ_{∅≠T⊆S} (−1)^{|T|} H(T) (Bell 2003).
    let co = 0;
    for (let mask = 1; mask <= full; mask++) {
      co += popcount(mask) % 2 === 1 ? entropy[mask] : -entropy[mask];
    }
    // TC = Σ H(i) − H(S); DTC = Σ H(S∖i) − (k − 1) H(S); O = TC − DTC (Rosas et al. 2019).
    let singles = 0;
    let leaveOne = 0;
    for (let i = 0; i < k; i++) {
      singles += entropy[1 << i];
      leaveOne += entropy[full ^ (1 << i)];
    }
    const tc = singles - entropy[full];
    const dtc = leaveOne - (k - 1) * entropy[full];
    return { co, o: tc - dtc };
  }

  /** The Gaussian-copula entropies of every subset of a multiplet's columns. */
  export class CopulaSubsets implements ISubsetMeasures {
    constructor(codes: Int32Array[], bins: number[]) {
      this._entropies = new CopulaSubsetEntropies(codes, bins);
    }

    measures(codes: Int32Array[]): { co: number; o: number } {
      return measuresOfSubsets(this._entropies.entropies(codes), codes.length);
    }

    private _entropies: CopulaSubsetEntropies;
  }

  /** Counts every subset (two or more columns) of a multiplet's columns; scratch reused. */
  export class SubsetCounter implements ISubsetMeasures {
    constructor(
      private readonly _bins: number[],
      private readonly _estimator: EstimatorName,
      rows: number
    ) {
      this._k = _bins.length;
      this._parts = countLogCountParts(rows);
      this._rows = rows;
      this._keys = new Float64Array(rows);
      let widest = 1;
      for (const b of _bins) {
        widest *= b;
      }
      this._flat = widest <= FLAT_CELLS ? new Int32Array(widest) : null;
      this._entropy = new Float64Array(1 << this._k);
      this._counts = new Int32Array(rows);
      this._touched = new Int32Array(rows);
    }

    /** Co-information and O-information (nats) of the columns as given. */
    measures(codes: Int32Array[]): { co: number; o: number } {
      const k = this._k;
      const full = (1 << k) - 1;
      const entropy = this._entropy;
      for (let mask = 1; mask <= full; mask++) {
        entropy[mask] = this._entropyOf(codes, mask);
      }
      return measuresOfSubsets(entropy, k);
    }

    private _entropyOf(codes: Int32Array[], mask: number): number {
      const rows = this._rows;
      const keys = this._keys;
      keys.fill(0);
      let possible = 1;
      for (let c = 0; c < this._k; c++) {
        if (mask & (1 << c)) {
          const K = this._bins[c];
          const column = codes[c];
          for (let i = 0; i < rows; i++) {
            keys[i] = keys[i] * K + column[i];
          }
          possible *= K;
        }
      }
      const counts = this._counts;
      let cells = 0;
      if (this._flat && possible <= this._flat.length) {
        const flat = this._flat;
        const touched = this._touched;
        for (let i = 0; i < rows; i++) {
          const key = keys[i];
          if (flat[key]++ === 0) {
            touched[cells++] = key;
          }
        }
        for (let t = 0; t < cells; t++) {
          counts[t] = flat[touched[t]];
          flat[touched[t]] = 0;
        }
      } else {
        const map = new Map<number, number>();
        for (let i = 0; i < rows; i++) {
          map.set(keys[i], (map.get(keys[i]) ?? 0) + 1);
        }
        map.forEach(count => {
          counts[cells++] = count;
        });
      }
      // Σ n·ln n summed exactly (in any order of the cells), as the lattice walk sums it
      const parts = this._parts;
      let hi = 0;
      let mid = 0;
      let lo = 0;
      let singletons = 0;
      for (let t = 0; t < cells; t++) {
        const n = counts[t];
        hi += parts[3 * n];
        mid += parts[3 * n + 1];
        lo += parts[3 * n + 2];
        singletons += n === 1 ? 1 : 0;
      }
      const sum = joinParts(hi, mid, lo);
      const summary: ICountSummary = {
        total: rows,
        occupied: cells,
        singletons,
        sumCountLogCount: sum,
        possibleCells: possible
      };
      return entropyNats(
        this._estimator,
        summary,
        needsCounts(this._estimator) ? { counts, length: cells, extraSingletons: 0 } : undefined
      );
    }

    private _k: number;
    private _rows: number;
    private _parts: Float64Array;
    private _keys: Float64Array;
    private _flat: Int32Array | null;
    private _entropy: Float64Array;
    private _counts: Int32Array;
    private _touched: Int32Array;
  }
}
