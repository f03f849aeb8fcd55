/**
 * `polyadic verify` on a notebook whose record the panel's own code path wrote: a completed
 * run handed to the records model (fingerprint, recordFromResult, store over the notebook's
 * metadata), the notebook saved as .ipynb, then the built CLI run on it with the data file.
 * It passes on the same data and fails with a DATA CHANGED line after one value changes.
 */
import * as fs from 'fs';
import * as path from 'path';

import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { RecordsModel } from '../../src/panel/records/model';
import { greenhouseTable, notebookWith, toCsv } from '../record/helpers';
import { buildCli, fixtureFolder, runCli } from './helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'plugin', units: 'bits', maxOrder: 3 };

let bundle: string;
let folder: string;
let notebookPath: string;
let csvPath: string;
let recordId: string;

beforeAll(async () => {
  bundle = buildCli();
  const table = greenhouseTable(500, 21);
  folder = fixtureFolder({ 'greenhouse.csv': toCsv(table) });
  csvPath = path.join(folder, 'greenhouse.csv');

  // the front end reads the frame from the kernel; here the same column views come from the file
  const source = await readDataFile(csvPath);
  const notebook = notebookWith(undefined, { other_extension: { untouched: true } });
  const metadata = notebook.metadata as Record<string, unknown>;
  const records = new RecordsModel();
  records.setNotebook({
    path: 'greenhouse.ipynb',
    metadata: { get: key => metadata[key], set: (key, value) => (metadata[key] = value) }
  });
  const recorded = await records.recordRun({
    analysisId: 'pd-verifycli0001',
    result: analyze(source.columns, OPTIONS),
    options: OPTIONS,
    frame: {
      name: 'greenhouse',
      listed: null,
      fields: [],
      rows: 500,
      originalRows: 500,
      sampled: false,
      seed: 0,
      bytes: 0,
      columns: source.columns
    },
    finished: '2031-04-05T06:07:08.000Z',
    elapsedMs: 1,
    workers: 1
  });
  if (recorded === null) {
    throw new Error(`the run was not recorded: ${records.error}`);
  }
  recordId = recorded.id;
  notebookPath = path.join(folder, 'greenhouse.ipynb');
  fs.writeFileSync(notebookPath, JSON.stringify(notebook, null, 1));
}, 120_000);

describe('polyadic verify on a notebook recorded by the panel', () => {
  it('should pass on the data the analysis read', () => {
    const run = runCli(bundle, ['verify', notebookPath, '--data', `greenhouse=${csvPath}`]);
    expect(run.stderr).toBe('');
    expect(run.stdout).toContain(`${recordId}`);
    expect(run.stdout).toContain('reproduced');
    expect(run.code).toBe(0);
  });

  it('should fail with a DATA CHANGED line after one value changes', () => {
    const lines = fs.readFileSync(csvPath, 'utf8').split('\n');
    const cells = lines[42].split(',');
    // column 4 is humidity_b_pct; a humidity far from the planted range
    cells[4] = '3.25';
    lines[42] = cells.join(',');
    const changedPath = path.join(folder, 'greenhouse-changed.csv');
    fs.writeFileSync(changedPath, lines.join('\n'));
    const run = runCli(bundle, ['verify', notebookPath, '--data', `greenhouse=${changedPath}`]);
    expect(run.code).toBe(1);
    expect(run.stdout).toMatch(/DATA CHANGED/);
    expect(run.stdout).toContain('humidity_b_pct');
  });
});
