/**
 * The fingerprint of a scanned source (`pdsc1`, docs/fingerprint.md): the bytes of a tiny table
 * written out by hand here and hashed with Node's crypto (an outside SHA-256), the table's
 * independence of row order and of how equal rows were split, and the record's origin block in
 * the schema (a record without it, as 0.1.x wrote, still validates).
 */
import { createHash } from 'crypto';

import { fingerprintScan, sortedWeightedTable } from '../../src/record/scan-fingerprint';
import { validateRecord } from '../../src/record/validate';
import type { IColumnBinning } from '../../src/engine/types';

const BINNINGS: IColumnBinning[] = [
  { name: 'x', bins: 2, binning: { method: 'width', spec: 'width:2', edges: [0, 0.5, 1] } },
  { name: 'é', bins: 2, binning: { method: 'categorical', spec: 'categorical', categories: ['a', 'bc'] } }
];

/** u32, i32 and u64 little-endian; text as u32 length + UTF-8. */
const u32 = (v: number): Buffer => {
  const b = Buffer.alloc(4);
  b.writeUInt32LE(v);
  return b;
};
const i32 = (v: number): Buffer => {
  const b = Buffer.alloc(4);
  b.writeInt32LE(v);
  return b;
};
const u64 = (v: number): Buffer => {
  const b = Buffer.alloc(8);
  b.writeBigUInt64LE(BigInt(v));
  return b;
};
const text = (s: string): Buffer => Buffer.concat([u32(Buffer.byteLength(s, 'utf8')), Buffer.from(s, 'utf8')]);
const f64 = (v: number): Buffer => {
  const b = Buffer.alloc(8);
  b.writeDoubleLE(v);
  return b;
};
const sha = (bytes: Buffer): Buffer => createHash('sha256').update(bytes).digest();

describe('fingerprintScan', () => {
  // rows (x code, é code, weight), given unsorted and with the row (1, 0) split in two
  const table = {
    codes: [Int32Array.from([1, 0, 1, 0, 1]), Int32Array.from([0, 1, 1, 0, 0])],
    weights: Int32Array.from([2, 3, 4, 5, 1])
  };

  it('should hash the layout docs/fingerprint.md states, byte for byte (Node crypto as the outside check)', async () => {
    const head = Buffer.concat([
      Buffer.from('PDSC1', 'ascii'),
      u64(20),
      u32(2),
      text('x'),
      text('width:2'),
      u32(2),
      i32(-1),
      Buffer.of(0x01),
      f64(0),
      f64(0.5),
      f64(1),
      text('é'),
      text('categorical'),
      u32(2),
      i32(-1),
      Buffer.of(0x02),
      text('a'),
      text('bc'),
      u64(4),
      u32(1)
    ]);
    // sorted by codes: (0,0) w5, (0,1) w3, (1,0) w2+1, (1,1) w4
    const block = Buffer.concat([
      i32(0), i32(0), u64(5),
      i32(0), i32(1), u64(3),
      i32(1), i32(0), u64(3),
      i32(1), i32(1), u64(4)
    ]);
    const expected = sha(Buffer.concat([head, sha(block)])).toString('hex');
    const found = await fingerprintScan(table, 20, BINNINGS);
    expect(found).toEqual({ encoding: 'pdsc1', sha256: expected, distinctRows: 4 });
  });

  it('should not depend on row order or on how equal rows were split', async () => {
    const reference = await fingerprintScan(table, 20, BINNINGS);
    const merged = sortedWeightedTable(table);
    expect(Array.from(merged.weights)).toEqual([5, 3, 3, 4]);
    expect((await fingerprintScan(merged, 20, BINNINGS)).sha256).toBe(reference.sha256);
    const reversed = { codes: table.codes.map(c => c.slice().reverse()), weights: table.weights.slice().reverse() };
    expect((await fingerprintScan(reversed, 20, BINNINGS)).sha256).toBe(reference.sha256);
  });

  it('should change with a weight, the input rows, an edge or a name', async () => {
    const reference = (await fingerprintScan(table, 20, BINNINGS)).sha256;
    const heavier = { ...table, weights: Int32Array.from([2, 3, 4, 6, 1]) };
    expect((await fingerprintScan(heavier, 21, BINNINGS)).sha256).not.toBe(reference);
    expect((await fingerprintScan(table, 21, BINNINGS)).sha256).not.toBe(reference);
    const moved = [{ ...BINNINGS[0], binning: { ...BINNINGS[0].binning, edges: [0, 0.25, 1] } }, BINNINGS[1]];
    expect((await fingerprintScan(table, 20, moved)).sha256).not.toBe(reference);
    const renamed = [{ ...BINNINGS[0], name: 'y' }, BINNINGS[1]];
    expect((await fingerprintScan(table, 20, renamed)).sha256).not.toBe(reference);
  });
});

describe('the record of a scanned source', () => {
  /** A minimal valid record of one analysis, with `origin` in its source when given. */
  function recordWith(origin?: unknown, encoding = 'pdfp1'): unknown {
    return {
      version: 2,
      analyses: [
        {
          id: 'pd-a1b2c3d4',
          label: 'scan',
          created: '2026-12-03T18:00:00.000Z',
          engine: { name: 'polyadic', version: '0.1.1' },
          source: {
            frame: 'big.parquet',
            rows: 20,
            columns: [
              { name: 'x', dtype: 'float64', kind: 'numeric' },
              { name: 'é', dtype: 'string', kind: 'categorical' }
            ],
            fingerprint: { encoding, sha256: 'a'.repeat(64) },
            ...(origin === undefined ? {} : { origin })
          },
          columns: ['x', 'é'],
          binning: [
            { name: 'x', method: 'width', spec: 'width:2', bins: 2, edges: [0, 0.5, 1] },
            { name: 'é', method: 'categorical', spec: 'categorical', bins: 2, categories: ['a', 'bc'] }
          ],
          missing: 'drop',
          estimator: 'plugin',
          units: 'bits',
          max_order: 2,
          summary: { synergy: [], redundancy: [], multiplet_count: 3, rows_used: 20 }
        }
      ]
    };
  }

  it('should validate an origin block of either kind, and a record without one', () => {
    const scan = { kind: 'scan', engine: { name: 'duckdb', version: 'v1.5.6' }, input_rows: 20, distinct_rows: 4 };
    expect(validateRecord(recordWith(scan, 'pdsc1')).ok).toBe(true);
    expect(validateRecord(recordWith({ kind: 'rows' })).ok).toBe(true);
    expect(validateRecord(recordWith()).ok).toBe(true);
  });

  it('should refuse a scan without its engine or counts, and a rows origin with an engine', () => {
    expect(validateRecord(recordWith({ kind: 'scan', input_rows: 20, distinct_rows: 4 }, 'pdsc1')).ok).toBe(false);
    expect(validateRecord(recordWith({ kind: 'scan', engine: { name: 'duckdb', version: 'v1' } }, 'pdsc1')).ok).toBe(false);
    expect(validateRecord(recordWith({ kind: 'rows', engine: { name: 'duckdb', version: 'v1' } })).ok).toBe(false);
    expect(validateRecord(recordWith({ kind: 'scan', engine: { name: 'polars', version: '1' }, input_rows: 1, distinct_rows: 1 })).ok).toBe(false);
    expect(validateRecord(recordWith(undefined, 'pdxx9')).ok).toBe(false);
  });
});
