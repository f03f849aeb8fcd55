/**
 * Multiplet rows between threads as typed-array columns. A result of a full lattice holds
 * hundreds of thousands of row objects; structured-cloning them costs the receiving thread one
 * long task of object creation. Packed, the rows travel as a few transferred buffers, and the
 * receiver rebuilds the objects a slice at a time, yielding between slices.
 *
 * The round trip is exact: every row comes back with the same keys in the same order, numbers
 * bit for bit, `null` as null and a key that held `undefined` as such. Rows that hold anything
 * else (a value that is not a number, null or undefined; members that are not strings) are not
 * packed: {@link packRows} returns null and the caller sends the rows as they are.
 */
import type { IMultipletRow } from '../engine/types';

/** One field of the rows (every key but `columns`), column-wise. */
export interface IPackedField {
  name: string;
  /** The value of each row (0 where the row's value is not a number). */
  values: Float64Array;
  /** Per row: 0 a number, 1 null, 2 undefined; null when every row holds a number. */
  kinds: Uint8Array | null;
}

/** Multiplet rows column-wise, in typed arrays only but for the names. */
export interface IPackedRows {
  /** Number of rows. */
  count: number;
  /** The member names, each once; `members` index into them. */
  names: string[];
  /** Row i's members are members[memberStart[i] … memberStart[i + 1] − 1]; count + 1 entries. */
  memberStart: Int32Array;
  members: Int32Array;
  /** The distinct key lists of the rows, in the rows' own key order. */
  shapes: string[][];
  /** Index into `shapes` of each row. */
  shapeOf: Uint32Array;
  /** Every key but `columns`, by first appearance. */
  fields: IPackedField[];
}

/** The rows column-wise, or null when a row holds something the packing does not carry. */
export function packRows(rows: readonly IMultipletRow[]): IPackedRows | null {
  const count = rows.length;
  const names: string[] = [];
  const nameCode = new Map<string, number>();
  const memberStart = new Int32Array(count + 1);
  let members = new Int32Array(Math.max(16, count * 2));
  const shapes: string[][] = [];
  const shapeCode = new Map<string, number>();
  const shapeOf = new Uint32Array(count);
  const fields: IPackedField[] = [];
  const fieldCode = new Map<string, number>();
  let at = 0;
  for (let i = 0; i < count; i++) {
    const row = rows[i] as unknown as Record<string, unknown>;
    const keys = Object.keys(row);
    const signature = keys.join('\u0000');
    let shape = shapeCode.get(signature);
    if (shape === undefined) {
      shape = shapes.length;
      shapeCode.set(signature, shape);
      shapes.push(keys);
    }
    shapeOf[i] = shape;
    for (const key of keys) {
      const value = row[key];
      if (key === 'columns') {
        if (!Array.isArray(value)) {
          return null;
        }
        if (at + value.length > members.length) {
          const grown = new Int32Array(Math.max(members.length * 2, at + value.length));
          grown.set(members);
          members = grown;
        }
        for (const name of value) {
          if (typeof name !== 'string') {
            return null;
          }
          let code = nameCode.get(name);
          if (code === undefined) {
            code = names.length;
            nameCode.set(name, code);
            names.push(name);
          }
          members[at++] = code;
        }
        continue;
      }
      let index = fieldCode.get(key);
      if (index === undefined) {
        index = fields.length;
        fieldCode.set(key, index);
        fields.push({ name: key, values: new Float64Array(count), kinds: null });
      }
      const field = fields[index];
      if (typeof value === 'number') {
        field.values[i] = value;
        continue;
      }
      if (value !== null && value !== undefined) {
        return null;
      }
      field.kinds ??= new Uint8Array(count);
      field.kinds[i] = value === null ? Private.NULL : Private.UNDEFINED;
    }
    memberStart[i + 1] = at;
  }
  // A field a row lacks has no kind to read: only the row's shape is consulted on the way back.
  return { count, names, memberStart, members: members.slice(0, at), shapes, shapeOf, fields };
}

/** The buffers of packed rows, for a transfer list. */
export function packedBuffers(packed: IPackedRows): ArrayBuffer[] {
  const views: ArrayBufferView[] = [packed.memberStart, packed.members, packed.shapeOf];
  for (const field of packed.fields) {
    views.push(field.values);
    if (field.kinds !== null) {
      views.push(field.kinds);
    }
  }
  return [...new Set(views.map(view => view.buffer as ArrayBuffer))].filter(buffer => buffer.byteLength > 0);
}

/**
 * Rebuilds the row objects of packed rows a slice at a time: call {@link add} until
 * {@link finished}, yielding to the page between calls.
 */
export class RowsUnpacker {
  /** Prepare to rebuild `packed`. */
  constructor(private readonly _packed: IPackedRows) {
    this.rows = new Array<IMultipletRow>(_packed.count);
    const byName = new Map(_packed.fields.map(field => [field.name, field] as const));
    this._shapeFields = _packed.shapes.map(keys => keys.map(key => (key === 'columns' ? null : byName.get(key)!)));
  }

  /** The rows, filled in as far as {@link done}. */
  readonly rows: IMultipletRow[];

  /** Rows rebuilt so far. */
  get done(): number {
    return this._next;
  }

  /** Whether every row is rebuilt. */
  get finished(): boolean {
    return this._next >= this._packed.count;
  }

  /** Rebuild up to `limit` more rows. */
  add(limit: number): void {
    const { names, memberStart, members, shapes, shapeOf, count } = this._packed;
    const stop = Math.min(count, this._next + limit);
    for (let i = this._next; i < stop; i++) {
      const shape = shapeOf[i];
      const keys = shapes[shape];
      const fields = this._shapeFields[shape];
      const row: Record<string, unknown> = {};
      for (let k = 0; k < keys.length; k++) {
        const field = fields[k];
        if (field === null) {
          const start = memberStart[i];
          const end = memberStart[i + 1];
          const columns = new Array<string>(end - start);
          for (let m = start; m < end; m++) {
            columns[m - start] = names[members[m]];
          }
          row.columns = columns;
        } else {
          const kind = field.kinds === null ? Private.NUMBER : field.kinds[i];
          row[keys[k]] = kind === Private.NUMBER ? field.values[i] : kind === Private.NULL ? null : undefined;
        }
      }
      this.rows[i] = row as unknown as IMultipletRow;
    }
    this._next = stop;
  }

  private readonly _shapeFields: (IPackedField | null)[][];
  private _next = 0;
}

/**
 * The rows of `packed`, rebuilt in slices of at most `sliceMs` milliseconds with `pause()`
 * awaited between them, so that no slice holds the thread long.
 */
export async function unpackRows(
  packed: IPackedRows,
  pause: () => Promise<void>,
  options: { sliceMs?: number; now?: () => number } = {}
): Promise<IMultipletRow[]> {
  const unpacker = new RowsUnpacker(packed);
  const sliceMs = options.sliceMs ?? 20;
  const now = options.now ?? (() => performance.now());
  for (;;) {
    const until = now() + sliceMs;
    do {
      unpacker.add(Private.SLICE_ROWS);
    } while (!unpacker.finished && now() < until);
    if (unpacker.finished) {
      return unpacker.rows;
    }
    await pause();
  }
}

namespace Private {
  /** The kinds of a field's value in a row. */
  export const NUMBER = 0;
  export const NULL = 1;
  export const UNDEFINED = 2;

  /** Rows rebuilt between two looks at the clock. */
  export const SLICE_ROWS = 2048;
}
