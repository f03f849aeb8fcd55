/**
 * The one-call analysis (src/engine/analyze.ts): selection, options, defaults, the multiplet
 * report and its errors.
 */
import {
  analyze,
  analyzeCodes,
  latticeInput,
  prepareColumns
} from '../../src/engine/analyze';
import { assembleLattice, walkSubtree } from '../../src/engine/lattice';
import type { ColumnView, IAnalysisResult } from '../../src/engine/types';
import { ENGINE_VERSION } from '../../src/engine/version';
import { categoricalColumn, expectPolyadic, numericColumn, xorWithCopies } from './helpers';

const plantedColumns = xorWithCopies;

function row(result: IAnalysisResult, ...names: string[]) {
  return result.multiplets.find(m => m.columns.join(',') === names.join(','));
}

describe('analyze', () => {
  describe('#analyze', () => {
    it('should report every multiplet by order then lexicographically, with the engine and counts', () => {
      const result = analyze(plantedColumns(), { bins: 'categorical' });
      expect(result.engine).toEqual({ name: 'polyadic', version: ENGINE_VERSION });
      expect(ENGINE_VERSION).toBe('0.1.1');
      expect(result.rows).toBe(16);
      expect(result.rows_used).toBe(16);
      expect(result.max_order).toBe(5);
      expect(result.multiplet_count).toBe(31);
      expect(result.multiplets.length).toBe(31);
      expect(result.multiplets.slice(0, 6).map(m => m.columns.join(','))).toEqual(['x', 'y', 'z', 'c1', 'c2', 'x,y']);
      expect(result.multiplets[30].columns).toEqual(['x', 'y', 'z', 'c1', 'c2']);
      expect(row(result, 'x', 'y', 'z')?.co_information).toBeCloseTo(-1, 12);
      expect(row(result, 'c1', 'c2')?.co_information).toBeCloseTo(1, 12);
      expect(row(result, 'x')?.entropy).toBeCloseTo(1, 12);
      expect(row(result, 'x')?.total_correlation).toBe(0);
      expect(result.units).toBe('bits');
      expect(result.estimator).toBe('plugin');
      expect(result.columns.map(c => c.binning.spec)).toEqual(Array(5).fill('categorical'));
    });

    it('should keep the N lowest then the N highest co-informations of order ≥ 2 with top', () => {
      const result = analyze(plantedColumns(), { bins: 'categorical', top: 2 });
      // Lowest: {x,y,z} at −1 bit, then one of the many multiplets at 0 (up to rounding). Highest:
      // {c1,c2} at +1 bit, then one at 0 — the same as the second lowest when rounding leaves
      // them all exactly 0, so 3 or 4 rows.
      expect(result.multiplets.length).toBeGreaterThanOrEqual(3);
      expect(result.multiplets.length).toBeLessThanOrEqual(4);
      expect(Math.abs(result.multiplets[1].co_information)).toBeLessThan(1e-12);
      expect(result.multiplets[0].columns).toEqual(['x', 'y', 'z']);
      expect(result.multiplets.every(m => m.order >= 2)).toBe(true);
      const highest = result.multiplets.slice(2);
      expect(highest[0].columns).toEqual(['c1', 'c2']);
      const keys = result.multiplets.map(m => m.columns.join(','));
      expect(new Set(keys).size).toBe(keys.length);
      expect(result.multiplet_count).toBe(31);
    });

    it('should not repeat a multiplet that is both among the lowest and the highest', () => {
      // Three columns: only 4 multiplets of order ≥ 2, so top 3 lowest and top 3 highest overlap.
      const result = analyze(plantedColumns().slice(0, 3), { bins: 'categorical', top: 3 });
      const keys = result.multiplets.map(m => m.columns.join(','));
      expect(new Set(keys).size).toBe(keys.length);
      expect(keys.length).toBe(4);
      expect(keys[0]).toBe('x,y,z');
    });

    it('should report nats on request', () => {
      const result = analyze(plantedColumns(), { bins: 'categorical', units: 'nats' });
      expect(row(result, 'x')?.entropy).toBeCloseTo(Math.LN2, 12);
      expect(result.units).toBe('nats');
    });

    it('should default to all orders up to 12 columns and to order 3 above', () => {
      const columns = Array.from({ length: 13 }, (_, c) => numericColumn(`v${c}`, [0, 1, 0, 1, c % 2]));
      const wide = analyze(columns, { bins: 'categorical' });
      expect(wide.max_order).toBe(3);
      // C(13,1) + C(13,2) + C(13,3) = 13 + 78 + 286 = 377.
      expect(wide.multiplet_count).toBe(377);
      const narrow = analyze(columns.slice(0, 12), { bins: 'categorical' });
      expect(narrow.max_order).toBe(12);
      expect(narrow.multiplet_count).toBe(4095);
    });

    it('should clamp a maximum order above the column count, with a warning', () => {
      const result = analyze(plantedColumns().slice(0, 2), { bins: 'categorical', maxOrder: 5 });
      expect(result.max_order).toBe(2);
      expect(result.warnings.join(' ')).toMatch(/maximum order 5 is above the 2 selected columns/);
    });

    it('should refuse 40 columns up to order 40 with the exact multiplet count', () => {
      const columns = Array.from({ length: 40 }, (_, c) => numericColumn(`v${c}`, [0, 1, c % 2]));
      expectPolyadic(
        () => analyze(columns, { bins: 'categorical', maxOrder: 40 }),
        'limit',
        /1,099,511,627,775 multiplets/,
        /largest maximum order that fits is 6/
      );
    });

    it('should honour a lower multiplet limit', () => {
      expectPolyadic(() => analyze(plantedColumns(), { bins: 'categorical', maxMultiplets: 10 }), 'limit', /31 multiplets/);
    });

    it('should bin per column over the default spec', () => {
      const columns = [numericColumn('a', [1, 2, 3, 4, 5, 6, 7, 8]), numericColumn('b', [1, 2, 3, 4, 5, 6, 7, 8])];
      const result = analyze(columns, { bins: 'width:2', binsByColumn: { b: 'quantile:4' } });
      expect(result.columns.map(c => [c.name, c.binning.spec, c.bins])).toEqual([
        ['a', 'width:2', 2],
        ['b', 'quantile:4', 4]
      ]);
    });

    it('should apply the default spec to numeric columns only, text keeping its categories', () => {
      const columns = [numericColumn('n', [1, 2, 3, 4, 5, 6]), categoricalColumn('s', ['a', 'b', 'a', 'c', 'a', 'b'])];
      const result = analyze(columns, { bins: 'width:3' });
      expect(result.columns.map(c => [c.name, c.binning.spec, c.bins])).toEqual([
        ['n', 'width:3', 3],
        ['s', 'categorical', 3]
      ]);
      const own = analyze(columns, { bins: 'width:3', binsByColumn: { s: 'categorical' } });
      expect(own.columns[1].binning.spec).toBe('categorical');
    });

    it('should use auto for numbers and categorical for categories by default', () => {
      const result = analyze([numericColumn('n', [1, 2, 3, 4, 5]), categoricalColumn('s', ['a', 'b', 'a', 'b', 'a'])]);
      expect(result.columns.map(c => c.binning.spec)).toEqual(['auto', 'categorical']);
    });

    it('should find a planted XOR among 0/1 integer columns with the default binning', () => {
      // x, y, z = x xor y over the 4 combinations of x, y, 4 times each: I(x;y;z) = I(x;y) −
      // I(x;y|z) = 0 − 1 = −1 bit (Bell 2003's parity example), and each column has 1 bit.
      const int = (column: ColumnView): ColumnView =>
        column.kind === 'numeric' ? { ...column, dtype: 'int64', values: BigInt64Array.from(Array.from(column.values as Float64Array, BigInt)) } : column;
      const result = analyze(plantedColumns().slice(0, 3).map(int));
      expect(result.columns.map(c => [c.binning.method, c.bins])).toEqual([
        ['categorical', 2],
        ['categorical', 2],
        ['categorical', 2]
      ]);
      expect(row(result, 'x')!.entropy).toBeCloseTo(1, 12);
      expect(row(result, 'x', 'y', 'z')!.co_information).toBeCloseTo(-1, 12);
      expect(result.warnings).toEqual([]);
    });

    it('should apply the missing-value policy across the selected columns', () => {
      const columns = [numericColumn('a', [0, 1, NaN, 1]), categoricalColumn('b', ['u', null, 'v', 'v'])];
      const dropped = analyze(columns, { bins: 'categorical' });
      expect(dropped.rows).toBe(4);
      expect(dropped.rows_used).toBe(2);
      expect(dropped.warnings.join(' ')).toMatch(/2 of 4 rows/);
      const kept = analyze(columns, { bins: 'categorical', missing: 'category' });
      expect(kept.rows_used).toBe(4);
      expect(kept.columns[1].binning.categories).toEqual(['u', 'v', '(missing)']);
      expectPolyadic(() => analyze(columns, { bins: 'categorical', missing: 'error' }), 'input', /'b' has a missing value at row 1/);
    });

    it('should collect the binning warnings', () => {
      const result = analyze([numericColumn('flat', [3, 3, 3, 3]), numericColumn('n', [1, 2, 3, 4])], { bins: 'width:2' });
      expect(result.warnings.join(' ')).toMatch(/'flat' takes a single value/);
    });

    it('should give the same result from a lattice assembled from subtrees', () => {
      const columns = plantedColumns();
      const options = { bins: 'categorical', estimator: 'chao-shen' as const, maxOrder: 4 };
      const prepared = prepareColumns(columns, options);
      const input = latticeInput(prepared, options);
      const parts = [4, 2, 0, 3, 1].map(root => walkSubtree(input, root));
      const fromParts = analyzeCodes(prepared, options, assembleLattice(input, parts));
      expect(fromParts).toEqual(analyze(columns, options));
    });
  });

  describe('#analyze errors', () => {
    it('should name an unknown column and list the available ones', () => {
      expectPolyadic(() => analyze(plantedColumns(), { columns: ['x', 'nope'] }), 'usage', /'nope'/, /'x', 'y', 'z', 'c1', 'c2'/);
    });

    it('should refuse a column selected twice and an empty selection', () => {
      expectPolyadic(() => analyze(plantedColumns(), { columns: ['x', 'y', 'x'] }), 'usage', /'x' is selected twice/);
      expectPolyadic(() => analyze(plantedColumns(), { columns: [] }), 'usage', /No column is selected/);
    });

    it('should refuse two input columns with the same name', () => {
      expectPolyadic(() => analyze([numericColumn('a', [1]), numericColumn('a', [2])]), 'input', /named 'a'/);
    });

    it('should refuse an unknown column in the per-column binning and warn about an unselected one', () => {
      expectPolyadic(() => analyze(plantedColumns(), { binsByColumn: { q: 'fd' } }), 'usage', /per-column binning/, /'q'/);
      const result = analyze(plantedColumns(), { columns: ['x', 'y'], bins: 'categorical', binsByColumn: { z: 'fd' } });
      expect(result.warnings.join(' ')).toMatch(/'z', which is not selected/);
    });

    it('should refuse bad options, naming them', () => {
      const columns = plantedColumns();
      expectPolyadic(() => analyze(columns, { bins: 'bogus' }), 'usage', /"bogus"/);
      expectPolyadic(() => analyze(columns, { estimator: 'nsb' as never }), 'usage', /estimator 'nsb'/);
      expectPolyadic(() => analyze(columns, { units: 'bans' as never }), 'usage', /units 'bans'/);
      expectPolyadic(() => analyze(columns, { missing: 'skip' as never }), 'usage', /policy 'skip'/);
      expectPolyadic(() => analyze(columns, { maxOrder: 0 }), 'usage', /maximum order/);
      expectPolyadic(() => analyze(columns, { maxOrder: 2.5 }), 'usage', /maximum order/);
      expectPolyadic(() => analyze(columns, { top: 0 }), 'usage', /'top'/);
    });

    it('should refuse columns of different lengths and an empty table', () => {
      expectPolyadic(() => analyze([numericColumn('a', [1, 2]), numericColumn('b', [1])]), 'input', /'b' has 1 row but/);
      expectPolyadic(() => analyze([numericColumn('a', [])]), 'input', /no rows/);
    });
  });
});
