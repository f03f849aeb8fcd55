/**
 * The statistics of the engine: settings checks, independence surrogates, Benjamini–Hochberg
 * q-values, bootstrap intervals, null bands, and the block merge that makes the result
 * independent of how replicates are shared out.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyze, latticeInput, planEvidence, prepareColumns } from '../../src/engine/analyze';
import { computeLattice } from '../../src/engine/lattice';
import { benjaminiHochberg, surrogatePValue } from '../../src/engine/statistics/conclude';
import { MAX_SURROGATES, resolveStatistics } from '../../src/engine/statistics/options';
import {
  planReplicateBlocks,
  ReplicateAccumulator,
  resampleRows,
  runAllReplicates,
  runReplicateBlock,
  shuffleColumns
} from '../../src/engine/statistics/replicates';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import { runPython } from '../worker/helpers';
import { expectPolyadic, numericColumn } from './helpers';

/** Columns of small integers (categorical binning keeps every level). */
function intColumns(values: number[][]): ColumnView[] {
  return values.map((column, c) => numericColumn(`x${c}`, column, 'int64'));
}

/** A seeded table: `noise` independent columns of `levels` levels, and optionally a noisy XOR triplet first. */
function table(rows: number, noise: number, seed: number, xor: boolean, levels = 2): number[][] {
  const rng = xoroshiro128plus(seed);
  const int = (hi: number): number => unsafeUniformIntDistribution(0, hi, rng);
  const columns: number[][] = [];
  if (xor) {
    const a: number[] = [];
    const b: number[] = [];
    const c: number[] = [];
    for (let i = 0; i < rows; i++) {
      a.push(int(1));
      b.push(int(1));
      // 10 % of the parity bits flipped
      c.push((a[i] ^ b[i]) ^ (int(9) === 0 ? 1 : 0));
    }
    columns.push(a, b, c);
  }
  for (let k = 0; k < noise; k++) {
    columns.push(Array.from({ length: rows }, () => int(levels - 1)));
  }
  return columns;
}

const CATEGORICAL: IAnalyzeOptions = { bins: 'categorical' };

describe('resolveStatistics', () => {
  it('should be off when nothing is asked for', () => {
    expect(resolveStatistics(undefined)).toBeNull();
    expect(resolveStatistics({ surrogates: 0, bootstrap: 0, seed: 3 })).toBeNull();
  });

  it('should fill in the defaults', () => {
    expect(resolveStatistics({ surrogates: 10 })).toEqual({
      surrogates: 10,
      seed: 0,
      bootstrap: 0,
      tail: 'two',
      alpha: 0.05,
      beyondPairs: 0,
      fitDraws: 200,
      sharpen: 0
    });
  });

  it('should name the option at fault', () => {
    expect(expectPolyadic(() => resolveStatistics({ surrogates: 1.5 }), 'usage', /whole number/, /1\.5/).detail.option).toBe(
      'surrogates'
    );
    expect(
      expectPolyadic(() => resolveStatistics({ surrogates: MAX_SURROGATES + 1 }), 'limit', /at most 100,000/).detail.option
    ).toBe('surrogates');
    expect(expectPolyadic(() => resolveStatistics({ bootstrap: -2 }), 'usage', /bootstrap/).detail.option).toBe('bootstrap');
    expect(expectPolyadic(() => resolveStatistics({ surrogates: 5, seed: 2.5 }), 'usage', /seed/).detail.option).toBe('seed');
    expect(expectPolyadic(() => resolveStatistics({ surrogates: 5, seed: -1 }), 'usage', /seed/).detail.option).toBe('seed');
    expect(
      expectPolyadic(
        () => resolveStatistics({ surrogates: 5, tail: 'both' as unknown as 'two' }),
        'usage',
        /Unknown tail 'both'/
      ).detail.option
    ).toBe('tail');
    expect(expectPolyadic(() => resolveStatistics({ surrogates: 5, alpha: 1 }), 'usage', /alpha/).detail.option).toBe(
      'alpha'
    );
    expect(expectPolyadic(() => resolveStatistics({ sharpen: 100 }), 'usage', /ask for surrogates/).detail.option).toBe(
      'sharpen'
    );
  });
});

