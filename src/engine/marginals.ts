/**
 * Dense count tables for a subtree of the lattice walk whose cells are few beside its rows
 * (DESIGN.md §3): one pass over the node's active rows fills the joint table of the node's
 * labels and every later column, and the table of each subset comes from a table one column
 * larger by summing that column out, so the subtree costs about labels · Π(1 + K) cell
 * additions instead of one pass over the rows per multiplet. Counts are integers, so every
 * table holds exactly the counts a pass over the rows would give.
 */

/** Largest dense table (cells) the walk fills for a subtree. */
export const DENSE_LIMIT = 1 << 21;

/**
 * Cells of the dense table of a node with `labels` labels and the columns `from` … n − 1 of
 * `used` codes each, or Infinity above DENSE_LIMIT.
 */
export function denseCells(labels: number, used: readonly number[], from: number): number {
  let cells = labels;
  for (let c = from; c < used.length; c++) {
    cells *= used[c];
    if (cells > DENSE_LIMIT) {
      return Infinity;
    }
  }
  return cells;
}

/**
 * Cell additions to sum out and scan every subset's table from a dense table of `cells` cells
 * over the columns `from` … n − 1: Σ over subsets S of (1 + largest K) · labels · Π_{c∈S} K_c,
 * at most (1 + largest K) · labels · Π(1 + K_c); plus the fill, `rows` × the columns.
 */
export function denseCost(rows: number, labels: number, used: readonly number[], from: number): number {
  let widest = 1;
  let product = labels;
  for (let c = from; c < used.length; c++) {
    widest = Math.max(widest, used[c]);
    product *= 1 + used[c];
  }
  return rows * (used.length - from) + (1 + widest) * product;
}

/** Codes as the walk reads them. */
type CodeArray = Uint8Array | Uint16Array | Int32Array;

/**
 * Fill `table` (cells as {@link denseCells}, all written) with the counts of the active rows by
 * label and the codes of columns `from` … n − 1, the last column varying fastest.
 */
export function fillDense(
  active: Int32Array,
  labels: Int32Array,
  activeCount: number,
  codes: readonly CodeArray[],
  used: readonly number[],
  from: number,
  cells: number,
  table: Int32Array
): void {
  table.fill(0, 0, cells);
  const n = codes.length;
  const keys = new Int32Array(Math.min(activeCount, 4096));
  for (let start = 0; start < activeCount; start += keys.length) {
    const end = Math.min(activeCount, start + keys.length);
    const width = end - start;
    for (let q = 0; q < width; q++) {
      keys[q] = labels[start + q];
    }
    // column by column over a block of rows: each inner loop reads one code array
    for (let c = from; c < n; c++) {
      const K = used[c];
      const code = codes[c];
      for (let q = 0; q < width; q++) {
        keys[q] = keys[q] * K + code[active[start + q]];
      }
    }
    for (let q = 0; q < width; q++) {
      table[keys[q]]++;
    }
  }
}

/**
 * Sum out one dimension of a table laid out as [outer, K, inner] (row-major) into `out`
 * ([outer, inner], all written).
 */
export function sumOut(table: Int32Array, outer: number, K: number, inner: number, out: Int32Array): void {
  if (inner === 1) {
    for (let a = 0; a < outer; a++) {
      let sum = 0;
      const base = a * K;
      for (let x = 0; x < K; x++) {
        sum += table[base + x];
      }
      out[a] = sum;
    }
    return;
  }
  for (let a = 0; a < outer; a++) {
    const to = a * inner;
    const base = a * K * inner;
    for (let b = 0; b < inner; b++) {
      out[to + b] = table[base + b];
    }
    for (let x = 1; x < K; x++) {
      const at = base + x * inner;
      for (let b = 0; b < inner; b++) {
        out[to + b] += table[at + b];
      }
    }
  }
}

/**
 * Positions in the walk's order of the subsets of r later columns below a node, by bitmask (bit
 * c: the c-th later column): the node's children in increasing column, each followed by its own
 * subtree, subsets of at most `limit` columns only (−1 for the larger ones and the empty set).
 */
export function walkOrderPositions(r: number, limit: number): Int32Array {
  const positions = new Int32Array(1 << r).fill(-1);
  let next = 0;
  const descend = (mask: number, from: number, depth: number): void => {
    for (let c = from; c < r; c++) {
      const child = mask | (1 << c);
      positions[child] = next++;
      if (depth + 1 < limit) {
        descend(child, c + 1, depth + 1);
      }
    }
  };
  if (limit >= 1) {
    descend(0, 0, 0);
  }
  return positions;
}

/**
 * Visit the table of every subset of the r later columns (the empty one excepted) of a dense
 * table over [labels, K_0, …, K_{r−1}]: `visit(mask, table, cells)` with the subset's table laid
 * out as [labels, its columns in increasing order]. Each subset's table is the table of one
 * subset a column larger with that column summed out; `scratch[d]` holds depth d's table (grown
 * on demand).
 */
export function forEachDenseSubset(
  table: Int32Array,
  labels: number,
  K: readonly number[],
  scratch: Int32Array[],
  visit: (mask: number, table: Int32Array, cells: number) => void
): void {
  const r = K.length;
  const full = (1 << r) - 1;
  let cells = labels;
  for (const k of K) {
    cells *= k;
  }
  visit(full, table, cells);
  // remove columns in increasing order, each subset once: R ∖ X with X removed smallest first
  const remove = (mask: number, current: Int32Array, size: number, from: number, depth: number): void => {
    for (let c = from; c < r; c++) {
      if ((mask & (1 << c)) === 0) {
        continue;
      }
      let inner = 1;
      for (let d = c + 1; d < r; d++) {
        if (mask & (1 << d)) {
          inner *= K[d];
        }
      }
      const rest = mask & ~(1 << c);
      if (rest === 0) {
        continue;
      }
      const outer = size / (K[c] * inner);
      const smaller = size / K[c];
      if (scratch.length <= depth) {
        scratch.push(new Int32Array(smaller));
      } else if (scratch[depth].length < smaller) {
        scratch[depth] = new Int32Array(smaller);
      }
      const out = scratch[depth];
      sumOut(current, outer, K[c], inner, out);
      visit(rest, out, smaller);
      remove(rest, out, smaller, c + 1, depth + 1);
    }
  };
  remove(full, table, cells, 0, 0);
}
