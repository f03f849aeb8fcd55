/**
 * CSV and TSV through `--via duckdb` against the in-memory reader on the same text, with real
 * DuckDB: the whole JSON must be the same (names, dtypes, binnings, counts, warnings, values), and
 * what DuckDB reads differently is refused with the reason.
 */
import { promises as fs } from 'fs';
import * as os from 'os';
import * as path from 'path';

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyzeViaDuckDB, duckdbColumnNames } from '../../src/cli/duckdb';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalyzeOptions } from '../../src/engine/types';

// Real DuckDB on a shared, loaded machine: a query can take seconds.
jest.setTimeout(120_000);

let dir = '';

/**
 * Seeded text: a float written in several notations (exponent, leading point, sign, spaces
 * around it, quoted), an integer column, text with commas, doubled quotes and line breaks inside
 * quotes, empty and blank fields, booleans in mixed case, nan cells.
 */
function fixtureText(rows: number, delimiter: string): string {
  const rng = xoroshiro128plus(1414);
  const draw = (n: number): number => unsafeUniformIntDistribution(0, n - 1, rng);
  const lines = [['x', 'n', 'label', 'flag', 'y', 'with space'].join(delimiter)];
  for (let i = 0; i < rows; i++) {
    const v = (draw(2_000_001) - 1_000_000) / 3_000;
    const forms = [String(v), v.toExponential(), ` ${v} `, `"${v}"`, v > 0 ? `+${v}` : String(v), String(v).replace(/^0\./, '.')];
    const x = draw(50) === 0 ? '' : draw(80) === 0 ? 'nan' : forms[draw(forms.length)];
    const n = String(draw(7) - 3);
    const labels = ['plain', '"a, b"', '"say ""hi"""', '"two\nlines"', 'ünï', '  padded  ', '""', ''];
    const label = labels[draw(labels.length)];
    const flag = draw(20) === 0 ? '' : ['true', 'False', 'TRUE', 'false'][draw(4)];
    const y = draw(30) === 0 ? '   ' : String(Math.sqrt(draw(10_000)) * (draw(2) ? 1 : -1));
    const spaced = String(draw(3));
    lines.push([x, n, label, flag, y, spaced].join(delimiter));
    if (draw(200) === 0) {
      lines.push('');
    }
  }
  return lines.join('\r\n') + '\r\n';
}

async function write(name: string, text: string): Promise<string> {
  const file = path.join(dir, name);
  await fs.writeFile(file, text);
  return file;
}

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'polyadic-duckdb-csv-'));
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

/** The JSON of the in-memory CLI and of --via duckdb on one file, and the names DuckDB's path reads. */
async function both(file: string, options: IAnalyzeOptions): Promise<[string, string]> {
  const source = await readDataFile(file, { columns: options.columns });
  const inMemory = analyze(source.columns, options);
  const names = options.columns ?? (await duckdbColumnNames(file));
  expect(names).toEqual(options.columns ?? source.names);
  const viaDuckDB = (await analyzeViaDuckDB(file, { ...options, columns: names })).result;
  expect(inMemory.multiplets.length).toBeGreaterThan(0);
  return [JSON.stringify(viaDuckDB), JSON.stringify(inMemory)];
}

/** The message the in-memory path gives for `run`. */
function messageOf(run: () => unknown): string {
  try {
    run();
  } catch (error) {
    return (error as Error).message;
  }
  throw new Error('expected the in-memory run to fail');
}