describe('shuffleColumns', () => {
  it('should keep every column its own values and break the row pairing', () => {
    const codes = [Int32Array.from({ length: 500 }, (_, i) => i % 7), Int32Array.from({ length: 500 }, (_, i) => i % 7)];
    const shuffled = shuffleColumns(codes, 11);
    for (let c = 0; c < 2; c++) {
      expect(Array.from(shuffled[c]).sort()).toEqual(Array.from(codes[c]).sort());
    }
    // The two columns were equal row by row; shuffled independently they are not.
    let equal = 0;
    for (let i = 0; i < 500; i++) {
      equal += shuffled[0][i] === shuffled[1][i] ? 1 : 0;
    }
    expect(equal).toBeLessThan(150);
  });

  it('should give the same permutation for the same seed and another for another seed', () => {
    const codes = [Int32Array.from({ length: 100 }, (_, i) => i)];
    expect(shuffleColumns(codes, 5)[0]).toEqual(shuffleColumns(codes, 5)[0]);
    expect(shuffleColumns(codes, 5)[0]).not.toEqual(shuffleColumns(codes, 6)[0]);
  });
});

describe('resampleRows', () => {
  it('should draw row indices within range, with repeats', () => {
    const picks = resampleRows(1000, 3);
    expect(Math.min(...picks)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...picks)).toBeLessThan(1000);
    // About 1 − 1/e of the rows appear in a resample of the same size (common practice).
    expect(new Set(picks).size / 1000).toBeCloseTo(1 - Math.exp(-1), 1);
  });
});

describe('benjaminiHochberg', () => {
  it("should equal statsmodels' multipletests(method='fdr_bh') to the last bit", () => {
    const rng = xoroshiro128plus(42);
    const sets: number[][] = [
      [0.01, 0.04, 0.03, 0.2, 0.5, 0.001, 0.04],
      [1, 1, 1],
      [0.5],
      Array.from({ length: 300 }, () => (unsafeUniformIntDistribution(1, 1000, rng) / 1001) ** 3)
    ];
    const reference = runPython(
      `
import json, sys
from statsmodels.stats.multitest import multipletests
sets = json.load(sys.stdin)
print(json.dumps([list(multipletests(p, method='fdr_bh')[1]) for p in sets]))
`,
      sets
    ) as number[][];
    sets.forEach((p, k) => {
      expect(Array.from(benjaminiHochberg(p))).toEqual(reference[k]);
    });
  });
});

describe('surrogatePValue', () => {
  it('should follow (1 + #as extreme) / (N + 1) for each tail', () => {
    expect(surrogatePValue(0, 99, 99, 'synergy')).toBe(1 / 100);
    expect(surrogatePValue(0, 99, 99, 'redundancy')).toBe(1);
    expect(surrogatePValue(0, 99, 99, 'two')).toBe(2 / 100);
    expect(surrogatePValue(60, 50, 99, 'two')).toBe(1);
  });
});

