/**
 * Fingerprint of a scanned source (`pdsc1`): another engine (DuckDB, Spark) binned and grouped
 * the rows, so there are no rows to hash, only the weighted table the walk took. The encoding
 * covers that table sorted, with the input row count and each column's name and binning, beside
 * the row encoding `pdfp1` of fingerprint.ts. The same table from the in-memory engine (its
 * prepared codes grouped into distinct rows) gives the same fingerprint, so a scanned record can
 * be checked either way. docs/fingerprint.md states the layout for people.
 *
 * Layout (integers unsigned little-endian unless said; u64 as two u32, low first):
 *
 *   head:
 *     "PDSC1" (5 ASCII bytes)
 *     u64 input rows (before the missing-value policy)
 *     u32 column count k
 *     per column: u32 byte length + UTF-8 name, u32 byte length + UTF-8 binning spec,
 *                 u32 bins, i32 missing code (−1 when none), then u8 0x01 and (bins + 1)
 *                 float64 edges, or u8 0x02 and bins × (u32 byte length + UTF-8 category)
 *     u64 distinct rows M, u32 block count
 *   rows: the M distinct rows in ascending order of their codes (column 1 first, as signed
 *     integers), each k × i32 codes then u64 weight; cut into blocks of 65,536 rows
 *   fingerprint = SHA-256(head ‖ SHA-256(block 1) ‖ … ‖ SHA-256(block n))
 *
 * Blocks keep the bytes in memory to one block at a time (WebCrypto has no running digest);
 * equal codes never appear twice (rows with the same codes are merged, their weights added).
 */

import { PolyadicError } from '../engine/errors';
import type { IColumnBinning } from '../engine/types';
import { sha256, toHex } from './fingerprint';
import { SCAN_FINGERPRINT_ENCODING } from './types';

/** The magic bytes that start the head (ASCII). */
export const SCAN_FINGERPRINT_MAGIC = 'PDSC1';

/** Rows per block of the row section. */
export const SCAN_BLOCK_ROWS = 65_536;

/** A weighted table: one code array per column over the distinct rows, and each row's weight. */
export interface IWeightedTable {
  codes: readonly Int32Array[];
  weights: Int32Array;
}

/** The fingerprint of a scanned source. */
export interface IScanFingerprint {
  encoding: typeof SCAN_FINGERPRINT_ENCODING;
  /** 64 lower-case hexadecimal digits. */
  sha256: string;
  /** Distinct rows after merging equal codes. */
  distinctRows: number;
}

/**
 * The table with equal rows merged and sorted by codes (see the file comment): what the
 * fingerprint encodes, row after row.
 */
export function sortedWeightedTable(table: IWeightedTable): IWeightedTable {
  const k = table.codes.length;
  const n = table.weights.length;
  for (const column of table.codes) {
    if (column.length !== n) {
      throw new PolyadicError('internal', `A weighted table has ${column.length} codes in a column and ${n} weights.`);
    }
  }
  const order = Array.from({ length: n }, (_x, i) => i);
  const compare = (a: number, b: number): number => {
    for (let c = 0; c < k; c++) {
      const d = table.codes[c][a] - table.codes[c][b];
      if (d !== 0) {
        return d;
      }
    }
    return 0;
  };
  order.sort(compare);
  const kept: number[] = [];
  const weights: number[] = [];
  for (const i of order) {
    const last = kept.length - 1;
    if (last >= 0 && compare(kept[last], i) === 0) {
      weights[last] += table.weights[i];
    } else {
      kept.push(i);
      weights.push(table.weights[i]);
    }
  }
  return { codes: table.codes.map(column => Int32Array.from(kept, i => column[i])), weights: Int32Array.from(weights) };
}

