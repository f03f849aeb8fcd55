/**
 * Decoding fetched columns: the Arrow IPC pieces the kernel's own encoder writes at test time
 * (test/python/make_arrow_fixtures.py, run with pyarrow) must decode to the values its
 * manifest states, whole or in pieces, without copying single-batch numeric columns.
 */
import * as path from 'path';

import {
  decodePieces,
  describeTimeUnit,
  FetchAssembler,
  fetchedFrame,
  IFetchProgress,
  pieceBytes,
  timeUnitName
} from '../../src/bridge/decode';
import { BridgeError } from '../../src/bridge/errors';
import type { IFetchChunk, IFetchDone } from '../../src/bridge/protocol';
import type { ICategoricalColumn, INumericColumn } from '../../src/engine/types';
import {
  bytesOf,
  commBuffer,
  encodeInKernel,
  fixturePieces,
  IFixtures,
  manifestValues,
  runPython,
  writeFixtures
} from './helpers';

let fixtures: IFixtures;

beforeAll(() => {
  fixtures = writeFixtures();
});

/** The fetch_chunk messages the kernel would send with the pieces of a fixture. */
function chunksOf(name: string, pieces: DataView[]): IFetchChunk[] {
  const done = fixtures.byName[name].fetch_done;
  let sent = 0;
  return pieces.map((piece, index) => {
    sent += piece.byteLength;
    return {
      type: 'fetch_chunk',
      request_id: done.request_id,
      name,
      batch_index: index,
      batch_count: pieces.length,
      bytes_sent: sent,
      bytes_total: done.bytes_total
    };
  });
}

/** Assemble a fixture piece by piece as the connector does. */
function assemble(name: string, onProgress?: (progress: IFetchProgress) => void) {
  const pieces = fixturePieces(fixtures, name);
  const assembler = new FetchAssembler(name);
  chunksOf(name, pieces).forEach((chunk, i) => {
    const progress = assembler.add(chunk, pieces[i]);
    onProgress?.(progress);
  });
  return assembler.finish(fixtures.byName[name].fetch_done);
}