describe('analyzeViaDuckDB on CSV and TSV', () => {
  let csv = '';
  let tsv = '';
  beforeAll(async () => {
    csv = await write('fixture.csv', fixtureText(1500, ','));
    tsv = await write('fixture.tsv', fixtureText(700, '\t'));
  });

  it('should read the same columns: float, integer-valued float, text, boolean', async () => {
    const source = await readDataFile(csv);
    // the in-memory reader's types, which the DuckDB path must reproduce
    expect(source.columns.map(column => [column.name, column.dtype])).toEqual([
      ['x', 'float64'],
      ['n', 'float64'],
      ['label', 'string'],
      ['flag', 'bool'],
      ['y', 'float64'],
      ['with space', 'float64']
    ]);
    const [duck, memory] = await both(csv, { maxOrder: 3 });
    expect(duck).toBe(memory);
  });

  for (const bins of ['quantile:4', 'scott', 'doane', 'fd', 'width:5']) {
    it(`should give the same JSON under ${bins}`, async () => {
      const [duck, memory] = await both(csv, { bins, columns: ['x', 'y', 'n', 'flag'] });
      expect(duck).toBe(memory);
    });
  }

  for (const missing of ['drop', 'category'] as const) {
    it(`should give the same JSON under the missing-value policy ${missing}`, async () => {
      const [duck, memory] = await both(csv, { missing, bins: 'sturges', estimator: 'miller-madow' });
      expect(duck).toBe(memory);
    });
  }

  it('should name the same row under the policy error', async () => {
    const source = await readDataFile(csv);
    const message = messageOf(() => analyze(source.columns, { missing: 'error' }));
    expect(message).toMatch(/row \d+/);
    await expect(analyzeViaDuckDB(csv, { missing: 'error', columns: source.names })).rejects.toThrow(message);
  });

  it('should read TSV with quoted tabs as the in-memory reader does', async () => {
    const [duck, memory] = await both(tsv, { bins: 'quantile:3' });
    expect(duck).toBe(memory);
  });

  it('should read numbers JavaScript reads exactly (long mantissas, subnormals, overflow to zero)', async () => {
    const file = await write(
      'numbers.csv',
      'p,q\n0.1000000000000000055511151231257827,1\n2.4703282292062328e-324,0\n1e-400,1\n-0,0\n' +
        '9007199254740993,1\n.5,0\n5.,1\n1E3,0\n'
    );
    const [duck, memory] = await both(file, { bins: 'categorical' });
    expect(duck).toBe(memory);
  });

  it('should refuse an infinite value as the in-memory engine does', async () => {
    const file = await write('inf.csv', 'p,q\n1,1\n-Infinity,0\n2,1\n');
    const source = await readDataFile(file);
    const message = messageOf(() => analyze(source.columns, { bins: 'width:3' }));
    expect(message).toMatch(/row 1/);
    await expect(analyzeViaDuckDB(file, { columns: ['p', 'q'], bins: 'width:3' })).rejects.toThrow(message);
  });

  it('should refuse a field with spaces before its opening quote, naming the line', async () => {
    const file = await write('space-quote.csv', 'p,q\n1,a\n2,b\n3, "c"\n');
    await expect(analyzeViaDuckDB(file, { columns: ['p', 'q'] })).rejects.toThrow(/space-quote\.csv, line 4: a field starts with spaces/);
  });

  it('should refuse one column with empty lines, which DuckDB and the in-memory reader read differently', async () => {
    const file = await write('one.csv', 'p\n1\n\n2\n');
    await expect(analyzeViaDuckDB(file, { columns: ['p'] })).rejects.toThrow(/one column and empty lines/);
  });

  it('should refuse a row with another number of fields and an open quote, with DuckDB’s line', async () => {
    const fields = await write('fields.csv', 'p,q\n1,2\n3,4,5\n');
    await expect(analyzeViaDuckDB(fields, { columns: ['p', 'q'] })).rejects.toThrow(/DuckDB cannot read 'fields\.csv' as CSV: .*Line: 3/);
    const quote = await write('quote.csv', 'p,q\n1,"2\n3,4\n');
    await expect(analyzeViaDuckDB(quote, { columns: ['p', 'q'] })).rejects.toThrow(/DuckDB cannot read 'quote\.csv' as CSV: .*quote/);
  });

  it('should check the header as the in-memory reader does', async () => {
    const twice = await write('twice.csv', 'p,p\n1,2\n');
    await expect(duckdbColumnNames(twice)).rejects.toThrow(/Column name 'p' appears twice/);
    const unnamed = await write('unnamed.csv', 'p,,q\n1,2,3\n');
    await expect(duckdbColumnNames(unnamed)).rejects.toThrow(/line 1: column 2 of the header has no name/);
    const header = await write('header.csv', 'p,q\n');
    await expect(analyzeViaDuckDB(header, { columns: ['p', 'q'] })).rejects.toThrow(/header row but no data rows/);
    await expect(duckdbColumnNames(path.join(dir, 'data.json'))).rejects.toThrow(/reads Parquet \(\.parquet\), CSV/);
  });
});
