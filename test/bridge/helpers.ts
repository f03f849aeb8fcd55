/**
 * Helpers of the bridge specs: the Python of the repository (the Arrow fixtures and the
 * kernel-side decoder run in it at test time), the fixtures, and a column's values in the
 * manifest's JSON conventions.
 */
import { execFileSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

import type { ColumnView } from '../../src/engine/types';
import type { IFetchDone } from '../../src/bridge/protocol';

/** The repository root. */
export const ROOT = path.resolve(__dirname, '..', '..');

/**
 * The Python with pandas, numpy and pyarrow: `POLYADIC_PYTHON`, else the repository's
 * `.venv/bin/python` (the Makefile creates it before jest runs on CI).
 */
export function python(): string {
  const chosen = process.env.POLYADIC_PYTHON ?? path.join(ROOT, '.venv', 'bin', 'python');
  if (!fs.existsSync(chosen)) {
    throw new Error(
      `The bridge specs need Python with pandas, numpy and pyarrow at ${chosen}; create the ` +
        'virtual environment (python -m venv .venv && .venv/bin/pip install -e ".[test]") or set ' +
        'POLYADIC_PYTHON to such a Python.'
    );
  }
  return chosen;
}

/** Run a Python snippet with arguments in the repository root; returns its stdout. */
export function runPython(code: string, args: string[] = []): string {
  return execFileSync(python(), ['-c', code, ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    env: { ...process.env, PYTHONPATH: [ROOT, process.env.PYTHONPATH].filter(Boolean).join(path.delimiter) },
    maxBuffer: 64 * 1024 * 1024
  });
}

/** A fresh temporary folder. */
export function tempFolder(prefix: string): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), `polyadic-${prefix}-`));
}

/** One fixture of test/python/make_arrow_fixtures.py's manifest. */
export interface IFixture {
  name: string;
  file: string;
  pieces: string[];
  fetch_done: IFetchDone;
  /** Per column: null for missing, 64-bit integers as decimal strings. */
  expected: Record<string, unknown[]>;
}

/** The fixtures the Python side writes, with the folder they are in. */
export interface IFixtures {
  folder: string;
  byName: Record<string, IFixture>;
}

/** Write the Arrow fixtures with the kernel's own encoder (run at test time). */
export function writeFixtures(): IFixtures {
  const folder = tempFolder('arrow');
  execFileSync(python(), [path.join(ROOT, 'test', 'python', 'make_arrow_fixtures.py'), folder], {
    cwd: ROOT,
    encoding: 'utf8'
  });
  const manifest = JSON.parse(fs.readFileSync(path.join(folder, 'manifest.json'), 'utf8')) as {
    fixtures: IFixture[];
  };
  const byName: Record<string, IFixture> = {};
  for (const fixture of manifest.fixtures) {
    byName[fixture.name] = fixture;
  }
  return { folder, byName };
}

/**
 * A file's bytes as JupyterLab hands a comm buffer over: a DataView of an ArrayBuffer of its
 * own (the websocket message sliced).
 */
export function commBuffer(file: string): DataView {
  const bytes = fs.readFileSync(file);
  const buffer = new ArrayBuffer(bytes.byteLength);
  new Uint8Array(buffer).set(bytes);
  return new DataView(buffer);
}

/** The pieces of a fixture as comm buffers. */
export function fixturePieces(fixtures: IFixtures, name: string): DataView[] {
  return fixtures.byName[name].pieces.map(file => commBuffer(path.join(fixtures.folder, file)));
}

/**
 * Encode a frame with the kernel's own encoder (`polyadic._arrow.frame_to_ipc_batches`), run at
 * test time: `frame` is a Python expression with `pd` and `np` in scope, `options` its keyword
 * arguments as Python source. Returns the pieces as comm buffers and the `fetch_done` message.
 */
export function encodeInKernel(frame: string, options = ''): { pieces: DataView[]; done: IFetchDone } {
  const out = runPython(
    [
      'import base64, json, sys',
      'import numpy as np, pandas as pd',
      'from polyadic._arrow import frame_to_ipc_batches',
      `payload = frame_to_ipc_batches(${frame}, ${options})`,
      'pieces = [base64.b64encode(p).decode() for p in payload.iter_pieces()]',
      'done = {"type": "fetch_done", "request_id": "r", "name": "frame", "rows": payload.rows,',
      '        "original_rows": payload.original_rows, "sampled": payload.sampled, "seed": payload.seed,',
      '        "columns": payload.columns, "batch_count": payload.batch_count, "bytes_total": payload.bytes_total}',
      'print(json.dumps({"pieces": pieces, "done": done}))'
    ].join('\n')
  );
  const parsed = JSON.parse(out) as { pieces: string[]; done: IFetchDone };
  const pieces = parsed.pieces.map(text => {
    const bytes = Buffer.from(text, 'base64');
    const buffer = new ArrayBuffer(bytes.byteLength);
    new Uint8Array(buffer).set(bytes);
    return new DataView(buffer);
  });
  return { pieces, done: parsed.done };
}

/** Bytes of a DataView as a Uint8Array view. */
export function bytesOf(view: DataView): Uint8Array {
  return new Uint8Array(view.buffer, view.byteOffset, view.byteLength);
}

/**
 * A column's values in the manifest's conventions: null when missing, 64-bit integers as
 * decimal strings, categories as their labels (booleans as booleans when `asBoolean`).
 */
export function manifestValues(column: ColumnView, asBoolean = false): unknown[] {
  const out: unknown[] = [];
  if (column.kind === 'numeric') {
    const wide = column.values instanceof BigInt64Array || column.values instanceof BigUint64Array;
    for (let i = 0; i < column.values.length; i++) {
      if (column.missing?.[i]) {
        out.push(null);
      } else {
        out.push(wide ? String(column.values[i]) : column.values[i]);
      }
    }
    return out;
  }
  for (let i = 0; i < column.codes.length; i++) {
    const code = column.codes[i];
    if (column.missing?.[i] || code < 0) {
      out.push(null);
    } else {
      out.push(asBoolean ? column.categories[code] === 'true' : column.categories[code]);
    }
  }
  return out;
}
