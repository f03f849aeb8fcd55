/**
 * Seeded test tables for the worker tests; no Node API, so the browser smoke check
 * (test/worker/browser-smoke.mjs) bundles it for the page too.
 */

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import type { ColumnView, ICategoricalColumn, INumericColumn } from '../../src/engine/types';

/**
 * A seeded test table of `count` columns: noise columns, noisy copies (redundancy), a noisy
 * parity of two earlier columns (synergy), a string column with missing values and, from 6
 * columns on, an identifier-like column (every row distinct, so the walk's all-distinct fill runs).
 */
export function makeColumns(rows: number, count: number, seed = 7): ColumnView[] {
  const rng = xoroshiro128plus(seed);
  const int = (lo: number, hi: number): number => unsafeUniformIntDistribution(lo, hi, rng);
  const columns: ColumnView[] = [];
  for (let c = 0; c < count; c++) {
    const name = `c${String(c).padStart(2, '0')}`;
    const values = new Float64Array(rows);
    let missing: Uint8Array | null = null;
    const kind = c % 6;
    if (c === 5) {
      for (let i = 0; i < rows; i++) {
        values[i] = (i * 7919) % rows;
      }
    } else if (kind === 3) {
      const a = columns[c - 2] as INumericColumn;
      const b = columns[c - 3] as INumericColumn;
      for (let i = 0; i < rows; i++) {
        const bit = (Number(a.values[i]) > 0.5 ? 1 : 0) ^ (Number(b.values[i]) > 0.5 ? 1 : 0);
        values[i] = int(0, 9) === 0 ? 1 - bit : bit;
      }
    } else if (kind === 4) {
      const a = columns[c - 1];
      for (let i = 0; i < rows; i++) {
        const source = a.kind === 'numeric' ? Number(a.values[i]) : a.codes[i];
        values[i] = source + int(0, 1000) / 5000;
      }
    } else if (kind === 2) {
      const categories = ['dry', 'damp', 'wet'];
      const codes = new Int32Array(rows);
      missing = new Uint8Array(rows);
      for (let i = 0; i < rows; i++) {
        codes[i] = int(0, 2);
        if (int(0, 29) === 0) {
          codes[i] = -1;
          missing[i] = 1;
        }
      }
      const column: ICategoricalColumn = { kind: 'categorical', name, dtype: 'category', codes, categories, missing };
      columns.push(column);
      continue;
    } else {
      for (let i = 0; i < rows; i++) {
        values[i] = int(0, 1 << 20) / (1 << 20);
      }
    }
    columns.push({ kind: 'numeric', name, dtype: 'float64', values, missing });
  }
  return columns;
}
