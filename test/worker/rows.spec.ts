/**
 * Multiplet rows packed into typed-array columns and rebuilt: the round trip keeps every key,
 * its order, numbers bit for bit, null and undefined; rows the packing cannot carry are left
 * to the caller.
 */
import fc from 'fast-check';

import { analyze } from '../../src/engine/analyze';
import type { IMultipletRow } from '../../src/engine/types';
import { packedBuffers, packRows, RowsUnpacker, unpackRows } from '../../src/worker/rows';

/** Rebuild packed rows in one go. */
function roundTrip(rows: IMultipletRow[]): IMultipletRow[] {
  const packed = packRows(rows);
  expect(packed).not.toBeNull();
  const unpacker = new RowsUnpacker(packed!);
  while (!unpacker.finished) {
    unpacker.add(3);
  }
  return unpacker.rows;
}

/** Keys and values of rows, with each number's bits, so -0 and NaN compare exactly. */
function exact(rows: IMultipletRow[]): unknown[] {
  return rows.map(row =>
    Object.entries(row).map(([key, value]) => [
      key,
      typeof value === 'number' ? Array.from(new Uint8Array(Float64Array.of(value).buffer)) : value
    ])
  );
}

describe('packRows', () => {
  it('should bring the rows of an analysis back as they were', () => {
    const a = Int32Array.from({ length: 40 }, (_, i) => i % 3);
    const b = Int32Array.from({ length: 40 }, (_, i) => (i * 7) % 4);
    const c = Int32Array.from({ length: 40 }, (_, i) => (a[i] + b[i]) % 2);
    const columns = [a, b, c].map((codes, i) => ({
      kind: 'categorical' as const,
      name: `bed_${i}`,
      dtype: 'category',
      codes,
      categories: ['0', '1', '2', '3'],
      missing: null
    }));
    const result = analyze(columns, { bins: 'categorical', statistics: { surrogates: 9, seed: 4 } });
    expect(result.multiplets).toHaveLength(7);
    expect(exact(roundTrip(result.multiplets))).toEqual(exact(result.multiplets));
  });

  it('should keep null, undefined, -0, NaN and key order, row by row', () => {
    const rows = [
      { columns: ['x'], order: 1, entropy: -0, p_value: null },
      { order: 2, columns: ['x', 'y'], entropy: Number.NaN, p_value: 0.5, ci_low: undefined },
      { columns: [], order: 0, entropy: Infinity }
    ] as unknown as IMultipletRow[];
    const back = roundTrip(rows);
    expect(exact(back)).toEqual(exact(rows));
    expect('ci_low' in back[1]).toBe(true);
    expect('p_value' in back[2]).toBe(false);
  });

  it('should round-trip any rows of numbers, nulls and names', () => {
    const value = fc.oneof(fc.double(), fc.constant(null), fc.constant(undefined));
    const row = fc.record(
      {
        columns: fc.array(fc.constantFrom('a', 'b', 'c', 'd'), { maxLength: 4 }),
        order: fc.integer({ min: 0, max: 4 }),
        entropy: value,
        q_value: value,
        same_sign: value
      },
      { requiredKeys: ['columns', 'order'] }
    );
    fc.assert(
      fc.property(fc.array(row, { maxLength: 30 }), rows => {
        const cast = rows as unknown as IMultipletRow[];
        expect(exact(roundTrip(cast))).toEqual(exact(cast));
      })
    );
  });

  it('should refuse rows that hold something else than numbers, nulls and names', () => {
    expect(packRows([{ columns: ['x'], order: 1, entropy: '1' } as unknown as IMultipletRow])).toBeNull();
    expect(packRows([{ columns: [3], order: 1 } as unknown as IMultipletRow])).toBeNull();
    expect(packRows([{ columns: 'x', order: 1 } as unknown as IMultipletRow])).toBeNull();
  });

  it('should list each buffer once for the transfer', () => {
    const packed = packRows([{ columns: ['x'], order: 1, entropy: 1, p_value: null } as unknown as IMultipletRow])!;
    const buffers = packedBuffers(packed);
    expect(new Set(buffers).size).toBe(buffers.length);
    expect(buffers).toContain(packed.members.buffer);
    expect(buffers).toContain(packed.fields.find(field => field.name === 'p_value')!.kinds!.buffer);
  });
});

describe('unpackRows', () => {
  it('should pause between slices and end with every row', async () => {
    const rows = Array.from({ length: 10_000 }, (_, i) => ({ columns: ['x', `y${i % 5}`], order: 2, entropy: i })) as unknown as IMultipletRow[];
    let pauses = 0;
    let clock = 0;
    const back = await unpackRows(
      packRows(rows)!,
      async () => {
        pauses++;
      },
      // a clock that moves 1 ms per look: slices of 2,048 rows end at once
      { sliceMs: 0.5, now: () => clock++ }
    );
    expect(pauses).toBe(4);
    expect(exact(back)).toEqual(exact(rows));
  });
});
