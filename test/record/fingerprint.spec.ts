/**
 * The pdfp1 fingerprint: the encoding is checked byte for byte against a layout written out by
 * hand from docs/fingerprint.md, and every SHA-256 against node:crypto's createHash (OpenSSL),
 * an implementation independent of the WebCrypto call the code makes.
 */
import { createHash } from 'crypto';

import * as arrow from 'apache-arrow';

import { readArrowBytes, readDelimitedText } from '../../src/cli/readers';
import type { ColumnView } from '../../src/engine/types';
import {
  encodeColumn,
  fingerprintColumns,
  fingerprintInput,
  sha256,
  toHex
} from '../../src/record/fingerprint';

/** SHA-256 by OpenSSL through node:crypto. */
function opensslSha256(bytes: Uint8Array): Buffer {
  return createHash('sha256').update(bytes).digest();
}

function numeric(name: string, values: ArrayLike<number>, missing: number[] | null = null): ColumnView {
  return { kind: 'numeric', name, dtype: 'float64', values: Float64Array.from(values), missing: missing && Uint8Array.from(missing) };
}

function categorical(name: string, categories: string[], codes: number[], missing: number[] | null = null): ColumnView {
  return { kind: 'categorical', name, dtype: 'string', categories, codes: Int32Array.from(codes), missing: missing && Uint8Array.from(missing) };
}

async function digestOf(column: ColumnView): Promise<string> {
  return (await fingerprintColumns([column])).columns[0].sha256;
}

// The fixture of docs/fingerprint.md: a numeric column "x" = [1.5, −0, NaN, null] and a
// categorical column "é" = ["aé", "b", null].
const X = numeric('x', [1.5, -0, NaN, 7], [0, 0, 0, 1]);
const E = categorical('é', ['b', 'aé'], [1, 0, -1]);

// prettier-ignore
const X_BYTES = [
  0x01, 0x00, 0x00, 0x00, 0x78,                         // name length 1, "x"
  0x01,                                                 // numeric
  0x04, 0x00, 0x00, 0x00,                               // 4 rows
  0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xf8, 0x3f, // 1.5 = 0x3FF8000000000000
  0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // −0 written as +0
  0x01, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xf8, 0x7f, // NaN: missing, canonical NaN
  0x01, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xf8, 0x7f  // null: missing, canonical NaN
];

// prettier-ignore
const E_BYTES = [
  0x02, 0x00, 0x00, 0x00, 0xc3, 0xa9,                   // name length 2, "é" in UTF-8
  0x02,                                                 // categorical
  0x03, 0x00, 0x00, 0x00,                               // 3 rows
  0x00, 0x03, 0x00, 0x00, 0x00, 0x61, 0xc3, 0xa9,       // "aé": 3 bytes
  0x00, 0x01, 0x00, 0x00, 0x00, 0x62,                   // "b"
  0x01                                                  // missing
];

