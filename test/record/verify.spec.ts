/**
 * `polyadic verify` end to end through runVerify: a notebook whose record was made by
 * recordFromResult from analyze() on a CSV file reproduces (exit 0), stops reproducing when one
 * cell of the data changes or one recorded value is tampered with (exit 1), and refuses bad
 * input (exit 2). A record with evidence (surrogates, bootstrap, pairwise-preserving null) has
 * it re-derived on the recorded seed and every evidence value compared; a version 1 record
 * (fixtures/v1-record.json) verifies or fails as it did before the layout change.
 */
import * as fs from 'fs';
import * as path from 'path';

import * as arrow from 'apache-arrow';

import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalysisResult, IAnalyzeOptions } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { recordFromResult } from '../../src/record/recordFromResult';
import type { IAnalysisRecord, IMultipletSummary } from '../../src/record/types';
import { EnginePool } from '../../src/worker/pool';
import { InProcessFactory } from '../worker/helpers';
import { captureStreams, clone, greenhouseTable, notebookWith, recordOf, tempFolder, toCsv } from './helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'miller-madow', maxOrder: 3 };

let folder: string;
let csvPath: string;
let analysis: IAnalysisRecord;

async function recordOfFile(
  file: string,
  frame: string,
  options: IAnalyzeOptions,
  run: (columns: Parameters<typeof analyze>[0]) => Promise<IAnalysisResult> = async columns => analyze(columns, options)
): Promise<IAnalysisRecord> {
  const source = await readDataFile(file);
  const result = await run(source.columns);
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
    const recorded = tampered.summary.synergy[0].co_information;
    tampered.summary.synergy[0].co_information = recorded + 1e-12;
    const notebook = writeNotebook([analysis, { ...tampered, id: 'pd-tampered01', label: 'Tampered' }]);
    const run = await verify(notebook, '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const lines = run.stdout.split('\n');
    expect(lines.find(line => line.startsWith(analysis.id))).toContain('reproduced');
    const line = lines.find(line => line.startsWith('pd-tampered01')) ?? '';
    expect(line).toContain(`DIFFERS: synergy[0] {${tampered.summary.synergy[0].columns.join(', ')}} co_information ${recorded + 1e-12} vs ${recorded}`);
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
      fs.writeFileSync(file, JSON.stringify(notebookWith({ version: 3, analyses: [] })));
      const run = await verify(file, '--data', `greenhouse=${csvPath}`);
      expect(run.code).toBe(VERIFY_EXIT.badInput);
      expect(run.stderr).toContain('layout version 3, newer than the version 2');
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

/** Statistics as the panel or the CLI would ask for them: every kind of evidence at once. */
const EVIDENCE_OPTIONS: IAnalyzeOptions = {
  ...OPTIONS,
  statistics: { surrogates: 99, seed: 17, bootstrap: 40, tail: 'two', alpha: 0.1, beyondPairs: 1, fitDraws: 10 }
};

describe('runVerify with evidence', () => {
  let evidenced: IAnalysisRecord;

  /** The line verify prints for analysis `id`. */
  function lineOf(stdout: string, id: string): string {
    return stdout.split('\n').find(line => line.startsWith(id)) ?? '';
  }

  /** The first summary multiplet (synergy, then redundancy) matching a test, with where it is. */
  function findMultiplet(
    record: IAnalysisRecord,
    test: (multiplet: IMultipletSummary) => boolean
  ): { where: string; multiplet: IMultipletSummary } {
    for (const side of ['synergy', 'redundancy'] as const) {
      const i = record.summary[side].findIndex(test);
      if (i >= 0) {
        const multiplet = record.summary[side][i];
        return { where: `${side}[${i}] {${multiplet.columns.join(', ')}}`, multiplet };
      }
    }
    throw new Error('no summary multiplet matches');
  }

  beforeAll(async () => {
    // made by a pool of two workers; verify re-runs in one thread and must agree bit for bit
    const factory = new InProcessFactory();
    evidenced = await recordOfFile(csvPath, 'greenhouse', EVIDENCE_OPTIONS, async columns => {
      const pool = new EnginePool({ createWorker: factory.create, workers: 2 });
      try {
        return (await pool.analyze(columns, EVIDENCE_OPTIONS)).result;
      } finally {
        pool.dispose();
      }
    });
    evidenced.id = 'pd-evidence001';
  }, 60_000);

  it('should record every kind of evidence, numbers and nulls, for verify to compare', () => {
    expect(evidenced.statistics).toEqual({
      surrogates: 99,
      seed: 17,
      bootstrap: 40,
      tail: 'two',
      alpha: 0.1,
      beyond_pairs: 1,
      fit_draws: 10,
      sharpen: 0
    });
    const top = evidenced.summary.synergy[0];
    for (const field of ['adequacy', 'p_value', 'q_value', 'null_mean', 'ci_low', 'ci_high', 'connected_information'] as const) {
      expect([field, typeof top[field]]).toEqual([field, 'number']);
    }
    // a pair has no pairwise-preserving null: its connected information is recorded as null
    expect(findMultiplet(evidenced, m => m.order === 2).multiplet.connected_information).toBeNull();
    expect(evidenced.summary.evidence?.null_bands.map(band => band.order)).toEqual([2, 3]);
    expect(evidenced.summary.evidence?.families.co_information).toEqual({ orders: [2, 3], count: 35 });
    expect(evidenced.summary.inadequate_count).toEqual(expect.any(Number));
  });

  it('should exit 0 when the evidence re-derives on the recorded seed, counting the evidence values', async () => {
    const run = await verify(writeNotebook([analysis, evidenced], 'evidence.ipynb'), '--data', `greenhouse=${csvPath}`);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
    const count = (line: string): number => Number(/reproduced \(([\d,]+) values/.exec(line)?.[1].replace(/,/g, ''));
    const plain = count(lineOf(run.stdout, analysis.id));
    const withEvidence = count(lineOf(run.stdout, evidenced.id));
    // the same multiplets and histograms, plus every evidence field and the evidence's scope
    expect(withEvidence).toBeGreaterThan(plain + 20 * (evidenced.summary.synergy.length + evidenced.summary.redundancy.length));
    expect(run.stdout).toContain('2 of 2 analyses reproduce.');
  });

  it('should name the multiplet and the field of a tampered p_value and q_value', async () => {
    const tampered = clone(evidenced);
    const p = tampered.summary.synergy[0].p_value as number;
    tampered.summary.synergy[0].p_value = p + 0.001;
    const q = tampered.summary.redundancy[1].q_value as number;
    tampered.summary.redundancy[1].q_value = q / 2;
    const run = await verify(writeNotebook([tampered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const line = lineOf(run.stdout, evidenced.id);
    expect(line).toContain(`DIFFERS: synergy[0] {${tampered.summary.synergy[0].columns.join(', ')}} p_value ${p + 0.001} vs ${p}`);
    expect(line).toContain(`redundancy[1] {${tampered.summary.redundancy[1].columns.join(', ')}} q_value ${q / 2} vs ${q}`);
    expect(line).not.toContain('(and');
  });

  it('should report a null recorded where the re-run has a number, and the reverse, and a field left out', async () => {
    const tampered = clone(evidenced);
    const pair = findMultiplet(tampered, m => m.order === 2);
    pair.multiplet.connected_information = 0;
    const top = tampered.summary.synergy[0];
    const low = top.ci_low as number;
    top.ci_low = null;
    const q = top.o_information_q_value as number;
    delete top.o_information_q_value;
    const run = await verify(writeNotebook([tampered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const line = lineOf(run.stdout, evidenced.id);
    const head = `synergy[0] {${top.columns.join(', ')}}`;
    expect(line).toContain(`${head} o_information_q_value absent vs ${q}`);
    expect(line).toContain(`${head} ci_low null vs ${low}`);
    expect(line).toContain(`${pair.where} connected_information 0 vs null`);
  });

  it('should name a tampered null band, family count and inadequate count', async () => {
    const tampered = clone(evidenced);
    const band = tampered.summary.evidence!.null_bands[1];
    const high = band.high;
    band.high = high + 0.01;
    tampered.summary.evidence!.families.co_information!.count += 1;
    tampered.summary.inadequate_count! += 1;
    const run = await verify(writeNotebook([tampered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    const line = lineOf(run.stdout, evidenced.id);
    expect(line).toContain(`inadequate_count ${evidenced.summary.inadequate_count! + 1} vs ${evidenced.summary.inadequate_count}`);
    expect(line).toContain(`evidence.families.co_information.count 36 vs 35`);
    expect(line).toContain(`evidence.null_bands[1].high ${high + 0.01} vs ${high}`);
  });

  it('should re-run with the recorded seed and tail, so another recorded seed or tail does not verify', async () => {
    for (const change of [{ seed: 18 }, { tail: 'synergy' as const }]) {
      const other = clone(evidenced);
      other.statistics = { ...other.statistics!, ...change };
      const run = await verify(writeNotebook([other]), '--data', `greenhouse=${csvPath}`);
      expect([change, run.code]).toEqual([change, VERIFY_EXIT.differs]);
      // the values differ, not the settings: the re-run used the settings as recorded
      expect(lineOf(run.stdout, evidenced.id)).toMatch(/DIFFERS: (synergy|redundancy)\[\d+\] \{[^}]+\} (p_value|null_mean|ci_low)/);
      expect(lineOf(run.stdout, evidenced.id)).not.toContain('statistics.');
    }
  });

  it('should report a tampered adequacy in a record without statistics', async () => {
    const tampered = clone(analysis);
    expect(tampered.statistics).toBeUndefined();
    const adequacy = tampered.summary.synergy[0].adequacy as number;
    tampered.summary.synergy[0].adequacy = adequacy * 2;
    const run = await verify(writeNotebook([tampered]), '--data', `greenhouse=${csvPath}`);
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(lineOf(run.stdout, analysis.id)).toContain(`adequacy ${adequacy * 2} vs ${adequacy}`);
  });
});

describe('runVerify on a version 1 record', () => {
  const v1 = JSON.parse(fs.readFileSync(path.join(__dirname, 'fixtures', 'v1-record.json'), 'utf8'));

  /** The data of the fixtures: greenhouseTable(60, 11) with two blank cells (as settings.spec.ts says). */
  function fixtureCsv(): string {
    const table = greenhouseTable(60, 11);
    table.rows[5][3] = '';
    table.rows[9][0] = '';
    const file = path.join(folder, 'fixture-data.csv');
    fs.writeFileSync(file, toCsv(table));
    return file;
  }

  function writeV1(record: unknown): string {
    const file = path.join(folder, 'v1.ipynb');
    fs.writeFileSync(file, JSON.stringify(notebookWith(record), null, 1));
    return file;
  }

  // Commit a9c1765 (layout 1) verified the first analysis with every value identical and found
  // last-bit differences (below 1e-15) in the second. Engine 0.1.1 sums Σ n·ln n exactly, which
  // moves such last bits again, so a record of engine 0.1.0 is now compared within the
  // cross-version tolerance, and both analyses reproduce. Its placeholder statistics (the
  // schema's defaults) are not evidence the engine computed: migration drops them and nothing is
  // re-run for them.
  it('should verify both analyses of a version 1 record within the cross-version tolerance', async () => {
    const run = await verify(writeV1(v1), '--data', `greenhouse=${fixtureCsv()}`);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
    expect(lineOf(run.stdout, 'pd-0fixture01')).toBe(
      'pd-0fixture01  Drip line, quartiles  reproduced (72 values within 1e-9 (recorded with polyadic 0.1.0))'
    );
    expect(lineOf(run.stdout, 'pd-0fixture02')).toBe(
      'pd-0fixture02  Drip line, fixed edges  reproduced (33 values within 1e-9 (recorded with polyadic 0.1.0))'
    );
    expect(run.stdout).toContain('2 of 2 analyses reproduce.');
  });

  it('should report a tampered version 1 value as before', async () => {
    const tampered = clone(v1);
    tampered.analyses[0].summary.synergy[0].coinformation += 1e-6;
    const run = await verify(writeV1(tampered), '--data', `greenhouse=${fixtureCsv()}`);
    expect(lineOf(run.stdout, 'pd-0fixture01')).toBe(
      'pd-0fixture01  Drip line, quartiles  DIFFERS: synergy[0] {valve_command, flow_l_min, leak_alarm} co_information -0.8391325795557911 vs -0.8391335795557918'
    );
    expect(run.code).toBe(VERIFY_EXIT.differs);
  });

  function lineOf(stdout: string, id: string): string {
    return stdout.split('\n').find(line => line.startsWith(id)) ?? '';
  }
});
