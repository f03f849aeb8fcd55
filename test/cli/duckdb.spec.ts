/**
 * The DuckDB path against the in-memory engine on the same Parquet file, with real DuckDB (the
 * Node binding package.json pins): DuckDB writes the file from seeded data, then
 * `analyze --via duckdb` must give the same binning (edges, categories, bin counts), the same
 * row counts and warnings, and the same multiplets as reading the file into memory.
 */
import { promises as fs } from 'fs';
import * as os from 'os';
import * as path from 'path';

import { DuckDBConnection, DuckDBInstance } from '@duckdb/node-api';
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyzeViaDuckDB, IDuckDBLimits } from '../../src/cli/duckdb';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalysisResult, IAnalyzeOptions } from '../../src/engine/types';

// Real DuckDB on a shared, loaded machine: a query can take seconds.
jest.setTimeout(120_000);

let dir = '';
let file = '';

/** Seeded columns: a float with NaN and nulls, small integers, a skewed float, text with nulls, booleans, int32. */
async function writeFixture(target: string, rows: number): Promise<void> {
  const rng = xoroshiro128plus(14);
  const draw = (n: number): number => unsafeUniformIntDistribution(0, n - 1, rng);
  const lines = ['a,b,c,d,e,f'];
  for (let i = 0; i < rows; i++) {
    const u = (draw(1_000_000) + 0.5) / 1_000_000;
    const a = draw(40) === 0 ? '' : draw(60) === 0 ? 'NaN' : String(Math.tan(Math.PI * (u - 0.5)) / 7 + draw(3));
    const b = String(draw(5));
    const c = String(-Math.log((draw(999_999) + 1) / 1_000_000) * 3.7);
    const d = draw(30) === 0 ? '' : ['ä', 'z', 'B', 'x'][draw(4)];
    const e = draw(5) < 2 ? 'true' : 'false';
    const f = String(draw(2000) - 1000);
    lines.push([a, b, c, d, e, f].join(','));
  }
  const csv = path.join(dir, 'fixture.csv');
  await fs.writeFile(csv, lines.join('\n') + '\n');
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  await connection.run(
    `COPY (SELECT * FROM read_csv('${csv}', header = true, nullstr = '', columns = {'a': 'DOUBLE', 'b': 'BIGINT', ` +
      `'c': 'DOUBLE', 'd': 'VARCHAR', 'e': 'BOOLEAN', 'f': 'INTEGER'})) TO '${target}' (FORMAT parquet)`
  );
  connection.closeSync();
  instance.closeSync();
}

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'polyadic-duckdb-'));
  file = path.join(dir, 'fixture.parquet');
  await writeFixture(file, 2500);
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

async function both(options: IAnalyzeOptions, limits: IDuckDBLimits = {}): Promise<[IAnalysisResult, IAnalysisResult]> {
  const source = await readDataFile(file, { columns: options.columns });
  const inMemory = analyze(source.columns, options);
  const names = options.columns ?? source.names;
  const viaDuckDB = (await analyzeViaDuckDB(file, { ...options, columns: names }, limits)).result;
  return [inMemory, viaDuckDB];
}

/** The same JSON, bit for bit: binnings, counts, warnings and every information value. */
function expectSame(inMemory: IAnalysisResult, viaDuckDB: IAnalysisResult): void {
  expect(viaDuckDB.columns).toEqual(inMemory.columns);
  expect(viaDuckDB.multiplets.length).toBeGreaterThan(0);
  expect(JSON.stringify(viaDuckDB)).toBe(JSON.stringify(inMemory));
}