describe('fingerprint', () => {
  describe('#encodeColumn', () => {
    it('should write the numeric layout of docs/fingerprint.md', () => {
      expect(Array.from(encodeColumn(X))).toEqual(X_BYTES);
    });

    it('should write the categorical layout of docs/fingerprint.md', () => {
      expect(Array.from(encodeColumn(E))).toEqual(E_BYTES);
    });

    it('should refuse a code outside the categories', () => {
      expect(() => encodeColumn(categorical('zone', ['a'], [0, 3]))).toThrow(
        "Column 'zone' has code 3 at row 1, outside its 1 categories."
      );
    });
  });

  describe('#fingerprintColumns', () => {
    it('should hash as OpenSSL does: each column, then magic, count and the column digests', async () => {
      const dx = opensslSha256(Uint8Array.from(X_BYTES));
      const de = opensslSha256(Uint8Array.from(E_BYTES));
      const input = Buffer.concat([Buffer.from('PDFP1', 'ascii'), Buffer.from([0x02, 0x00, 0x00, 0x00]), dx, de]);
      const fingerprint = await fingerprintColumns([X, E]);
      expect(fingerprint).toEqual({
        encoding: 'pdfp1',
        sha256: opensslSha256(input).toString('hex'),
        columns: [
          { name: 'x', sha256: dx.toString('hex') },
          { name: 'é', sha256: de.toString('hex') }
        ]
      });
      expect(Array.from(fingerprintInput([dx, de]))).toEqual(Array.from(input));
    });

    it('should hash "abc" as the SHA-256 standard\'s worked example and OpenSSL do', async () => {
      // FIPS 180-2, Appendix B.1 (one-block message "abc"); the digest is quoted from memory and
      // checked against OpenSSL on the next line
      const abc = new TextEncoder().encode('abc');
      expect(toHex(await sha256(abc))).toBe(opensslSha256(abc).toString('hex'));
      expect(toHex(await sha256(abc))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    });

    it('should depend on the order of the columns and of the rows', async () => {
      const a = numeric('a', [1, 2, 3]);
      const b = numeric('b', [1, 2, 3]);
      expect((await fingerprintColumns([a, b])).sha256).not.toBe((await fingerprintColumns([b, a])).sha256);
      expect(await digestOf(numeric('a', [3, 2, 1]))).not.toBe(await digestOf(a));
    });

    it('should tell a changed value, name or kind apart', async () => {
      const base = await digestOf(numeric('t', [20.5, 21]));
      expect(await digestOf(numeric('t', [20.5, 21.000000000000004]))).not.toBe(base);
      expect(await digestOf(numeric('T', [20.5, 21]))).not.toBe(base);
      expect(await digestOf(categorical('t', ['20.5', '21'], [0, 1]))).not.toBe(base);
    });
  });

  describe('canonical values', () => {
    it('should read integers, floats and BigInts of equal value alike', async () => {
      const asFloat = await digestOf(numeric('n', [1, -2, 3e9]));
      const asInt: ColumnView = { kind: 'numeric', name: 'n', dtype: 'int64', values: BigInt64Array.from([1n, -2n, 3000000000n]), missing: null };
      const asInt32: ColumnView = { kind: 'numeric', name: 'n', dtype: 'uint32', values: Uint32Array.from([1, 0, 3e9]), missing: Uint8Array.from([0, 1, 0]) };
      expect(await digestOf(asInt)).toBe(asFloat);
      // a different value in row 1 (missing) must differ
      expect(await digestOf(asInt32)).not.toBe(asFloat);
    });

    it('should convert a BigInt beyond 2^53 with round-to-nearest-even, as float64 conversion does', async () => {
      // ECMAScript Number(bigint) rounds to nearest, ties to even (spec, from memory): 2^53 + 1
      // lies halfway between 2^53 and 2^53 + 2 and goes to the even 2^53
      const big: ColumnView = { kind: 'numeric', name: 'ns', dtype: 'int64', values: BigInt64Array.from([2n ** 53n + 1n]), missing: null };
      expect(await digestOf(big)).toBe(await digestOf(numeric('ns', [2 ** 53])));
    });

    it('should treat NaN and null alike, and −0 as +0', async () => {
      expect(await digestOf(numeric('h', [NaN, 1]))).toBe(await digestOf(numeric('h', [0, 1], [1, 0])));
      expect(await digestOf(numeric('h', [-0, 1]))).toBe(await digestOf(numeric('h', [0, 1])));
      expect(await digestOf(numeric('h', [Infinity]))).not.toBe(await digestOf(numeric('h', [NaN])));
    });

    it('should hash the text of each row, whatever the order of the categories', async () => {
      const one = categorical('zone', ['east', 'west'], [0, 1, 1]);
      const other = categorical('zone', ['west', 'east', 'unused'], [1, 0, 0]);
      expect(await digestOf(one)).toBe(await digestOf(other));
    });

    it('should give the same fingerprint for a CSV file and an Arrow file of the same table', async () => {
      const text = 'valve_command,flow_l_min,zone\ntrue,12.25,east\nfalse,0,\n,-0.0,west\n';
      const fromCsv = readDelimitedText(text, 'csv', 'log.csv').columns;
      const table = new arrow.Table({
        valve_command: arrow.vectorFromArray([true, false, null], new arrow.Bool()),
        flow_l_min: arrow.vectorFromArray([12.25, 0, -0], new arrow.Float64()),
        zone: arrow.vectorFromArray(['east', null, 'west'], new arrow.Dictionary(new arrow.Utf8(), new arrow.Int32()))
      });
      const fromArrow = readArrowBytes(arrow.tableToIPC(table, 'stream'), 'log.arrows').columns;
      expect(fromArrow.map(c => c.kind)).toEqual(fromCsv.map(c => c.kind));
      expect(await fingerprintColumns(fromArrow)).toEqual(await fingerprintColumns(fromCsv));
    });
  });
});
