/**
 * Binning (src/engine/binning/) on cases small enough to check by hand; the arithmetic is in
 * the comments. Rules follow numpy's `histogram_bin_edges` (numpy/lib/_histograms_impl.py); the
 * same rules against numpy itself, computed at test time, are in binning-numpy.spec.ts.
 */
import fc from 'fast-check';

import {
  applyMissingPolicy,
  AUTO_MAX_LEVELS,
  BIN_SPEC_FORMS,
  binColumn,
  binIndexByEdges,
  formatBinSpec,
  parseBinSpec
} from '../../src/engine/binning';
import { optimalKMeans1D } from '../../src/engine/kmeans1d';
import type { INumericColumn } from '../../src/engine/types';
import { categoricalColumn, expectPolyadic, numericColumn } from './helpers';

function edgesOf(values: number[], spec: string, dtype = 'float64'): number[] {
  return binColumn(numericColumn('x', values, dtype), spec).binning.binning.edges as number[];
}

function codesOf(values: number[], spec: string): number[] {
  return Array.from(binColumn(numericColumn('x', values), spec).codes);
}

describe('binning', () => {
  describe('#parseBinSpec', () => {
    it('should read every form', () => {
      expect(parseBinSpec('width:5')).toEqual({ method: 'width', count: 5 });
      expect(parseBinSpec(' quantile:4 ')).toEqual({ method: 'quantile', count: 4 });
      expect(parseBinSpec('kmeans:3')).toEqual({ method: 'kmeans', count: 3 });
      expect(parseBinSpec('edges:0,1.5,3e2')).toEqual({ method: 'edges', edges: [0, 1.5, 300] });
      expect(parseBinSpec('edges: -1, 0 ,1')).toEqual({ method: 'edges', edges: [-1, 0, 1] });
      for (const rule of ['fd', 'scott', 'sturges', 'rice', 'sqrt', 'doane', 'categorical']) {
        expect(parseBinSpec(rule)).toEqual({ method: rule });
      }
    });

    it('should round-trip through formatBinSpec', () => {
      for (const text of ['width:5', 'quantile:4', 'kmeans:2', 'edges:-1,0.25,1e+21', 'fd', 'categorical']) {
        expect(parseBinSpec(formatBinSpec(parseBinSpec(text)))).toEqual(parseBinSpec(text));
      }
    });

    it('should refuse a bad spec, quoting it and listing every valid form', () => {
      const cases: [string, RegExp][] = [
        ['quantile', /needs a bin count/],
        ['quantile:0', /outside 1 … 1,000,000/],
        ['width:2.5', /"2.5" is not a whole number/],
        ['width:-3', /not a whole number/],
        ['kmeans:1000001', /outside/],
        ['edges:1', /at least two/],
        ['edges:0,2,1', /increase strictly, but 1 follows 2/],
        ['edges:0,0,1', /increase strictly/],
        ['edges:0,inf', /"inf" is not a finite decimal number/],
        ['edges:0,0x10', /not a finite decimal number/],
        ['fd:3', /fd takes no argument/],
        ['histogram', /"histogram" is not a binning method/],
        ['', /empty/]
      ];
      for (const [text, why] of cases) {
        const error = expectPolyadic(() => parseBinSpec(text), 'usage', why);
        expect(error.message).toContain(`"${text}"`);
        expect(error.message).toContain(BIN_SPEC_FORMS);
        expect(error.detail.value).toBe(text);
      }
      expect(BIN_SPEC_FORMS).toMatch(
        /width:K.*quantile:K.*fd.*scott.*sturges.*rice.*sqrt.*doane.*kmeans:K.*edges:a,b.*categorical/
      );
    });
  });

  describe('#binColumn width and rules', () => {
    it('should split the range evenly for width:K, the max in the last bin', () => {
      // [0, 1, 2, 3, 4, 8], width:4 → range 0 … 8, step 2 → edges 0, 2, 4, 6, 8.
      // 2 and 4 lie on interior edges and open the next bin; 8 closes the last bin.
      expect(edgesOf([0, 1, 2, 3, 4, 8], 'width:4')).toEqual([0, 2, 4, 6, 8]);
      expect(codesOf([0, 1, 2, 3, 4, 8], 'width:4')).toEqual([0, 0, 1, 1, 2, 3]);
    });

    it('should widen a constant column by ±0.5', () => {
      // numpy: first == last → first − 0.5, last + 0.5; width:3 → step 1/3.
      expect(edgesOf([5, 5, 5, 5], 'width:3')).toEqual([4.5, 4.5 + 1 / 3, 4.5 + 2 * (1 / 3), 5.5]);
      expect(edgesOf([5, 5, 5, 5], 'fd')).toEqual([4.5, 5.5]);
    });

    it('should follow the sqrt rule', () => {
      // n = 9, range 0 … 9: width = 9/√9 = 3 → ceil(9/3) = 3 bins: 0, 3, 6, 9.
      expect(edgesOf([0, 1, 2, 3, 4, 5, 6, 7, 9], 'sqrt')).toEqual([0, 3, 6, 9]);
    });

    it('should follow the Sturges rule', () => {
      // n = 8: log2(8) + 1 = 4 → width = 8/4 = 2 → 4 bins over 0 … 8.
      expect(edgesOf([0, 1, 2, 3, 5, 6, 7, 8], 'sturges')).toEqual([0, 2, 4, 6, 8]);
    });

    it('should follow the Rice rule', () => {
      // n = 8: 2 · 8^(1/3) = 4 → width 2 → 4 bins over 0 … 8.
      expect(edgesOf([0, 1, 2, 3, 5, 6, 7, 8], 'rice')).toEqual([0, 2, 4, 6, 8]);
    });

    it('should follow the Freedman–Diaconis rule with numpy linear percentiles', () => {
      // x = 0 1 2 3 4 5 6 8 (n = 8). Percentile 75: index 7·0.75 = 5.25 → 5 + 0.25·(6 − 5) = 5.25;
      // percentile 25: index 1.75 → 1 + 0.75·(2 − 1) = 1.75. IQR = 3.5.
      // width = 2 · 3.5 · 8^(−1/3) = 3.5 → ceil(8/3.5) = ceil(2.29) = 3 bins over 0 … 8.
      expect(edgesOf([0, 1, 2, 3, 4, 5, 6, 8], 'fd')).toEqual([0, 8 / 3, 2 * (8 / 3), 8]);
    });

    it('should give one bin when the IQR is 0 under Freedman–Diaconis', () => {
      // numpy: a zero width means one bin over the range.
      expect(edgesOf([1, 1, 1, 1, 1, 1, 1, 9], 'fd')).toEqual([1, 9]);
    });

    it('should follow the Scott rule', () => {
      // x = 0 0 3 3: σ = 1.5 (population), width = (24√π/4)^(1/3) · 1.5 ≈ 2.199 · 1.5 ≈ 3.30
      // → ceil(3/3.30) = 1 bin.
      expect(edgesOf([0, 0, 3, 3], 'scott')).toEqual([0, 3]);
    });

    it('should follow the Doane rule', () => {
      // x = 0 … 7, symmetric: skewness g1 = 0 exactly, so width = 7/(1 + log2 8 + log2 1) = 7/4
      // = 1.75 → 4 bins: 0, 1.75, 3.5, 5.25, 7.
      expect(edgesOf([0, 1, 2, 3, 4, 5, 6, 7], 'doane')).toEqual([0, 1.75, 3.5, 5.25, 7]);
      // n ≤ 2: numpy gives width 0, hence one bin.
      expect(edgesOf([0, 1], 'doane')).toEqual([0, 1]);
    });

    it('should use a width of at least 1 on integer data', () => {
      // x = 0 0 0 1 1 1 2 2 2 3 3 3 (n = 12): sqrt width = 3/√12 ≈ 0.87; numpy raises it to 1 for
      // an integer dtype → 3 bins; as float64 the same data make ceil(3/0.87) = 4 bins.
      const x = [0, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3];
      expect(edgesOf(x, 'sqrt', 'int64')).toEqual([0, 1, 2, 3]);
      expect(edgesOf(x, 'sqrt', 'float64')).toEqual([0, 0.75, 1.5, 2.25, 3]);
    });

    it('should refuse a rule that asks for too many bins', () => {
      // IQR 1 and one huge outlier: fd asks for ≈ 10^9 bins.
      const x = [0, 1, 2, 3, 4, 5, 6, 7, 1e9];
      expectPolyadic(() => binColumn(numericColumn('depth', x), 'fd'), 'limit', /'depth'/, /above the limit/);
    });
  });

  describe('#binColumn quantile', () => {
    it('should cut at numpy linear quantiles', () => {
      // x = 1 … 5, quantile:4: indices 4·q = 0, 1, 2, 3, 4 → edges 1, 2, 3, 4, 5; 5 in the last bin.
      expect(edgesOf([1, 2, 3, 4, 5], 'quantile:4')).toEqual([1, 2, 3, 4, 5]);
      expect(codesOf([5, 4, 3, 2, 1], 'quantile:4')).toEqual([3, 3, 2, 1, 0]);
    });

    it('should drop duplicate edges and say how many bins remain', () => {
      // x = ten 0s then 1 … 11 (n = 21, 12 distinct values), quantile:4: indices 20·q = 0, 5,
      // 10, 15, 20 → 0, 0, 1, 6, 11 → distinct edges 0, 1, 6, 11: three bins.
      const values = [...new Array<number>(10).fill(0), ...Array.from({ length: 11 }, (_, i) => i + 1)];
      const binned = binColumn(numericColumn('wet', values), 'quantile:4');
      expect(binned.binning.binning.edges).toEqual([0, 1, 6, 11]);
      expect(binned.bins).toBe(3);
      expect(Array.from(binned.codes)).toEqual([...new Array<number>(10).fill(0), 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2]);
      expect(binned.warnings.join(' ')).toMatch(/'wet': quantile:4 gave 3 bins instead of 4/);
    });

    it('should say so when it merges the values of a column of few values', () => {
      // x = 0 0 0 0 0 0 1 2 (n = 8), quantile:4: indices 7·q = 0, 1.75, 3.5, 5.25, 7 →
      // 0, 0, 0, 0 + 0.25·(1 − 0) = 0.25, 2 → distinct edges 0, 0.25, 2: the values 1 and 2
      // share the last bin.
      const binned = binColumn(numericColumn('wet', [0, 0, 0, 0, 0, 0, 1, 2]), 'quantile:4');
      expect(binned.binning.binning.edges).toEqual([0, 0.25, 2]);
      expect(Array.from(binned.codes)).toEqual([0, 0, 0, 0, 0, 0, 1, 1]);
      expect(binned.warnings).toEqual([
        "Column 'wet' has only 3 distinct values, and quantile:4 merges them into 2 bins, so differences " +
          "between the merged values are lost; 'auto' or 'categorical' keeps each value as its own category."
      ]);
      // a rule that keeps every value apart says nothing: width:3 puts 0, 1, 2 in three bins
      expect(binColumn(numericColumn('wet', [0, 0, 0, 0, 0, 0, 1, 2]), 'width:3').warnings).toEqual([]);
    });
  });

  describe('#binColumn kmeans', () => {
    it('should separate clearly separated clusters at midpoints', () => {
      // Clusters {0.9, 1, 1.1}, {9.8, 10, 10.2}, {20, 20.1}: edges at the min, (1.1 + 9.8)/2,
      // (10.2 + 20)/2 and the max.
      const x = [1, 10, 20, 1.1, 9.8, 20.1, 0.9, 10.2];
      const binned = binColumn(numericColumn('x', x), 'kmeans:3');
      expect(binned.binning.binning.edges).toEqual([0.9, 1.1 / 2 + 9.8 / 2, 10.2 / 2 + 20 / 2, 20.1]);
      expect(Array.from(binned.codes)).toEqual([0, 1, 2, 0, 1, 2, 0, 1]);
    });

    it('should reduce K to the number of distinct values, with a warning', () => {
      const binned = binColumn(numericColumn('x', [3, 3, 7]), 'kmeans:4');
      expect(binned.bins).toBe(2);
      expect(binned.warnings.join(' ')).toMatch(/only 2 distinct values/);
    });

    it('should reach the least within-cluster sum of squares of a brute-force search (property)', () => {
      // In one dimension an optimal k-means clustering is contiguous in sorted order (Wang & Song
      // 2011), so trying every split of the sorted distinct values into k runs finds the optimum.
      const sse = (groups: number[][]): number =>
        groups.reduce((total, g) => {
          const mean = g.reduce((a, b) => a + b, 0) / g.length;
          return total + g.reduce((a, v) => a + (v - mean) ** 2, 0);
        }, 0);
      const bruteForce = (sorted: number[], k: number): number => {
        const distinct = [...new Set(sorted)];
        let best = Infinity;
        const choose = (start: number, left: number, cuts: number[]): void => {
          if (left === 0) {
            const bounds = [0, ...cuts, distinct.length];
            const groups = bounds.slice(1).map((end, i) => {
              const values = distinct.slice(bounds[i], end);
              return sorted.filter(v => values.includes(v));
            });
            best = Math.min(best, sse(groups));
            return;
          }
          for (let cut = start; cut <= distinct.length - left; cut++) {
            choose(cut + 1, left - 1, [...cuts, cut]);
          }
        };
        choose(1, k - 1, []);
        return best;
      };
      fc.assert(
        fc.property(
          fc.array(fc.integer({ min: -30, max: 30 }), { minLength: 1, maxLength: 12 }),
          fc.integer({ min: 1, max: 4 }),
          (values, k) => {
            const binned = binColumn(numericColumn('x', values), `kmeans:${k}`);
            const groups: number[][] = Array.from({ length: binned.bins }, () => []);
            values.forEach((v, i) => groups[binned.codes[i]].push(v));
            expect(groups.every(g => g.length > 0)).toBe(true);
            const sorted = values.slice().sort((a, b) => a - b);
            expect(sse(groups)).toBeCloseTo(bruteForce(sorted, binned.bins), 9);
          }
        ),
        { numRuns: 300 }
      );
    });

    it('should handle 10^5 distinct values in reasonable time and stay optimal on a known case', () => {
      // Two far groups of 50 000 values: the optimal 2-means split is between them.
      const x = Array.from({ length: 100_000 }, (_, i) => (i < 50_000 ? i : 1e9 + i));
      const partition = optimalKMeans1D(Float64Array.from(x), new Float64Array(x.length).fill(1), 2);
      expect(partition.starts[1]).toBe(50_000);
    });
  });

  describe('#binColumn edges', () => {
    it('should assign by the user edges, the last one closed', () => {
      expect(codesOf([0, 0.5, 1, 2.5, 3], 'edges:0,1,2,3')).toEqual([0, 0, 1, 2, 2]);
    });

    it('should refuse a value outside the edges, naming column and row', () => {
      expectPolyadic(
        () => binColumn(numericColumn('temp', [1, 2, 3.5, 9]), 'edges:0,1,3'),
        'input',
        /'temp'/,
        /3\.5 at row 2/,
        /outside the edges 0 … 3/
      );
    });
  });

  describe('#binIndexByEdges', () => {
    it('should put values on interior edges in the upper bin and the top edge in the last bin', () => {
      const edges = [0, 1, 2, 3];
      expect([0, 0.999, 1, 1.5, 2, 2.999, 3].map(v => binIndexByEdges(edges, v))).toEqual([0, 0, 1, 1, 2, 2, 2]);
      expect(binIndexByEdges(edges, -0.1)).toBe(-1);
      expect(binIndexByEdges(edges, 3.1)).toBe(-1);
      expect(binIndexByEdges(edges, NaN)).toBe(-1);
    });
  });

  describe('#binColumn categorical', () => {
    it('should give numbers one code each in increasing order', () => {
      const binned = binColumn(numericColumn('n', [3, 1, 2, 1, -0, 0]), 'categorical');
      expect(binned.binning.binning.categories).toEqual(['0', '1', '2', '3']);
      expect(Array.from(binned.codes)).toEqual([3, 1, 2, 1, 0, 0]);
    });

    it('should sort strings by code point and merge repeated dictionary entries', () => {
      const column = categoricalColumn('s', ['b', 'a', 'B', 'é', 'a', null]);
      column.categories.push('unused');
      const binned = binColumn(column);
      // 'B' (U+0042) < 'a' (U+0061) < 'b' (U+0062) < 'é' (U+00E9); unused categories dropped.
      expect(binned.binning.binning.categories).toEqual(['B', 'a', 'b', 'é']);
      expect(Array.from(binned.codes)).toEqual([2, 1, 0, 3, 1, -1]);
      const repeated = { ...categoricalColumn('r', ['x', 'y']), categories: ['x', 'x'], codes: Int32Array.of(0, 1) };
      expect(binColumn(repeated).bins).toBe(1);
    });

    it('should keep ±Inf as categories', () => {
      const binned = binColumn(numericColumn('n', [Infinity, -Infinity, 1]), 'categorical');
      expect(binned.binning.binning.categories).toEqual(['-Infinity', '1', 'Infinity']);
    });

    it('should refuse a numeric method on a categorical column', () => {
      expectPolyadic(() => binColumn(categoricalColumn('s', ['a', 'b']), 'quantile:4'), 'usage', /'s' is categorical/);
    });

    it('should bin categorical and boolean columns categorically, numbers by auto, by default', () => {
      expect(binColumn(categoricalColumn('s', ['a', 'b'])).binning.binning.spec).toBe('categorical');
      const flag: INumericColumn = { ...numericColumn('f', [0, 1, 1]), dtype: 'bool' };
      expect(binColumn(flag).binning.binning.categories).toEqual(['false', 'true']);
      expect(binColumn(numericColumn('n', [1, 2, 3, 4, 5])).binning.binning.spec).toBe('auto');
    });
  });

  describe('#binColumn auto', () => {
    it('should keep every value of a column of 0/1 integers, where quantile:4 leaves one bin', () => {
      // five 0s and three 1s: numpy.quantile's quartiles at indices 7·q = 0, 1.75, 3.5, 5.25, 7
      // are 0, 0, 0, 1, 1, so quantile:4 puts both values in its one closed bin [0, 1].
      const bits = numericColumn('spike', [0, 1, 1, 0, 1, 0, 0, 0], 'int64');
      const binned = binColumn(bits);
      expect(binned.binning).toEqual({
        name: 'spike',
        bins: 2,
        binning: { method: 'categorical', spec: 'auto', categories: ['0', '1'] }
      });
      expect(Array.from(binned.codes)).toEqual([0, 1, 1, 0, 1, 0, 0, 0]);
      expect(binned.warnings).toEqual([]);
      const quartiles = binColumn(bits, 'quantile:4');
      expect(quartiles.binning.binning.edges).toEqual([0, 1]);
      expect(quartiles.warnings.join(' ')).toMatch(/'spike' has only 2 distinct values, and quantile:4 merges them into 1 bin,/);
    });

    it('should keep the levels of 3- and 4-level integers (genotypes, answers)', () => {
      const genotype = binColumn(numericColumn('g', [0, 1, 2, 1, 1, 0, 2, 1]));
      expect(genotype.bins).toBe(3);
      expect(genotype.binning.binning.categories).toEqual(['0', '1', '2']);
      const answers = binColumn(numericColumn('a', [1, 2, 2, 3, 3, 3, 4, 4, 4, 4]));
      expect(answers.binning.binning.categories).toEqual(['1', '2', '3', '4']);
    });

    it('should keep up to 10 distinct values and bin 11 or more by quantile:4', () => {
      expect(AUTO_MAX_LEVELS).toBe(10);
      const ten = binColumn(numericColumn('x', Array.from({ length: 40 }, (_, i) => i % 10)));
      expect([ten.binning.binning.method, ten.bins]).toEqual(['categorical', 10]);
      // 0 … 10, n = 11: quartiles at indices 10·q = 0, 2.5, 5, 7.5, 10 → 0, 2.5, 5, 7.5, 10.
      const eleven = binColumn(numericColumn('x', Array.from({ length: 11 }, (_, i) => i)));
      expect(eleven.binning).toEqual({
        name: 'x',
        bins: 4,
        binning: { method: 'quantile', spec: 'auto', edges: [0, 2.5, 5, 7.5, 10] }
      });
      // and the same codes as quantile:4 itself
      expect(Array.from(eleven.codes)).toEqual(codesOf(Array.from({ length: 11 }, (_, i) => i), 'quantile:4'));
    });

    it('should count distinct values without the missing ones and keep categorical columns categorical', () => {
      const gappy = binColumn(numericColumn('x', [0, NaN, 1, NaN, 1]), 'auto');
      expect(gappy.binning.binning.categories).toEqual(['0', '1']);
      expect(gappy.missingCount).toBe(2);
      expect(binColumn(categoricalColumn('s', ['a', 'b']), 'auto').binning.binning).toEqual({
        method: 'categorical',
        spec: 'auto',
        categories: ['a', 'b']
      });
    });
  });

  describe('#binColumn missing values and warnings', () => {
    it('should give missing rows code −1: the mask, NaN and a categorical code of −1', () => {
      const column: INumericColumn = { ...numericColumn('x', [1, NaN, 3, 4]), missing: Uint8Array.of(0, 0, 0, 1) };
      const binned = binColumn(column, 'width:2');
      expect(Array.from(binned.codes)).toEqual([0, -1, 1, -1]);
      expect(binned.missingCount).toBe(2);
      expect(binned.firstMissingRow).toBe(1);
      expect(binned.binning.binning.edges).toEqual([1, 2, 3]);
    });

    it('should refuse ±Inf under a numeric method, naming column and row', () => {
      expectPolyadic(() => binColumn(numericColumn('flow', [1, 2, -Infinity]), 'fd'), 'input', /'flow'/, /-Inf at row 2/);
    });

    it('should refuse a column with no value at all', () => {
      expectPolyadic(() => binColumn(numericColumn('gone', [NaN, NaN]), 'fd'), 'input', /'gone'/, /all 2 rows are missing/);
      expectPolyadic(() => binColumn(categoricalColumn('gone', [null]), 'categorical'), 'input', /'gone'/);
    });

    it('should read 64-bit integers as numbers', () => {
      const column: INumericColumn = {
        kind: 'numeric',
        name: 'count',
        dtype: 'int64',
        values: BigInt64Array.of(3n, 1n, 2n),
        missing: null
      };
      expect(binColumn(column, 'categorical').binning.binning.categories).toEqual(['1', '2', '3']);
      const huge: INumericColumn = { ...column, values: BigInt64Array.of(2n ** 60n + 1n, 0n) };
      expect(binColumn(huge, 'categorical').warnings.join(' ')).toMatch(/beyond ±2\^53/);
    });

    it('should warn about a constant column and an identifier-like one', () => {
      expect(binColumn(numericColumn('c', [2, 2, 2]), 'width:3').warnings.join(' ')).toMatch(/'c' takes a single value/);
      expect(binColumn(categoricalColumn('id', ['a', 'b', 'c', 'd'])).warnings.join(' ')).toMatch(
        /'id' looks like an identifier/
      );
      expect(binColumn(categoricalColumn('ok', ['a', 'b', 'a', 'b'])).warnings).toEqual([]);
    });
  });

  describe('#applyMissingPolicy', () => {
    const a = (): INumericColumn => numericColumn('a', [1, NaN, 3, 4, 5]);
    const b = () => categoricalColumn('b', ['x', 'y', null, 'x', 'y']);

    it("should drop rows missing in any selected column under 'drop'", () => {
      const prepared = applyMissingPolicy([binColumn(a(), 'categorical'), binColumn(b())], 'drop');
      expect(prepared.rowsUsed).toBe(3);
      expect(Array.from(prepared.rowIndex ?? [])).toEqual([0, 3, 4]);
      expect(prepared.codes.map(c => Array.from(c))).toEqual([
        [0, 2, 3],
        [0, 0, 1]
      ]);
      expect(prepared.warnings.join(' ')).toMatch(/2 of 5 rows/);
    });

    it("should give missing values their own last code under 'category'", () => {
      const prepared = applyMissingPolicy([binColumn(a(), 'width:2'), binColumn(b())], 'category');
      expect(prepared.rowsUsed).toBe(5);
      expect(prepared.bins).toEqual([3, 3]);
      expect(Array.from(prepared.codes[0])).toEqual([0, 2, 1, 1, 1]);
      expect(prepared.binnings[0].binning.missing_code).toBe(2);
      expect(prepared.binnings[1].binning.categories).toEqual(['x', 'y', '(missing)']);
      expect(Array.from(prepared.codes[1])).toEqual([0, 1, 2, 0, 1]);
    });

    it("should refuse under 'error', naming the first missing value in row order", () => {
      expectPolyadic(
        () => applyMissingPolicy([binColumn(b()), binColumn(a(), 'categorical')], 'error'),
        'input',
        /'a' has a missing value at row 1/,
        /2 missing values/
      );
    });

    it("should refuse when 'drop' leaves no row", () => {
      const left = numericColumn('l', [1, NaN]);
      const right = numericColumn('r', [NaN, 2]);
      expectPolyadic(
        () => applyMissingPolicy([binColumn(left, 'categorical'), binColumn(right, 'categorical')], 'drop'),
        'input',
        /leaves no row/
      );
    });
  });
});
