/**
 * The weighted walk: a table and its distinct joint rows with their counts (an aggregated
 * source, in another row order) give the same lattice and the same analysis, bit for bit, for
 * every count estimator, with and without the walk's shortcuts, in one walk or split into the
 * units of one or two workers.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyzeCodes, latticeInput } from '../../src/engine/analyze';
import { applyWeightedMissingPolicy } from '../../src/engine/aggregate/weighted';
import type { IBinnedColumn, IPreparedCodes } from '../../src/engine/binning';
import { entropyOfCounts } from '../../src/engine/estimators';
import { assembleLattice, computeLattice, ILattice, ILatticeInput, ISubtreeResult, jointEntropyOfCodes } from '../../src/engine/lattice';
import { createIndexing, indexOfColumns } from '../../src/engine/multiplets';
import type { EstimatorName, IColumnBinning } from '../../src/engine/types';
import { planUnits, walkUnit } from '../../src/worker/units';
import { firstBitDifference } from '../worker/helpers';
import { expectPolyadic } from './helpers';

const COUNT_ESTIMATORS: EstimatorName[] = ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'];

/** A seeded table: `columns` columns of `bins` codes, with dependence (column c copies c − 1 often) and repeats. */
function seededTable(rows: number, columns: number, bins: number[], seed: number): Int32Array[] {
  let rng = xoroshiro128plus(seed);
  const draw = (n: number): number => {
    const [value, next] = [unsafeUniformIntDistribution(0, n - 1, rng), rng];
    rng = next;
    return value;
  };
  const codes = Array.from({ length: columns }, () => new Int32Array(rows));
  for (let i = 0; i < rows; i++) {
    for (let c = 0; c < columns; c++) {
      const K = bins[c];
      codes[c][i] = c > 0 && draw(3) === 0 ? codes[c - 1][i] % K : draw(K);
    }
  }
  return codes;
}

/** The distinct joint rows of a table with their counts, in a seeded shuffled order. */
function aggregate(codes: Int32Array[], seed: number): { codes: Int32Array[]; weights: Int32Array } {
  const rows = codes[0].length;
  const counts = new Map<string, { row: number; count: number }>();
  for (let i = 0; i < rows; i++) {
    const key = codes.map(column => column[i]).join(',');
    const seen = counts.get(key);
    if (seen) {
      seen.count++;
    } else {
      counts.set(key, { row: i, count: 1 });
    }
  }
  const distinct = [...counts.values()];
  // Fisher–Yates with the seeded generator: the distinct rows in another order than the table's
  let rng = xoroshiro128plus(seed);
  for (let i = distinct.length - 1; i > 0; i--) {
    const j = unsafeUniformIntDistribution(0, i, rng);
    [distinct[i], distinct[j]] = [distinct[j], distinct[i]];
  }
  void rng;
  return {
    codes: codes.map(column => Int32Array.from(distinct, d => column[d.row])),
    weights: Int32Array.from(distinct, d => d.count)
  };
}

function expectSameLattice(actual: ILattice, expected: ILattice): void {
  expect(actual.rows).toBe(expected.rows);
  expect(actual.indexing.size).toBe(expected.indexing.size);
  expect(firstBitDifference(actual.entropy, expected.entropy)).toBe(-1);
  expect(firstBitDifference(actual.occupied, expected.occupied)).toBe(-1);
}

/** The lattice walked unit by unit as a pool of `workers` plans it, the parts in reverse order. */
function walkByUnits(input: ILatticeInput, workers: number): ILattice {
  const n = input.codes.length;
  const units = planUnits(createIndexing(n, Math.min(input.maxOrder, n)), workers);
  const parts: ISubtreeResult[] = [];
  for (const unit of units.slice().reverse()) {
    parts.push(...walkUnit(input, unit));
  }
  return assembleLattice(input, parts);
}

function preparedOf(codes: Int32Array[], bins: number[], weights?: Int32Array): IPreparedCodes {
  const rows = weights ? weights.reduce((sum, w) => sum + w, 0) : codes[0].length;
  const names = codes.map((_c, i) => `c${i}`);
  const binnings = bins.map((b, i): IColumnBinning => ({
    column: names[i],
    method: 'categorical',
    categories: Array.from({ length: b }, (_x, k) => String(k))
  } as unknown as IColumnBinning));
  return { names, codes, bins, binnings, rows, rowsUsed: rows, rowIndex: null, warnings: [], ...(weights ? { weights } : {}) };
}

