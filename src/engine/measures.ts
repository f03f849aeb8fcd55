/**
 * Multiplet measures computed from joint entropies (DESIGN.md §3), all in nats:
 *
 * - co-information I(S) = −Σ_{∅≠T⊆S} (−1)^{|T|} H(T) (Bell 2003, "The co-information lattice",
 *   ICA 2003; negative = synergy-dominated, positive = redundancy-dominated);
 * - total correlation TC(S) = Σ_i H(i) − H(S) (Watanabe 1960, IBM J. Res. Dev. 4:66–82);
 * - dual total correlation DTC(S) = Σ_i H(S∖i) − (|S| − 1) H(S) (Han 1978, Inf. Control 36:133–156);
 * - O-information TC − DTC and S-information TC + DTC (Rosas et al. 2019, Phys. Rev. E 100, 032305);
 * - mutual and conditional mutual information between column sets, and conditioning chains.
 *
 * With an estimator other than plug-in these are the same combinations of the corrected
 * entropies; no measure is corrected on its own.
 */

import { PolyadicError } from './errors';
import { ILattice, jointEntropyOfCodes } from './lattice';
import { forEachMultiplet, indexOfColumns, indexOfMembers } from './multiplets';
import type { EstimatorName } from './types';

/** The measures of every multiplet, indexed like the lattice (index 0, the empty set, holds 0). */
export interface IMeasureArrays {
  coinformation: Float64Array;
  totalCorrelation: Float64Array;
  dualTotalCorrelation: Float64Array;
  oInformation: Float64Array;
  sInformation: Float64Array;
}

/** The measures of one multiplet. */
export interface IMultipletMeasures {
  entropy: number;
  coinformation: number;
  totalCorrelation: number;
  dualTotalCorrelation: number;
  oInformation: number;
  sInformation: number;
}

/**
 * Co-information of every multiplet of the lattice by a subset-sum (zeta) transform of
 * g(T) = (−1)^{|T|+1} H(T): one pass per column adding f[S∖i] into f[S]. The family of
 * multiplets up to an order is closed under taking subsets, so the same passes work on the
 * rank layout.
 */
export function coinformationAll(lattice: ILattice): Float64Array {
  const { indexing, entropy } = lattice;
  const n = indexing.columnCount;
  const f = new Float64Array(indexing.size);
  if (indexing.kind === 'mask') {
    const size = indexing.size;
    for (let mask = 1; mask < size; mask++) {
      f[mask] = popcount(mask) % 2 === 1 ? entropy[mask] : -entropy[mask];
    }
    for (let bit = 0; bit < n; bit++) {
      const b = 1 << bit;
      for (let mask = 1; mask < size; mask++) {
        if (mask & b) {
          f[mask] += f[mask ^ b];
        }
      }
    }
    return f;
  }
  forEachMultiplet(indexing, (index, _members, order) => {
    f[index] = order % 2 === 1 ? entropy[index] : -entropy[index];
  });
  const m = indexing.maxOrder;
  const withColumn = new Int32Array(m);
  const without = new Int32Array(m);
  for (let column = 0; column < n; column++) {
    // Visit every T ⊆ columns∖{column} with |T| ≤ m − 1; S = T ∪ {column}.
    const descend = (depth: number, start: number): void => {
      let s = 0;
      let inserted = false;
      for (let i = 0; i < depth; i++) {
        if (!inserted && without[i] > column) {
          withColumn[s++] = column;
          inserted = true;
        }
        withColumn[s++] = without[i];
      }
      if (!inserted) {
        withColumn[s++] = column;
      }
      const target = indexOfMembers(indexing, withColumn, depth + 1);
      f[target] += depth === 0 ? 0 : f[indexOfMembers(indexing, without, depth)];
      if (depth + 1 < m) {
        for (let next = start; next < n; next++) {
          if (next !== column) {
            without[depth] = next;
            descend(depth + 1, next + 1);
          }
        }
      }
    };
    descend(0, 0);
  }
  return f;
}

