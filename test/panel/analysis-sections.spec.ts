/**
 * The analysis sections' models: column facts, adequacy, multiplet counts and the debounced
 * binning preview.
 */
import { adequacyOf, EstimatorModel, maxOrderByRule } from '../../src/panel/estimator/model';
import { BinningModel } from '../../src/panel/binning/model';
import { columnStats, WARNING_BADGE, WARNING_TEXT } from '../../src/panel/data/stats';
import { PolyadicError } from '../../src/engine/errors';
import type { ColumnView } from '../../src/engine/types';
import { previewColumn } from '../../src/worker/handlers';
import type { IColumnPreview } from '../../src/worker/protocol';

function numeric(name: string, values: number[], dtype = 'float64'): ColumnView {
  const array = dtype === 'int64' ? new BigInt64Array(values.map(BigInt)) : new Float64Array(values);
  return { kind: 'numeric', name, dtype, values: array, missing: null };
}

describe('columnStats', () => {
  it('should count distinct values without the missing ones (worked by hand)', () => {
    const stats = columnStats(numeric('x', [1, 2, 2, Number.NaN, 3, 1]));
    expect(stats).toEqual({ rows: 6, missing: 1, distinct: 3, warnings: [] });
  });

  it('should flag a constant column', () => {
    expect(columnStats(numeric('x', [5, 5, 5, 5])).warnings).toEqual(['constant']);
    // one value among gaps is still constant
    expect(columnStats(numeric('x', [5, Number.NaN, 5])).warnings).toEqual(['constant']);
  });

  it('should call a column with no value all missing, not constant, with a badge of its own', () => {
    const empty = columnStats(numeric('x', [Number.NaN, Number.NaN, Number.NaN]));
    expect(empty).toEqual({ rows: 3, missing: 3, distinct: 0, warnings: ['all-missing'] });
    const masked: ColumnView = { kind: 'categorical', name: 's', dtype: 'string', codes: new Int32Array([-1, -1]), categories: [], missing: null };
    expect(columnStats(masked).warnings).toEqual(['all-missing']);
    const badges = Object.values(WARNING_BADGE);
    expect(new Set(badges).size).toBe(badges.length);
    expect(WARNING_BADGE['all-missing']).toBe('all missing');
    expect(WARNING_TEXT['all-missing']).toMatch(/^all missing: /);
  });

  it('should flag whole numbers that are all distinct as identifier-like, but not floats', () => {
    const ids = Array.from({ length: 30 }, (_, i) => i * 7);
    expect(columnStats(numeric('id', ids, 'int64')).warnings).toEqual(['identifier-like']);
    expect(columnStats(numeric('x', ids.map(v => v + 0.5))).warnings).toEqual([]);
  });

  it('should count used categories, treat code -1 and the mask as missing, and flag high cardinality', () => {
    const codes = new Int32Array([0, 1, -1, 1, 2]);
    const column: ColumnView = {
      kind: 'categorical',
      name: 'zone',
      dtype: 'category',
      codes,
      categories: ['a', 'b', 'c', 'unused'],
      missing: new Uint8Array([0, 0, 0, 0, 1])
    };
    expect(columnStats(column)).toEqual({ rows: 5, missing: 2, distinct: 2, warnings: [] });
    const many = new Int32Array(Array.from({ length: 200 }, (_, i) => i % 60));
    const wide: ColumnView = { kind: 'categorical', name: 'w', dtype: 'object', codes: many, categories: [], missing: null };
    expect(columnStats(wide).warnings).toEqual(['high-cardinality']);
  });
});

describe('adequacyOf', () => {
  it('should divide the rows by the product of the largest bin counts at the order', () => {
    // 100 rows; the two largest of 4, 2, 5 bins give 20 cells (worked by hand).
    expect(adequacyOf(100, [4, 2, 5], 2)).toEqual({ value: 5, cells: 20, order: 2 });
    expect(adequacyOf(10, [4, 4, 4], 3)!.value).toBeCloseTo(10 / 64, 12);
  });

  it('should give null without bin counts', () => {
    expect(adequacyOf(10, [], 2)).toBeNull();
    expect(adequacyOf(10, [Number.NaN, 3], 2)).toBeNull();
  });
});

