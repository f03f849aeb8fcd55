/**
 * The Gaussian-copula estimator through the command line: `polyadic analyze --estimator
 * gaussian-copula` (the built bundle, one thread and a pool of worker threads, with and without
 * statistics), its one-line refusals, and `polyadic verify` re-deriving a recorded copula analysis.
 */
import * as fs from 'fs';
import * as path from 'path';

import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalysisResult, IAnalyzeOptions } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { recordFromResult } from '../../src/record/recordFromResult';
import { validateRecord } from '../../src/record/validate';
import { captureStreams, clone, greenhouseTable, notebookWith, recordOf, toCsv } from '../record/helpers';
import { buildCli, csv, expectOneLineFailure, fixtureFolder, runCli } from './helpers';

let bundle: string;
let folder: string;
let continuous: string;
let mixed: string;

/** Seeded continuous columns: z depends on x + y (synergy), w on x alone, noise on nothing. */
function continuousRows(rows: number): number[][] {
  let state = 12345;
  const uniform = (): number => {
    // Park–Miller minimal standard generator (Park & Miller 1988, CACM 31:1192).
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
  const out: number[][] = [];
  for (let i = 0; i < rows; i++) {
    const x = uniform();
    const y = uniform();
    const z = x + y + 0.3 * uniform();
    const w = Math.exp(x) + 0.5 * uniform();
    out.push([x, y, z, w, uniform()].map(v => Number(v.toFixed(6))));
  }
  return out;
}

beforeAll(() => {
  bundle = buildCli();
  const rows = continuousRows(600);
  folder = fixtureFolder({
    'continuous.csv': csv(['x', 'y', 'z', 'w', 'noise'], rows),
    'mixed.csv': csv(['x', 'valve'], rows.map(row => [row[0], row[1] > 0.5 ? 'open' : 'shut'])),
    'flat.csv': csv(['x', 'level'], rows.map(row => [row[0], 4]))
  });
  continuous = path.join(folder, 'continuous.csv');
  mixed = path.join(folder, 'mixed.csv');
}, 120000);

function result(args: string[]): IAnalysisResult {
  const run = runCli(bundle, args);
  expect(run.stderr).not.toMatch(/internal error/);
  expect(run.code).toBe(0);
  return JSON.parse(run.stdout) as IAnalysisResult;
}

describe('polyadic analyze --estimator gaussian-copula', () => {
  it('should give the engine result, copula-normalised columns, and the same bits on one thread and on three', () => {
    const one = result(['analyze', continuous, '--estimator', 'gaussian-copula', '--threads', '1']);
    const three = result(['analyze', continuous, '--estimator', 'gaussian-copula', '--threads', '3']);
    expect(one.estimator).toBe('gaussian-copula');
    expect(one.columns.map(column => column.binning.method)).toEqual(['copula', 'copula', 'copula', 'copula', 'copula']);
    expect(one.multiplet_count).toBe(31);
    expect(three.multiplets).toEqual(one.multiplets);
    const triple = one.multiplets.find(row => row.columns.join() === 'x,y,z');
    expect(triple?.co_information as number).toBeLessThan(-0.1);
  });

  it('should run surrogates and bootstrap on worker threads as in one thread', () => {
    const args = ['analyze', continuous, '--estimator', 'gaussian-copula', '--max-order', '3', '--surrogates', '39', '--bootstrap', '50', '--seed', '9'];
    const one = result([...args, '--threads', '1']);
    const two = result([...args, '--threads', '2']);
    expect(two.multiplets).toEqual(one.multiplets);
    const triple = one.multiplets.find(row => row.columns.join() === 'x,y,z');
    expect(triple?.p_value).toBeCloseTo(2 / 40, 12);
    expect(triple?.ci_high as number).toBeLessThan(0);
  });

  it('should refuse a categorical column in one line naming it', () => {
    const message = expectOneLineFailure(runCli(bundle, ['analyze', mixed, '--estimator', 'gaussian-copula']));
    expect(message).toMatch(/'valve' is categorical/);
    expect(message).toMatch(/discrete estimator/);
  });

  it('should refuse a constant column in one line naming it', () => {
    const message = expectOneLineFailure(runCli(bundle, ['analyze', path.join(folder, 'flat.csv'), '--estimator', 'gaussian-copula']));
    expect(message).toMatch(/'level' is constant/);
  });

  it('should list the estimator in --help', () => {
    expect(runCli(bundle, ['--help']).stdout).toMatch(/gaussian-copula/);
  });
});

describe('polyadic verify of a Gaussian-copula analysis', () => {
  const options: IAnalyzeOptions = { estimator: 'gaussian-copula', columns: ['flow_l_min', 'humidity_a_pct', 'humidity_b_pct', 'air_temp_c'] };

  async function notebook(tamper = false): Promise<{ file: string; data: string }> {
    const data = path.join(folder, 'greenhouse.csv');
    fs.writeFileSync(data, toCsv(greenhouseTable(300, 4)));
    const source = await readDataFile(data, { columns: options.columns });
    const analysis = recordFromResult({
      options,
      result: analyze(source.columns, options),
      source: { frame: 'greenhouse', columns: source.columns, fingerprint: await fingerprintColumns(source.columns) },
      label: 'Copula check',
      created: new Date('2031-03-02T08:00:00Z')
    });
    const record = recordOf([tamper ? Private.nudged(analysis) : analysis]);
    const checked = validateRecord(record);
    expect(checked.ok ? [] : checked.problems).toEqual([]);
    const file = path.join(folder, tamper ? 'tampered.ipynb' : 'copula.ipynb');
    fs.writeFileSync(file, JSON.stringify(notebookWith(record)));
    return { file, data };
  }

  it('should reproduce the recorded analysis (binning recorded as copula)', async () => {
    const { file, data } = await notebook();
    const io = captureStreams();
    const code = await runVerify([file, '--data', `greenhouse=${data}`], io);
    expect(io.stderr.text).toBe('');
    expect(io.stdout.text).toMatch(/Copula check {2}reproduced/);
    expect(code).toBe(VERIFY_EXIT.reproduced);
  });

  it('should say DIFFERS when a recorded value is off by 1e-12', async () => {
    const { file, data } = await notebook(true);
    const io = captureStreams();
    const code = await runVerify([file, '--data', `greenhouse=${data}`], io);
    expect(code).toBe(VERIFY_EXIT.differs);
    expect(io.stdout.text).toMatch(/DIFFERS: .*o_information/);
  });
});

namespace Private {
  /** The record with the first synergy multiplet's O-information moved by 1e-12. */
  export function nudged<T extends { summary: { synergy: { o_information: number }[] } }>(analysis: T): T {
    const copy = clone(analysis);
    copy.summary.synergy[0].o_information += 1e-12;
    return copy;
  }
}
