/**
 * Multiplet bookkeeping: how many multiplets a selection has, and where each one lives in the
 * lattice's typed arrays.
 *
 * Two layouts. The full lattice (every order) is indexed by bitmask: column i is bit i, so the
 * subsets of a multiplet are its sub-masks. An order-limited lattice is indexed by order and
 * then by colex rank within the order (the combinatorial number system: the k-subset
 * c0 < c1 < … < c(k−1) has rank Σ C(c_i, i + 1); Knuth, TAOCP 4A §7.2.1.3). Index 0 is the empty
 * set in both, with entropy 0. Iterators hand out a reused member buffer, never an object per
 * multiplet.
 */

import { PolyadicError } from './errors';
import { formatCount, plural } from './text';

/** Default cap on the number of multiplets of one analysis. */
export const DEFAULT_MAX_MULTIPLETS = 2 ** 24;

/** Widest selection the bitmask layout takes (bit operations on 32-bit integers). */
const MASK_COLUMNS = 30;

/** Where each multiplet of n columns up to order m lives. */
export interface IMultipletIndexing {
  /** n: number of columns. */
  columnCount: number;
  /** m: largest order. */
  maxOrder: number;
  /** 'mask' when m = n (index = bitmask), else 'rank'. */
  kind: 'mask' | 'rank';
  /** Number of slots, the empty set included. */
  size: number;
  /** C(a, b) at `a * (maxOrder + 1) + b`, for a ≤ n and b ≤ maxOrder. */
  binomial: Float64Array;
  /** For 'rank': first index of each order 0 … m (order 0 is the empty set at 0). */
  orderStart: Float64Array;
}

/** Exact number of multiplets of orders 1 … m among n columns. */
export function multipletCount(n: number, m: number): bigint {
  let total = 0n;
  let c = 1n;
  for (let k = 1; k <= Math.min(m, n); k++) {
    c = (c * BigInt(n - k + 1)) / BigInt(k);
    total += c;
  }
  return total;
}

/** Largest maximum order whose multiplet count stays within `cap` (0 when not even order 1 fits). */
export function largestOrderWithin(n: number, cap: number): number {
  const limit = BigInt(Math.floor(cap));
  let total = 0n;
  let c = 1n;
  for (let k = 1; k <= n; k++) {
    c = (c * BigInt(n - k + 1)) / BigInt(k);
    total += c;
    if (total > limit) {
      return k - 1;
    }
  }
  return n;
}

/** Refuse a selection whose multiplet count exceeds the cap, naming the count and an order that fits. */
export function checkMultipletCount(n: number, m: number, cap: number = DEFAULT_MAX_MULTIPLETS): number {
  const count = multipletCount(n, m);
  if (count > BigInt(Math.floor(cap))) {
    const fits = largestOrderWithin(n, cap);
    const advice =
      fits >= 1
        ? `the largest maximum order that fits is ${fits}`
        : `not even single columns fit; select at most ${plural(Math.floor(cap), 'column')}`;
    throw new PolyadicError(
      'limit',
      `${plural(n, 'column')} up to order ${m} make ${plural(count, 'multiplet')}, above the limit of ` +
        `${formatCount(Math.floor(cap))}; ${advice}. Lower the maximum order, select fewer columns or raise the limit.`,
      { option: 'maxOrder', value: String(m), multiplets: count.toString(), largestOrder: fits }
    );
  }
  return Number(count);
}

/** The layout of n columns up to order m (call {@link checkMultipletCount} first). */
export function createIndexing(n: number, m: number): IMultipletIndexing {
  const maxOrder = Math.min(m, n);
  const width = maxOrder + 1;
  const binomial = new Float64Array((n + 1) * width);
  for (let a = 0; a <= n; a++) {
    binomial[a * width] = 1;
    for (let b = 1; b <= Math.min(a, maxOrder); b++) {
      binomial[a * width + b] = binomial[(a - 1) * width + b - 1] + (b <= a - 1 ? binomial[(a - 1) * width + b] : 0);
    }
  }
  const orderStart = new Float64Array(maxOrder + 2);
  for (let k = 0; k <= maxOrder; k++) {
    orderStart[k + 1] = orderStart[k] + binomial[n * width + k];
  }
  const kind = maxOrder === n && n <= MASK_COLUMNS ? 'mask' : 'rank';
  const size = kind === 'mask' ? 2 ** n : orderStart[maxOrder + 1];
  return { columnCount: n, maxOrder, kind, size, binomial, orderStart };
}

/** C(a, b) from the layout's table (0 when b > a). */
export function binomialOf(indexing: IMultipletIndexing, a: number, b: number): number {
  if (b > a || b < 0) {
    return 0;
  }
  return indexing.binomial[a * (indexing.maxOrder + 1) + b];
}

/** Index of a multiplet given its columns in increasing order (`count` of them from `members`). */
export function indexOfMembers(indexing: IMultipletIndexing, members: ArrayLike<number>, count = members.length): number {
  if (indexing.kind === 'mask') {
    let mask = 0;
    for (let i = 0; i < count; i++) {
      mask |= 1 << members[i];
    }
    return mask >>> 0;
  }
  const width = indexing.maxOrder + 1;
  let rank = indexing.orderStart[count];
  for (let i = 0; i < count; i++) {
    const c = members[i];
    if (i + 1 <= c) {
      rank += indexing.binomial[c * width + i + 1];
    }
  }
  return rank;
}

