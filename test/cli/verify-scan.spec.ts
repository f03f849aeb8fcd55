/**
 * `polyadic verify` of a scanned record, with real DuckDB: an analysis run through
 * `analyzeViaDuckDB`, recorded by recordFromResult with its origin block and pdsc1 fingerprint,
 * reproduces through DuckDB (`--via duckdb`) and in memory; a changed file is caught by the
 * fingerprint; a record of rows (no origin, as 0.1.x wrote) still verifies without --via.
 */
import { promises as fs } from 'fs';
import * as os from 'os';
import * as path from 'path';

import { analyzeViaDuckDB } from '../../src/cli/duckdb';
import { readDataFile } from '../../src/cli/readers';
import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { analyze } from '../../src/engine/analyze';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { recordFromResult } from '../../src/record/recordFromResult';
import { fingerprintScan } from '../../src/record/scan-fingerprint';
import { notebookWith } from '../record/helpers';

jest.setTimeout(120_000);

let dir = '';

/** A seeded-enough CSV: three dependent numeric columns and a text column (no generator needed: a formula). */
function table(rows: number, shift = 0): string {
  const lines = ['u,v,w,kind'];
  for (let i = 0; i < rows; i++) {
    const u = ((i * 7919) % 1000) / 10;
    const v = ((i * 104729) % 997) / 10 + u / 3;
    const w = (u + v) % 37 + (i === 5 ? shift : 0);
    lines.push(`${u},${v},${w},${['p', 'q', 'r'][i % 3]}`);
  }
  return lines.join('\n') + '\n';
}

async function verify(notebook: string, args: string[]): Promise<{ code: number; out: string }> {
  let out = '';
  const io = { stdout: { write: (t: string) => (out += t) }, stderr: { write: (t: string) => (out += t) } };
  const code = await runVerify([notebook, ...args], io);
  return { code, out };
}

const options: IAnalyzeOptions = { columns: ['u', 'v', 'w', 'kind'], bins: 'quantile:3', maxOrder: 3, statistics: { bootstrap: 20, seed: 4 } };

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'polyadic-verify-scan-'));
  await fs.writeFile(path.join(dir, 'big.csv'), table(600));
  const run = await analyzeViaDuckDB(path.join(dir, 'big.csv'), options);
  expect(run.scan).not.toBeNull();
  const scan = run.scan!;
  const fingerprint = await fingerprintScan(scan.table, run.result.rows, run.result.columns);
  const scanned = recordFromResult({
    options,
    result: run.result,
    source: {
      frame: 'big',
      columns: [
        { name: 'u', dtype: 'float64', kind: 'numeric' },
        { name: 'v', dtype: 'float64', kind: 'numeric' },
        { name: 'w', dtype: 'float64', kind: 'numeric' },
        { name: 'kind', dtype: 'string', kind: 'categorical' }
      ],
      fingerprint,
      scan
    },
    id: 'pd-scan00000001',
    created: new Date('2026-12-03T18:00:00Z')
  });
  expect(scanned.source.origin).toEqual({ kind: 'scan', engine: scan.engine, input_rows: 600, distinct_rows: fingerprint.distinctRows });
  expect(scanned.source.fingerprint.encoding).toBe('pdsc1');
  await fs.writeFile(path.join(dir, 'scan.ipynb'), JSON.stringify(notebookWith({ version: 2, analyses: [scanned] })));
  // a record of rows as 0.1.x wrote it: no origin block
  const source = await readDataFile(path.join(dir, 'big.csv'), { columns: options.columns });
  const plain = { ...options, statistics: undefined };
  const rows = recordFromResult({
    options: plain,
    result: analyze(source.columns, plain),
    source: { frame: 'big', columns: source.columns, fingerprint: await fingerprintColumns(source.columns) },
    id: 'pd-rows00000001',
    created: new Date('2026-12-03T18:00:00Z')
  });
  expect(rows.source.origin).toEqual({ kind: 'rows' });
  delete (rows.source as { origin?: unknown }).origin;
  await fs.writeFile(path.join(dir, 'rows.ipynb'), JSON.stringify(notebookWith({ version: 2, analyses: [rows] })));
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('polyadic verify of a scanned source', () => {
  it('should reproduce through DuckDB and in memory, the bootstrap included', async () => {
    const through = await verify(path.join(dir, 'scan.ipynb'), ['--data', `big=${path.join(dir, 'big.csv')}`, '--via', 'duckdb']);
    expect(through.out).toMatch(/pd-scan00000001 .* reproduced through DuckDB \(\d+ values identical\)/);
    expect(through.code).toBe(VERIFY_EXIT.reproduced);
    const inMemory = await verify(path.join(dir, 'scan.ipynb'), ['--data', `big=${path.join(dir, 'big.csv')}`]);
    expect(inMemory.out).toMatch(/reproduced in memory/);
    expect(inMemory.code).toBe(VERIFY_EXIT.reproduced);
  });

  it('should catch a changed file by the fingerprint of its weighted table', async () => {
    const changed = path.join(dir, 'changed.csv');
    await fs.writeFile(changed, table(600, 30));
    const run = await verify(path.join(dir, 'scan.ipynb'), ['--data', `big=${changed}`, '--via', 'duckdb']);
    expect(run.out).toMatch(/DATA CHANGED: fingerprint [0-9a-f]{12}… recorded, [0-9a-f]{12}… now/);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const fewer = path.join(dir, 'fewer.csv');
    await fs.writeFile(fewer, table(599));
    const short = await verify(path.join(dir, 'scan.ipynb'), ['--data', `big=${fewer}`]);
    expect(short.out).toMatch(/600 input rows recorded, 599 now/);
    expect(short.code).toBe(VERIFY_EXIT.differs);
  });

  it('should still verify a record of rows without an origin block, and not check it through DuckDB', async () => {
    const plain = await verify(path.join(dir, 'rows.ipynb'), ['--data', `big=${path.join(dir, 'big.csv')}`]);
    expect(plain.out).toMatch(/pd-rows00000001 .* reproduced \(/);
    expect(plain.code).toBe(VERIFY_EXIT.reproduced);
    const via = await verify(path.join(dir, 'rows.ipynb'), ['--data', `big=${path.join(dir, 'big.csv')}`, '--via', 'duckdb']);
    expect(via.out).toMatch(/NOT CHECKED: recorded from rows/);
    expect(via.code).toBe(VERIFY_EXIT.differs);
  });
});
