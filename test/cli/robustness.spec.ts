/**
 * `polyadic robustness` through the built bundle: the JSON and CSV tables, Kendall's tau-b in the
 * JSON and as notes on standard error (checked against scipy.stats.kendalltau), and one-line refusals.
 */
import { spawnSync } from 'child_process';
import { existsSync } from 'fs';
import * as path from 'path';

import { buildCli, csv, expectOneLineFailure, fixtureFolder, runCli } from './helpers';

const VENV_PYTHON = path.join(__dirname, '..', '..', '.venv', 'bin', 'python');
const PYTHON = process.env.POLYADIC_PYTHON ?? (existsSync(VENV_PYTHON) ? VENV_PYTHON : 'python3');

let bundle: string;
let data: string;

beforeAll(() => {
  bundle = buildCli();
  let state = 4242;
  const uniform = (): number => {
    // Park–Miller minimal standard generator (Park & Miller 1988, CACM 31:1192).
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
  const rows: number[][] = [];
  for (let i = 0; i < 300; i++) {
    const a = uniform();
    const b = uniform();
    rows.push([a, b, a + b + 0.2 * uniform(), uniform()].map(v => Number(v.toFixed(5))));
  }
  data = path.join(fixtureFolder({ 'log.csv': csv(['a', 'b', 'c', 'd'], rows) }), 'log.csv');
}, 120000);

describe('polyadic robustness', () => {
  it('should compare the base with each variant, tau-b as scipy.stats.kendalltau', () => {
    const run = runCli(bundle, ['robustness', data, '--bins', 'quantile:4', '--variant', 'bins=quantile:3', '--variant', 'estimator=gaussian-copula']);
    expect(run.code).toBe(0);
    const result = JSON.parse(run.stdout);
    expect(result.variants.map((v: { label: string }) => v.label)).toEqual(['base', 'bins=quantile:3', 'estimator=gaussian-copula']);
    expect(result.multiplet_count).toBe(6 + 4 + 1);
    const values = [0, 1, 2].map(v => result.multiplets.map((row: { values: number[] }) => row.values[v]));
    const reference = spawnSync(PYTHON, ['-c', `import json, sys, itertools
from scipy.stats import kendalltau
v = json.load(sys.stdin)
json.dump([float(kendalltau(a, b).statistic) for a, b in itertools.combinations(v, 2)], sys.stdout)`], {
      input: JSON.stringify(values),
      encoding: 'utf8'
    });
    expect(reference.status).toBe(0);
    const tau = JSON.parse(reference.stdout) as number[];
    result.agreement.forEach((pair: { kendall_tau: number }, i: number) => expect(Math.abs(pair.kendall_tau - tau[i])).toBeLessThanOrEqual(1e-12));
    const notes = run.stderr.split('\n').filter(line => line.startsWith("polyadic: note: Kendall's tau-b"));
    expect(notes).toHaveLength(3);
    const planted = result.multiplets.find((row: { columns: string[] }) => row.columns.join() === 'a,b,c');
    expect(planted.ranks).toEqual([1, 1, 1]);
  });

  it('should write CSV with a value and a rank column per variant', () => {
    const run = runCli(bundle, ['robustness', data, '--variant', 'estimator=miller-madow', '--format', 'csv', '--top', '2']);
    expect(run.code).toBe(0);
    const lines = run.stdout.trim().split('\n');
    expect(lines[0]).toBe('columns,order,co_information[base],co_information[estimator=miller-madow],rank[base],rank[estimator=miller-madow],same_sign,table,robust,verdict');
    expect(lines).toHaveLength(1 + 4);
    expect(lines[1].startsWith('a|b|c,3,')).toBe(true);
    // the most negative co-information is written as a number, not escaped as a formula
    expect(lines[1].split(',')[2]).toMatch(/^-\d/);
    // every row of the top-2 table is followed: its table and verdict close the row
    expect(lines[1]).toMatch(/,synergy,(true|false),(not )?robust: holds in [01] of 1 variant$/);
  });

  it('should refuse a bad variant in one line naming it', () => {
    expect(expectOneLineFailure(runCli(bundle, ['robustness', data, '--variant', 'order=2']))).toMatch(
      /--variant 'order=2': 'order' is not a setting a variant may change/
    );
    expect(expectOneLineFailure(runCli(bundle, ['robustness', data, '--variant', 'bins=quantile:0']))).toMatch(/--variant 'bins=quantile:0'/);
    expect(runCli(bundle, ['robustness', '--help']).stdout).toMatch(/Kendall's tau-b/);
  });
});
