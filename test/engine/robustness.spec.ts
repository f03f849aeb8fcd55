/**
 * The robustness run: Kendall's τ-b against scipy.stats.kendalltau, ranks against
 * scipy.stats.rankdata, the values against analyze() under each variant, and the refusals.
 * The Python used is $POLYADIC_PYTHON, else the project's `.venv`, else `python3`.
 */
import { spawnSync } from 'child_process';
import { existsSync } from 'fs';
import * as path from 'path';

import { analyze } from '../../src/engine/analyze';
import { averageRanks } from '../../src/engine/copula/transform';
import { kendallTau, robustnessRun } from '../../src/engine/robustness';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import { categoricalColumn, expectPolyadic, numericColumn } from './helpers';

const VENV_PYTHON = path.join(__dirname, '..', '..', '.venv', 'bin', 'python');
const PYTHON = process.env.POLYADIC_PYTHON ?? (existsSync(VENV_PYTHON) ? VENV_PYTHON : 'python3');

function python<T>(script: string, input: unknown): T {
  const run = spawnSync(PYTHON, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 1 << 26 });
  if (run.error || run.status !== 0) {
    throw new Error(`The reference needs Python with scipy (${PYTHON}): ${run.error?.message ?? run.stderr}`);
  }
  return JSON.parse(run.stdout) as T;
}

const KENDALL = `import json, sys
from scipy.stats import kendalltau
out = []
for x, y in json.load(sys.stdin):
    t = kendalltau(x, y).statistic
    out.append(None if t != t else float(t))
json.dump(out, sys.stdout)`;

