/**
 * Helpers of the engine specs: column builders, a naive per-multiplet entropy reference that
 * shares no code with the lattice walk, and fast-check arbitraries of small coded tables.
 */
import fc from 'fast-check';

import { PolyadicError } from '../../src/engine/errors';
import type { ColumnView, ICategoricalColumn, INumericColumn } from '../../src/engine/types';

/** A float64 (or, with `dtype`, any) numeric column from plain numbers; NaN is missing. */
export function numericColumn(name: string, values: ArrayLike<number>, dtype = 'float64'): INumericColumn {
  return { kind: 'numeric', name, dtype, values: Float64Array.from(values), missing: null };
}

/** A categorical column from labels; null is missing (code −1). Dictionary in first-seen order. */
export function categoricalColumn(name: string, labels: (string | null)[]): ICategoricalColumn {
  const categories: string[] = [];
  const codes = new Int32Array(labels.length);
  labels.forEach((label, i) => {
    if (label === null) {
      codes[i] = -1;
      return;
    }
    let code = categories.indexOf(label);
    if (code < 0) {
      code = categories.length;
      categories.push(label);
    }
    codes[i] = code;
  });
  return { kind: 'categorical', name, dtype: 'string', codes, categories, missing: null };
}

/** x, y fair bits; z = x xor y; c1, c2 copies of a fourth bit w: all 16 combinations of x, y, w twice. */
export function xorWithCopies(): ColumnView[] {
  const x: number[] = [];
  const y: number[] = [];
  const w: number[] = [];
  for (let r = 0; r < 16; r++) {
    x.push(r & 1);
    y.push((r >> 1) & 1);
    w.push((r >> 2) & 1);
  }
  return [
    numericColumn('x', x),
    numericColumn('y', y),
    numericColumn('z', x.map((v, i) => v ^ y[i])),
    numericColumn('c1', w),
    numericColumn('c2', w)
  ];
}

/** Whether `run` throws a PolyadicError of `kind` whose message matches every pattern. */
export function expectPolyadic(run: () => unknown, kind: string, ...patterns: RegExp[]): PolyadicError {
  let caught: unknown;
  try {
    run();
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(PolyadicError);
  const error = caught as PolyadicError;
  expect(error.kind).toBe(kind);
  for (const pattern of patterns) {
    expect(error.message).toMatch(pattern);
  }
  return error;
}

/** Plug-in entropy in nats of a joint distribution by counting row tuples as strings. */
export function naiveEntropy(codes: ArrayLike<number>[], columns: number[]): number {
  return naiveCounts(codes, columns).reduce((h, n, _i, all) => {
    const N = all.reduce((a, b) => a + b, 0);
    return h - (n / N) * Math.log(n / N);
  }, 0);
}

/** Counts of the occupied joint cells of some columns (order unspecified). */
export function naiveCounts(codes: ArrayLike<number>[], columns: number[]): number[] {
  const rows = codes[0].length;
  const tally = new Map<string, number>();
  for (let i = 0; i < rows; i++) {
    const key = columns.map(c => codes[c][i]).join('|');
    tally.set(key, (tally.get(key) ?? 0) + 1);
  }
  return [...tally.values()];
}

/** Every non-empty subset of 0 … n − 1 of at most `maxOrder` members, as sorted arrays. */
export function subsetsOf(n: number, maxOrder = n): number[][] {
  const out: number[][] = [];
  for (let mask = 1; mask < 1 << n; mask++) {
    const members: number[] = [];
    for (let c = 0; c < n; c++) {
      if (mask & (1 << c)) {
        members.push(c);
      }
    }
    if (members.length <= maxOrder) {
      out.push(members);
    }
  }
  return out;
}

/** A small table of codes: column c has codes 0 … bins[c] − 1. */
export interface ICodedTable {
  codes: Int32Array[];
  bins: number[];
}

/**
 * Arbitrary coded tables: 1 … `maxColumns` columns of 1 … `maxBins` codes, 1 … `maxRows` rows.
 * Few codes and rows make repeated cells (and all-distinct subsets) common.
 */
export function codedTable(maxColumns = 5, maxRows = 30, maxBins = 4, minColumns = 1): fc.Arbitrary<ICodedTable> {
  return fc
    .record({
      bins: fc.array(fc.integer({ min: 1, max: maxBins }), { minLength: minColumns, maxLength: maxColumns }),
      rows: fc.integer({ min: 1, max: maxRows })
    })
    .chain(({ bins, rows }) =>
      fc
        .tuple(...bins.map(K => fc.array(fc.integer({ min: 0, max: K - 1 }), { minLength: rows, maxLength: rows })))
        .map(columns => ({ codes: columns.map(values => Int32Array.from(values)), bins }))
    );
}
