/**
 * The lattice walk: the joint entropy of every multiplet up to a maximum order, in one
 * depth-first pass over subsets in lexicographic order (DESIGN.md §3).
 *
 * Each depth keeps one Int32 label array over its active rows. A child's labels are its parent's
 * combined with the new column's code (parent·K + code), renumbered densely in order of first
 * appearance, so each multiplet costs one pass over the rows still active. A row alone in its
 * cell stays alone in every superset and adds 0 to Σ n·ln n, so it is dropped below that node and
 * only counted; when every row is alone, every superset in the node's subtree has the same
 * partition and is filled without walking.
 *
 * Rows may carry weights (a table's distinct joint rows with their counts): a cell's count is
 * then the sum of its rows' weights, and a row alone in its cell keeps its weight w in every
 * superset, so it is dropped just the same and its cell counted as one of count w. Σ n·ln n and
 * the estimators' sums over cells do not depend on the order of the cells, so a table and its
 * weighted distinct rows, in any order, give the same entropies bit for bit.
 *
 * The subtree of multiplets whose smallest column is r ({@link walkSubtree}) depends on nothing
 * outside it, so a pool of workers can split the walk by first column and
 * {@link assembleLattice} puts the pieces together bit for bit as one walk would.
 */

import {
  countLogCountParts,
  countLogCountPartsOf,
  entropyNats,
  ICountCells,
  ICountSummary,
  joinParts,
  MAX_COUNT,
  needsCounts,
  sumCountLogCount
} from './estimators';
import { PolyadicError } from './errors';
import { denseCells, denseCost, fillDense, forEachDenseSubset, walkOrderPositions } from './marginals';
import {
  checkMultipletCount,
  createIndexing,
  DEFAULT_MAX_MULTIPLETS,
  forEachInSubtree,
  IMultipletIndexing,
  sliceOffset,
  sliceSize,
  subsetsUpTo,
  subtreeSize
} from './multiplets';
import type { EstimatorName } from './types';

/** What the walk needs: codes ready for counting (no missing values). */
export interface ILatticeInput {
  /** One Int32Array per column, codes in 0 … bins − 1, all the same length. */
  codes: Int32Array[];
  /** Number of codes of each column (possible cells are their products). */
  bins: number[];
  /**
   * The count of each row (absent: every row once), each ≥ 1, their sum at most 2^31 − 1: the
   * rows are then distinct joint rows of a larger table, which gives the same lattice.
   */
  weights?: Int32Array;
  /** Largest order to compute (clamped to the number of columns). */
  maxOrder: number;
  estimator: EstimatorName;
  /** Refuse more multiplets than this (default 2^24). */
  maxMultiplets?: number;
  /** The two shortcuts, both on by default; tests turn them off to compare. */
  dropSingletons?: boolean;
  fillDistinct?: boolean;
  /**
   * A subtree is counted through dense tables (marginals.ts) when that costs at most
   * 1/denseMargin of one pass over its active rows per multiplet (default 4: the passes often
   * touch fewer rows as rows drop out); tests set 0 (whenever the table fits) and Infinity (never)
   * to compare.
   */
  denseMargin?: number;
}

/** Joint entropies of every multiplet up to the maximum order. */
export interface ILattice {
  indexing: IMultipletIndexing;
  estimator: EstimatorName;
  /** Rows counted (with weights: their sum). */
  rows: number;
  /** Code counts of the columns. */
  bins: number[];
  /** Entropy in nats by multiplet index; index 0 (the empty set) holds 0. */
  entropy: Float64Array;
  /** Number of occupied joint cells by multiplet index. */
  occupied: Int32Array;
}

/**
 * The multiplets whose smallest column is `root`, in the walk's order (see forEachInSubtree),
 * or a run of them starting at `offset` (a slice, see {@link walkSubtree}).
 */
export interface ISubtreeResult {
  root: number;
  entropy: Float64Array;
  occupied: Int32Array;
  /** Position of the first entry within the subtree's walk order (absent: 0). */
  offset?: number;
}

/** Walk the whole lattice in this thread. */
export function computeLattice(input: ILatticeInput): ILattice {
  const prepared = prepareInput(input);
  const walker = new Private.Walker(prepared);
  const parts: ISubtreeResult[] = [];
  for (let root = 0; root < prepared.n; root++) {
    parts.push(walker.walk(root));
  }
  return assembleLattice(input, parts);
}

/**
 * Walk the subtree of multiplets whose smallest column is `root` (one worker's share); or, with
 * `slices`, only the multiplets whose second column is slices[0] … slices[1] (the slice at
 * root + 1 holds {root} too; see sliceSize), so that a large subtree is shared by several workers.
 */
export function walkSubtree(input: ILatticeInput, root: number, slices?: [number, number]): ISubtreeResult {
  return subtreeWalker(input)(root, slices);
}

/** Walks subtrees and slices of one input, prepared once (see {@link subtreeWalker}). */
export type SubtreeWalk = (root: number, slices?: [number, number]) => ISubtreeResult;

/**
 * {@link walkSubtree} for many subtrees or slices of one input: the input is checked and its
 * codes renumbered once, and one walker's buffers serve every call (a worker's units of a run).
 */
export function subtreeWalker(input: ILatticeInput): SubtreeWalk {
  const prepared = prepareInput(input);
  let walker: Private.Walker | null = null;
  return (root, slices) => {
    checkSubtree(prepared, root, slices);
    walker ??= new Private.Walker(prepared);
    return slices === undefined ? walker.walk(root) : walker.walkSlices(root, slices[0], slices[1]);
  };
}

function checkSubtree(prepared: IPrepared, root: number, slices: [number, number] | undefined): void {
  if (!(root >= 0 && root < prepared.n && Number.isInteger(root))) {
    throw new PolyadicError('internal', `No column ${root} to start a subtree at.`);
  }
  if (slices !== undefined) {
    const [from, to] = slices;
    if (!(Number.isInteger(from) && Number.isInteger(to) && root < from && from <= to && to < prepared.n && prepared.m >= 2)) {
      throw new PolyadicError('internal', `No slices ${from} … ${to} of subtree ${root} in ${prepared.n} columns up to order ${prepared.m}.`);
    }
  }
}

