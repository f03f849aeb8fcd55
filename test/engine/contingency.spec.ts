/**
 * Contingency tables (src/engine/contingency.ts): joint counts of two coded columns against
 * numpy and pandas (figures computed once, with the call named beside them), the conditional
 * tables of an XOR triplet, which flip between the levels of the third column, and the bin
 * labels of recorded binnings.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import {
  binLabels,
  conditionalTables,
  contingencyTable,
  overRepresentedCell,
  tableMutualInformation
} from '../../src/engine/contingency';
import { expectPolyadic } from './helpers';

// 24 rows of three coded columns: x in 0…2, y in 0…3, z in 0…1.
const X = [0, 2, 1, 1, 0, 2, 2, 0, 1, 2, 0, 0, 1, 2, 1, 0, 2, 2, 1, 0, 0, 1, 2, 1];
const Y = [3, 1, 0, 2, 2, 1, 0, 3, 3, 1, 0, 2, 1, 1, 2, 3, 0, 1, 2, 3, 1, 0, 3, 2];
const Z = [1, 0, 1, 0, 0, 1, 1, 0, 1, 0, 1, 1, 0, 1, 0, 0, 1, 0, 1, 0, 1, 0, 0, 1];

/** A table's cells as nested rows, for comparison with the references. */
function rowsOf(table: { counts: Float64Array; rowLevels: number; columnLevels: number }): number[][] {
  return Array.from({ length: table.rowLevels }, (_r, i) => Array.from(table.counts.subarray(i * table.columnLevels, (i + 1) * table.columnLevels)));
}

