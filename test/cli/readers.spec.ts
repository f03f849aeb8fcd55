/**
 * File readers (src/cli/readers.ts) and the in-process entry point (src/cli/main.ts) with
 * captured streams.
 */
import * as path from 'path';

import * as arrow from 'apache-arrow';

import { PolyadicError } from '../../src/engine/errors';
import type { ICategoricalColumn, INumericColumn } from '../../src/engine/types';
import { EXIT, HELP, main, reportError } from '../../src/cli/main';
import { dataFormatOf, readArrowBytes, readDataFile, readDelimitedText } from '../../src/cli/readers';
import { csv, fixtureFolder } from './helpers';

/** The PolyadicError a function throws (fails the test when it throws nothing else). */
async function caught(run: () => unknown): Promise<PolyadicError> {
  try {
    await run();
  } catch (error) {
    expect(error).toBeInstanceOf(PolyadicError);
    return error as PolyadicError;
  }
  throw new Error('expected a PolyadicError');
}

/** Streams that keep what is written. */
function capture() {
  const out = { stdout: '', stderr: '' };
  return {
    out,
    streams: {
      stdout: { write: (text: string) => (out.stdout += text) },
      stderr: { write: (text: string) => (out.stderr += text) }
    }
  };
}

describe('dataFormatOf', () => {
  it.each([
    ['a.csv', 'csv'],
    ['A.CSV', 'csv'],
    ['b.tsv', 'tsv'],
    ['b.tab', 'tsv'],
    ['c.arrow', 'arrow'],
    ['c.feather', 'arrow'],
    ['c.arrows', 'arrow'],
    ['c.ipc', 'arrow'],
    ['d.parquet', 'parquet']
  ])('should read %s as %s', (file, format) => {
    expect(dataFormatOf(file)).toBe(format);
  });

  it('should list the extensions it knows for one it does not', async () => {
    const error = await caught(() => dataFormatOf('data.json'));
    expect(error.kind).toBe('usage');
    expect(error.message).toMatch(/'\.json'.*\.csv, \.tsv, \.tab, \.arrow, \.feather, \.arrows, \.ipc, \.parquet/);
  });
});

describe('readDelimitedText', () => {
  it('should read quoted fields, CRLF line ends, a BOM and blank lines', () => {
    const text = '\ufeffname,"note, long",x\r\n"a ""b""","line1\nline2",1\r\n\r\nc,d,2.5\r\n';
    const source = readDelimitedText(text, 'csv', 't.csv');
    expect(source.names).toEqual(['name', 'note, long', 'x']);
    expect(source.rows).toBe(2);
    const [name, note, x] = source.columns;
    expect((name as ICategoricalColumn).categories).toEqual(['a "b"', 'c']);
    expect((note as ICategoricalColumn).categories).toEqual(['d', 'line1\nline2']);
    expect(Array.from((x as INumericColumn).values as Float64Array)).toEqual([1, 2.5]);
  });

  it('should read tab-separated text', () => {
    const source = readDelimitedText('a\tb\n1\tx y\n2\tz\n', 'tsv', 't.tsv');
    expect(source.names).toEqual(['a', 'b']);
    expect((source.columns[1] as ICategoricalColumn).categories).toEqual(['x y', 'z']);
  });

  it('should return the selected columns only, in the requested order', () => {
    const source = readDelimitedText(csv(['a', 'b', 'c'], [[1, 2, 3]]), 'csv', 't.csv', { columns: ['c', 'a'] });
    expect(source.columns.map(c => c.name)).toEqual(['c', 'a']);
    expect(source.names).toEqual(['a', 'b', 'c']);
  });

  it('should give the text line of each data row', () => {
    const source = readDelimitedText('a,b\n1,2\n\n"x\ny",3\n4,5\n', 'csv', 't.csv');
    expect([0, 1, 2].map(row => source.lineOfRow!(row))).toEqual([2, 4, 6]);
  });

  it('should name the line of an unterminated quote', async () => {
    const error = await caught(() => readDelimitedText('a,b\n1,2\n3,"open\n', 'csv', 'q.csv'));
    expect(error.message).toMatch(/q\.csv, line 3: quoted field unterminated/);
  });

  it('should refuse a header cell without a name', async () => {
    const error = await caught(() => readDelimitedText(',a\n1,2\n', 'csv', 'i.csv'));
    expect(error.message).toMatch(/column 1 of the header has no name/);
  });
});