/** Put subtree results (one per first column, any order) into one lattice. */
export function assembleLattice(input: ILatticeInput, parts: ISubtreeResult[]): ILattice {
  const n = input.codes.length;
  const rows = input.weights ? Private.totalWeight(input.weights) : n ? input.codes[0].length : 0;
  const indexing = createIndexing(n, Math.min(input.maxOrder, n));
  const entropy = new Float64Array(indexing.size);
  const occupied = new Int32Array(indexing.size);
  occupied[0] = rows > 0 ? 1 : 0;
  const byRoot: ISubtreeResult[][] = Array.from({ length: n }, () => []);
  for (const part of parts) {
    if (!(part.root >= 0 && part.root < n)) {
      throw new PolyadicError('internal', `Subtree ${part.root} is outside columns 0 … ${n - 1}.`);
    }
    byRoot[part.root].push(part);
  }
  for (let root = 0; root < n; root++) {
    // The parts of a subtree, by offset, must tile it exactly.
    const pieces = byRoot[root].sort((a, b) => (a.offset ?? 0) - (b.offset ?? 0));
    if (pieces.length === 0) {
      throw new PolyadicError('internal', `Subtree ${root} missing from the lattice.`);
    }
    let covered = 0;
    for (const piece of pieces) {
      if ((piece.offset ?? 0) !== covered) {
        throw new PolyadicError('internal', `Subtree ${root} given twice or with a gap at entry ${covered}.`);
      }
      covered += piece.entropy.length;
    }
    if (covered !== subtreeSize(indexing, root)) {
      throw new PolyadicError('internal', `Subtree ${root} has ${covered} entries.`);
    }
    let piece = 0;
    let position = 0;
    forEachInSubtree(indexing, root, index => {
      while (position === pieces[piece].entropy.length) {
        piece++;
        position = 0;
      }
      entropy[index] = pieces[piece].entropy[position];
      occupied[index] = pieces[piece].occupied[position];
      position++;
    });
  }
  return { indexing, estimator: input.estimator, rows, bins: input.bins.slice(), entropy, occupied };
}

/** Joint entropy in nats of one multiplet computed directly from the codes (no lattice), rows weighted when `weights` is given. */
export function jointEntropyOfCodes(
  codes: Int32Array[],
  bins: number[],
  columns: ArrayLike<number>,
  estimator: EstimatorName,
  weights?: Int32Array
): { entropy: number; occupied: number } {
  const rows = codes.length ? codes[0].length : 0;
  let labels = new Int32Array(rows);
  let distinct = rows > 0 ? 1 : 0;
  let possible = 1;
  for (let c = 0; c < columns.length; c++) {
    const code = codes[columns[c]];
    const K = bins[columns[c]];
    possible *= K;
    const slot = new Map<number, number>();
    const next = new Int32Array(rows);
    for (let i = 0; i < rows; i++) {
      const key = labels[i] * K + code[i];
      let label = slot.get(key);
      if (label === undefined) {
        label = slot.size;
        slot.set(key, label);
      }
      next[i] = label;
    }
    labels = next;
    distinct = slot.size;
  }
  const counts = new Int32Array(distinct);
  let total = 0;
  for (let i = 0; i < rows; i++) {
    const weight = weights ? weights[i] : 1;
    counts[labels[i]] += weight;
    total += weight;
  }
  let singletons = 0;
  for (let b = 0; b < distinct; b++) {
    if (counts[b] === 1) {
      singletons++;
    }
  }
  const summary: ICountSummary = {
    total,
    occupied: distinct,
    singletons,
    sumCountLogCount: sumCountLogCount(counts, distinct),
    possibleCells: possible
  };
  return {
    entropy: entropyNats(estimator, summary, { counts, length: distinct, extraSingletons: 0 }),
    occupied: distinct
  };
}

/** Default of ILatticeInput.denseMargin. */
const DENSE_MARGIN = 4;

/** Codes as the walk reads them. */
type CodeArray = Uint8Array | Uint16Array | Int32Array;

/** Input checked, with codes renumbered so that each column's codes are dense. */
interface IPrepared {
  n: number;
  m: number;
  /** Rows walked (with weights: distinct rows). */
  rows: number;
  /** Weight of each row, or null (every row once). */
  weights: Int32Array | null;
  /** Rows counted: the sum of the weights, else `rows`. */
  total: number;
  indexing: IMultipletIndexing;
  /**
   * Codes with unused codes squeezed out (the walk's label arithmetic stays small), in the
   * narrowest array type that holds every column's codes, so the walk's random reads stay in cache.
   */
  dense: CodeArray[];
  /** Used codes per column. */
  used: number[];
  /** Declared codes per column (for the possible cells). */
  bins: number[];
  estimator: EstimatorName;
  dropSingletons: boolean;
  fillDistinct: boolean;
  denseMargin: number;
}

function prepareInput(input: ILatticeInput): IPrepared {
  const n = input.codes.length;
  if (n === 0) {
    throw new PolyadicError('usage', 'No column is selected.', { option: 'columns' });
  }
  if (input.bins.length !== n) {
    throw new PolyadicError('internal', `${n} code arrays but ${input.bins.length} bin counts.`);
  }
  const rows = input.codes[0].length;
  if (!(Number.isInteger(input.maxOrder) && input.maxOrder >= 1)) {
    throw new PolyadicError('usage', `The maximum order must be a whole number ≥ 1, not ${input.maxOrder}.`, {
      option: 'maxOrder',
      value: String(input.maxOrder)
    });
  }
  const m = Math.min(input.maxOrder, n);
  checkMultipletCount(n, m, input.maxMultiplets ?? DEFAULT_MAX_MULTIPLETS);
  const weights = input.weights ?? null;
  if (weights !== null && weights.length !== rows) {
    throw new PolyadicError('internal', `${weights.length} row weights for ${rows} rows.`);
  }
  const total = weights !== null ? Private.totalWeight(weights) : rows;
  const wide: Int32Array[] = [];
  const used: number[] = [];
  for (let c = 0; c < n; c++) {
    const codes = input.codes[c];
    const K = input.bins[c];
    if (codes.length !== rows) {
      throw new PolyadicError('internal', `Column ${c} has ${codes.length} rows, column 0 has ${rows}.`);
    }
    const recode = new Int32Array(K).fill(-1);
    let next = 0;
    for (let i = 0; i < rows; i++) {
      const code = codes[i];
      if (!(code >= 0 && code < K)) {
        throw new PolyadicError('internal', `Column ${c} row ${i} has code ${code}, outside 0 … ${K - 1}.`);
      }
      if (recode[code] < 0) {
        recode[code] = next++;
      }
    }
    // Renumber in code order, not order of appearance, so the result does not depend on row order.
    let rank = 0;
    for (let code = 0; code < K; code++) {
      if (recode[code] >= 0) {
        recode[code] = rank++;
      }
    }
    const out = new Int32Array(rows);
    for (let i = 0; i < rows; i++) {
      out[i] = recode[codes[i]];
    }
    wide.push(out);
    used.push(Math.max(next, 1));
  }
  const widest = Math.max(...used);
  const dense: CodeArray[] = wide.map(codes =>
    widest <= 256 ? Uint8Array.from(codes) : widest <= 65536 ? Uint16Array.from(codes) : codes
  );
  return {
    n,
    m,
    rows,
    weights,
    total,
    indexing: createIndexing(n, m),
    dense,
    used,
    bins: input.bins,
    estimator: input.estimator,
    dropSingletons: input.dropSingletons ?? true,
    fillDistinct: input.fillDistinct ?? true,
    denseMargin: input.denseMargin ?? DENSE_MARGIN
  };
}

/**
 * Renumber parent label × code densely through a Map, for key ranges too large for a table;
 * fills `childLabel` for the active rows and the cell counts; returns the number of cells.
 */
function relabelByMap(
  active: Int32Array,
  parentLabels: Int32Array,
  activeCount: number,
  code: CodeArray,
  K: number,
  childLabel: Int32Array,
  counts: Int32Array
): number {
  const slot = new Map<number, number>();
  for (let q = 0; q < activeCount; q++) {
    const key = parentLabels[q] * K + code[active[q]];
    let label = slot.get(key);
    if (label === undefined) {
      label = slot.size;
      slot.set(key, label);
    }
    childLabel[q] = label;
    counts[label]++;
  }
  return slot.size;
}