describe('contingency', () => {
  describe('#contingencyTable', () => {
    it('should count the joint of two coded columns as numpy.histogram2d does', () => {
      // Reference: numpy 2 (computed once),
      // np.histogram2d(X, Y, bins=[np.arange(4), np.arange(5)])[0].astype(int).tolist()
      const numpy = [
        [1, 1, 2, 4],
        [2, 1, 4, 1],
        [2, 5, 0, 1]
      ];
      const table = contingencyTable(Int32Array.from(X), 3, Int32Array.from(Y), 4);
      expect(rowsOf(table)).toEqual(numpy);
      expect(Array.from(table.rowTotals)).toEqual([8, 8, 8]);
      expect(Array.from(table.columnTotals)).toEqual([5, 7, 6, 6]);
      expect(table.total).toBe(24);
    });

    it('should give the mutual information of its counts as sklearn does', () => {
      // Reference: sklearn.metrics.mutual_info_score(X, Y) = 0.27056034275956564 nats (computed once).
      const table = contingencyTable(X, 3, Y, 4);
      expect(tableMutualInformation(table, 'plugin')).toBeCloseTo(0.27056034275956564, 13);
    });

    it('should add row weights instead of ones', () => {
      // Rows (0,0) weight 3, (1,0) weight 2, (0,0) weight 1: cell (0,0) = 4, (1,0) = 2.
      const table = contingencyTable([0, 1, 0], 2, [0, 0, 0], 1, [3, 2, 1]);
      expect(rowsOf(table)).toEqual([[4], [2]]);
      expect(table.total).toBe(6);
    });

    it('should refuse a code outside the levels, naming the row', () => {
      expectPolyadic(() => contingencyTable([0, 1, -1], 2, [0, 0, 0], 1), 'input', /Row 2 of the first column/, /code -1/);
      expectPolyadic(() => contingencyTable([0, 1], 2, [0, 3], 3), 'input', /Row 1 of the second column/);
      expectPolyadic(() => contingencyTable([0, 1], 2, [0], 1), 'input', /has 1 rows but column 1 has 2/);
      expectPolyadic(() => contingencyTable([0], 0, [0], 1), 'usage', /at least one level/);
    });
  });

  describe('#conditionalTables', () => {
    it('should count the pair within each level of the third column as pandas.crosstab does', () => {
      // Reference: pandas 2 (computed once), pd.crosstab([Z, X], Y):
      // z=0: x0 [0 0 1 3], x1 [1 1 2 0], x2 [0 3 0 1]; z=1: x0 [1 1 1 1], x1 [1 0 2 1], x2 [2 2 0 0]
      const tables = conditionalTables(X, 3, Y, 4, Z, 2);
      expect(tables).toHaveLength(2);
      expect(rowsOf(tables[0])).toEqual([
        [0, 0, 1, 3],
        [1, 1, 2, 0],
        [0, 3, 0, 1]
      ]);
      expect(rowsOf(tables[1])).toEqual([
        [1, 1, 1, 1],
        [1, 0, 2, 1],
        [2, 2, 0, 0]
      ]);
      // the levels sum cell by cell to the pooled table
      const pooled = contingencyTable(X, 3, Y, 4);
      pooled.counts.forEach((n, c) => expect(tables[0].counts[c] + tables[1].counts[c]).toBe(n));
    });

    it('should flip the conditional tables of an XOR triplet between the levels of the third column', () => {
      // z = x XOR y on 2,000 seeded fair coins: pooled, x and y are (nearly) independent; within
      // z = 0 every row is on the diagonal (x = y), within z = 1 every row is off it (x ≠ y).
      const rng = xoroshiro128plus(7);
      const n = 2000;
      const x = new Int32Array(n);
      const y = new Int32Array(n);
      const z = new Int32Array(n);
      for (let r = 0; r < n; r++) {
        x[r] = unsafeUniformIntDistribution(0, 1, rng);
        y[r] = unsafeUniformIntDistribution(0, 1, rng);
        z[r] = x[r] ^ y[r];
      }
      const [same, different] = conditionalTables(x, 2, y, 2, z, 2);
      expect(same.counts[1]).toBe(0);
      expect(same.counts[2]).toBe(0);
      expect(same.counts[0]).toBeGreaterThan(0);
      expect(same.counts[3]).toBeGreaterThan(0);
      expect(different.counts[0]).toBe(0);
      expect(different.counts[3]).toBe(0);
      expect(different.counts[1] + different.counts[2]).toBe(different.total);
      // the most over-represented cell moves from the diagonal to off it
      const a = overRepresentedCell(same)!;
      const b = overRepresentedCell(different)!;
      expect(a.row).toBe(a.column);
      expect(b.row).not.toBe(b.column);
      // pooled mutual information near 0, within each level about ln 2 (one bit: y = x or y = 1 − x)
      const pooled = contingencyTable(x, 2, y, 2);
      expect(tableMutualInformation(pooled, 'plugin')).toBeLessThan(0.005);
      expect(tableMutualInformation(same, 'plugin')).toBeGreaterThan(0.99 * Math.LN2);
      expect(tableMutualInformation(different, 'plugin')).toBeGreaterThan(0.99 * Math.LN2);
    });

    it('should refuse a conditioning code outside its levels', () => {
      expectPolyadic(() => conditionalTables([0], 1, [0], 1, [2], 2), 'input', /conditioning column/);
    });
  });

  describe('#overRepresentedCell', () => {
    it('should pick the cell of largest count over its independence expectation', () => {
      // [[1, 1, 2, 4], [2, 1, 4, 1], [2, 5, 0, 1]], margins rows 8,8,8, columns 5,7,6,6, N = 24:
      // cell (2,1): 5 / (8·7/24) = 5 / 2.3333 = 2.142857; (0,3): 4 / (8·6/24) = 2; (1,2): 4/2 = 2.
      const cell = overRepresentedCell(contingencyTable(X, 3, Y, 4))!;
      expect(cell).toMatchObject({ row: 2, column: 1, count: 5 });
      expect(cell.ratio).toBeCloseTo(15 / 7, 14);
      expect(overRepresentedCell(conditionalTables([0], 1, [0], 1, [0], 2)[1])).toBeNull();
    });
  });

  describe('#binLabels', () => {
    it('should label categories, half-open intervals (the last closed) and the missing code', () => {
      expect(binLabels({ name: 'a', bins: 3, binning: { method: 'categorical', spec: 'categorical', categories: ['no', 'yes', '(missing)'], missing_code: 2 } })).toEqual([
        'no',
        'yes',
        '(missing)'
      ]);
      expect(binLabels({ name: 'b', bins: 3, binning: { method: 'width', spec: 'width:2', edges: [0, 0.123456, 1], missing_code: 2 } })).toEqual([
        '[0, 0.1235)',
        '[0.1235, 1]',
        '(missing)'
      ]);
    });
  });
});
