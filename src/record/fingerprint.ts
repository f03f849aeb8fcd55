/**
 * Fingerprint of the columns an analysis read: SHA-256 over a canonical encoding (`pdfp1`), the
 * same bytes in the browser, in Node and in the Python package (polyadic/fingerprint.py). The
 * digest is computed with WebCrypto (`globalThis.crypto.subtle`), which browsers and Node 20
 * both provide, so there is one code path. docs/fingerprint.md states the layout for people.
 *
 * Layout (all integers unsigned little-endian):
 *
 *   column encoding:
 *     u32 byte length of the UTF-8 name, the name's UTF-8 bytes
 *     u8  kind: 0x01 numeric, 0x02 categorical
 *     u32 row count
 *     per row, numeric:     u8 flag (0x00 present, 0x01 missing), then float64 (8 bytes):
 *                           the value read as float64 (integers and BigInts converted with
 *                           round-to-nearest), −0 written as +0; a missing value (a null, or
 *                           NaN, which the engine also counts as missing) as the canonical
 *                           quiet NaN 0x7FF8000000000000
 *     per row, categorical: u8 flag; if present, u32 byte length + UTF-8 bytes of the category
 *                           (the row's text, not its code, so category order does not matter)
 *   column digest = SHA-256(column encoding)
 *   fingerprint   = SHA-256("PDFP1" ‖ u32 column count ‖ column digest 1 ‖ … ‖ column digest n)
 *
 * Hashing each column on its own keeps the memory of one encoding to one column (a browser
 * must not hold the bytes of every column at once), and lets a change be traced to a column.
 * The dtype is not encoded: an int64 column and a float64 column of the same values agree, so
 * the same data read from Arrow, Parquet or CSV gives the same fingerprint where the values
 * survive the format (docs/fingerprint.md lists the cases that do not).
 *
 * A scanned source (binned and grouped by DuckDB or Spark) has no rows to encode: its
 * fingerprint is the encoding `pdsc1` over its weighted table, in scan-fingerprint.ts.
 */

import { PolyadicError } from '../engine/errors';
import { columnLength } from '../engine/table';
import type { ColumnView } from '../engine/types';
import { FINGERPRINT_ENCODING } from './types';

/** The magic bytes that start the fingerprint input (ASCII). */
export const FINGERPRINT_MAGIC = 'PDFP1';

/** Kind byte of a numeric column. */
export const KIND_NUMERIC = 0x01;

/** Kind byte of a categorical column. */
export const KIND_CATEGORICAL = 0x02;

/** The fingerprint of some columns, with each column's own digest. */
export interface IFingerprint {
  encoding: typeof FINGERPRINT_ENCODING;
  /** SHA-256 of the fingerprint input, 64 lower-case hexadecimal digits. */
  sha256: string;
  /** Each column's digest, in the order of the columns. */
  columns: { name: string; sha256: string }[];
}

/** The canonical encoding of one column (see the file comment). */
export function encodeColumn(column: ColumnView): Uint8Array {
  const rows = columnLength(column);
  if (rows > 0xffffffff) {
    throw new PolyadicError('limit', `Column '${column.name}' has ${rows} rows; a fingerprint covers at most 4294967295.`, {
      column: column.name
    });
  }
  const name = Private.utf8.encode(column.name);
  const head = 4 + name.length + 1 + 4;
  if (column.kind === 'numeric') {
    const bytes = new Uint8Array(head + rows * 9);
    const view = new DataView(bytes.buffer);
    let at = Private.writeHead(view, bytes, name, KIND_NUMERIC, rows);
    const { values, missing } = column;
    for (let i = 0; i < rows; i++) {
      const value = Number(values[i]);
      if ((missing !== null && missing[i]) || Number.isNaN(value)) {
        view.setUint8(at, 1);
        // canonical quiet NaN: one bit pattern whatever NaN or null the source held
        view.setUint32(at + 1, 0x00000000, true);
        view.setUint32(at + 5, 0x7ff80000, true);
      } else {
        view.setUint8(at, 0);
        // `+ 0` turns −0 into +0: the engine bins them alike, so they must hash alike
        view.setFloat64(at + 1, value + 0, true);
      }
      at += 9;
    }
    return bytes;
  }
  // categorical: encode each category once, then copy per row
  const encoded = column.categories.map(category => Private.utf8.encode(category));
  const { codes, missing } = column;
  let size = head;
  for (let i = 0; i < rows; i++) {
    const code = codes[i];
    size += (missing !== null && missing[i]) || code < 0 ? 1 : 5 + Private.category(encoded, code, column, i).length;
  }
  const bytes = new Uint8Array(size);
  const view = new DataView(bytes.buffer);
  let at = Private.writeHead(view, bytes, name, KIND_CATEGORICAL, rows);
  for (let i = 0; i < rows; i++) {
    const code = codes[i];
    if ((missing !== null && missing[i]) || code < 0) {
      bytes[at++] = 1;
      continue;
    }
    const text = encoded[code];
    bytes[at] = 0;
    view.setUint32(at + 1, text.length, true);
    bytes.set(text, at + 5);
    at += 5 + text.length;
  }
  return bytes;
}