/** Σ n·ln n over the first `blocks` counts (≤ the table's largest count), exactly (see countLogCountParts). */
function sumByParts(counts: Int32Array, blocks: number, parts: Float64Array): number {
  let hi = 0;
  let mid = 0;
  let lo = 0;
  for (let b = 0; b < blocks; b++) {
    const at = 3 * counts[b];
    hi += parts[at];
    mid += parts[at + 1];
    lo += parts[at + 2];
  }
  return joinParts(hi, mid, lo);
}

/** Number of counts equal to 1 among the first `blocks`. */
function countSingletons(counts: Int32Array, blocks: number): number {
  let singletons = 0;
  for (let b = 0; b < blocks; b++) {
    if (counts[b] === 1) {
      singletons++;
    }
  }
  return singletons;
}

/** New dense labels for tallies of at least `least` rows (−1 for the others); returns how many. */
function denseRemap(tally: Int32Array, width: number, remap: Int32Array, least: number): number {
  let next = 0;
  for (let b = 0; b < width; b++) {
    remap[b] = tally[b] >= least ? next++ : -1;
  }
  return next;
}

/*
 * The row loops below are unrolled by four. In V8's optimised code a typed array's length and
 * data pointer are re-read after every loop back edge (the interrupt check there may run any
 * code), once per array access; four rows per iteration share one set of those reads (a bare
 * label loop runs twice as fast so; the whole walk of 16 columns × 10,000 rows about 8 %).
 */

/**
 * Keep the active rows whose label maps to a new label (≥ 0); returns how many were kept.
 * Branch-free: every row is written, and the write position advances only for kept rows.
 */
function keepMapped(
  parentActive: Int32Array,
  parentCount: number,
  childLabel: Int32Array,
  remap: Int32Array,
  active: Int32Array,
  labels: Int32Array
): number {
  let kept = 0;
  let q = 0;
  for (; q + 4 <= parentCount; q += 4) {
    const label0 = remap[childLabel[q]];
    active[kept] = parentActive[q];
    labels[kept] = label0;
    kept += 1 + (label0 >> 31);
    const label1 = remap[childLabel[q + 1]];
    active[kept] = parentActive[q + 1];
    labels[kept] = label1;
    kept += 1 + (label1 >> 31);
    const label2 = remap[childLabel[q + 2]];
    active[kept] = parentActive[q + 2];
    labels[kept] = label2;
    kept += 1 + (label2 >> 31);
    const label3 = remap[childLabel[q + 3]];
    active[kept] = parentActive[q + 3];
    labels[kept] = label3;
    kept += 1 + (label3 >> 31);
  }
  for (; q < parentCount; q++) {
    const label = remap[childLabel[q]];
    active[kept] = parentActive[q];
    labels[kept] = label;
    kept += 1 + (label >> 31);
  }
  return kept;
}

/**
 * Tally the active rows by key = parent label × K + code; the key of each row goes to `keys`,
 * and each key met for the first time to `touched` (branch-free: always written, kept only
 * when new). Returns the number of keys met.
 */
function countByKey(
  active: Int32Array,
  parentLabels: Int32Array,
  activeCount: number,
  code: CodeArray,
  K: number,
  keys: Int32Array,
  byKey: Int32Array,
  touched: Int32Array
): number {
  let met = 0;
  let q = 0;
  for (; q + 4 <= activeCount; q += 4) {
    const key0 = parentLabels[q] * K + code[active[q]];
    keys[q] = key0;
    const before0 = byKey[key0];
    byKey[key0] = before0 + 1;
    touched[met] = key0;
    met += (before0 - 1) >>> 31;
    const key1 = parentLabels[q + 1] * K + code[active[q + 1]];
    keys[q + 1] = key1;
    const before1 = byKey[key1];
    byKey[key1] = before1 + 1;
    touched[met] = key1;
    met += (before1 - 1) >>> 31;
    const key2 = parentLabels[q + 2] * K + code[active[q + 2]];
    keys[q + 2] = key2;
    const before2 = byKey[key2];
    byKey[key2] = before2 + 1;
    touched[met] = key2;
    met += (before2 - 1) >>> 31;
    const key3 = parentLabels[q + 3] * K + code[active[q + 3]];
    keys[q + 3] = key3;
    const before3 = byKey[key3];
    byKey[key3] = before3 + 1;
    touched[met] = key3;
    met += (before3 - 1) >>> 31;
  }
  for (; q < activeCount; q++) {
    const key = parentLabels[q] * K + code[active[q]];
    keys[q] = key;
    const before = byKey[key];
    byKey[key] = before + 1;
    touched[met] = key;
    met += (before - 1) >>> 31;
  }
  return met;
}

/** {@link countByKey} without keeping the keys, for a node whose subtree is not walked. */
function tallyByKey(
  active: Int32Array,
  parentLabels: Int32Array,
  activeCount: number,
  code: CodeArray,
  K: number,
  byKey: Int32Array,
  touched: Int32Array
): number {
  let met = 0;
  let q = 0;
  for (; q + 4 <= activeCount; q += 4) {
    const key0 = parentLabels[q] * K + code[active[q]];
    const before0 = byKey[key0];
    byKey[key0] = before0 + 1;
    touched[met] = key0;
    met += (before0 - 1) >>> 31;
    const key1 = parentLabels[q + 1] * K + code[active[q + 1]];
    const before1 = byKey[key1];
    byKey[key1] = before1 + 1;
    touched[met] = key1;
    met += (before1 - 1) >>> 31;
    const key2 = parentLabels[q + 2] * K + code[active[q + 2]];
    const before2 = byKey[key2];
    byKey[key2] = before2 + 1;
    touched[met] = key2;
    met += (before2 - 1) >>> 31;
    const key3 = parentLabels[q + 3] * K + code[active[q + 3]];
    const before3 = byKey[key3];
    byKey[key3] = before3 + 1;
    touched[met] = key3;
    met += (before3 - 1) >>> 31;
  }
  for (; q < activeCount; q++) {
    const key = parentLabels[q] * K + code[active[q]];
    const before = byKey[key];
    byKey[key] = before + 1;
    touched[met] = key;
    met += (before - 1) >>> 31;
  }
  return met;
}

/** Leaves counted together in one pass ({@link tallyFour}). */
const LEAF_GROUP = 4;

/** Largest key range of a leaf counted with others, and the rows per key it needs at least. */
const LEAF_RANGE = 4096;
const LEAF_ROWS_PER_KEY = 4;

/**
 * Tally four leaves at once, the children of one node with columns c … c + 3: one pass over the
 * node's active rows (`identity`: rows 0 … count − 1 in order, read without the row index) reads
 * each row's label once and adds 1 at label × K + code in each child's region of `tallies`
 * (LEAF_RANGE keys apart).
 */
