/**
 * Worker thread of the walk benchmark (bench/walk.mjs, bundled by it): holds one table's codes
 * and, per request, walks one work unit with the engine (src/worker/units.ts, as the CLI's
 * workers do) or makes the bare pass over the same multiplets, and answers with its time.
 */
import { parentPort } from 'node:worker_threads';

import type { ILatticeInput } from '../src/engine/lattice';
import { createIndexing, subsetsUpTo, subtreeSize } from '../src/engine/multiplets';
import type { IWorkUnit } from '../src/worker/protocol';
import { walkUnit } from '../src/worker/units';

/** What the benchmark sends. */
type Request =
  | { type: 'table'; input: ILatticeInput }
  | { type: 'unit'; id: number; kind: 'engine' | 'bare'; unit: IWorkUnit };

let input: ILatticeInput | null = null;
let bare: Private.BarePass | null = null;

parentPort?.on('message', (request: Request) => {
  if (request.type === 'table') {
    input = request.input;
    bare = new Private.BarePass(input);
    parentPort?.postMessage({ type: 'ready' });
    return;
  }
  if (!input || !bare) {
    throw new Error('walk-thread: a unit before the table');
  }
  const start = performance.now();
  let multiplets = 0;
  if (request.kind === 'engine') {
    for (const part of walkUnit(input, request.unit)) {
      multiplets += part.entropy.length;
    }
  } else {
    multiplets = bare.unit(request.unit);
  }
  parentPort?.postMessage({ type: 'done', id: request.id, ms: performance.now() - start, multiplets });
});

namespace Private {
  /**
   * The yardstick: per multiplet, one plain pass over every row that reads the parent's labels
   * and the new column's codes and writes the child's labels (label · K + code), in the walk's
   * depth-first order, without counting or dropping anything.
   */
  export class BarePass {
    constructor(input: ILatticeInput) {
      this._codes = input.codes;
      this._bins = input.bins;
      this._n = input.codes.length;
      this._m = Math.min(input.maxOrder, this._n);
      this._rows = this._n ? input.codes[0].length : 0;
      for (let level = 0; level <= this._m; level++) {
        this._labels.push(new Int32Array(this._rows));
      }
    }

    /** The bare pass over a unit's multiplets; returns how many. */
    unit(unit: IWorkUnit): number {
      const indexing = createIndexing(this._n, this._m);
      this._count = 0;
      if (unit.slices) {
        const [from, to] = unit.slices;
        this._pass(0, 1, unit.first);
        if (from === unit.first + 1) {
          this._count++;
        }
        for (let second = from; second <= to; second++) {
          this._visit(2, second);
        }
        // Each slice: {first, second} and the subsets of the columns after second (and {first} in the first).
        let expected = from === unit.first + 1 ? 1 : 0;
        for (let second = from; second <= to; second++) {
          expected += subsetsUpTo(indexing, this._n - 1 - second, this._m - 2);
        }
        return this._checked(expected);
      }
      let expected = 0;
      for (let root = unit.first; root <= unit.last; root++) {
        this._visit(1, root);
        expected += subtreeSize(indexing, root);
      }
      return this._checked(expected);
    }

    private _visit(level: number, column: number): void {
      this._pass(level - 1, level, column);
      this._count++;
      if (level < this._m) {
        for (let next = column + 1; next < this._n; next++) {
          this._visit(level + 1, next);
        }
      }
    }

    private _pass(from: number, to: number, column: number): void {
      const parent = this._labels[from];
      const child = this._labels[to];
      const code = this._codes[column];
      const K = this._bins[column];
      const rows = this._rows;
      for (let i = 0; i < rows; i++) {
        child[i] = (Math.imul(parent[i], K) + code[i]) | 0;
      }
    }

    private _checked(expected: number): number {
      if (this._count !== expected) {
        throw new Error(`bare pass: ${this._count} multiplets, expected ${expected}`);
      }
      return this._count;
    }

    private _codes: Int32Array[];
    private _bins: number[];
    private _n: number;
    private _m: number;
    private _rows: number;
    private _labels: Int32Array[] = [];
    private _count = 0;
  }
}
