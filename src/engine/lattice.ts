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
 * The subtree of multiplets whose smallest column is r ({@link walkSubtree}) depends on nothing
 * outside it, so a pool of workers can split the walk by first column and
 * {@link assembleLattice} puts the pieces together bit for bit as one walk would.
 */

import { entropyNats, ICountCells, ICountSummary, needsCounts, countLogCountTable } from './estimators';
import { PolyadicError } from './errors';
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
  /** Largest order to compute (clamped to the number of columns). */
  maxOrder: number;
  estimator: EstimatorName;
  /** Refuse more multiplets than this (default 2^24). */
  maxMultiplets?: number;
  /** The two shortcuts, both on by default; tests turn them off to compare. */
  dropSingletons?: boolean;
  fillDistinct?: boolean;
}

/** Joint entropies of every multiplet up to the maximum order. */
export interface ILattice {
  indexing: IMultipletIndexing;
  estimator: EstimatorName;
  /** Rows counted. */
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
  const rows = n ? input.codes[0].length : 0;
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

/** Joint entropy in nats of one multiplet computed directly from the codes (no lattice). */
export function jointEntropyOfCodes(
  codes: Int32Array[],
  bins: number[],
  columns: ArrayLike<number>,
  estimator: EstimatorName
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
  for (let i = 0; i < rows; i++) {
    counts[labels[i]]++;
  }
  const table = countLogCountTable(rows);
  let sum = 0;
  let singletons = 0;
  for (let b = 0; b < distinct; b++) {
    sum += table[counts[b]];
    if (counts[b] === 1) {
      singletons++;
    }
  }
  const summary: ICountSummary = {
    total: rows,
    occupied: distinct,
    singletons,
    sumCountLogCount: sum,
    possibleCells: possible
  };
  return {
    entropy: entropyNats(estimator, summary, { counts, length: distinct, extraSingletons: 0 }),
    occupied: distinct
  };
}

/** Codes as the walk reads them. */
type CodeArray = Uint8Array | Uint16Array | Int32Array;

/** Input checked, with codes renumbered so that each column's codes are dense. */
interface IPrepared {
  n: number;
  m: number;
  rows: number;
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
    indexing: createIndexing(n, m),
    dense,
    used,
    bins: input.bins,
    estimator: input.estimator,
    dropSingletons: input.dropSingletons ?? true,
    fillDistinct: input.fillDistinct ?? true
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

/** Σ n·ln n over the first `blocks` counts. */
function sumCountLogCount(counts: Int32Array, blocks: number, table: Float64Array): number {
  let sum = 0;
  for (let b = 0; b < blocks; b++) {
    sum += table[counts[b]];
  }
  return sum;
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
  const { countLogCount, single } = tables;
  let singletons = 0;
  let sum = 0;
  let next = 0;
  for (let t = 0; t < met; t++) {
    const key = touched[t];
    const count = byKey[key];
    byKey[key] = 0;
    if (counts !== null) {
      counts[t] = count;
    }
    singletons += single[count];
    sum += countLogCount[count];
    if (remap !== null) {
      const keep = keeps[count];
      remap[key] = keep * (next + 1) - 1;
      next += keep;
    }
  }
  stats[0] = met;
  stats[1] = singletons;
  stats[2] = sum;
  return next;
}

/** Lookup tables indexed by a cell count 0 … rows. */
interface ICountTables {
  /** n·ln n (0 for n ≤ 1). */
  countLogCount: Float64Array;
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
  return { countLogCount: countLogCountTable(rows), occupied, single, shared };
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

  /** The depth-first walk with its scratch buffers, allocated once per walker. */
  export class Walker {
    constructor(prepared: IPrepared) {
      this._p = prepared;
      const rows = prepared.rows;
      this._tables = countTables(rows);
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
      this._labels.push(new Int32Array(rows));
      this._cells = { counts: this._counts, length: 0, extraSingletons: 0 };
      this._summary = { total: rows, occupied: 0, singletons: 0, sumCountLogCount: 0, possibleCells: 1 };
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
        for (let child = column + 1; child < this._p.n; child++) {
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
      const parent = level - 1;
      const parentActive = this._active[parent];
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
        stats[2] = sumCountLogCount(counts, blocks, this._tables.countLogCount);
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
      const active = this._level(level);
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

    /** Estimate the entropy of the node just counted and write it at the next position. */
    private _record(blocks: number, dropped: number, singletons: number, sum: number, possible: number): void {
      const summary = this._summary;
      summary.occupied = blocks + dropped;
      summary.singletons = singletons + dropped;
      summary.sumCountLogCount = sum;
      summary.possibleCells = possible;
      const cells = this._cells;
      cells.length = blocks;
      cells.extraSingletons = dropped;
      const position = this._position++;
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
      const rows = p.rows;
      const summary = this._summary;
      const cells = this._cells;
      summary.occupied = rows;
      summary.singletons = rows;
      summary.sumCountLogCount = 0;
      cells.length = 0;
      cells.extraSingletons = rows;
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
    private _tables: ICountTables;
    private _scratchLabel: Int32Array;
    private _counts: Int32Array;
    private _byKey = new Int32Array(0);
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
    private _active: Int32Array[] = [];
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