/** All five measures of every multiplet. */
export function computeMeasures(lattice: ILattice): IMeasureArrays {
  const coinformation = coinformationAll(lattice);
  const size = lattice.indexing.size;
  const totalCorrelation = new Float64Array(size);
  const dualTotalCorrelation = new Float64Array(size);
  const oInformation = new Float64Array(size);
  const sInformation = new Float64Array(size);
  forEachMultiplet(lattice.indexing, (index, members, order) => {
    const tc = totalCorrelationOf(lattice, members, order);
    const dtc = dualTotalCorrelationOf(lattice, members, order);
    totalCorrelation[index] = tc;
    dualTotalCorrelation[index] = dtc;
    oInformation[index] = tc - dtc;
    sInformation[index] = tc + dtc;
  });
  return { coinformation, totalCorrelation, dualTotalCorrelation, oInformation, sInformation };
}

/**
 * The measures of one multiplet of the lattice (members increasing, `order` of them). Pass the
 * lattice's co-information array when it is at hand; otherwise it is summed over the subsets.
 */
export function multipletMeasures(
  lattice: ILattice,
  members: ArrayLike<number>,
  order: number = members.length,
  coinformation?: Float64Array
): IMultipletMeasures {
  const index = indexOfMembers(lattice.indexing, members, order);
  const tc = totalCorrelationOf(lattice, members, order);
  const dtc = dualTotalCorrelationOf(lattice, members, order);
  const co = coinformation ? coinformation[index] : coinformationBySubsets(lattice, members, order);
  return {
    entropy: lattice.entropy[index],
    coinformation: co,
    totalCorrelation: tc,
    dualTotalCorrelation: dtc,
    oInformation: tc - dtc,
    sInformation: tc + dtc
  };
}

function totalCorrelationOf(lattice: ILattice, members: ArrayLike<number>, order: number): number {
  const { indexing, entropy } = lattice;
  const single = new Int32Array(1);
  let sum = 0;
  for (let i = 0; i < order; i++) {
    single[0] = members[i];
    sum += entropy[indexOfMembers(indexing, single, 1)];
  }
  return sum - entropy[indexOfMembers(indexing, members, order)];
}

function dualTotalCorrelationOf(lattice: ILattice, members: ArrayLike<number>, order: number): number {
  const { indexing, entropy } = lattice;
  const rest = new Int32Array(Math.max(order - 1, 1));
  let sum = 0;
  for (let skip = 0; skip < order; skip++) {
    let k = 0;
    for (let i = 0; i < order; i++) {
      if (i !== skip) {
        rest[k++] = members[i];
      }
    }
    sum += entropy[indexOfMembers(indexing, rest, order - 1)];
  }
  return sum - (order - 1) * entropy[indexOfMembers(indexing, members, order)];
}

function coinformationBySubsets(lattice: ILattice, members: ArrayLike<number>, order: number): number {
  const subset = new Int32Array(order);
  let sum = 0;
  for (let pick = 1; pick < 1 << order; pick++) {
    let k = 0;
    for (let i = 0; i < order; i++) {
      if (pick & (1 << i)) {
        subset[k++] = members[i];
      }
    }
    const h = lattice.entropy[indexOfMembers(lattice.indexing, subset, k)];
    sum += k % 2 === 1 ? h : -h;
  }
  return sum;
}

/** Number of set bits of a 32-bit mask (the order of a multiplet in the bitmask layout). */
export function popcount(v: number): number {
  let k = 0;
  while (v) {
    v &= v - 1;
    k++;
  }
  return k;
}

// ---------------------------------------------------------------------------------------------
// Entropies of arbitrary column sets, mutual information and conditioning chains.

/**
 * Where joint entropies come from: the lattice when it holds the multiplet, else the codes
 * (memoised per source object).
 */
export interface IEntropySource {
  /** One Int32Array per column, codes in 0 … bins − 1 (no missing). */
  codes: Int32Array[];
  bins: number[];
  estimator: EstimatorName;
  /** The count of each row (absent: every row once). */
  weights?: Int32Array;
  lattice?: ILattice;
}