/** Expect a call to throw a BridgeError of a reason whose message matches. */
function expectBridgeError(call: () => unknown, reason: string, message: RegExp): BridgeError {
  let caught: unknown;
  try {
    call();
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(BridgeError);
  const error = caught as BridgeError;
  expect(error.reason).toBe(reason);
  expect(error.message).toMatch(message);
  return error;
}

describe('FetchAssembler', () => {
  describe('#finish', () => {
    it.each(['dtypes', 'chunked', 'sampled', 'empty'])(
      'should decode the %s fixture to the values of the manifest',
      name => {
        const fixture = fixtures.byName[name];
        const frame = assemble(name);
        expect(frame.name).toBe(name);
        expect(frame.rows).toBe(fixture.fetch_done.rows);
        expect(frame.bytes).toBe(fixture.fetch_done.bytes_total);
        expect(frame.columns.map(column => column.name)).toEqual(Object.keys(fixture.expected));
        frame.columns.forEach((column, i) => {
          expect(manifestValues(column, frame.fields[i].kind === 'bool')).toEqual(fixture.expected[column.name]);
        });
      }
    );

    it('should decode the whole stream and the pieces alike', () => {
      const fixture = fixtures.byName.chunked;
      const whole = bytesOf(commBuffer(path.join(fixtures.folder, fixture.file)));
      const fromWhole = fetchedFrame(decodePieces([whole]), fixture.fetch_done);
      const fromPieces = assemble('chunked');
      expect(fixture.pieces.length).toBeGreaterThan(1);
      expect(fromPieces.columns.map(c => manifestValues(c))).toEqual(fromWhole.columns.map(c => manifestValues(c)));
    });

    it('should report progress after every piece, ending at the stream length', () => {
      const seen: IFetchProgress[] = [];
      assemble('chunked', progress => seen.push(progress));
      const total = fixtures.byName.chunked.fetch_done.bytes_total;
      expect(seen.map(p => p.piecesReceived)).toEqual(seen.map((_, i) => i + 1));
      expect(seen.every(p => p.pieceCount === seen.length && p.bytesTotal === total)).toBe(true);
      expect(seen[seen.length - 1].bytesReceived).toBe(total);
      for (let i = 1; i < seen.length; i++) {
        expect(seen[i].bytesReceived).toBeGreaterThan(seen[i - 1].bytesReceived);
      }
    });

    it('should keep a single-batch numeric column a view of the received bytes', () => {
      const pieces = fixturePieces(fixtures, 'dtypes');
      const assembler = new FetchAssembler('dtypes');
      chunksOf('dtypes', pieces).forEach((chunk, i) => assembler.add(chunk, pieces[i]));
      const frame = assembler.finish(fixtures.byName.dtypes.fetch_done);
      const float64 = frame.columns.find(column => column.name === 'float64') as INumericColumn;
      expect(float64.values).toBeInstanceOf(Float64Array);
      expect(float64.values.buffer).toBe(pieces[0].buffer);
      const int64 = frame.columns.find(column => column.name === 'int64') as INumericColumn;
      expect(int64.values).toBeInstanceOf(BigInt64Array);
      expect(int64.values.buffer).toBe(pieces[0].buffer);
    });

    it('should name each column by its source type and state the time units', () => {
      const frame = assemble('dtypes');
      const byName = Object.fromEntries(frame.columns.map((column, i) => [column.name, { column, field: frame.fields[i] }]));
      expect(byName.int64.column.dtype).toBe('Int64');
      expect(byName.category.column.dtype).toBe('category');
      expect(byName.boolean.column.dtype).toBe('boolean');
      expect(byName.datetime.field).toMatchObject({ kind: 'datetime', unit: 'ns', timezone: null });
      expect(byName.datetime_tz.field).toMatchObject({ kind: 'datetime', unit: 'us', timezone: 'Europe/Paris' });
      expect(byName.timedelta.field).toMatchObject({ kind: 'timedelta', unit: 'ms' });
      expect(byName.date.field).toMatchObject({ kind: 'datetime', unit: 'day', arrowType: 'date32[day]' });
      expect(byName.date.column.dtype).toBe('object');
      expect(describeTimeUnit(byName.date.field)).toBe('days since 1970-01-01');
      expect(byName.float64.field.unit).toBeNull();
      expect(describeTimeUnit(byName.datetime.field)).toBe('nanoseconds since 1970-01-01 00:00');
      expect(describeTimeUnit(byName.datetime_tz.field)).toBe(
        'microseconds since 1970-01-01 00:00 UTC (time zone Europe/Paris)'
      );
      expect(describeTimeUnit(byName.timedelta.field)).toBe('milliseconds');
      expect(describeTimeUnit(byName.float64.field)).toBeNull();
      expect(timeUnitName('s')).toBe('seconds');
      expect(timeUnitName('day')).toBe('days');
    });

    it("should order a string column's categories by code unit and keep a categorical's own order", () => {
      const frame = assemble('dtypes');
      const strings = frame.columns.find(column => column.name === 'string') as ICategoricalColumn;
      const category = frame.columns.find(column => column.name === 'category') as ICategoricalColumn;
      // Code-unit order of JavaScript's `<`, as the engine's CSV reader sorts (common practice).
      expect(strings.categories).toEqual(['alpha', 'béta', 'γ']);
      expect(category.categories).toEqual(['low', 'mid', 'high']);
    });

    it('should renumber the codes of a string column whose kernel dictionary is not sorted', () => {
      // The kernel's dictionary lists strings in order of first appearance: zeta, alpha, Beta.
      const { pieces, done } = encodeInKernel("pd.DataFrame({'s': ['zeta', 'alpha', None, 'Beta', 'zeta']})");
      const frame = fetchedFrame(decodePieces(pieces.map(bytesOf)), done);
      const column = frame.columns[0] as ICategoricalColumn;
      // Code-unit order: upper case before lower case (common practice for `<` on strings).
      expect(column.categories).toEqual(['Beta', 'alpha', 'zeta']);
      expect(Array.from(column.codes)).toEqual([2, 1, -1, 0, 2]);
      expect(manifestValues(column)).toEqual(['zeta', 'alpha', null, 'Beta', 'zeta']);
    });

    it("should report the sample numpy's default_rng drew, checked against numpy at test time", () => {
      const frame = assemble('sampled');
      expect(frame).toMatchObject({ rows: 100, originalRows: 1000, sampled: true, seed: 7 });
      // Reference: numpy's Generator.choice without replacement, sorted (the kernel keeps row order).
      const rows = JSON.parse(
        runPython(
          'import json, numpy as np\n' +
            'print(json.dumps(np.sort(np.random.default_rng(7).choice(1000, size=100, replace=False)).tolist()))'
        )
      ) as number[];
      const row = frame.columns.find(column => column.name === 'row') as INumericColumn;
      expect(Array.from(row.values as BigInt64Array, Number)).toEqual(rows);
    });

    it('should say a fetch that ended early lacks pieces', () => {
      const pieces = fixturePieces(fixtures, 'chunked');
      const assembler = new FetchAssembler('chunked');
      const chunks = chunksOf('chunked', pieces);
      assembler.add(chunks[0], pieces[0]);
      expectBridgeError(
        () => assembler.finish(fixtures.byName.chunked.fetch_done),
        'protocol',
        /ended after 1 of \d+ pieces/
      );
    });
  });

  describe('#add', () => {
    it('should refuse a piece out of order', () => {
      const pieces = fixturePieces(fixtures, 'chunked');
      const assembler = new FetchAssembler('chunked');
      const chunks = chunksOf('chunked', pieces);
      expectBridgeError(() => assembler.add(chunks[1], pieces[1]), 'protocol', /Piece 2 of 'chunked' arrived where piece 1/);
    });

    it('should notice bytes lost on the way', () => {
      const pieces = fixturePieces(fixtures, 'chunked');
      const assembler = new FetchAssembler('chunked');
      const chunk = { ...chunksOf('chunked', pieces)[0], bytes_sent: pieces[0].byteLength + 1 };
      expectBridgeError(() => assembler.add(chunk, pieces[0]), 'protocol', /Bytes of 'chunked' were lost/);
    });

    it('should refuse a piece without bytes', () => {
      const pieces = fixturePieces(fixtures, 'chunked');
      const assembler = new FetchAssembler('chunked');
      expectBridgeError(() => assembler.add(chunksOf('chunked', pieces)[0], undefined), 'protocol', /without its bytes/);
    });

    it('should refuse a change of the piece count during a fetch', () => {
      const pieces = fixturePieces(fixtures, 'chunked');
      const assembler = new FetchAssembler('chunked');
      const chunks = chunksOf('chunked', pieces);
      assembler.add(chunks[0], pieces[0]);
      expectBridgeError(
        () => assembler.add({ ...chunks[1], batch_count: chunks[1].batch_count + 1 }, pieces[1]),
        'protocol',
        /changed the number of pieces/
      );
    });
  });
});

describe('fetchedFrame', () => {
  const table = () => decodePieces(fixturePieces(fixtures, 'dtypes').map(bytesOf));
  const done = (): IFetchDone => JSON.parse(JSON.stringify(fixtures.byName.dtypes.fetch_done)) as IFetchDone;

  it('should refuse a row count other than announced', () => {
    expectBridgeError(() => fetchedFrame(table(), { ...done(), rows: 6 }), 'protocol', /announced 6 rows of 'dtypes' but sent 5/);
  });

  it('should refuse columns other than announced, naming both lists', () => {
    const message = done();
    message.columns = message.columns.slice(1);
    expectBridgeError(() => fetchedFrame(table(), message), 'protocol', /announced the columns 'int16'.* but sent 'int8', 'int16'/);
  });

  it('should refuse a datetime column without a unit, naming the field', () => {
    const message = done();
    const index = message.columns.findIndex(column => column.name === 'datetime');
    delete message.columns[index].unit;
    const error = expectBridgeError(() => fetchedFrame(table(), message), 'protocol', /no valid 'columns\[\d+\]\.unit'/);
    expect(error.detail.field).toBe(`columns[${index}].unit`);
  });

  it('should refuse a column whose kind does not match its Arrow type', () => {
    const message = done();
    message.columns[0] = { ...message.columns[0], kind: 'string' };
    expectBridgeError(() => fetchedFrame(table(), message), 'protocol', /'int8' of 'dtypes' was announced as string/);
  });
});

describe('decodePieces', () => {
  it('should refuse bytes that are not an IPC stream', () => {
    expectBridgeError(() => decodePieces([new Uint8Array([1, 2, 3, 4, 5, 6, 7, 8])]), 'protocol', /not a readable Arrow IPC stream/);
  });

  it('should refuse an empty list of pieces', () => {
    expectBridgeError(() => decodePieces([]), 'protocol', /no data/);
  });
});

describe('pieceBytes', () => {
  it('should view a DataView without copying', () => {
    const buffer = new ArrayBuffer(16);
    const bytes = pieceBytes(new DataView(buffer, 4, 8));
    expect(bytes.buffer).toBe(buffer);
    expect([bytes.byteOffset, bytes.byteLength]).toEqual([4, 8]);
  });

  it('should view an ArrayBuffer whole', () => {
    const buffer = new ArrayBuffer(12);
    expect(pieceBytes(buffer).byteLength).toBe(12);
  });
});