describe('analyze with statistics', () => {
  it('should find a planted noisy XOR triplet against the independence surrogates', () => {
    const columns = intColumns(table(600, 3, 1, true));
    const result = analyze(columns, { ...CATEGORICAL, maxOrder: 3, statistics: { surrogates: 199, seed: 4, tail: 'synergy' } });
    const triplet = result.multiplets.find(row => row.columns.join() === 'x0,x1,x2')!;
    expect(triplet.co_information).toBeLessThan(-0.3);
    expect(triplet.p_value).toBe(1 / 200);
    expect(triplet.o_information_p_value).toBe(1 / 200);
    // The surrogate mean of a triplet's co-information is near 0 (plug-in bias only).
    expect(Math.abs(triplet.null_mean!)).toBeLessThan(0.01);
    expect(triplet.co_information_corrected).toBeCloseTo(triplet.co_information - triplet.null_mean!, 12);
    // Single columns are not tested; pairs have no O-information test.
    const single = result.multiplets.find(row => row.order === 1)!;
    expect(single.p_value).toBeNull();
    const pair = result.multiplets.find(row => row.order === 2)!;
    expect(pair.p_value).not.toBeNull();
    expect(pair.o_information_p_value).toBeNull();
    expect(result.statistics!.families.co_information).toEqual({ orders: [2, 3], count: 15 + 20 });
    expect(result.statistics!.families.o_information).toEqual({ orders: [3], count: 20 });
    for (const band of result.statistics!.null_bands) {
      expect(band.low).toBeLessThanOrEqual(band.mean);
      expect(band.mean).toBeLessThanOrEqual(band.high);
    }
    // The triplet lies far below its order's null band.
    const band3 = result.statistics!.null_bands.find(band => band.order === 3)!;
    expect(triplet.co_information).toBeLessThan(band3.low);
  });

  it('should give p-values uniform under independence (scipy.stats.kstest at the 1 % level)', () => {
    const two: number[] = [];
    const synergy: number[] = [];
    for (let dataset = 0; dataset < 200; dataset++) {
      const columns = intColumns(table(300, 3, 1000 + dataset, false, 3));
      for (const [tail, out] of [['two', two], ['synergy', synergy]] as const) {
        const result = analyze(columns, {
          ...CATEGORICAL,
          statistics: { surrogates: 99, seed: dataset, tail }
        });
        // One pre-chosen multiplet per dataset, so the p-values are independent.
        out.push(result.multiplets.find(row => row.columns.join() === 'x0,x1,x2')!.p_value!);
      }
    }
    const tests = runPython(
      `
import json, sys
from scipy import stats
samples = json.load(sys.stdin)
print(json.dumps([stats.kstest(s, 'uniform').pvalue for s in samples]))
`,
      [two, synergy]
    ) as number[];
    expect(tests[0]).toBeGreaterThan(0.01);
    expect(tests[1]).toBeGreaterThan(0.01);
  });

  it('should sharpen the p-values at their floor with fresh surrogates, so a strong synergy reaches q < 0.05', () => {
    const columns = intColumns(table(2000, 9, 21, true));
    const plain = analyze(columns, { ...CATEGORICAL, maxOrder: 3, statistics: { surrogates: 99, seed: 3, tail: 'synergy' } });
    const tripletOf = (result: typeof plain) => result.multiplets.find(row => row.columns.join() === 'x0,x1,x2')!;
    // 12 columns: 66 pairs + 220 triplets tested; with 99 surrogates no p goes below 1/100, so
    // the strongest q is at least 286/100 divided by the number of multiplets at that floor.
    expect(tripletOf(plain).p_value).toBe(1 / 100);
    expect(tripletOf(plain).q_value).toBeGreaterThan(0.05);
    const sharp = analyze(columns, {
      ...CATEGORICAL,
      maxOrder: 3,
      statistics: { surrogates: 99, seed: 3, tail: 'synergy', sharpen: 9999 }
    });
    const triplet = tripletOf(sharp);
    expect(triplet.p_value).toBe(1 / 10000);
    expect(triplet.p_surrogates).toBe(9999);
    expect(triplet.q_value).toBeLessThan(0.05);
    expect(sharp.statistics!.sharpened).toBeGreaterThanOrEqual(1);
    // Multiplets not at the floor keep their first-stage p-value.
    const unsharpened = sharp.multiplets.filter(row => row.order >= 2 && row.p_surrogates === 99);
    expect(unsharpened.length).toBeGreaterThan(250);
    for (const row of unsharpened.slice(0, 20)) {
      const before = plain.multiplets.find(other => other.columns.join() === row.columns.join())!;
      expect(row.p_value).toBe(before.p_value);
    }
  });

  it('should give bootstrap intervals around the estimate and the share of the same sign', () => {
    const columns = intColumns(table(800, 2, 9, true));
    const result = analyze(columns, { ...CATEGORICAL, maxOrder: 3, statistics: { bootstrap: 200, seed: 1 } });
    const triplet = result.multiplets.find(row => row.columns.join() === 'x0,x1,x2')!;
    expect(triplet.ci_low!).toBeLessThan(triplet.co_information);
    expect(triplet.ci_high!).toBeGreaterThan(triplet.co_information);
    expect(triplet.ci_high!).toBeLessThan(0);
    expect(triplet.same_sign).toBe(1);
    expect(triplet.entropy_ci_low!).toBeLessThanOrEqual(triplet.entropy_ci_high!);
    expect(result.statistics!.bootstrap_multiplets).toBe(result.multiplets.length);
    // No surrogates: no p-values.
    expect(triplet.p_value).toBeUndefined();
  });

  it('should give identical results however the blocks arrive', () => {
    const columns = intColumns(table(400, 3, 5, true));
    const options: IAnalyzeOptions = { ...CATEGORICAL, statistics: { surrogates: 70, bootstrap: 40, seed: 9 } };
    const prepared = prepareColumns(columns, options);
    const input = latticeInput(prepared, options);
    const lattice = computeLattice(input);
    const plan = planEvidence(prepared, options, lattice);
    const statistics = resolveStatistics(options.statistics)!;
    const inOrder = runAllReplicates(input, plan.targets, statistics, lattice.indexing.size);
    const blocks = planReplicateBlocks(statistics).map(block => runReplicateBlock(input, plan.targets, statistics, block));
    const reversed = new ReplicateAccumulator(lattice.indexing.size, statistics, plan.targets.bootstrapped.length);
    blocks.reverse().forEach(block => reversed.add(block));
    expect(reversed.complete).toBe(true);
    expect(reversed.coSum).toEqual(inOrder.coSum);
    expect(reversed.oSumSquares).toEqual(inOrder.oSumSquares);
    expect(reversed.coLow).toEqual(inOrder.coLow);
    expect(reversed.bootstrap).toEqual(inOrder.bootstrap);
    expect(reversed.band).toEqual(inOrder.band);
  });

  it('should repeat itself on the same seed and change with another', () => {
    const columns = intColumns(table(300, 3, 2, false));
    const run = (seed: number): string =>
      JSON.stringify(analyze(columns, { ...CATEGORICAL, statistics: { surrogates: 30, bootstrap: 10, seed } }));
    expect(run(3)).toBe(run(3));
    expect(run(3)).not.toBe(run(4));
  });

  it('should fit the pairwise-preserving null to the most extreme multiplets of order ≥ 3', () => {
    const columns = intColumns(table(1000, 2, 3, true));
    const result = analyze(columns, { ...CATEGORICAL, maxOrder: 3, statistics: { beyondPairs: 1, fitDraws: 50, seed: 2 } });
    const triplet = result.multiplets.find(row => row.columns.join() === 'x0,x1,x2')!;
    // Noisy XOR: most of its structure is beyond its pairs, which are nearly independent.
    expect(triplet.connected_information!).toBeGreaterThan(0.3);
    expect(triplet.connected_p_value).toBe(1 / 51);
    expect(result.statistics!.beyond_pairs).toEqual({ per_table: 1, draws: 50, fitted: 2, refused: [] });
    expect(result.multiplets.find(row => row.order === 2)!.connected_information).toBeNull();
  });

  it('should count the multiplets with fewer rows than possible cells', () => {
    const columns = intColumns(table(20, 3, 1, false, 3));
    const result = analyze(columns, CATEGORICAL);
    // 3 pairs of 9 cells (20 rows: adequate) and 1 triplet of 27 cells (inadequate).
    expect(result.inadequate_count).toBe(1);
    const triplet = result.multiplets.find(row => row.order === 3)!;
    expect(triplet.adequacy).toBeCloseTo(20 / 27, 12);
  });
});