describe('analyzeViaDuckDB', () => {
  const specs = ['auto', 'width:7', 'quantile:5', 'fd', 'scott', 'sturges', 'rice', 'sqrt', 'doane', 'kmeans:3', 'categorical'];
  for (const bins of specs) {
    it(`should bin and count as the in-memory engine under ${bins}`, async () => {
      const columns = bins === 'categorical' ? ['b', 'd', 'e', 'f'] : undefined;
      expectSame(...(await both({ bins, columns })));
    });
  }

  // Order statistics come from bucket counts, fetched buckets, or quantile_disc over a heavy
  // bucket; levels from the file's first rows or a DISTINCT over the file. Limits this small
  // take each way on the fixture, and the queries show that they did.
  for (const [way, limits, sql] of [
    ['values of a few buckets fetched and sorted', { rankBuckets: 3, rankFetchLimit: 100_000 }, /WHERE b IN \(/],
    ['heavy buckets ranked by quantile_disc', { rankBuckets: 2, rankFetchLimit: 0 }, /quantile_disc\(.* AND CAST\(least/],
    ['levels counted by DISTINCT over the file', { levelSampleRows: 1 }, /SELECT count\(\*\) FROM \(SELECT DISTINCT/]
  ] as const) {
    it(`should give the same edges with ${way}`, async () => {
      const spy = jest.spyOn(DuckDBConnection.prototype, 'runAndReadAll');
      try {
        expectSame(...(await both({ bins: 'quantile:5', binsByColumn: { b: 'quantile:3', f: 'auto' } }, limits)));
        expect(spy.mock.calls.some(call => sql.test(String(call[0])))).toBe(true);
      } finally {
        spy.mockRestore();
      }
    });
  }

  it('should give the same edges under user edges and per-column specs', async () => {
    expectSame(...(await both({ columns: ['b', 'c', 'f'], binsByColumn: { c: 'edges:0,1.5,3,100', f: 'quantile:3' } })));
  });

  for (const missing of ['drop', 'category'] as const) {
    it(`should apply the missing-value policy ${missing} to weighted rows`, async () => {
      const [inMemory, viaDuckDB] = await both({ missing, estimator: 'miller-madow' });
      // the fixture has missing values, so drop leaves rows out and category keeps them all
      expect(inMemory.rows_used < inMemory.rows).toBe(missing === 'drop');
      expectSame(inMemory, viaDuckDB);
    });
  }

  it('should name the same row under the policy error', async () => {
    const source = await readDataFile(file);
    expect(() => analyze(source.columns, { missing: 'error' })).toThrow(/row \d+/);
    let message = '';
    try {
      analyze(source.columns, { missing: 'error' });
    } catch (error) {
      message = (error as Error).message;
    }
    await expect(analyzeViaDuckDB(file, { missing: 'error', columns: source.names })).rejects.toThrow(message);
  });

  it('should give the same order-limited run under every count estimator', async () => {
    for (const estimator of ['plugin', 'chao-shen', 'shrinkage'] as const) {
      expectSame(...(await both({ maxOrder: 2, estimator, bins: 'quantile:4' })));
    }
  });

  it('should refuse a value outside user edges as the in-memory engine does', async () => {
    const options: IAnalyzeOptions = { columns: ['c'], bins: 'edges:0,1,2' };
    const source = await readDataFile(file, { columns: ['c'] });
    expect(() => analyze(source.columns, options)).toThrow(/outside the edges/);
    let message = '';
    try {
      analyze(source.columns, options);
    } catch (error) {
      message = (error as Error).message;
    }
    await expect(analyzeViaDuckDB(file, options)).rejects.toThrow(message);
  });

  it('should resample the weighted rows for --bootstrap and fit their counts for --beyond-pairs', async () => {
    const columns = ['b', 'd', 'e'];
    const fit = { maxOrder: 3, columns, statistics: { beyondPairs: 1, fitDraws: 30, seed: 5 } };
    // the pairwise-preserving null needs the joint counts only: the in-memory JSON, bit for bit
    expectSame(...(await both(fit)));
    const options = { maxOrder: 3, columns, statistics: { bootstrap: 40, seed: 5 } };
    const first = (await analyzeViaDuckDB(file, options)).result;
    const again = (await analyzeViaDuckDB(file, options)).result;
    expect(JSON.stringify(again)).toBe(JSON.stringify(first));
    const triplet = first.multiplets.find(row => row.columns.length === 3)!;
    expect(triplet.ci_low).not.toBeNull();
    expect(triplet.ci_low! <= triplet.co_information && triplet.co_information <= triplet.ci_high!).toBe(true);
  });

  it('should refuse what needs the rows, and files it does not read', async () => {
    await expect(analyzeViaDuckDB(file, { statistics: { surrogates: 10 } })).rejects.toThrow(/--surrogates is not available/);
    await expect(analyzeViaDuckDB(file, { estimator: 'gaussian-copula' })).rejects.toThrow(/Gaussian-copula/);
    await expect(analyzeViaDuckDB(path.join(dir, 'fixture.json'), {})).rejects.toThrow(/reads Parquet \(\.parquet\), CSV/);
  });

  describe('past the cap on distinct rows', () => {
    // the fixture's 2,500 rows have far more than 50 distinct binned rows under every spec here
    const limits: IDuckDBLimits = { maxDistinctRows: 50, setsPerQuery: 4 };

    it('should count each multiplet by GROUPING SETS and say so, with the same JSON', async () => {
      const options: IAnalyzeOptions = { maxOrder: 3, bins: 'quantile:4', columns: ['a', 'b', 'c', 'd', 'e', 'f'] };
      const run = await analyzeViaDuckDB(file, options, limits);
      expect(run.note).toMatch(/more than 50 distinct binned rows, so each of the 41 multiplets up to order 3 was counted/);
      // 6 + 15 + 20 multiplets, 4 sets a query
      expect(run.note).toMatch(/GROUPING SETS, 11 queries/);
      const source = await readDataFile(file);
      expect(JSON.stringify(run.result)).toBe(JSON.stringify(analyze(source.columns, options)));
    });

    for (const estimator of ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'] as const) {
      for (const missing of ['drop', 'category'] as const) {
        it(`should give the same JSON under ${estimator} and ${missing}`, async () => {
          const [inMemory, viaDuckDB] = await both({ maxOrder: 2, estimator, missing, bins: 'sturges' }, limits);
          expect(inMemory.rows_used < inMemory.rows).toBe(missing === 'drop');
          expectSame(inMemory, viaDuckDB);
        });
      }
    }

    it('should give the same JSON for categorical columns and per-column specs', async () => {
      expectSame(
        ...(await both({ maxOrder: 3, columns: ['b', 'd', 'e', 'f', 'c'], binsByColumn: { f: 'categorical', c: 'width:9' } }, limits))
      );
    });

    it('should name the same row under the policy error', async () => {
      const source = await readDataFile(file);
      let message = '';
      try {
        analyze(source.columns, { missing: 'error', maxOrder: 2 });
      } catch (error) {
        message = (error as Error).message;
      }
      expect(message).toMatch(/row \d+/);
      await expect(analyzeViaDuckDB(file, { missing: 'error', maxOrder: 2, columns: source.names }, limits)).rejects.toThrow(message);
    });

    it('should refuse --bootstrap past the cap, where there are no joint rows to resample', async () => {
      await expect(
        analyzeViaDuckDB(file, { maxOrder: 2, bins: 'quantile:4', columns: ['a', 'c', 'f'], statistics: { bootstrap: 5 } }, limits)
      ).rejects.toThrow(/--bootstrap resamples the distinct joint rows.*more than 50/);
    });

    it('should stop a full lattice at the cap and say how to go on', async () => {
      await expect(analyzeViaDuckDB(file, { columns: ['a', 'c', 'f'] }, limits)).rejects.toThrow(
        /more than 50 distinct binned rows.*a full lattice needs them all.*--max-order/
      );
    });
  });
});