/** The fingerprint input from column digests: magic, column count, the digests. */
export function fingerprintInput(columnDigests: readonly Uint8Array[]): Uint8Array {
  const magic = Private.utf8.encode(FINGERPRINT_MAGIC);
  const bytes = new Uint8Array(magic.length + 4 + 32 * columnDigests.length);
  bytes.set(magic, 0);
  new DataView(bytes.buffer).setUint32(magic.length, columnDigests.length, true);
  columnDigests.forEach((digest, i) => {
    if (digest.length !== 32) {
      throw new PolyadicError('internal', `A SHA-256 digest has 32 bytes, not ${digest.length}.`);
    }
    bytes.set(digest, magic.length + 4 + 32 * i);
  });
  return bytes;
}

/** SHA-256 of bytes with WebCrypto. */
export async function sha256(bytes: Uint8Array): Promise<Uint8Array> {
  const subtle = globalThis.crypto?.subtle;
  if (!subtle) {
    throw new PolyadicError(
      'internal',
      'WebCrypto (crypto.subtle) is not available here; a fingerprint needs a secure context (https or localhost).'
    );
  }
  return new Uint8Array(await subtle.digest('SHA-256', bytes as Uint8Array<ArrayBuffer>));
}

/** Bytes as lower-case hexadecimal. */
export function toHex(bytes: Uint8Array): string {
  let out = '';
  for (let i = 0; i < bytes.length; i++) {
    out += bytes[i].toString(16).padStart(2, '0');
  }
  return out;
}

/** The fingerprint of columns, in their order. One column's encoding is in memory at a time. */
export async function fingerprintColumns(columns: readonly ColumnView[]): Promise<IFingerprint> {
  const digests: Uint8Array[] = [];
  for (const column of columns) {
    digests.push(await sha256(encodeColumn(column)));
  }
  return {
    encoding: FINGERPRINT_ENCODING,
    sha256: toHex(await sha256(fingerprintInput(digests))),
    columns: columns.map((column, i) => ({ name: column.name, sha256: toHex(digests[i]) }))
  };
}

/** Module-private helpers. */
namespace Private {
  /** UTF-8 encoder; lone surrogates become U+FFFD, as the Encoding Standard specifies. */
  export const utf8 = new TextEncoder();

  /** Write name, kind and row count; returns the offset after them. */
  export function writeHead(view: DataView, bytes: Uint8Array, name: Uint8Array, kind: number, rows: number): number {
    view.setUint32(0, name.length, true);
    bytes.set(name, 4);
    let at = 4 + name.length;
    view.setUint8(at, kind);
    view.setUint32(at + 1, rows, true);
    at += 5;
    return at;
  }

  /** The encoded category of a code, refusing a code outside the category list. */
  export function category(encoded: Uint8Array[], code: number, column: ColumnView, row: number): Uint8Array {
    const text = encoded[code];
    if (text === undefined) {
      throw new PolyadicError(
        'internal',
        `Column '${column.name}' has code ${code} at row ${row}, outside its ${encoded.length} categories.`,
        { column: column.name, row }
      );
    }
    return text;
  }
}