function tallyFour(
  active: Int32Array,
  identity: boolean,
  labels: Int32Array,
  count: number,
  codes: readonly CodeArray[],
  used: readonly number[],
  c: number,
  tallies: Int32Array
): void {
  const code0 = codes[c];
  const code1 = codes[c + 1];
  const code2 = codes[c + 2];
  const code3 = codes[c + 3];
  const K0 = used[c];
  const K1 = used[c + 1];
  const K2 = used[c + 2];
  const K3 = used[c + 3];
  const at1 = LEAF_RANGE;
  const at2 = 2 * LEAF_RANGE;
  const at3 = 3 * LEAF_RANGE;
  if (identity) {
    for (let q = 0; q < count; q++) {
      const label = labels[q];
      tallies[label * K0 + code0[q]]++;
      tallies[at1 + label * K1 + code1[q]]++;
      tallies[at2 + label * K2 + code2[q]]++;
      tallies[at3 + label * K3 + code3[q]]++;
    }
    return;
  }
  for (let q = 0; q < count; q++) {
    const label = labels[q];
    const row = active[q];
    tallies[label * K0 + code0[row]]++;
    tallies[at1 + label * K1 + code1[row]]++;
    tallies[at2 + label * K2 + code2[row]]++;
    tallies[at3 + label * K3 + code3[row]]++;
  }
}

/** Largest key range tallied by {@link tallySmall}. */
const SMALL_RANGE = 1024;

/**
 * {@link countByKey} (with `keys`) or {@link tallyByKey} (without) for key ranges up to
 * SMALL_RANGE with at least 8 rows per key, where few cells take many rows: consecutive rows then
 * often share a key, and each increment would wait for the one before. Rows go to four tallies in turn instead (`quarters`,
 * 4 × SMALL_RANGE, all zero), summed into `byKey` afterwards; the keys in order of first
 * appearance then come from the first rows, until every occupied key is met (`met`, all zero,
 * marks them). The result is the same as the single tally's: counts in `byKey` and keys in
 * `touched` in order of first appearance; `quarters` and `met` are left zero.
 */
function tallySmall(
  active: Int32Array,
  parentLabels: Int32Array,
  activeCount: number,
  code: CodeArray,
  K: number,
  range: number,
  keys: Int32Array | null,
  quarters: Int32Array,
  met: Uint8Array,
  byKey: Int32Array,
  touched: Int32Array
): number {
  let q = 0;
  if (keys === null) {
    for (; q + 4 <= activeCount; q += 4) {
      quarters[parentLabels[q] * K + code[active[q]]]++;
      quarters[SMALL_RANGE + parentLabels[q + 1] * K + code[active[q + 1]]]++;
      quarters[2 * SMALL_RANGE + parentLabels[q + 2] * K + code[active[q + 2]]]++;
      quarters[3 * SMALL_RANGE + parentLabels[q + 3] * K + code[active[q + 3]]]++;
    }
  } else {
    for (; q + 4 <= activeCount; q += 4) {
      const key0 = parentLabels[q] * K + code[active[q]];
      const key1 = parentLabels[q + 1] * K + code[active[q + 1]];
      const key2 = parentLabels[q + 2] * K + code[active[q + 2]];
      const key3 = parentLabels[q + 3] * K + code[active[q + 3]];
      keys[q] = key0;
      keys[q + 1] = key1;
      keys[q + 2] = key2;
      keys[q + 3] = key3;
      quarters[key0]++;
      quarters[SMALL_RANGE + key1]++;
      quarters[2 * SMALL_RANGE + key2]++;
      quarters[3 * SMALL_RANGE + key3]++;
    }
  }
  for (; q < activeCount; q++) {
    const key = parentLabels[q] * K + code[active[q]];
    if (keys !== null) {
      keys[q] = key;
    }
    quarters[key]++;
  }
  let occupied = 0;
  for (let key = 0; key < range; key++) {
    const count =
      quarters[key] + quarters[SMALL_RANGE + key] + quarters[2 * SMALL_RANGE + key] + quarters[3 * SMALL_RANGE + key];
    quarters[key] = 0;
    quarters[SMALL_RANGE + key] = 0;
    quarters[2 * SMALL_RANGE + key] = 0;
    quarters[3 * SMALL_RANGE + key] = 0;
    byKey[key] = count;
    occupied += count > 0 ? 1 : 0;
  }
  let found = 0;
  for (let r = 0; found < occupied; r++) {
    const key = parentLabels[r] * K + code[active[r]];
    if (met[key] === 0) {
      met[key] = 1;
      touched[found++] = key;
    }
  }
  for (let t = 0; t < found; t++) {
    met[touched[t]] = 0;
  }
  return found;
}

/**
 * Scan the keys met once (in order of first appearance): number of occupied cells, singletons
 * and Σ n·ln n into `stats`; the counts into `counts` when given (estimators that read them);
 * new dense labels for keys whose count passes `keeps` into `remap` when given; and the tally
 * cleared for the next node. Branch-free through lookup tables indexed by the count (counts are
 * data, so branches on them mispredict).
 */
function scanKeys(
  byKey: Int32Array,
  touched: Int32Array,
  met: number,
  tables: ICountTables,
  stats: Float64Array,
  counts: Int32Array | null,
  remap: Int32Array | null,
  keeps: Uint8Array
): number {
  const { parts, single } = tables;
  let singletons = 0;
  let hi = 0;
  let mid = 0;
  let lo = 0;
  let next = 0;
  for (let t = 0; t < met; t++) {
    const key = touched[t];
    const count = byKey[key];
    byKey[key] = 0;
    if (counts !== null) {
      counts[t] = count;
    }
    singletons += single[count];
    const at = 3 * count;
    hi += parts[at];
    mid += parts[at + 1];
    lo += parts[at + 2];
    if (remap !== null) {
      const keep = keeps[count];
      remap[key] = keep * (next + 1) - 1;
      next += keep;
    }
  }
  stats[0] = met;
  stats[1] = singletons;
  stats[2] = joinParts(hi, mid, lo);
  return next;
}

/**
 * Occupied cells, singletons and Σ n·ln n of the counts table[from … to − 1] into `stats`, the
 * non-zero counts into `counts` when given; `clear` zeroes the table as it goes.
 */
function scanTable(
  table: Int32Array,
  from: number,
  to: number,
  clear: boolean,
  tables: ICountTables,
  stats: Float64Array,
  counts: Int32Array | null
): void {
  const { parts, single } = tables;
  let blocks = 0;
  let singletons = 0;
  let hi = 0;
  let mid = 0;
  let lo = 0;
  for (let key = from; key < to; key++) {
    const count = table[key];
    if (count === 0) {
      continue;
    }
    if (clear) {
      table[key] = 0;
    }
    if (counts !== null) {
      counts[blocks] = count;
    }
    blocks++;
    singletons += single[count];
    hi += parts[3 * count];
    mid += parts[3 * count + 1];
    lo += parts[3 * count + 2];
  }
  stats[0] = blocks;
  stats[1] = singletons;
  stats[2] = joinParts(hi, mid, lo);
}

/** Lookup tables indexed by a cell count 0 … rows. */
interface ICountTables {
  /** The three exact parts of n·ln n (0 for n ≤ 1) at 3n, 3n + 1, 3n + 2 (see countLogCountParts). */
  parts: Float64Array;
  /** 1 when n ≥ 1. */
  occupied: Uint8Array;
  /** 1 when n = 1. */
  single: Uint8Array;
  /** 1 when n ≥ 2: rows that stay active below a node when singletons are dropped. */
  shared: Uint8Array;
}