describe('EstimatorModel', () => {
  describe('#multiplets', () => {
    it('should count the multiplets of orders 1 to the automatic maximum', () => {
      const model = new EstimatorModel();
      // 16 columns: above 12, so orders 1–3: C(16,1) + C(16,2) + C(16,3) = 16 + 120 + 560.
      expect(model.multiplets(16)).toBe(696n);
      // 5 columns: all orders, 2^5 − 1.
      expect(model.multiplets(5)).toBe(31n);
      model.maxOrder = 2;
      expect(model.multiplets(5)).toBe(15n);
    });
  });

  it('should follow the settings rule', () => {
    expect(maxOrderByRule('all', 3, 20)).toBe(20);
    expect(maxOrderByRule('fixed', 4, 20)).toBe(4);
    expect(maxOrderByRule('fixed', 4, 2)).toBe(2);
    expect(maxOrderByRule('auto', 3, 13)).toBe(3);
    expect(maxOrderByRule('auto', 3, 12)).toBe(12);
  });
});

describe('BinningModel', () => {
  beforeEach(() => jest.useFakeTimers());
  afterEach(() => jest.useRealTimers());

  function fakePreview(calls: string[]) {
    return (column: ColumnView, spec: string): Promise<IColumnPreview> => {
      calls.push(`${column.name}=${spec}`);
      const bins = Number(spec.split(':')[1] ?? 3);
      return Promise.resolve({
        name: column.name,
        rows: 4,
        missing: 0,
        binning: { name: column.name, bins, binning: { method: 'quantile', spec } },
        binCounts: new Int32Array(bins),
        distribution: { kind: 'numeric', low: 0, high: 1, edges: new Float64Array(2), counts: new Int32Array(1), infinite: 0 },
        warnings: []
      });
    };
  }

  it('should preview only the last of quick changes, after the debounce', async () => {
    const calls: string[] = [];
    const model = new BinningModel({ preview: fakePreview(calls), debounceMs: 60 });
    model.setColumns([numeric('a', [1, 2, 3, 4]), numeric('b', [4, 3, 2, 1])]);
    await jest.advanceTimersByTimeAsync(100);
    calls.length = 0;
    model.setSpec('a', 'quantile:2');
    model.setSpec('a', 'quantile:3');
    await jest.advanceTimersByTimeAsync(30);
    expect(calls).toEqual([]);
    await jest.advanceTimersByTimeAsync(40);
    expect(calls[0]).toBe('a=quantile:3');
    expect(model.preview.spec).toBe('quantile:3');
    expect(model.binCount('a')).toBe(3);
    model.dispose();
  });

  it('should not preview an invalid spec and say why', async () => {
    const calls: string[] = [];
    const model = new BinningModel({ preview: fakePreview(calls), debounceMs: 10 });
    model.setColumns([numeric('a', [1, 2, 3, 4])]);
    await jest.advanceTimersByTimeAsync(20);
    calls.length = 0;
    model.setSpec('a', 'quantile:zero');
    await jest.advanceTimersByTimeAsync(20);
    expect(calls).toEqual([]);
    expect(model.preview.error?.message).toMatch(/quantile:zero/);
    expect(model.problemOf('a')?.message).toMatch(/not valid/);
    model.dispose();
  });

  it('should give every numeric column the focused spec on apply to all', async () => {
    const model = new BinningModel({ preview: fakePreview([]), debounceMs: 10 });
    const flag: ColumnView = { kind: 'categorical', name: 'f', dtype: 'bool', codes: new Int32Array([0, 1]), categories: ['False', 'True'], missing: null };
    model.setColumns([numeric('a', [1, 2]), numeric('b', [2, 1]), flag]);
    model.setSpec('a', 'width:7');
    model.applyToAllNumeric('a');
    expect(model.specsFor(['a', 'b', 'f'])).toEqual({ a: 'width:7', b: 'width:7', f: 'categorical' });
    model.dispose();
  });

  it('should start numeric columns at the engine default auto when the settings give none', () => {
    const model = new BinningModel({ preview: fakePreview([]), debounceMs: 10 });
    model.setColumns([numeric('a', [0, 1, 1, 0], 'int64')]);
    expect(model.specOf('a')).toBe('auto');
    model.numericDefault = 'width:3';
    model.setColumns([numeric('a', [0, 1, 1, 0], 'int64')]);
    expect(model.specOf('a')).toBe('width:3');
    model.dispose();
  });

  it('should keep what each selected column’s spec gave, with the engine’s warnings, for its row', async () => {
    const model = new BinningModel({
      debounceMs: 10,
      // the real engine, as the preview worker runs it
      preview: (column, spec) => Promise.resolve(previewColumn(column, spec))
    });
    model.setColumns([numeric('flag', [0, 1, 1, 0, 1, 0, 0, 0]), numeric('level', [0, 1, 2, 1, 1, 0, 2, 1])]);
    model.requestBinCounts(['flag', 'level']);
    await jest.advanceTimersByTimeAsync(50);
    expect(model.outcomeOf('flag')).toEqual({ spec: 'auto', bins: 2, method: 'categorical', warnings: [], error: null });
    model.setSpec('flag', 'quantile:4');
    await jest.advanceTimersByTimeAsync(50);
    const merged = model.outcomeOf('flag')!;
    expect([merged.bins, merged.method]).toEqual([1, 'quantile']);
    expect(merged.warnings.join(' ')).toMatch(/'flag' has only 2 distinct values, and quantile:4 merges them into 1 bin/);
    model.dispose();
  });

  it('should mark the row whose valid edges the engine refuses on the data, with the engine’s error and its column', async () => {
    const model = new BinningModel({
      debounceMs: 10,
      preview: (column, spec) => Promise.resolve().then(() => previewColumn(column, spec))
    });
    model.setColumns([numeric('a', [0.5, 1.5, 2.5, 9]), numeric('b', [1, 2, 3, 4])]);
    model.requestBinCounts(['a', 'b']);
    await jest.advanceTimersByTimeAsync(50);
    // a well-formed spec, so a run is not blocked by its text: the value 9 lies outside the edges
    model.setSpec('a', 'edges:0,1,3');
    model.focus('b');
    await jest.advanceTimersByTimeAsync(50);
    expect(model.problemOf('a')).toBeNull();
    const fault = model.faultOf('a');
    expect(fault?.kind).toBe('input');
    expect(fault?.detail.column).toBe('a');
    expect(fault?.message).toMatch(/Column 'a' has the value 9 at row 3, outside the edges 0 … 3/);
    expect(model.faultOf('b')).toBeNull();
    model.setSpec('a', 'edges:0,1,10');
    await jest.advanceTimersByTimeAsync(50);
    expect(model.faultOf('a')).toBeNull();
    model.dispose();
  });

  it('should mark the row a failed run names until its spec changes, and ignore errors about other things', () => {
    const model = new BinningModel({ preview: fakePreview([]), debounceMs: 10 });
    model.setColumns([numeric('a', [1, 2]), numeric('b', [2, 1])]);
    const refused = new PolyadicError('input', "Column 'b' is refused.", { column: 'b', option: 'bins' });
    model.setRunFault(refused);
    expect(model.faultOf('b')).toBe(refused);
    expect(model.faultOf('a')).toBeNull();
    model.setSpec('b', 'width:3');
    expect(model.faultOf('b')).toBeNull();
    model.setRunFault(new PolyadicError('input', "Column 'a' is all missing.", { column: 'a' }));
    expect(model.faultOf('a')).toBeNull();
    model.dispose();
  });

  it('should keep the specs of a frame read again, and start a new frame from the defaults', () => {
    const model = new BinningModel({ preview: fakePreview([]), debounceMs: 10 });
    model.setColumns([numeric('a', [1, 2]), numeric('b', [2, 1])]);
    model.setSpec('a', 'width:7');
    model.setColumns([numeric('a', [1, 3]), numeric('b', [2, 1])], { keepSpecs: true });
    expect(model.specOf('a')).toBe('width:7');
    model.setColumns([numeric('a', [1, 3])]);
    expect(model.specOf('a')).toBe('auto');
    model.dispose();
  });
});
