/**
 * Shared pieces of the worker tests: seeded test tables, bit-level comparison of typed arrays,
 * a factory of in-process workers that remembers what it made, and numpy run at test time as an
 * outside reference.
 */

import { spawnSync } from 'child_process';
import * as path from 'path';

import { InProcessWorker } from '../../src/worker/inprocess';

export { makeColumns } from './data';

/** Repository root. */
export const ROOT = path.resolve(__dirname, '..', '..');

/** Index of the first element whose bits differ (NaN payloads and ±0 included), or −1; lengths must match. */
export function firstBitDifference(a: Float64Array | Int32Array, b: Float64Array | Int32Array): number {
  if (a.length !== b.length) {
    return Math.min(a.length, b.length);
  }
  const x = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  const y = new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
  const width = a.BYTES_PER_ELEMENT;
  for (let i = 0; i < x.length; i++) {
    if (x[i] !== y[i]) {
      return Math.floor(i / width);
    }
  }
  return -1;
}

/** A worker factory for EnginePool that makes in-process workers and keeps them for inspection. */
export class InProcessFactory {
  /** Every worker made so far. */
  readonly made: InProcessWorker[] = [];

  /** The factory function to pass as `createWorker`. */
  readonly create = (): InProcessWorker => {
    const worker = new InProcessWorker({ clone: sandboxClone });
    this.made.push(worker);
    return worker;
  };
}

/**
 * structuredClone (transfers detach the sender's buffers), with every typed array re-made by
 * this realm's constructor. In jest's sandbox structuredClone returns arrays of Node's outer
 * realm, which fail `instanceof Float64Array` in the code under test; a real worker's copies are
 * of the worker's own realm, as these are.
 */
export function sandboxClone<T>(value: T, transfer: ArrayBuffer[]): T {
  return toThisRealm(structuredClone(value, { transfer })) as T;
}

const TYPED_ARRAYS: Record<string, new (buffer: ArrayBufferLike, offset: number, length: number) => ArrayBufferView> = {
  Float64Array,
  Float32Array,
  Int8Array,
  Int16Array,
  Int32Array,
  Uint8Array,
  Uint16Array,
  Uint32Array,
  BigInt64Array,
  BigUint64Array
};

function toThisRealm(value: unknown): unknown {
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    const name = Object.prototype.toString.call(value).slice(8, -1);
    const make = TYPED_ARRAYS[name];
    const length = (value as unknown as { length: number }).length;
    return make ? new make(value.buffer, value.byteOffset, length) : value;
  }
  if (Array.isArray(value)) {
    return value.map(toThisRealm);
  }
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const [key, item] of Object.entries(value)) {
      out[key] = toThisRealm(item);
    }
    return out;
  }
  return value;
}

/**
 * A value with each typed array replaced by its type name and a plain array, so that values from
 * another realm (a worker thread's messages) compare equal to this realm's with toEqual.
 */
export function plainValue(value: unknown): unknown {
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    const items = Array.from(value as unknown as ArrayLike<number | bigint>);
    return { [Object.prototype.toString.call(value).slice(8, -1)]: items };
  }
  if (Array.isArray(value)) {
    return value.map(plainValue);
  }
  if (value !== null && typeof value === 'object') {
    return Object.fromEntries(Object.entries(value).map(([key, item]) => [key, plainValue(item)]));
  }
  return value;
}

/** Wait for the tasks queued so far (in-process messages travel by setTimeout 0). */
export function settle(ms = 20): Promise<void> {
  return new Promise(resolve => setTimeout(resolve, ms));
}

/**
 * Run a Python snippet with the project's virtual environment (numpy installed), passing `input`
 * as JSON on stdin; the snippet prints JSON. Fails loudly when the environment is missing.
 */
export function runPython(snippet: string, input: unknown): unknown {
  const python = path.join(ROOT, '.venv', 'bin', 'python');
  const done = spawnSync(python, ['-c', snippet], { input: JSON.stringify(input), encoding: 'utf8' });
  if (done.error || done.status !== 0) {
    throw new Error(
      `Reference computation with ${python} failed (create the environment with numpy first): ` +
        `${done.error?.message ?? done.stderr}`
    );
  }
  return JSON.parse(done.stdout);
}