/** The head of the encoding (see the file comment). */
export function scanFingerprintHead(inputRows: number, binnings: readonly IColumnBinning[], distinctRows: number): Uint8Array {
  const parts: Uint8Array[] = [Private.utf8.encode(SCAN_FINGERPRINT_MAGIC), Private.u64(inputRows), Private.u32(binnings.length)];
  for (const column of binnings) {
    parts.push(Private.text(column.name), Private.text(column.binning.spec), Private.u32(column.bins));
    parts.push(Private.i32(column.binning.missing_code ?? -1));
    if (column.binning.edges) {
      const edges = new Uint8Array(1 + 8 * column.binning.edges.length);
      edges[0] = 0x01;
      const view = new DataView(edges.buffer);
      column.binning.edges.forEach((edge, i) => view.setFloat64(1 + 8 * i, edge, true));
      parts.push(edges);
    } else {
      parts.push(Uint8Array.of(0x02), ...(column.binning.categories ?? []).map(Private.text));
    }
  }
  parts.push(Private.u64(distinctRows), Private.u32(Math.ceil(distinctRows / SCAN_BLOCK_ROWS)));
  return Private.concat(parts);
}

/** Block `b` of the row section of a sorted table (see the file comment). */
export function scanFingerprintBlock(sorted: IWeightedTable, b: number): Uint8Array {
  const k = sorted.codes.length;
  const first = b * SCAN_BLOCK_ROWS;
  const last = Math.min(sorted.weights.length, first + SCAN_BLOCK_ROWS);
  const width = 4 * k + 8;
  const bytes = new Uint8Array((last - first) * width);
  const view = new DataView(bytes.buffer);
  for (let i = first; i < last; i++) {
    let at = (i - first) * width;
    for (let c = 0; c < k; c++) {
      view.setInt32(at, sorted.codes[c][i], true);
      at += 4;
    }
    view.setUint32(at, sorted.weights[i] >>> 0, true);
    view.setUint32(at + 4, 0, true);
  }
  return bytes;
}

/**
 * The `pdsc1` fingerprint of a scanned source: its weighted table (the prepared codes the walk
 * took, one row per distinct binned row or per input row, with weights), the input row count and
 * the columns' binnings.
 */
export async function fingerprintScan(
  table: IWeightedTable,
  inputRows: number,
  binnings: readonly IColumnBinning[]
): Promise<IScanFingerprint> {
  if (table.codes.length !== binnings.length) {
    throw new PolyadicError('internal', `A weighted table of ${table.codes.length} columns with ${binnings.length} binnings.`);
  }
  const sorted = sortedWeightedTable(table);
  const distinct = sorted.weights.length;
  const head = scanFingerprintHead(inputRows, binnings, distinct);
  const blocks = Math.ceil(distinct / SCAN_BLOCK_ROWS);
  const input = new Uint8Array(head.length + 32 * blocks);
  input.set(head, 0);
  for (let b = 0; b < blocks; b++) {
    input.set(await sha256(scanFingerprintBlock(sorted, b)), head.length + 32 * b);
  }
  return { encoding: SCAN_FINGERPRINT_ENCODING, sha256: toHex(await sha256(input)), distinctRows: distinct };
}

/** Module-private helpers. */
namespace Private {
  export const utf8 = new TextEncoder();

  export function u32(value: number): Uint8Array {
    const bytes = new Uint8Array(4);
    new DataView(bytes.buffer).setUint32(0, value, true);
    return bytes;
  }

  export function i32(value: number): Uint8Array {
    const bytes = new Uint8Array(4);
    new DataView(bytes.buffer).setInt32(0, value, true);
    return bytes;
  }

  /** A whole number below 2^53 as u64. */
  export function u64(value: number): Uint8Array {
    if (!(Number.isSafeInteger(value) && value >= 0)) {
      throw new PolyadicError('internal', `A row count ${value} is not a whole number below 2^53.`);
    }
    const bytes = new Uint8Array(8);
    const view = new DataView(bytes.buffer);
    view.setUint32(0, value % 2 ** 32, true);
    view.setUint32(4, Math.floor(value / 2 ** 32), true);
    return bytes;
  }

  /** u32 byte length and the UTF-8 bytes. */
  export function text(value: string): Uint8Array {
    const encoded = utf8.encode(value);
    return concat([u32(encoded.length), encoded]);
  }

  export function concat(parts: Uint8Array[]): Uint8Array {
    const out = new Uint8Array(parts.reduce((sum, part) => sum + part.length, 0));
    let at = 0;
    for (const part of parts) {
      out.set(part, at);
      at += part.length;
    }
    return out;
  }
}
