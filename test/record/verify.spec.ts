/**
 * `polyadic verify` end to end through runVerify: a notebook whose record was made by
 * recordFromResult from analyze() on a CSV file reproduces (exit 0), stops reproducing when one
 * cell of the data changes or one recorded value is tampered with (exit 1), and refuses bad
 * input (exit 2).
 */
import * as fs from 'fs';
import * as path from 'path';

import * as arrow from 'apache-arrow';

import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { recordFromResult } from '../../src/record/recordFromResult';
import type { IAnalysisRecord } from '../../src/record/types';
import { captureStreams, clone, greenhouseTable, notebookWith, recordOf, tempFolder, toCsv } from './helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'miller-madow', maxOrder: 3 };

let folder: string;
let csvPath: string;
let analysis: IAnalysisRecord;

async function recordOfFile(file: string, frame: string, options: IAnalyzeOptions): Promise<IAnalysisRecord> {
  const source = await readDataFile(file);
  const result = analyze(source.columns, options);
  return recordFromResult({
    options,
    result,
    source: { frame, columns: source.columns, fingerprint: await fingerprintColumns(source.columns) },
    label: 'Drip line check',
    created: new Date('2031-03-02T08:00:00Z')
  });
}

function writeNotebook(analyses: IAnalysisRecord[], name = 'greenhouse.ipynb'): string {
  const file = path.join(folder, name);
  fs.writeFileSync(file, JSON.stringify(notebookWith(recordOf(analyses)), null, 1));
  return file;
}

async function verify(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  const io = captureStreams();
  const code = await runVerify(args, io);
  return { code, stdout: io.stdout.text, stderr: io.stderr.text };
}

beforeAll(async () => {
  folder = tempFolder();
  csvPath = path.join(folder, 'greenhouse.csv');
  fs.writeFileSync(csvPath, toCsv(greenhouseTable(400, 7)));
  analysis = await recordOfFile(csvPath, 'greenhouse', OPTIONS);
});