/** Joint entropy in nats of a set of columns (indices into the source; order and repeats ignored). */
export function jointEntropy(source: IEntropySource, columns: ArrayLike<number>): number {
  const set = Private.normalise(source, columns);
  if (set.length === 0) {
    return 0;
  }
  const lattice = source.lattice;
  if (lattice && set.length <= lattice.indexing.maxOrder) {
    return lattice.entropy[indexOfColumns(lattice.indexing, set)];
  }
  let memo = Private.MEMO.get(source);
  if (!memo) {
    memo = new Map();
    Private.MEMO.set(source, memo);
  }
  const key = set.join(',');
  let value = memo.get(key);
  if (value === undefined) {
    value = jointEntropyOfCodes(source.codes, source.bins, set, source.estimator, source.weights).entropy;
    memo.set(key, value);
  }
  return value;
}

/** A column index or a set of them. */
export type ColumnSet = number | ArrayLike<number>;

/** I(X;Y) = H(X) + H(Y) − H(X,Y), in nats, for columns or column sets. */
export function mutualInformation(source: IEntropySource, x: ColumnSet, y: ColumnSet): number {
  const X = Private.asArray(x);
  const Y = Private.asArray(y);
  return jointEntropy(source, X) + jointEntropy(source, Y) - jointEntropy(source, [...X, ...Y]);
}

/** I(X;Y|Z) = H(X,Z) + H(Y,Z) − H(X,Y,Z) − H(Z), in nats. */
export function conditionalMutualInformation(
  source: IEntropySource,
  x: ColumnSet,
  y: ColumnSet,
  z: ColumnSet
): number {
  const X = Private.asArray(x);
  const Y = Private.asArray(y);
  const Z = Private.asArray(z);
  return (
    jointEntropy(source, [...X, ...Z]) +
    jointEntropy(source, [...Y, ...Z]) -
    jointEntropy(source, [...X, ...Y, ...Z]) -
    jointEntropy(source, Z)
  );
}

/** Co-information in nats of a set of distinct columns, summed over its subsets. */
export function coinformationOf(source: IEntropySource, columns: ArrayLike<number>): number {
  const set = Private.normalise(source, columns);
  if (set.length !== columns.length) {
    throw new PolyadicError('usage', `A multiplet lists a column twice: [${Array.from(columns).join(', ')}].`);
  }
  if (set.length > 24) {
    throw new PolyadicError('limit', `Co-information of ${set.length} columns sums 2^${set.length} entropies; at most 24.`);
  }
  return Private.alternatingSum(set, subset => jointEntropy(source, subset));
}

/**
 * Conditional co-information I(X1;…;Xk | Z) = Σ_{∅≠T⊆S} (−1)^{|T|+1} H(T | Z), with
 * H(T | Z) = H(T ∪ Z) − H(Z). The chain rule reads I(S ∪ {Y}) = I(S) − I(S | Y).
 */
export function conditionalCoinformation(
  source: IEntropySource,
  columns: ArrayLike<number>,
  given: ColumnSet
): number {
  const set = Private.normalise(source, columns);
  const Z = Private.asArray(given);
  const hz = jointEntropy(source, Z);
  return Private.alternatingSum(set, subset => jointEntropy(source, [...subset, ...Z]) - hz);
}

/** A conditioning chain: an ordering of columns and I(X1), I(X1;X2), I(X1;X2;X3), … in nats. */
export interface IConditioningChain {
  columns: number[];
  values: number[];
}

/** The conditioning chain along a given ordering of distinct columns. */
export function chainAlong(source: IEntropySource, order: ArrayLike<number>): IConditioningChain {
  const columns = Array.from(order);
  if (new Set(columns).size !== columns.length) {
    throw new PolyadicError('usage', `A conditioning chain lists a column twice: [${columns.join(', ')}].`);
  }
  const values: number[] = [];
  for (let k = 1; k <= columns.length; k++) {
    values.push(coinformationOf(source, columns.slice(0, k)));
  }
  return { columns, values };
}

/**
 * Greedy extremal chains over all columns of the source, up to `maxOrder` columns.
 *
 * The redundancy chain starts with the pair of most mutual information; the synergy chain with
 * the triplet of most negative co-information, found by exhaustive search, because a pair's
 * co-information is its mutual information (never negative), so synergy first shows at order 3
 * and a greedy start from pairs would pick among independent pairs blindly. Within the starting
 * triplet, the pair of least mutual information comes first. Each chain then adds the column that
 * makes the next co-information most positive (redundancy) or most negative (synergy). Ties go
 * to the lowest column indices.
 */