function countTables(rows: number): ICountTables {
  const occupied = new Uint8Array(rows + 1);
  const single = new Uint8Array(rows + 1);
  const shared = new Uint8Array(rows + 1);
  occupied.fill(1, 1);
  shared.fill(1, 2);
  if (rows >= 1) {
    single[1] = 1;
  }
  return { parts: countLogCountParts(rows), occupied, single, shared };
}

namespace Private {
  /** What the subtree below a counted multiplet needs. */
  export const enum Below {
    none,
    fill,
    walk
  }

  /** Largest key range tallied through a table; larger ones use a Map. */
  const TABLE_LIMIT = 1 << 22;

  /**
   * A node of at most this many keys, with at most one row in SHARE_SINGLETONS alone in its
   * cell, passes its keys and its parent's rows to its children as they are (see _count).
   */
  const SHARE_RANGE = 1 << 14;
  const SHARE_SINGLETONS = 16;

  /** Weighted rows: counts up to at least this (and the rows) have their n·ln n parts in a table. */
  const WEIGHT_TABLE = 1 << 16;

  /** The sum of row weights, checked (each ≥ 1, the sum at most MAX_COUNT). */
  export function totalWeight(weights: Int32Array): number {
    let total = 0;
    for (let i = 0; i < weights.length; i++) {
      const w = weights[i];
      if (!(w >= 1)) {
        throw new PolyadicError('internal', `Row ${i} has weight ${w}; every weight must be ≥ 1.`);
      }
      total += w;
    }
    if (total > MAX_COUNT) {
      throw new PolyadicError('usage', `The rows' weights add up to ${total}, more than the ${MAX_COUNT} rows the walk counts.`);
    }
    return total;
  }

  /** The depth-first walk with its scratch buffers, allocated once per walker. */
  export class Walker {
    constructor(prepared: IPrepared) {
      this._p = prepared;
      const rows = prepared.rows;
      const weighted = prepared.weights !== null;
      this._tables = countTables(weighted ? 0 : rows);
      if (weighted) {
        this._partsMax = Math.min(prepared.total, Math.max(rows, WEIGHT_TABLE));
        this._weightParts = countLogCountParts(this._partsMax);
        this._members = new Int32Array(rows + 1);
        this._dropStack = new Int32Array(rows + 1);
        this._fillCounts = new Int32Array(rows + 1);
      }
      this._scratchLabel = new Int32Array(rows);
      this._counts = new Int32Array(rows + 1);
      this._remap = new Int32Array(rows + 1);
      this._touched = new Int32Array(rows + 1);
      // Level 0 is the empty set: every row active, one label.
      const all = new Int32Array(rows);
      for (let i = 0; i < rows; i++) {
        all[i] = i;
      }
      this._active.push(all);
      this._view.push(all);
      this._labels.push(new Int32Array(rows));
      this._cells = { counts: this._counts, length: 0, extraSingletons: 0 };
      this._summary = { total: prepared.total, occupied: 0, singletons: 0, sumCountLogCount: 0, possibleCells: 1 };
      this._fillCells = { counts: this._fillCounts, length: 0, extraSingletons: 0 };
      this._needsCounts = needsCounts(prepared.estimator);
    }

    /** Entropies and occupied cells of the subtree of `root`, in the walk's order. */
    walk(root: number): ISubtreeResult {
      const size = subtreeSize(this._p.indexing, root);
      this._start(size);
      this._visit(1, root);
      this._check(size, `Subtree ${root}`);
      return { root, entropy: this._entropy, occupied: this._occupied };
    }

    /**
     * The slices of the subtree of `root` whose second column is `from` … `to`: {root} is
     * computed (and recorded when the first slice is among them), then each {root, second} and
     * its subtree, exactly as the whole walk computes them.
     */
    walkSlices(root: number, from: number, to: number): ISubtreeResult {
      const indexing = this._p.indexing;
      let size = 0;
      for (let second = from; second <= to; second++) {
        size += sliceSize(indexing, root, second);
      }
      this._start(size);
      const below = this._count(1, root, from === root + 1);
      for (let second = from; second <= to; second++) {
        if (below === Below.walk) {
          this._visit(2, second);
        } else {
          // {root} has every row alone: the slice is filled, as the whole walk fills the subtree.
          this._fillDistinct(1, root, second);
        }
      }
      this._check(size, `Slices ${from} … ${to} of subtree ${root}`);
      return { root, entropy: this._entropy, occupied: this._occupied, offset: sliceOffset(indexing, root, from) };
    }

    private _start(size: number): void {
      this._entropy = new Float64Array(size);
      this._occupied = new Int32Array(size);
      this._position = 0;
      this._activeCount[0] = this._p.rows;
      this._labelCount[0] = this._p.rows > 0 ? 1 : 0;
      this._dropped[0] = 0;
      this._possible[0] = 1;
      this._droppedSingles[0] = 0;
      this._droppedHi[0] = 0;
      this._droppedMid[0] = 0;
      this._droppedLo[0] = 0;
      this._dropLength[0] = 0;
    }

    private _check(size: number, what: string): void {
      if (this._position !== size) {
        throw new PolyadicError('internal', `${what} wrote ${this._position} of ${size} entries.`);
      }
    }

    /** Compute the multiplet (parent at level − 1) ∪ {column}, then its subtree. */
    private _visit(level: number, column: number): void {
      const next = this._count(level, column, true);
      if (next === Below.walk) {
        if (this._denseSubtree(level, column)) {
          return;
        }
        let child = column + 1;
        if (level + 1 === this._p.m) {
          child = this._countLeaves(level, child);
        }
        for (; child < this._p.n; child++) {
          this._visit(level + 1, child);
        }
      } else if (next === Below.fill) {
        this._fillDistinct(level, column);
      }
    }