describe('runVerify', () => {
  it('should find the planted structure in the record it verifies', () => {
    // the fixture is only useful if the summary holds values to compare on both sides
    expect(analysis.summary.synergy[0].columns.sort()).toEqual(['flow_l_min', 'leak_alarm', 'valve_command']);
    expect(analysis.summary.redundancy[0].columns.sort()).toEqual(['humidity_a_pct', 'humidity_b_pct']);
    expect(analysis.summary.histograms?.map(h => h.order)).toEqual([2, 3]);
  });

  it('should exit 0 when every analysis reproduces', async () => {
    const notebook = writeNotebook([analysis]);
    const run = await verify(notebook, '--data', `greenhouse=${csvPath}`);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
    expect(run.stdout).toContain(`${analysis.id}  Drip line check  reproduced`);
    expect(run.stdout).toContain('1 of 1 analyses reproduce.');
  });

  it('should reproduce from an Arrow file holding the same data', async () => {
    const table = greenhouseTable(400, 7);
    const columns: Record<string, arrow.Vector> = {};
    table.header.forEach((name, j) => {
      const cells = table.rows.map(row => row[j]);
      // flags as Arrow booleans: the reader gives them the categories 'false' and 'true', the
      // same text the CSV holds, so the fingerprint agrees
      columns[name] =
        cells[0] === 'true' || cells[0] === 'false'
          ? arrow.vectorFromArray(cells.map(cell => cell === 'true'), new arrow.Bool())
          : arrow.vectorFromArray(Float64Array.from(cells.map(Number)));
    });
    const arrowPath = path.join(folder, 'greenhouse.arrow');
    fs.writeFileSync(arrowPath, arrow.tableToIPC(new arrow.Table(columns), 'file'));
    const notebook = writeNotebook([analysis], 'arrow.ipynb');
    const run = await verify(notebook, '--data', `greenhouse=${arrowPath}`);
    expect(run.stdout).toContain('reproduced');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
  });

  it('should exit 1 with DATA CHANGED naming the column when one cell changes', async () => {
    const table = greenhouseTable(400, 7);
    table.rows[123][5] = (Number(table.rows[123][5]) + 0.01).toFixed(2);
    const changed = path.join(folder, 'greenhouse-changed.csv');
    fs.writeFileSync(changed, toCsv(table));
    const notebook = writeNotebook([analysis]);
    const run = await verify(notebook, '--data', `greenhouse=${changed}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toMatch(/DATA CHANGED: fingerprint [0-9a-f]{12}… recorded, [0-9a-f]{12}… now \(values differ in column 'air_temp_c'\)/);
    expect(run.stdout).toContain('0 of 1 analyses reproduce.');
  });

  it('should exit 1 with DIFFERS naming the value when a recorded value is off by 1e-12', async () => {
    const tampered = clone(analysis);
    const recorded = tampered.summary.synergy[0].coinformation;
    tampered.summary.synergy[0].coinformation = recorded + 1e-12;
    const notebook = writeNotebook([analysis, { ...tampered, id: 'pd-tampered01', label: 'Tampered' }]);
    const run = await verify(notebook, '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const lines = run.stdout.split('\n');
    expect(lines.find(line => line.startsWith(analysis.id))).toContain('reproduced');
    const line = lines.find(line => line.startsWith('pd-tampered01')) ?? '';
    expect(line).toContain(`DIFFERS: synergy[0] {${tampered.summary.synergy[0].columns.join(', ')}} coinformation ${recorded + 1e-12} vs ${recorded}`);
    expect(run.stdout).toContain('1 of 2 analyses reproduce.');
  });

  it('should accept a difference within 1e-9 only when the record comes from another engine version', async () => {
    const older = clone(analysis);
    older.engine.version = '0.0.1';
    older.summary.redundancy[0].entropy += 1e-12;
    let run = await verify(writeNotebook([older]), '--data', `greenhouse=${csvPath}`);
    expect(run.stdout).toContain('reproduced');
    expect(run.stdout).toContain('within 1e-9 (recorded with polyadic 0.0.1)');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);

    older.summary.redundancy[0].entropy += 1e-6;
    run = await verify(writeNotebook([older]), '--data', `greenhouse=${csvPath}`);
    expect(run.stdout).toContain('DIFFERS: redundancy[0]');
    expect(run.stdout).toContain('entropy');
    expect(run.code).toBe(VERIFY_EXIT.differs);
  });

  it('should report a changed bin edge and a changed histogram count', async () => {
    const tampered = clone(analysis);
    const binning = tampered.binning.find(b => b.edges !== undefined)!;
    const edge = binning.edges![1];
    binning.edges![1] = edge + 0.001;
    tampered.summary.histograms![0].counts[0] += 1;
    const run = await verify(writeNotebook([tampered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toContain(`DIFFERS: binning of '${binning.name}' edges[1] ${edge + 0.001} vs ${edge}`);
    expect(run.stdout).toContain('order histogram 2 counts[0]');
  });

  it('should accept categories recorded in another order, and report other categories', async () => {
    // a pandas categorical keeps its own category order; the same values in a CSV read sorted
    const reordered = clone(analysis);
    reordered.binning[0].categories!.reverse();
    let run = await verify(writeNotebook([reordered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
    reordered.binning[0].categories![0] = 'open';
    run = await verify(writeNotebook([reordered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toContain(`DIFFERS: binning of 'valve_command' categories ["false","open"] vs ["false","true"]`);
  });

  it('should say DATA CHANGED when a selected column is gone from the file', async () => {
    const table = greenhouseTable(400, 7);
    const narrow = path.join(folder, 'narrow.csv');
    fs.writeFileSync(
      narrow,
      toCsv({ header: table.header.slice(0, 5), rows: table.rows.map(row => row.slice(0, 5)) })
    );
    const run = await verify(writeNotebook([analysis]), '--data', `greenhouse=${narrow}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toContain(`DATA CHANGED: column 'air_temp_c' is not in ${narrow}.`);
  });

  it('should not check a sampled analysis against the whole frame, and say why', async () => {
    const sampled = clone(analysis);
    sampled.source.sample = { seed: 3, row_cap: 400, original_rows: 900 };
    const bigger = path.join(folder, 'bigger.csv');
    fs.writeFileSync(bigger, toCsv(greenhouseTable(900, 7)));
    let run = await verify(writeNotebook([sampled]), '--data', `greenhouse=${bigger}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toContain('NOT CHECKED: the analysis read a seeded sample of 400 of 900 rows (seed 3)');
    // the sampled rows themselves do verify
    run = await verify(writeNotebook([sampled]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
  });

  describe('bad input', () => {
    it('should exit 2 for a notebook that does not exist', async () => {
      const run = await verify(path.join(folder, 'nowhere.ipynb'), '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stdout).toBe('');
      expect(run.stderr).toMatch(/^polyadic: Notebook '.*nowhere\.ipynb' does not exist\.\n$/);
    });

    it('should exit 2 for a file that is not JSON', async () => {
      const file = path.join(folder, 'text.ipynb');
      fs.writeFileSync(file, 'not json');
      const run = await verify(file, '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain('is not a notebook: it is not JSON');
    });

    it('should exit 2 for a notebook without a record', async () => {
      const file = path.join(folder, 'plain.ipynb');
      fs.writeFileSync(file, JSON.stringify(notebookWith(undefined)));
      const run = await verify(file, '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain("has no Polyadic record (no 'polyadic' key in its metadata)");
    });

    it('should exit 2 for an invalid record, naming the path', async () => {
      const broken = clone(analysis) as unknown as Record<string, unknown>;
      broken.estimator = 'guesswork';
      const run = await verify(writeNotebook([broken as unknown as IAnalysisRecord]), '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain(
        'has an invalid Polyadic record: /analyses/0/estimator must be one of plugin, miller-madow, chao-shen, shrinkage, gaussian-copula.'
      );
    });

    it('should exit 2 for a record of a newer layout', async () => {
      const file = path.join(folder, 'newer.ipynb');
      fs.writeFileSync(file, JSON.stringify(notebookWith({ version: 2, analyses: [] })));
      const run = await verify(file, '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain('layout version 2, newer than the version 1');
    });

    it('should exit 2 when a recorded frame has no --data', async () => {
      const run = await verify(writeNotebook([analysis]));
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain("No data file for frame 'greenhouse'; give --data greenhouse=PATH.");
    });

    it('should exit 2 for --data naming a frame no analysis used', async () => {
      const run = await verify(writeNotebook([analysis]), '--data', `greenhouse=${csvPath}`, '--data', `cellar=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain("--data names frame 'cellar', which no analysis in the notebook used");
    });

    it('should exit 2 for a malformed --data', async () => {
      const run = await verify(writeNotebook([analysis]), '--data', 'greenhouse');
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain("--data expects NAME=PATH (a frame name and a data file), got 'greenhouse'.");
    });

    it('should exit 2 when the data file cannot be read', async () => {
      const run = await verify(writeNotebook([analysis]), '--data', `greenhouse=${path.join(folder, 'gone.csv')}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stdout).toMatch(/CANNOT READ DATA: File '.*gone\.csv' does not exist\./);
    });

    it('should escape control characters of an untrusted label in its report', async () => {
      const labelled = clone(analysis);
      labelled.label = 'a\u001b[31mred';
      // the schema refuses control characters in labels, so this record is invalid: exit 2
      const run = await verify(writeNotebook([labelled]), '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain('/analyses/0/label must be one line without control characters');
      expect(run.stderr).not.toContain('\u001b');
    });
  });
});