/** Index of a multiplet given its columns in any order; refuses repeats and orders above the layout's. */
export function indexOfColumns(indexing: IMultipletIndexing, columns: ArrayLike<number>): number {
  const sorted = Int32Array.from(columns as ArrayLike<number>).sort();
  for (let i = 0; i < sorted.length; i++) {
    if (sorted[i] < 0 || sorted[i] >= indexing.columnCount || (i > 0 && sorted[i] === sorted[i - 1])) {
      throw new PolyadicError('usage', `Invalid multiplet [${Array.from(columns).join(', ')}].`);
    }
  }
  if (sorted.length > indexing.maxOrder) {
    return -1;
  }
  return indexOfMembers(indexing, sorted);
}

/** Write the columns of the multiplet at `index` into `out` (increasing); returns its order. */
export function membersOfIndex(indexing: IMultipletIndexing, index: number, out: Int32Array): number {
  if (indexing.kind === 'mask') {
    let k = 0;
    for (let c = 0; c < indexing.columnCount; c++) {
      if ((index >>> c) & 1) {
        out[k++] = c;
      }
    }
    return k;
  }
  const starts = indexing.orderStart;
  let k = 0;
  while (k < indexing.maxOrder && index >= starts[k + 1]) {
    k++;
  }
  let rank = index - starts[k];
  const width = indexing.maxOrder + 1;
  let c = indexing.columnCount - 1;
  for (let i = k - 1; i >= 0; i--) {
    // Largest c with C(c, i + 1) ≤ rank.
    while (c > i && indexing.binomial[c * width + i + 1] > rank) {
      c--;
    }
    out[i] = c;
    rank -= c >= i + 1 ? indexing.binomial[c * width + i + 1] : 0;
    c--;
  }
  return k;
}

/** Order (number of columns) of the multiplet at `index`. */
export function orderOfIndex(indexing: IMultipletIndexing, index: number): number {
  if (indexing.kind === 'mask') {
    let v = index >>> 0;
    let k = 0;
    while (v) {
      v &= v - 1;
      k++;
    }
    return k;
  }
  let k = 0;
  while (k < indexing.maxOrder && index >= indexing.orderStart[k + 1]) {
    k++;
  }
  return k;
}

/**
 * Visit every multiplet of order 1 … m in lexicographic depth-first order ({0}, {0,1}, {0,1,2},
 * …, {0,2}, …), the lattice walk's order. `members` is reused: copy it to keep it.
 */
export function forEachMultiplet(
  indexing: IMultipletIndexing,
  visit: (index: number, members: Int32Array, order: number) => void
): void {
  for (let root = 0; root < indexing.columnCount; root++) {
    forEachInSubtree(indexing, root, visit);
  }
}

/** Visit, in the walk's order, the multiplets whose smallest column is `root`. */
export function forEachInSubtree(
  indexing: IMultipletIndexing,
  root: number,
  visit: (index: number, members: Int32Array, order: number) => void
): void {
  const n = indexing.columnCount;
  const m = indexing.maxOrder;
  const members = new Int32Array(m);
  const width = m + 1;
  const mask = indexing.kind === 'mask';
  const partial = new Float64Array(m + 1);
  const descend = (depth: number, column: number): void => {
    members[depth] = column;
    const value = mask
      ? partial[depth] + 2 ** column
      : partial[depth] + (column >= depth + 1 ? indexing.binomial[column * width + depth + 1] : 0);
    partial[depth + 1] = value;
    const order = depth + 1;
    visit(mask ? value : indexing.orderStart[order] + value, members, order);
    if (order < m) {
      for (let next = column + 1; next < n; next++) {
        descend(depth + 1, next);
      }
    }
  };
  descend(0, root);
}

/** Number of multiplets whose smallest column is `root` (the size of its subtree). */
export function subtreeSize(indexing: IMultipletIndexing, root: number): number {
  return subsetsUpTo(indexing, indexing.columnCount - 1 - root, indexing.maxOrder - 1);
}

/** Number of subsets of at most `k` elements (the empty one included) of `a` elements. */
export function subsetsUpTo(indexing: IMultipletIndexing, a: number, k: number): number {
  let total = 0;
  for (let t = 0; t <= Math.min(a, k); t++) {
    total += binomialOf(indexing, a, t);
  }
  return total;
}

/**
 * Number of multiplets of the slice of subtree `root` whose two smallest columns are `root` and
 * `second` (the slice at `root + 1` also holds {root} itself, so the slices of a subtree follow
 * each other in the walk's order). Needs a maximum order of at least 2.
 */
export function sliceSize(indexing: IMultipletIndexing, root: number, second: number): number {
  return subsetsUpTo(indexing, indexing.columnCount - 1 - second, indexing.maxOrder - 2) + (second === root + 1 ? 1 : 0);
}

/** Position of the slice's first multiplet within its subtree, in the walk's order (see {@link sliceSize}). */
export function sliceOffset(indexing: IMultipletIndexing, root: number, second: number): number {
  let offset = second === root + 1 ? 0 : 1;
  for (let s = root + 1; s < second; s++) {
    offset += subsetsUpTo(indexing, indexing.columnCount - 1 - s, indexing.maxOrder - 2);
  }
  return offset;
}