describe('weighted walk', () => {
  // 8 columns of 2 … 5 codes over 1,500 rows: many repeated joint rows, some alone in their cell
  const bins = [2, 3, 4, 5, 3, 2, 4, 3];
  const table = seededTable(1500, bins.length, bins, 41);
  const distinct = aggregate(table, 7);

  it('should aggregate the seeded table into fewer distinct rows (the test has repeats to merge)', () => {
    expect(distinct.codes[0].length).toBeLessThan(1500);
    expect(distinct.codes[0].length).toBeGreaterThan(100);
    expect(distinct.weights.reduce((sum, w) => sum + w, 0)).toBe(1500);
    expect(Math.max(...distinct.weights)).toBeGreaterThan(1);
  });

  describe('#computeLattice', () => {
    for (const estimator of COUNT_ESTIMATORS) {
      for (const maxOrder of [bins.length, 3]) {
        it(`should give the table's entropies and occupied cells bit for bit (${estimator}, order ≤ ${maxOrder})`, () => {
          const plain: ILatticeInput = { codes: table, bins, maxOrder, estimator };
          const weighted: ILatticeInput = { ...plain, codes: distinct.codes, weights: distinct.weights };
          const expected = computeLattice(plain);
          expectSameLattice(computeLattice(weighted), expected);
          // without the shortcuts (no drop of rows alone, no fill), still the same
          expectSameLattice(computeLattice({ ...weighted, dropSingletons: false, fillDistinct: false }), expected);
          expectSameLattice(computeLattice({ ...weighted, dropSingletons: true, fillDistinct: false }), expected);
          expectSameLattice(computeLattice({ ...plain, dropSingletons: false, fillDistinct: false }), expected);
        });
      }
    }

    it('should give a permuted table the same lattice bit for bit (sums do not depend on row order)', () => {
      const reversed = table.map(column => column.slice().reverse());
      for (const estimator of COUNT_ESTIMATORS) {
        const expected = computeLattice({ codes: table, bins, maxOrder: bins.length, estimator });
        expectSameLattice(computeLattice({ codes: reversed, bins, maxOrder: bins.length, estimator }), expected);
      }
    });

    it('should count weights above the n·ln n table (a row of weight 70,000)', () => {
      // 3 columns: the first row repeated 70,000 times and 50 other rows
      const small = seededTable(50, 3, [3, 3, 3], 5);
      const big = small.map(column => {
        const out = new Int32Array(70_050);
        out.set(column);
        out.fill(column[0], 50);
        return out;
      });
      const merged = aggregate(big, 9);
      expect(Math.max(...merged.weights)).toBeGreaterThan(70_000);
      for (const estimator of COUNT_ESTIMATORS) {
        const expected = computeLattice({ codes: big, bins: [3, 3, 3], maxOrder: 3, estimator });
        expectSameLattice(computeLattice({ codes: merged.codes, bins: [3, 3, 3], weights: merged.weights, maxOrder: 3, estimator }), expected);
      }
    });

    it('should give the plug-in entropy of the weighted counts (scipy.stats.entropy)', () => {
      // Three distinct rows of weights 2, 1, 1: scipy.stats.entropy([2, 1, 1]) = 1.0397207708399179 nats
      // (scipy 1.x, run beside this project); and of weights 5, 3, 1, 1: 1.1682824501765625.
      const one = computeLattice({ codes: [Int32Array.of(0, 1, 2)], bins: [3], weights: Int32Array.of(2, 1, 1), maxOrder: 1, estimator: 'plugin' });
      expect(one.entropy[1]).toBeCloseTo(1.0397207708399179, 14);
      expect(one.rows).toBe(4);
      const two = computeLattice({
        codes: [Int32Array.of(0, 0, 1, 1), Int32Array.of(0, 1, 0, 1)],
        bins: [2, 2],
        weights: Int32Array.of(5, 3, 1, 1),
        maxOrder: 2,
        estimator: 'plugin'
      });
      expect(two.entropy[indexOfColumns(two.indexing, [0, 1])]).toBeCloseTo(1.1682824501765625, 14);
      expect(two.occupied[indexOfColumns(two.indexing, [0, 1])]).toBe(4);
      expect(two.entropy[indexOfColumns(two.indexing, [0, 1])]).toBe(entropyOfCounts('plugin', [1, 3, 1, 5]));
    });

    it('should refuse a weight below 1 or weights of another length', () => {
      const codes = [Int32Array.of(0, 1)];
      expectPolyadic(() => computeLattice({ codes, bins: [2], weights: Int32Array.of(1, 0), maxOrder: 1, estimator: 'plugin' }), 'internal', /weight 0/);
      expectPolyadic(() => computeLattice({ codes, bins: [2], weights: Int32Array.of(1), maxOrder: 1, estimator: 'plugin' }), 'internal', /1 row weights for 2 rows/);
    });
  });

  describe('#jointEntropyOfCodes', () => {
    it("should give the lattice's entropy of a multiplet from weighted rows", () => {
      for (const estimator of COUNT_ESTIMATORS) {
        const lattice = computeLattice({ codes: table, bins, maxOrder: 4, estimator });
        const members = [0, 2, 5, 7];
        const direct = jointEntropyOfCodes(distinct.codes, bins, members, estimator, distinct.weights);
        expect(direct.entropy).toBe(lattice.entropy[indexOfColumns(lattice.indexing, members)]);
        expect(direct.occupied).toBe(lattice.occupied[indexOfColumns(lattice.indexing, members)]);
      }
    });
  });

  describe('#walkUnit', () => {
    for (const workers of [1, 2]) {
      for (const maxOrder of [bins.length, 3]) {
        it(`should assemble the table's lattice from the weighted rows' units (${workers} worker(s), order ≤ ${maxOrder})`, () => {
          for (const estimator of COUNT_ESTIMATORS) {
            const expected = computeLattice({ codes: table, bins, maxOrder, estimator });
            const weighted: ILatticeInput = { codes: distinct.codes, bins, weights: distinct.weights, maxOrder, estimator };
            expectSameLattice(walkByUnits(weighted, workers), expected);
            expectSameLattice(walkByUnits({ codes: table, bins, maxOrder, estimator }, workers), expected);
          }
        });
      }
    }
  });

  describe('#analyzeCodes', () => {
    for (const estimator of COUNT_ESTIMATORS) {
      for (const maxOrder of [bins.length, 3]) {
        it(`should give the table's analysis as identical JSON (${estimator}, order ≤ ${maxOrder})`, () => {
          const options = { estimator, maxOrder, top: 20 };
          const plain = analyzeCodes(preparedOf(table, bins), options);
          const weighted = preparedOf(distinct.codes, bins, distinct.weights);
          expect(latticeInput(weighted, options).weights).toBe(distinct.weights);
          expect(JSON.stringify(analyzeCodes(weighted, options))).toBe(JSON.stringify(plain));
        });
      }
    }

    it('should refuse surrogates, sharpening and the Gaussian copula on weighted rows, saying why', () => {
      const weighted = preparedOf(distinct.codes, bins, distinct.weights);
      expectPolyadic(
        () => analyzeCodes(weighted, { maxOrder: 3, statistics: { surrogates: 20 } }),
        'usage',
        /Independence surrogates shuffle each column's rows on its own.*distinct joint rows with their counts/
      );
      expectPolyadic(
        () => analyzeCodes(weighted, { maxOrder: 3, statistics: { surrogates: 20, sharpen: 2 } }),
        'usage',
        /Sharpening draws fresh surrogates/
      );
      expectPolyadic(() => analyzeCodes(weighted, { maxOrder: 3, estimator: 'gaussian-copula' }), 'usage', /Gaussian-copula/);
    });
  });
});