    /**
     * Count the multiplet (parent at level − 1) ∪ {column}, record it when asked, and say what
     * its subtree needs: nothing (a leaf), a fill (every row alone), or a walk, for which the
     * active rows and labels of this level are ready.
     */
    private _count(level: number, column: number, record: boolean): Below {
      const p = this._p;
      if (p.weights !== null) {
        return this._countWeighted(level, column, record, p.weights);
      }
      const parent = level - 1;
      const parentActive = this._view[parent];
      const parentLabels = this._labels[parent];
      const parentCount = this._activeCount[parent];
      const dropped = this._dropped[parent];
      const K = p.used[column];
      const range = this._labelCount[parent] * K;
      const possible = this._possible[parent] * p.bins[column];
      this._possible[level] = possible;
      const descend = level < p.m && column < p.n - 1;
      const stats = this._stats;
      const least = p.dropSingletons ? 2 : 1;
      const keeps = p.dropSingletons ? this._tables.shared : this._tables.occupied;
      const counts = this._counts;
      const compact = this._needsCounts ? counts : null;
      let direct = false;
      let newLabels = 0;
      if (range <= TABLE_LIMIT) {
        direct = true;
        const byKey = this._tallyTable(range);
        const touched = this._touched;
        if (range <= SMALL_RANGE && parentCount >= 8 * range) {
          const keys = descend ? this._scratchLabel : null;
          const met = tallySmall(parentActive, parentLabels, parentCount, p.dense[column], K, range, keys, this._quarters, this._met, byKey, touched);
          newLabels = scanKeys(byKey, touched, met, this._tables, stats, compact, descend ? this._remap : null, keeps);
        } else if (descend) {
          const met = countByKey(parentActive, parentLabels, parentCount, p.dense[column], K, this._scratchLabel, byKey, touched);
          newLabels = scanKeys(byKey, touched, met, this._tables, stats, compact, this._remap, keeps);
        } else {
          const met = tallyByKey(parentActive, parentLabels, parentCount, p.dense[column], K, byKey, touched);
          scanKeys(byKey, touched, met, this._tables, stats, compact, null, keeps);
        }
      } else {
        const blocks = relabelByMap(parentActive, parentLabels, parentCount, p.dense[column], K, this._scratchLabel, counts);
        stats[0] = blocks;
        stats[1] = countSingletons(counts, blocks);
        stats[2] = sumByParts(counts, blocks, this._tables.parts);
      }
      const blocks = stats[0];
      const singletons = stats[1];
      if (record) {
        this._record(blocks, dropped, singletons, stats[2], possible);
      }
      if (!direct) {
        // Renumber the kept labels densely.
        if (descend) {
          newLabels = denseRemap(counts, blocks, this._remap, least);
        }
        counts.fill(0, 0, blocks);
      } else if (compact !== null) {
        counts.fill(0, 0, blocks);
      }
      if (!descend) {
        return Below.none;
      }
      if (singletons === blocks && p.fillDistinct) {
        return Below.fill;
      }
      if (direct && range <= SHARE_RANGE && singletons * SHARE_SINGLETONS <= parentCount) {
        // Few cells holding many rows each: the keys are the children's labels as they are (not
        // renumbered), every row stays active (the few rows alone are not dropped), and the
        // parent's active rows serve again, so the node costs no pass beyond its tally.
        const keys = this._scratchLabel;
        this._level(level);
        this._scratchLabel = this._labels[level];
        this._labels[level] = keys;
        this._view[level] = parentActive;
        this._activeCount[level] = parentCount;
        this._labelCount[level] = range;
        this._dropped[level] = dropped;
        return Below.walk;
      }
      const active = this._level(level);
      this._view[level] = active;
      this._activeCount[level] = keepMapped(
        parentActive,
        parentCount,
        this._scratchLabel,
        this._remap,
        active,
        this._labels[level]
      );
      this._labelCount[level] = newLabels;
      this._dropped[level] = p.dropSingletons ? dropped + singletons : dropped;
      return Below.walk;
    }

    /**
     * {@link _count} for weighted rows: a cell's count is the sum of its rows' weights, and the
     * rows that stay active below the node are those of cells with two or more rows; a cell of
     * one row (count w) is dropped and counted as such in every superset (its count goes to the
     * drop stack when the estimator reads counts).
     */
    private _countWeighted(level: number, column: number, record: boolean, weights: Int32Array): Below {
      const p = this._p;
      const parent = level - 1;
      const parentActive = this._view[parent];
      const parentLabels = this._labels[parent];
      const parentCount = this._activeCount[parent];
      const K = p.used[column];
      const code = p.dense[column];
      const range = this._labelCount[parent] * K;
      const possible = this._possible[parent] * p.bins[column];
      this._possible[level] = possible;
      const descend = level < p.m && column < p.n - 1;
      const childLabel = this._scratchLabel;
      const counts = this._counts;
      const members = this._members;
      let blocks = 0;
      // few keys for many rows: the children may share this node's keys and rows (as in _count)
      let share = false;
      if (range <= SHARE_RANGE && parentCount >= 2 * range) {
        // Count by key directly (no label lookup per row); labels are given in key order.
        const membersByKey = this._tallyTable(range);
        const weightByKey = this._keyWeightTable();
        const touched = this._touched;
        for (let q = 0; q < parentCount; q++) {
          const row = parentActive[q];
          const key = parentLabels[q] * K + code[row];
          childLabel[q] = key;
          weightByKey[key] += weights[row];
          membersByKey[key]++;
        }
        let alone = 0;
        for (let key = 0; key < range; key++) {
          const m = membersByKey[key];
          if (m > 0) {
            counts[blocks] = weightByKey[key];
            members[blocks] = m;
            touched[blocks] = key;
            alone += m === 1 ? 1 : 0;
            membersByKey[key] = blocks++;
            weightByKey[key] = 0;
          }
        }
        share = descend && alone * SHARE_SINGLETONS <= parentCount;
        if (!share) {
          for (let q = 0; q < parentCount; q++) {
            childLabel[q] = membersByKey[childLabel[q]];
          }
        }
        for (let b = 0; b < blocks; b++) {
          membersByKey[touched[b]] = 0;
        }
      } else if (range <= TABLE_LIMIT) {
        // slot[key] holds the key's label + 1 (0: not met yet)
        const slot = this._tallyTable(range);
        const touched = this._touched;
        for (let q = 0; q < parentCount; q++) {
          const row = parentActive[q];
          const key = parentLabels[q] * K + code[row];
          let label = slot[key] - 1;
          if (label < 0) {
            label = blocks++;
            slot[key] = blocks;
            touched[label] = key;
          }
          childLabel[q] = label;
          counts[label] += weights[row];
          members[label]++;
        }
        for (let b = 0; b < blocks; b++) {
          slot[touched[b]] = 0;
        }
      } else {
        const slot = new Map<number, number>();
        for (let q = 0; q < parentCount; q++) {
          const row = parentActive[q];
          const key = parentLabels[q] * K + code[row];
          let label = slot.get(key);
          if (label === undefined) {
            label = blocks++;
            slot.set(key, label);
          }
          childLabel[q] = label;
          counts[label] += weights[row];
          members[label]++;
        }
      }
      // One scan of the cells: the node's sums, and which cells stay below it.
      const parts = this._weightParts;
      const partsMax = this._partsMax;
      const one = this._oneParts;
      const least = p.dropSingletons ? 2 : 1;
      const remap = this._remap;
      const stack = this._dropStack;
      const stackBase = this._dropLength[parent];
      let stackTop = stackBase;
      let singletons = 0;
      let hi = 0;
      let mid = 0;
      let lo = 0;
      let oneRow = 0;
      let alone = 0;
      let aloneSingles = 0;
      let aloneHi = 0;
      let aloneMid = 0;
      let aloneLo = 0;
      let next = 0;
      for (let b = 0; b < blocks; b++) {
        const count = counts[b];
        let partHi: number;
        let partMid: number;
        let partLo: number;
        if (count <= partsMax) {
          partHi = parts[3 * count];
          partMid = parts[3 * count + 1];
          partLo = parts[3 * count + 2];
        } else {
          countLogCountPartsOf(count, one, 0);
          partHi = one[0];
          partMid = one[1];
          partLo = one[2];
        }
        const single = count === 1 ? 1 : 0;
        singletons += single;
        hi += partHi;
        mid += partMid;
        lo += partLo;
        oneRow += members[b] === 1 ? 1 : 0;
        if (share || members[b] >= least) {
          remap[b] = next++;
        } else {
          remap[b] = -1;
          alone++;
          aloneSingles += single;
          aloneHi += partHi;
          aloneMid += partMid;
          aloneLo += partLo;
          stack[stackTop++] = count;
        }
        members[b] = 0;
      }
      const occupied = blocks + this._dropped[parent];
      const allSingles = singletons + this._droppedSingles[parent];
      const sum = joinParts(hi + this._droppedHi[parent], mid + this._droppedMid[parent], lo + this._droppedLo[parent]);
      // the multiset of counts (active cells, then the cells dropped above), for estimators that read it
      let cellCount = blocks;
      if (this._needsCounts) {
        for (let d = 0; d < stackBase; d++) {
          counts[cellCount++] = stack[d];
        }
      }
      if (record) {
        this._recordWeighted(occupied, allSingles, sum, possible, cellCount);
      }
      // every cell has one row: each superset in the subtree has the same cells
      const fill = descend && p.fillDistinct && oneRow === blocks;
      if (fill) {
        this._fillOccupied = occupied;
        this._fillSingles = allSingles;
        this._fillSum = sum;
        if (this._needsCounts) {
          this._fillCounts.set(counts.subarray(0, cellCount));
        }
        this._fillCells.length = cellCount;
      }
      counts.fill(0, 0, cellCount);
      if (!descend) {
        return Below.none;
      }
      if (fill) {
        return Below.fill;
      }
      if (share) {
        // the keys are the children's labels as they are, every row stays active (none dropped
        // here), and the parent's active rows serve again: no pass beyond the count
        this._level(level);
        this._scratchLabel = this._labels[level];
        this._labels[level] = childLabel;
        this._view[level] = parentActive;
        this._activeCount[level] = parentCount;
        this._labelCount[level] = range;
        this._dropped[level] = this._dropped[parent];
        this._droppedSingles[level] = this._droppedSingles[parent];
        this._droppedHi[level] = this._droppedHi[parent];
        this._droppedMid[level] = this._droppedMid[parent];
        this._droppedLo[level] = this._droppedLo[parent];
        this._dropLength[level] = this._needsCounts ? stackTop : 0;
        return Below.walk;
      }
      const active = this._level(level);
      this._view[level] = active;
      this._activeCount[level] = keepMapped(parentActive, parentCount, childLabel, remap, active, this._labels[level]);
      this._labelCount[level] = next;
      this._dropped[level] = this._dropped[parent] + alone;
      this._droppedSingles[level] = this._droppedSingles[parent] + aloneSingles;
      this._droppedHi[level] = this._droppedHi[parent] + aloneHi;
      this._droppedMid[level] = this._droppedMid[parent] + aloneMid;
      this._droppedLo[level] = this._droppedLo[parent] + aloneLo;
      this._dropLength[level] = this._needsCounts ? stackTop : 0;
      return Below.walk;
    }