/** A seeded table: a synergistic triplet (c = a + b + noise), a monotone pair, noise, and a flag. */
function table(rows = 400): ColumnView[] {
  let state = 99;
  const uniform = (): number => {
    // Park–Miller minimal standard generator (Park & Miller 1988, CACM 31:1192).
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
  const a: number[] = [];
  const b: number[] = [];
  const c: number[] = [];
  const d: number[] = [];
  const e: number[] = [];
  for (let i = 0; i < rows; i++) {
    a.push(uniform());
    b.push(uniform());
    c.push(a[i] + b[i] + 0.2 * uniform());
    d.push(Math.exp(2 * a[i]) + 0.3 * uniform());
    e.push(uniform());
  }
  return [numericColumn('a', a), numericColumn('b', b), numericColumn('c', c), numericColumn('d', d), numericColumn('e', e)];
}

describe('kendallTau', () => {
  it("should equal scipy.stats.kendalltau (tau-b) with and without ties", () => {
    let state = 7;
    const next = (): number => {
      state = (state * 48271) % 2147483647;
      return state / 2147483647;
    };
    const cases: [number[], number[]][] = [
      [[1, 2, 3, 4, 5], [5, 4, 3, 2, 1]],
      [[1, 2, 2, 3, 3, 3], [1, 3, 2, 2, 3, 1]],
      [[1, 1, 1], [1, 2, 3]],
      [[4, 1], [2, 2.5]]
    ];
    for (const size of [10, 57, 400]) {
      const x = Array.from({ length: size }, () => next());
      cases.push([x, x.map(v => v + 0.5 * next())]);
      cases.push([x.map(v => Math.round(v * 5)), x.map(v => Math.round((v + next()) * 3))]);
    }
    const reference = python<(number | null)[]>(KENDALL, cases);
    cases.forEach(([x, y], i) => {
      const mine = kendallTau(x, y);
      if (reference[i] === null) {
        expect(mine).toBeNaN();
      } else {
        expect(Math.abs(mine - (reference[i] as number))).toBeLessThanOrEqual(1e-12);
      }
    });
  });
});

describe('robustnessRun', () => {
  const base: IAnalyzeOptions = { bins: 'quantile:4', maxOrder: 3, units: 'nats' };
  const variants = [
    { label: 'q3', options: { bins: 'quantile:3' } },
    { label: 'q6-mm', options: { bins: 'quantile:6', estimator: 'miller-madow' as const } },
    { label: 'copula', options: { estimator: 'gaussian-copula' as const } }
  ];
  const columns = table();
  const run = robustnessRun(columns, base, variants);

  it('should give each variant the co-information analyze() gives (MI = TC for pairs, = O-information for triplets)', () => {
    expect(run.variants.map(v => v.label)).toEqual(['base', 'q3', 'q6-mm', 'copula']);
    expect(run.multiplet_count).toBe(10 + 10);
    const settings = [base, ...variants.map(v => ({ ...base, ...v.options }))];
    settings.forEach((options, v) => {
      const result = analyze(columns, options);
      for (const row of run.multiplets) {
        const same = result.multiplets.find(m => m.columns.join() === row.columns.join());
        // co-information of a pair is its mutual information = TC; of a triplet it equals O-information
        const expected = row.order === 2 ? same?.total_correlation : same?.o_information;
        expect(Math.abs(row.values[v] - (expected as number))).toBeLessThanOrEqual(1e-12);
      }
    });
  });

  it('should rank as scipy.stats.rankdata, count signs, and give Kendall tau-b as scipy.stats.kendalltau', () => {
    const values = run.variants.map((_, v) => run.multiplets.map(row => row.values[v]));
    const reference = python<{ ranks: number[][]; tau: number[] }>(
      `import json, sys, itertools
from scipy.stats import kendalltau, rankdata
values = json.load(sys.stdin)
json.dump({'ranks': [rankdata(v).tolist() for v in values],
           'tau': [float(kendalltau(a, b).statistic) for a, b in itertools.combinations(values, 2)]}, sys.stdout)`,
      values
    );
    run.multiplets.forEach((row, j) => {
      expect(row.ranks).toEqual(reference.ranks.map(ranks => ranks[j]));
      const sign = Math.sign(row.values[0]);
      expect(row.same_sign).toBe(row.values.slice(1).filter(v => Math.sign(v) === sign).length / 3);
    });
    expect(run.agreement.map(pair => `${pair.a}/${pair.b}`)).toEqual([
      'base/q3', 'base/q6-mm', 'base/copula', 'q3/q6-mm', 'q3/copula', 'q6-mm/copula'
    ]);
    run.agreement.forEach((pair, i) => expect(Math.abs(pair.kendall_tau - reference.tau[i])).toBeLessThanOrEqual(1e-12));
    // The planted synergy {a, b, c} and its proxy {b, c, d} (d is a monotone function of a plus
    // noise) are the two most negative under every variant.
    const planted = run.multiplets.find(row => row.columns.join() === 'a,b,c');
    const proxy = run.multiplets.find(row => row.columns.join() === 'b,c,d');
    expect(planted?.ranks.map((rank, v) => rank + (proxy?.ranks[v] ?? NaN))).toEqual([3, 3, 3, 3]);
    expect(planted?.same_sign).toBe(1);
  });

  it('should keep the most extreme base multiplets with top', () => {
    const topped = robustnessRun(columns, base, variants, 2);
    expect(topped.multiplets).toHaveLength(4);
    expect(topped.multiplets[0].ranks[0]).toBe(1);
    expect(topped.agreement).toEqual(run.agreement);
  });

  it('should name the variant that fails, and refuse no variant, statistics and repeated labels', () => {
    const flagged = [...columns, categoricalColumn('fan', Array.from({ length: 400 }, (_, i) => (i % 3 === 0 ? 'on' : 'off')))];
    expectPolyadic(
      () => robustnessRun(flagged, base, [{ label: 'copula', options: { estimator: 'gaussian-copula' } }]),
      'usage',
      /^Variant 'copula': Column 'fan' is categorical/
    );
    expectPolyadic(() => robustnessRun(columns, base, []), 'usage', /at least one variant/);
    expectPolyadic(() => robustnessRun(columns, { ...base, statistics: { surrogates: 9 } }, variants), 'usage', /statistics/);
    expectPolyadic(() => robustnessRun(columns, base, [variants[0], variants[0]]), 'usage', /Two variants are labelled 'q3'/);
  });
});

describe('averageRanks', () => {
  it('should equal scipy.stats.rankdata', () => {
    const x = [3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5];
    const reference = python<number[]>(`import json, sys
from scipy.stats import rankdata
json.dump(rankdata(json.load(sys.stdin)).tolist(), sys.stdout)`, x);
    expect(Array.from(averageRanks(x))).toEqual(reference);
  });
});