describe('readArrowBytes', () => {
  it('should read file and stream formats alike', () => {
    const table = arrow.tableFromArrays({ a: new Int8Array([1, 2, 3]), b: ['x', 'y', 'x'] });
    for (const kind of ['file', 'stream'] as const) {
      const source = readArrowBytes(arrow.tableToIPC(table, kind), `t.${kind}`);
      expect(source.rows).toBe(3);
      expect(source.names).toEqual(['a', 'b']);
      expect(Array.from((source.columns[0] as INumericColumn).values as Int8Array)).toEqual([1, 2, 3]);
    }
  });

  it('should refuse a table without rows', async () => {
    const table = arrow.tableFromArrays({ a: new Float64Array(0) });
    const error = await caught(() => readArrowBytes(arrow.tableToIPC(table, 'file'), 'empty.arrow'));
    expect(error.message).toMatch(/empty\.arrow has columns but no rows/);
  });
});

describe('readDataFile', () => {
  it('should refuse a folder named like a data file', async () => {
    const folder = fixtureFolder();
    const fake = path.join(folder, 'looks.csv');
    require('fs').mkdirSync(fake);
    const error = await caught(() => readDataFile(fake));
    expect(error.message).toMatch(/looks\.csv' is a directory/);
  });

  it('should refuse text that is not UTF-8', async () => {
    const folder = fixtureFolder({ 'latin.csv': new Uint8Array([0x61, 0x0a, 0xe9, 0x0a]) });
    const error = await caught(() => readDataFile(path.join(folder, 'latin.csv')));
    expect(error.message).toMatch(/latin\.csv is not UTF-8 text/);
  });
});

describe('main', () => {
  it('should print help to stdout and return 0', async () => {
    const { out, streams } = capture();
    expect(await main(['--help'], streams)).toBe(EXIT.done);
    expect(out.stdout).toBe(HELP);
    expect(out.stderr).toBe('');
  });

  it('should print the version from package.json when running from source', async () => {
    const { out, streams } = capture();
    expect(await main(['-V'], streams)).toBe(EXIT.done);
    expect(out.stdout).toBe(`polyadic ${require('../../package.json').version}\n`);
  });

  it('should analyse a file and write JSON to stdout', async () => {
    const folder = fixtureFolder({ 'x.csv': csv(['a', 'b'], [[0, 0], [0, 1], [1, 0], [1, 1]]) });
    const { out, streams } = capture();
    expect(await main(['analyze', path.join(folder, 'x.csv'), '--bins', 'categorical'], streams)).toBe(EXIT.done);
    const result = JSON.parse(out.stdout);
    expect(result.multiplet_count).toBe(3);
    // independent fair bits: H(a) = 1 and I(a;b) = 0 (worked by hand)
    expect(result.multiplets[0].entropy).toBeCloseTo(1, 12);
    expect(result.multiplets[2].co_information).toBeCloseTo(0, 12);
  });

  it('should report a usage error in one line and return 2', async () => {
    const { out, streams } = capture();
    expect(await main(['analyze', 'x.csv', '--units', 'bans'], streams)).toBe(EXIT.usage);
    expect(out.stderr).toBe("polyadic: --units must be one of bits, nats; got 'bans'.\n");
  });

  it('should refuse an engine --via does not know, naming the flag and the one it takes', async () => {
    const { out, streams } = capture();
    expect(await main(['analyze', 'x.parquet', '--via', 'sqlite'], streams)).toBe(EXIT.usage);
    expect(out.stderr).toBe("polyadic: --via must be one of duckdb; got 'sqlite'.\n");
    expect(out.stdout).toBe('');
  });
});

describe('reportError', () => {
  it('should treat an unexpected error as a bug: exit 1, message and a request to report', () => {
    const { out, streams } = capture();
    expect(reportError(new TypeError('x is undefined'), streams)).toBe(EXIT.internal);
    expect(out.stderr).toMatch(/^polyadic: internal error: x is undefined\npolyadic: this is a bug.*report/);
  });

  it('should treat an internal PolyadicError as a bug', () => {
    const { streams } = capture();
    expect(reportError(new PolyadicError('internal', 'lattice mismatch'), streams)).toBe(EXIT.internal);
  });

  it('should treat a limit as bad usage: exit 2', () => {
    const { out, streams } = capture();
    expect(reportError(new PolyadicError('limit', 'Too many multiplets.'), streams)).toBe(EXIT.usage);
    expect(out.stderr).toBe('polyadic: Too many multiplets.\n');
  });
});

describe('readDataFile on Parquet of many row groups', () => {
  // DuckDB (the Node binding package.json pins) writes the file and reads it back: the values
  // and the missing rows the reader returns are DuckDB's own, row for row.
  it('should read float64 row groups with nulls, NaN and ±Inf as DuckDB reads them', async () => {
    const { DuckDBInstance } = await import('@duckdb/node-api');
    const os = await import('os');
    const { promises: fs } = await import('fs');
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), 'polyadic-parquet-'));
    const file = path.join(dir, 'groups.parquet');
    const instance = await DuckDBInstance.create(':memory:');
    const connection = await instance.connect();
    try {
      // x: nulls in some groups only; y: a whole row group of nulls; k: int64; s: text
      await connection.run(
        `COPY (SELECT i, ` +
          `CASE WHEN i % 97 = 0 THEN NULL WHEN i % 89 = 0 THEN 'NaN'::DOUBLE WHEN i = 5000 THEN 'inf'::DOUBLE ` +
          `ELSE sin(i) * 1e3 END AS x, ` +
          `CASE WHEN i BETWEEN 4096 AND 6143 THEN NULL ELSE i / 7.0 END::DOUBLE AS y, ` +
          `(i * 7919)::BIGINT AS k, CASE WHEN i % 3 = 0 THEN 'a' ELSE 'b' END AS s ` +
          `FROM range(10000) t(i) ORDER BY i) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 2048)`
      );
      const groups = await connection.runAndReadAll(`SELECT count(DISTINCT row_group_id) FROM parquet_metadata('${file}')`);
      expect(Number(groups.getRows()[0][0])).toBeGreaterThan(3);
      const expected = await connection.runAndReadAll(`SELECT x, y, k, s FROM '${file}' ORDER BY i`);
      const rows = expected.getRows();
      const source = await readDataFile(file, { columns: ['x', 'y', 'k', 's'] });
      expect(source.rows).toBe(10000);
      const [x, y, k, s] = source.columns as [INumericColumn, INumericColumn, INumericColumn, ICategoricalColumn];
      expect(x.values).toBeInstanceOf(Float64Array);
      for (const [index, column] of [[0, x], [1, y]] as const) {
        for (let i = 0; i < rows.length; i++) {
          const want = rows[i][index] as number | null;
          expect([i, column.missing?.[i] === 1]).toEqual([i, want === null]);
          expect([i, column.values[i]]).toEqual([i, want === null ? NaN : want]);
        }
      }
      expect(y.missing?.slice(4096, 6144).every(flag => flag === 1)).toBe(true);
      expect(Array.from(k.values as BigInt64Array, Number)).toEqual(rows.map(row => Number(row[2])));
      expect(s.codes.length).toBe(10000);
      expect(s.categories[s.codes[3]]).toBe('a');
      expect(s.categories[s.codes[4]]).toBe('b');
    } finally {
      connection.closeSync();
      instance.closeSync();
      await fs.rm(dir, { recursive: true, force: true });
    }
  });
});