    /** {@link _record} for weighted rows: the counts (for the estimators that read them) are the first `cellCount` of `_counts`. */
    private _recordWeighted(occupied: number, singletons: number, sum: number, possible: number, cellCount: number): void {
      const summary = this._summary;
      summary.occupied = occupied;
      summary.singletons = singletons;
      summary.sumCountLogCount = sum;
      summary.possibleCells = possible;
      const cells = this._cells;
      cells.length = cellCount;
      cells.extraSingletons = 0;
      const position = this._position++;
      this._entropy[position] = entropyNats(this._p.estimator, summary, cells);
      this._occupied[position] = occupied;
    }

    /**
     * Walk the subtree below the node just counted (level, column) through dense count tables
     * (see marginals.ts) when its cells are few beside its active rows and that costs less than
     * a pass over the rows per multiplet; returns whether it did. The counts are the walk's
     * exactly, so the values are too.
     */
    private _denseSubtree(level: number, column: number): boolean {
      const p = this._p;
      if (p.weights !== null || p.denseMargin === Infinity) {
        return false;
      }
      const from = column + 1;
      const later = p.n - from;
      const limit = p.m - level;
      const labels = this._labelCount[level];
      const rows = this._activeCount[level];
      // denseCost ≥ 2 · labels · 2^later > 2 · labels · below: a cheap refusal of most nodes
      if (p.denseMargin > 0 && 2 * p.denseMargin * labels >= rows) {
        return false;
      }
      const cells = denseCells(labels, p.used, from);
      if (cells === Infinity) {
        return false;
      }
      const below = subsetsUpTo(p.indexing, later, limit) - 1;
      if (p.denseMargin * denseCost(rows, labels, p.used, from) > below * rows) {
        return false;
      }
      if (this._denseTable.length < cells) {
        this._denseTable = new Int32Array(cells);
      }
      fillDense(this._view[level], this._labels[level], rows, p.dense, p.used, from, cells, this._denseTable);
      const key = later * 64 + limit;
      let positions = this._denseOrder.get(key);
      if (positions === undefined) {
        positions = walkOrderPositions(later, limit);
        this._denseOrder.set(key, positions);
      }
      const order = positions;
      const base = this._position;
      const dropped = this._dropped[level];
      const possibleAbove = this._possible[level];
      const stats = this._stats;
      const counts = this._needsCounts ? this._counts : null;
      forEachDenseSubset(this._denseTable, labels, p.used.slice(from), this._denseScratch, (mask, table, size) => {
        const at = order[mask];
        if (at < 0) {
          return;
        }
        let possible = possibleAbove;
        for (let c = 0; c < later; c++) {
          if (mask & (1 << c)) {
            possible *= p.bins[from + c];
          }
        }
        scanTable(table, 0, size, false, this._tables, stats, counts);
        this._record(stats[0], dropped, stats[1], stats[2], possible, base + at);
      });
      this._position = base + below;
      return true;
    }

    /**
     * The children of the node at `parent` are leaves (at the order limit): count them four at
     * a time, in one pass over the node's active rows each four, when every child's key range
     * (labels × K) is small beside the rows; the cells of each are read off its tally in key
     * order (Σ n·ln n and the estimators do not depend on the cells' order). Returns the first
     * child column left to count one by one.
     */
    private _countLeaves(parent: number, from: number): number {
      const p = this._p;
      const rows = this._activeCount[parent];
      const labels = this._labelCount[parent];
      if (p.weights !== null || p.n - from < LEAF_GROUP) {
        return from;
      }
      for (let c = from; c < p.n; c++) {
        const range = labels * p.used[c];
        if (range > LEAF_RANGE || LEAF_ROWS_PER_KEY * range > rows) {
          return from;
        }
      }
      const active = this._view[parent];
      const parentLabels = this._labels[parent];
      const identity = active === this._active[0];
      const tallies = this._leafTallies;
      const counts = this._needsCounts ? this._counts : null;
      const dropped = this._dropped[parent];
      let c = from;
      for (; c + LEAF_GROUP <= p.n; c += LEAF_GROUP) {
        tallyFour(active, identity, parentLabels, rows, p.dense, p.used, c, tallies);
        for (let g = 0; g < LEAF_GROUP; g++) {
          const range = labels * p.used[c + g];
          const base = g * LEAF_RANGE;
          scanTable(tallies, base, base + range, true, this._tables, this._stats, counts);
          this._record(this._stats[0], dropped, this._stats[1], this._stats[2], this._possible[parent] * p.bins[c + g]);
        }
      }
      return c;
    }

