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
import { DEFAULT_VARIANTS } from '../../src/cli/robustness';
import {
  defaultVariants,
  kendallTau,
  overlapOfTops,
  parseVariantList,
  parseVariantSpec,
  robustnessRun
} from '../../src/engine/robustness';
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

/**
 * A seeded table for the verdicts: two planted synergistic triplets (c = a + b + noise,
 * r = p − q + noise), a weaker one (w = s + t + more noise), a relation built on the quartiles
 * of x and y (z is the parity of their quartile indices, flipped in 20 % of the rows: it shows
 * under quantile:4 and k-means:4, hardly under 3 or 5 quantiles), and one noise column.
 */
function plantedTable(rows = 2000): ColumnView[] {
  let state = 12345;
  const uniform = (): number => {
    // Park–Miller minimal standard generator (Park & Miller 1988, CACM 31:1192).
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
  const names = ['a', 'b', 'c', 'p', 'q', 'r', 'x', 'y', 'z', 's', 't', 'w', 'e'];
  const values: Record<string, number[]> = Object.fromEntries(names.map(name => [name, []]));
  for (let i = 0; i < rows; i++) {
    for (const name of names) {
      values[name].push(uniform());
    }
    values.c[i] = values.a[i] + values.b[i] + 0.2 * uniform();
    values.r[i] = values.p[i] - values.q[i] + 0.2 * uniform();
    values.w[i] = values.s[i] + values.t[i] + 1.5 * uniform();
    values.z[i] = ((Math.floor(4 * values.x[i]) + Math.floor(4 * values.y[i])) % 2) ^ (uniform() < 0.2 ? 1 : 0);
  }
  return names.map(name => numericColumn(name, values[name]));
}

describe('defaultVariants', () => {
  it('should give quantile K−1 and K+1, fd, kmeans:K, the other estimators and the copula for continuous columns', () => {
    expect(defaultVariants(table(), { bins: 'quantile:4' })).toEqual(DEFAULT_VARIANTS);
    // `auto` bins these continuous columns by quantile:4: the same set (the CLI's constant).
    expect(defaultVariants(table(), {})).toEqual(DEFAULT_VARIANTS);
    expect(defaultVariants(table(), { bins: 'quantile:2', estimator: 'shrinkage' })).toEqual([
      'bins=quantile:3',
      'bins=fd',
      'bins=kmeans:2',
      'estimator=plugin',
      'estimator=miller-madow',
      'estimator=chao-shen',
      'estimator=gaussian-copula'
    ]);
  });

  it('should leave categorical columns unchanged and drop the copula when a column is not continuous', () => {
    const columns = [...table(40), categoricalColumn('fan', Array.from({ length: 40 }, (_, i) => (i % 3 === 0 ? 'on' : 'off')))];
    const variants = defaultVariants(columns, { bins: 'quantile:4', binsByColumn: { e: 'quantile:6' } });
    expect(variants[0]).toBe('bin.a=quantile:3;bin.b=quantile:3;bin.c=quantile:3;bin.d=quantile:3;bin.e=quantile:5');
    expect(variants[1]).toBe('bin.a=quantile:5;bin.b=quantile:5;bin.c=quantile:5;bin.d=quantile:5;bin.e=quantile:7');
    expect(variants.join(' ')).not.toMatch(/fan/);
    expect(variants).not.toContain('estimator=gaussian-copula');
    // The base's own estimator (plug-in) is not a variant.
    expect(variants).not.toContain('estimator=plugin');
    expect(variants).toContain('estimator=miller-madow');
    // Every default is a valid variant text whose label is the text itself.
    for (const text of variants) {
      expect(parseVariantSpec(text).label).toBe(text);
    }
  });

  it('should give the same set from a run\'s own binnings as from binning the columns again', () => {
    const withMissing = table(60).map((column, c) =>
      c === 1 ? numericColumn(column.name, Array.from({ length: 60 }, (_, i) => (i % 7 === 0 ? NaN : i % 5))) : column
    );
    const columns = [...withMissing, categoricalColumn('fan', Array.from({ length: 60 }, (_, i) => (i % 3 === 0 ? 'on' : 'off')))];
    const bases: IAnalyzeOptions[] = [
      { bins: 'quantile:4' },
      {},
      { bins: 'quantile:3', binsByColumn: { e: 'width:6' }, missing: 'category' },
      { bins: 'fd', estimator: 'miller-madow', missing: 'drop' }
    ];
    for (const base of bases) {
      const ran = analyze(columns, { ...base, maxOrder: 2 });
      expect(defaultVariants(columns, base, ran.columns)).toEqual(defaultVariants(columns, base));
    }
    // the given binnings are what the set is built from
    const ran = analyze(columns, { bins: 'quantile:4', maxOrder: 2 });
    const other = analyze(columns, { bins: 'quantile:6', maxOrder: 2 });
    expect(defaultVariants(columns, { bins: 'quantile:4' }, other.columns)).toEqual(defaultVariants(columns, { bins: 'quantile:6' }));
    expect(defaultVariants(columns, { bins: 'quantile:4' }, ran.columns)).not.toEqual(defaultVariants(columns, { bins: 'quantile:6' }));
  });

  it('should offer the discrete estimators when the base is the Gaussian copula', () => {
    expect(defaultVariants(table(), { estimator: 'gaussian-copula' })).toEqual([
      'estimator=plugin',
      'estimator=miller-madow',
      'estimator=chao-shen',
      'estimator=shrinkage'
    ]);
  });
});

describe('parseVariantList', () => {
  it('should read one variant per line and name an unknown rule or estimator with its line', () => {
    expect(parseVariantList('bins=quantile:3\n\n# a note\nestimator=chao-shen').map(v => v.options)).toEqual([
      { bins: 'quantile:3' },
      { estimator: 'chao-shen' }
    ]);
    expectPolyadic(() => parseVariantList('bins=quantile:3\nbins=octile:3'), 'usage', /^Line 2: Variant 'bins=octile:3'/, /"octile" is not a binning method/);
    expectPolyadic(() => parseVariantList('estimator=guess'), 'usage', /the estimator 'guess' is unknown; use one of plugin, miller-madow/);
    expectPolyadic(() => parseVariantList('order=2'), 'usage', /'order' is not a setting a variant may change/);
    // a column named with '=' (and markup) still goes in a bin.COLUMN key
    expect(parseVariantSpec('bin.<img src=x onerror=alert(1)>=quantile:3;estimator=plugin').options).toEqual({
      binsByColumn: { '<img src=x onerror=alert(1)>': 'quantile:3' },
      estimator: 'plugin'
    });
  });
});

describe('overlapOfTops', () => {
  it('should count the shared members of the most negative and most positive lists (checked by hand)', () => {
    // a's two most negative: indices 0, 1; b's: 1, 3 → 1 shared. Most positive: a 5, 4; b 4, 5 → 2.
    expect(overlapOfTops([-3, -2, -1, 0, 1, 2], [-1, -3, 0, -2, 2, 1], 2)).toEqual({ synergy: 1, redundancy: 2 });
    // Ties go by index: a's two most negative are 0, 1 (all tied at 0); b's are 1, 2 → 1 shared.
    // Most positive: a 3 then 0; b 0 then 1 → 1 shared (index 0).
    expect(overlapOfTops([0, 0, 0, 1], [1, 0, 0, 0], 2)).toEqual({ synergy: 1, redundancy: 1 });
  });
});

describe('robustnessRun verdicts', () => {
  const columns = plantedTable();
  const base: IAnalyzeOptions = { maxOrder: 3 };
  const texts = defaultVariants(columns, base);
  const run = robustnessRun(columns, base, texts.map(parseVariantSpec), 3);
  const verdict = (members: string): (typeof run.verdicts)[number] | undefined =>
    run.verdicts.find(row => row.columns.join() === members);

  it('should follow the base top 3 of each table first, then what each variant’s top 3 adds', () => {
    expect(texts).toHaveLength(7);
    expect(run.top).toBe(3);
    const fromBase = run.verdicts.filter(row => row.in_base_top);
    expect(fromBase.filter(row => row.table === 'synergy').map(row => row.ranks[0])).toEqual([1, 2, 3]);
    const positive = fromBase.filter(row => row.table === 'redundancy');
    expect(positive).toHaveLength(3);
    expect(positive.every(row => row.values[0] > 0)).toBe(true);
    // the base's six come first
    expect(run.verdicts.slice(0, 6).every(row => row.in_base_top)).toBe(true);
    // with every multiplet in its table (no top), the followed ones are exactly the union over the
    // base and the variants of each one's 10 most negative and 10 most positive
    const whole = robustnessRun(columns, base, texts.map(parseVariantSpec));
    expect(whole.multiplets).toHaveLength(whole.multiplet_count);
    const keys = whole.verdicts.map(row => row.columns.join());
    expect(new Set(keys).size).toBe(keys.length);
    const union = new Set<string>();
    for (let v = 0; v < whole.variants.length; v++) {
      const byValue = whole.multiplets.slice().sort((p, q) => p.values[v] - q.values[v]);
      for (const row of [...byValue.slice(0, 10).filter(r => r.values[v] < 0), ...byValue.slice(-10).filter(r => r.values[v] > 0)]) {
        union.add(row.columns.join());
      }
    }
    expect(new Set(keys)).toEqual(union);
    expect(whole.verdicts.some(row => !row.in_base_top)).toBe(true);
    // one a variant brought in says so, and its sign of reference is its table's
    for (const row of run.verdicts.filter(r => !r.in_base_top)) {
      expect(row.verdict).toMatch(/ \(not in the base's top 3\)$/);
      expect(row.in_top.some(Boolean)).toBe(true);
    }
  });

  it('should find the planted synergistic triplets robust under every default variant', () => {
    for (const members of ['a,b,c', 'p,q,r']) {
      const row = verdict(members);
      expect(row?.table).toBe('synergy');
      expect(row?.in_top).toEqual(Array(7).fill(true));
      expect(row?.same_sign).toBe(1);
      expect(row?.robust).toBe(true);
      expect(row?.verdict).toBe('robust: holds in 7 of 7 variants');
    }
  });

  it('should report the quartile-built relation as not robust', () => {
    const row = verdict('x,y,z');
    expect(row?.ranks[0]).toBe(3);
    // It keeps its sign but leaves the top 3 under quantile:3, quantile:5 and fd: 4 of 7 < 80 %.
    expect(row?.same_sign).toBe(1);
    expect(row?.in_top).toEqual([false, false, false, true, true, true, true]);
    expect(row?.robust).toBe(false);
    expect(row?.verdict).toBe('not robust: holds in 4 of 7 variants');
  });

  it('should give the overlap of every two variants from their values', () => {
    expect(run.agreement).toHaveLength((8 * 7) / 2);
    // Without a top the table holds every multiplet, so the lists can be rebuilt from it.
    const full = robustnessRun(columns, base, texts.map(parseVariantSpec));
    const at = (v: number): number[] => full.multiplets.map(row => row.values[v]);
    expect(full.multiplets).toHaveLength(full.multiplet_count);
    const first = full.agreement[0];
    const expected = overlapOfTops(at(0), at(1), 10);
    expect([first.overlap_synergy, first.overlap_redundancy, first.overlap_of]).toEqual([expected.synergy, expected.redundancy, 10]);
    // The two planted triplets stay at the synergy end under the first neighbour, so at least 2 shared.
    expect(first.overlap_synergy).toBeGreaterThanOrEqual(2);
  });
});

describe('defaultVariants on a base spelt out column by column', () => {
  it('should give the same variants as the uniform base, and robustnessRun the same values', () => {
    const columns = table(200);
    const spelt: IAnalyzeOptions = { binsByColumn: Object.fromEntries(['a', 'b', 'c', 'd', 'e'].map(name => [name, 'quantile:4'])), maxOrder: 3 };
    expect(defaultVariants(columns, spelt)).toEqual(DEFAULT_VARIANTS);
    const variants = DEFAULT_VARIANTS.slice(0, 3).map(parseVariantSpec);
    const uniform = robustnessRun(columns, { bins: 'quantile:4', maxOrder: 3 }, variants);
    expect(robustnessRun(columns, spelt, variants).multiplets).toEqual(uniform.multiplets);
  });
});

describe('overlapOfTops on long vectors', () => {
  it('should equal the overlap of fully sorted lists (ties by index), short and long lists alike', () => {
    let state = 5;
    const next = (): number => {
      state = (state * 48271) % 2147483647;
      return state / 2147483647;
    };
    const a = Array.from({ length: 3000 }, () => Math.round(next() * 200) / 10);
    const b = a.map(v => v + Math.round(next() * 40) / 10);
    const sorted = (x: number[], sign: number, size: number): number[] =>
      x.map((_, j) => j).sort((p, q) => sign * (x[p] - x[q]) || p - q).slice(0, size);
    for (const size of [1, 10, 64, 65, 500]) {
      const shared = (sign: number): number => {
        const first = new Set(sorted(a, sign, size));
        return sorted(b, sign, size).filter(j => first.has(j)).length;
      };
      expect(overlapOfTops(a, b, size)).toEqual({ synergy: shared(1), redundancy: shared(-1) });
    }
  });
});