describe('applyWeightedMissingPolicy', () => {
  /** A binned column over distinct rows (−1 = missing). */
  function column(name: string, codes: number[], missingCount: number): IBinnedColumn {
    return {
      name,
      codes: Int32Array.from(codes),
      bins: 2,
      binning: { name, bins: 2, binning: { method: 'width', spec: 'width:2', edges: [0, 0.5, 1] } },
      missingCount,
      firstMissingRow: 0,
      warnings: []
    };
  }

  it('should count the input rows, not the distinct ones, when drop leaves no row', () => {
    // 3 distinct rows standing for 7 + 5 + 1 = 13 input rows, each missing in x or y
    const columns = [column('x', [-1, 0, 1], 7), column('y', [1, -1, -1], 6)];
    expect(() => applyWeightedMissingPolicy(columns, Int32Array.from([7, 5, 1]), 'drop')).toThrow(
      /^Every one of the 13 rows has a missing value in at least one selected column \('x', 'y'\)/
    );
  });

  it('should keep the weights of the complete rows under drop', () => {
    const columns = [column('x', [-1, 0, 1], 7), column('y', [1, 0, -1], 1)];
    const prepared = applyWeightedMissingPolicy(columns, Int32Array.from([7, 5, 1]), 'drop');
    expect(Array.from(prepared.weights)).toEqual([5]);
    expect([prepared.rows, prepared.rowsUsed]).toEqual([13, 5]);
  });
});