export function extremalChains(
  source: IEntropySource,
  maxOrder: number
): { synergy: IConditioningChain; redundancy: IConditioningChain } {
  const n = source.codes.length;
  if (!(Number.isInteger(maxOrder) && maxOrder >= 1)) {
    throw new PolyadicError('usage', `A chain's maximum order must be a whole number ≥ 1, not ${maxOrder}.`, {
      option: 'maxOrder',
      value: String(maxOrder)
    });
  }
  const length = Math.min(maxOrder, n);
  const extend = (start: number[], sign: 1 | -1): IConditioningChain => {
    const columns = start.slice(0, length);
    const used = new Set(columns);
    while (columns.length < length) {
      let bestColumn = -1;
      let best = -Infinity;
      for (let c = 0; c < n; c++) {
        if (!used.has(c)) {
          const value = sign * coinformationOf(source, [...columns, c]);
          if (value > best) {
            best = value;
            bestColumn = c;
          }
        }
      }
      columns.push(bestColumn);
      used.add(bestColumn);
    }
    return chainAlong(source, columns);
  };
  const bestPair = (sign: 1 | -1, among: number[]): number[] => {
    let pair = [among[0], among[1]];
    let best = -Infinity;
    for (let i = 0; i < among.length; i++) {
      for (let j = i + 1; j < among.length; j++) {
        const value = sign * mutualInformation(source, among[i], among[j]);
        if (value > best) {
          best = value;
          pair = [among[i], among[j]];
        }
      }
    }
    return pair;
  };
  const all = [...Array(n).keys()];
  if (n === 1) {
    const single = chainAlong(source, [0]);
    return { synergy: single, redundancy: { columns: [0], values: single.values.slice() } };
  }
  const redundancy = extend(bestPair(1, all), 1);
  let synergyStart: number[];
  if (length >= 3) {
    let triplet = [0, 1, 2];
    let best = Infinity;
    for (let a = 0; a < n; a++) {
      for (let b = a + 1; b < n; b++) {
        for (let c = b + 1; c < n; c++) {
          const value = coinformationOf(source, [a, b, c]);
          if (value < best) {
            best = value;
            triplet = [a, b, c];
          }
        }
      }
    }
    const pair = bestPair(-1, triplet);
    synergyStart = [...pair, ...triplet.filter(c => !pair.includes(c))];
  } else {
    synergyStart = bestPair(-1, all);
  }
  return { synergy: extend(synergyStart, -1), redundancy };
}

namespace Private {
  /**
   * Σ over the non-empty subsets T of `set` of (−1)^{|T|+1} f(T), subsets in the order of their
   * bit masks (the summation order, and so the bits, of every co-information).
   */
  export function alternatingSum(set: readonly number[], f: (subset: number[]) => number): number {
    let sum = 0;
    const subset: number[] = [];
    for (let pick = 1; pick < 1 << set.length; pick++) {
      subset.length = 0;
      for (let i = 0; i < set.length; i++) {
        if (pick & (1 << i)) {
          subset.push(set[i]);
        }
      }
      const h = f(subset);
      sum += subset.length % 2 === 1 ? h : -h;
    }
    return sum;
  }

  /** Entropies computed from codes, per source. */
  export const MEMO = new WeakMap<IEntropySource, Map<string, number>>();

  export function asArray(set: ColumnSet): number[] {
    return typeof set === 'number' ? [set] : Array.from(set);
  }

  /** Sorted distinct column indices, each checked against the source. */
  export function normalise(source: IEntropySource, columns: ArrayLike<number>): number[] {
    const n = source.codes.length;
    const set = [...new Set(Array.from(columns))].sort((a, b) => a - b);
    for (const c of set) {
      if (!(Number.isInteger(c) && c >= 0 && c < n)) {
        throw new PolyadicError('usage', `There is no column ${c}; columns are numbered 0 … ${n - 1}.`, {
          value: String(c)
        });
      }
    }
    return set;
  }
}