    /** Estimate the entropy of the node just counted and write it at position `at` (default: the next). */
    private _record(blocks: number, dropped: number, singletons: number, sum: number, possible: number, at = -1): void {
      const summary = this._summary;
      summary.occupied = blocks + dropped;
      summary.singletons = singletons + dropped;
      summary.sumCountLogCount = sum;
      summary.possibleCells = possible;
      const cells = this._cells;
      cells.length = blocks;
      cells.extraSingletons = dropped;
      const position = at < 0 ? this._position++ : at;
      this._entropy[position] = entropyNats(this._p.estimator, summary, cells);
      this._occupied[position] = blocks + dropped;
    }

    /**
     * Every row is alone in its cell at this node: each superset in the subtree has N
     * singleton cells. Plug-in, Miller–Madow and Chao–Shen then give one value for all of them;
     * shrinkage depends on each superset's possible cells, so it visits them in walk order.
     * With `only`, just the child with that column and its subtree (a slice).
     */
    private _fillDistinct(level: number, column: number, only?: number): void {
      const p = this._p;
      const summary = this._summary;
      let cells = this._cells;
      let rows = p.rows;
      if (p.weights === null) {
        summary.occupied = rows;
        summary.singletons = rows;
        summary.sumCountLogCount = 0;
        cells.length = 0;
        cells.extraSingletons = rows;
      } else {
        // the cells of the node, as _countWeighted left them
        rows = this._fillOccupied;
        summary.occupied = rows;
        summary.singletons = this._fillSingles;
        summary.sumCountLogCount = this._fillSum;
        cells = this._fillCells;
      }
      if (p.estimator !== 'shrinkage') {
        summary.possibleCells = this._possible[level];
        const value = entropyNats(p.estimator, summary, needsCounts(p.estimator) ? cells : undefined);
        const count =
          only === undefined
            ? subsetsUpTo(p.indexing, p.n - 1 - column, p.m - level) - 1
            : subsetsUpTo(p.indexing, p.n - 1 - only, p.m - level - 1);
        const start = this._position;
        this._entropy.fill(value, start, start + count);
        this._occupied.fill(rows, start, start + count);
        this._position += count;
        return;
      }
      const descend = (depth: number, from: number, to: number, possible: number): void => {
        for (let next = from; next < to; next++) {
          const product = possible * p.bins[next];
          summary.possibleCells = product;
          const position = this._position++;
          this._entropy[position] = entropyNats(p.estimator, summary, cells);
          this._occupied[position] = rows;
          if (depth + 1 < p.m) {
            descend(depth + 1, next + 1, p.n, product);
          }
        }
      };
      if (only === undefined) {
        descend(level, column + 1, p.n, this._possible[level]);
      } else {
        descend(level, only, only + 1, this._possible[level]);
      }
    }

    /** Weights by key for key ranges up to SHARE_RANGE (all zero between uses), allocated on first use. */
    private _keyWeightTable(): Int32Array {
      if (this._keyWeights.length === 0) {
        this._keyWeights = new Int32Array(SHARE_RANGE);
      }
      return this._keyWeights;
    }

    /** The active-row array of a level, allocated on first use. */
    private _level(level: number): Int32Array {
      while (this._active.length <= level) {
        this._active.push(new Int32Array(this._p.rows));
        this._labels.push(new Int32Array(this._p.rows));
      }
      return this._active[level];
    }

    /**
     * The tally table (all zero) for keys 0 … range − 1, and a remap table as long, grown on
     * demand: the key range is parent labels × codes, which only a wide column makes large.
     */
    private _tallyTable(range: number): Int32Array {
      if (this._byKey.length < range) {
        const size = Math.min(TABLE_LIMIT, Math.max(range, this._byKey.length * 2, 1024));
        this._byKey = new Int32Array(size);
        if (this._remap.length < size) {
          this._remap = new Int32Array(size);
        }
      }
      return this._byKey;
    }

    private _p: IPrepared;
    /** Tallies of {@link _countLeaves}: LEAF_GROUP regions of LEAF_RANGE keys, all zero between uses. */
    private _leafTallies = new Int32Array(LEAF_GROUP * LEAF_RANGE);
    /** The dense table of a subtree walked by {@link _denseSubtree}, its subsets' tables by depth, and walk-order positions by (later columns, order left). */
    private _denseTable = new Int32Array(0);
    private _denseScratch: Int32Array[] = [];
    private _denseOrder = new Map<number, Int32Array>();
    private _tables: ICountTables;
    /** Weighted rows: parts of n·ln n up to _partsMax (larger counts are computed), scratch for one. */
    private _weightParts: Float64Array = new Float64Array(0);
    private _partsMax = 0;
    private _oneParts = new Float64Array(3);
    /** Weighted rows: rows per cell of the node being counted. */
    private _members = new Int32Array(0);
    /** Weighted rows, estimators that read counts: counts of the cells dropped above each level (a stack). */
    private _dropStack = new Int32Array(0);
    private _dropLength: number[] = [];
    /** Weighted rows: cells of one row dropped above each level (_dropped counts them), of count 1, and the parts of their Σ n·ln n. */
    private _droppedSingles: number[] = [];
    private _droppedHi: number[] = [];
    private _droppedMid: number[] = [];
    private _droppedLo: number[] = [];
    /** Weighted rows: the cells of a node whose subtree is filled. */
    private _fillOccupied = 0;
    private _fillSingles = 0;
    private _fillSum = 0;
    private _fillCounts = new Int32Array(0);
    private _fillCells: ICountCells;
    private _scratchLabel: Int32Array;
    private _counts: Int32Array;
    private _byKey = new Int32Array(0);
    private _keyWeights = new Int32Array(0);
    /** Scratch of {@link tallySmall}. */
    private _quarters = new Int32Array(4 * SMALL_RANGE);
    private _met = new Uint8Array(SMALL_RANGE);
    private _remap: Int32Array;
    /** Keys met by the current node, in order of first appearance. */
    private _touched: Int32Array;
    /** Occupied cells, singletons and Σ n·ln n of the node being counted. */
    private _stats = new Float64Array(3);
    /** The estimator reads the counts, so the key scan also writes them compactly. */
    private _needsCounts: boolean;
    /** Active-row buffers by level (each level's own, written by its nodes). */
    private _active: Int32Array[] = [];
    /** The active rows of the node at each level on the current branch: its own buffer, or its parent's rows when it keeps them all. */
    private _view: Int32Array[] = [];
    private _labels: Int32Array[] = [];
    private _activeCount: number[] = [];
    private _labelCount: number[] = [];
    private _dropped: number[] = [];
    private _possible: number[] = [];
    private _summary: ICountSummary;
    private _cells: ICountCells;
    private _entropy = new Float64Array(0);
    private _occupied = new Int32Array(0);
    private _position = 0;
  }
}
