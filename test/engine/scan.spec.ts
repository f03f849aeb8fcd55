/**
 * The scan driver (src/engine/aggregate/scan.ts) against the in-memory engine: a scanner over
 * the same columns (test/engine/scan-helpers.ts, whose facts and details are the in-memory
 * summary's own numbers) must give the same JSON, bit for bit, for every binning rule and
 * missing-value policy. The in-memory binning itself is checked against numpy in
 * binning-numpy.spec.ts; here the driver must add nothing and lose nothing.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { MAX_DISTINCT_ROWS, planScan, scanWeightedCodes, ScanStage } from '../../src/engine/aggregate/scan';
import { analyze, analyzeCodes } from '../../src/engine/analyze';
import { PolyadicError } from '../../src/engine/errors';
import { columnFromValues } from '../../src/engine/table';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import { MemoryScanner } from './scan-helpers';

/** Seeded columns: a float with NaN, nulls and −0, small integers, a skewed float, text with nulls, booleans with nulls. */
function fixture(rows: number): ColumnView[] {
  const rng = xoroshiro128plus(1414);
  const draw = (n: number): number => unsafeUniformIntDistribution(0, n - 1, rng);
  const a: (number | null)[] = [];
  const b: number[] = [];
  const c: number[] = [];
  const d: (string | null)[] = [];
  const e: (boolean | null)[] = [];
  for (let i = 0; i < rows; i++) {
    const u = (draw(1_000_000) + 0.5) / 1_000_000;
    a.push(draw(40) === 0 ? null : draw(60) === 0 ? NaN : draw(50) === 0 ? -0 : Math.tan(Math.PI * (u - 0.5)) / 7 + draw(3));
    b.push(draw(5));
    c.push(-Math.log((draw(999_999) + 1) / 1_000_000) * 3.7);
    d.push(draw(30) === 0 ? null : ['ä', 'z', 'B', 'x'][draw(4)]);
    e.push(draw(50) === 0 ? null : draw(5) < 2);
  }
  return [
    columnFromValues('a', a, 'float64'),
    columnFromValues('b', Float64Array.from(b), 'int64'),
    columnFromValues('c', Float64Array.from(c), 'float64'),
    columnFromValues('d', d),
    columnFromValues('e', e)
  ];
}

const columns = fixture(1500);
const names = columns.map(column => column.name);

async function viaScan(options: IAnalyzeOptions, scanner = new MemoryScanner(columns)): Promise<string> {
  const selected = options.columns ?? names;
  const { prepared } = await scanWeightedCodes(scanner, selected, options);
  return JSON.stringify(analyzeCodes(prepared, { ...options, columns: selected }));
}

function inMemory(options: IAnalyzeOptions): string {
  return JSON.stringify(analyze(columns, options));
}

async function messageOf(run: () => Promise<unknown> | unknown): Promise<PolyadicError> {
  try {
    await run();
  } catch (error) {
    return error as PolyadicError;
  }
  throw new Error('no error');
}

describe('scanWeightedCodes', () => {
  const specs = ['auto', 'width:7', 'quantile:5', 'fd', 'scott', 'sturges', 'rice', 'sqrt', 'doane', 'kmeans:3'];
  for (const bins of specs) {
    it(`should give the in-memory JSON under ${bins}`, async () => {
      const expected = inMemory({ bins, estimator: 'miller-madow' });
      expect(JSON.parse(expected).multiplets.length).toBeGreaterThan(0);
      expect(await viaScan({ bins, estimator: 'miller-madow' })).toBe(expected);
    });
  }

  for (const missing of ['drop', 'category'] as const) {
    it(`should apply the missing-value policy ${missing} to the weighted rows as in memory`, async () => {
      const options: IAnalyzeOptions = { missing, binsByColumn: { c: 'edges:0,1.5,3,1000', b: 'categorical' } };
      const expected = JSON.parse(inMemory(options));
      expect(expected.rows_used < expected.rows).toBe(missing === 'drop');
      expect(await viaScan(options)).toBe(JSON.stringify(expected));
    });
  }

  it('should give the in-memory warnings: merged levels, a constant column, an identifier', async () => {
    const extra = [
      ...columns,
      columnFromValues('k', Float64Array.from({ length: 1500 }, () => 7), 'float64'),
      columnFromValues('id', Array.from({ length: 1500 }, (_v, i) => `row-${i}`))
    ];
    const options: IAnalyzeOptions = { columns: ['b', 'k', 'id', 'd'], binsByColumn: { b: 'width:2' }, maxOrder: 2 };
    const expected = analyze(extra, options);
    expect(expected.warnings.join(' ')).toMatch(/merges them into 2 bins/);
    expect(expected.warnings.length).toBeGreaterThanOrEqual(3);
    const { prepared } = await scanWeightedCodes(new MemoryScanner(extra), options.columns!, options);
    expect(JSON.stringify(analyzeCodes(prepared, options))).toBe(JSON.stringify(expected));
  });

  it('should name the same row under the policy error', async () => {
    const expected = await messageOf(() => analyze(columns, { missing: 'error' }));
    expect(expected.message).toMatch(/row \d+/);
    expect((await messageOf(() => viaScan({ missing: 'error' }))).message).toBe(expected.message);
  });

  it('should say which values lie outside user edges, naming the row when the scanner can', async () => {
    const options: IAnalyzeOptions = { columns: ['c'], bins: 'edges:0,1,2' };
    const expected = await messageOf(() => analyze(columns, options));
    expect(expected.message).toMatch(/outside the edges/);
    // without firstOutside: the column and its range
    const plain = await messageOf(() => viaScan(options));
    expect(plain.message).toMatch(/^Column 'c' has values from \S+ to \S+, outside the edges 0 … 2 of edges:0,1,2/);
    expect(plain.detail.column).toBe('c');
    // with it: the in-memory message
    const scanner = new MemoryScanner(columns);
    const located = Object.assign(scanner, {
      firstOutside: async (name: string, lo: number, hi: number) => {
        const values = (columns[2] as { values: Float64Array }).values;
        const row = values.findIndex(v => v < lo || v > hi);
        return name === 'c' && row >= 0 ? { row, value: values[row] } : null;
      }
    });
    expect((await messageOf(() => viaScan(options, located))).message).toBe(expected.message);
  });

  it('should refuse ±Inf under a numeric rule as the in-memory engine does', async () => {
    const values = Float64Array.from({ length: 40 }, (_v, i) => (i === 17 ? -Infinity : i * 0.37));
    const withInf = [columnFromValues('x', values, 'float64')];
    const expected = await messageOf(() => analyze(withInf, { bins: 'quantile:4' }));
    const found = await messageOf(() => scanWeightedCodes(new MemoryScanner(withInf), ['x'], { bins: 'quantile:4' }));
    expect(found.message).toBe(expected.message);
    expect(found.message).toMatch(/-Inf at row 17/);
  });

  it('should refuse a date column, naming it and saying to cast it', async () => {
    const scanner = new MemoryScanner(columns, { c: 'datetime' });
    const error = await messageOf(() => scanWeightedCodes(scanner, ['b', 'c'], {}));
    expect(error.message).toMatch(/^Column 'c' holds datetime values \(float64\), which a scan does not bin; cast it/);
    expect(error.detail.column).toBe('c');
    expect(scanner.calls).toEqual(['facts']);
  });

  it('should refuse a numeric rule on a text column and an all-missing column', async () => {
    expect((await messageOf(() => viaScan({ columns: ['d'], bins: 'width:3', binsByColumn: { d: 'width:3' } }))).message).toBe(
      (await messageOf(() => analyze(columns, { columns: ['d'], binsByColumn: { d: 'width:3' } }))).message
    );
    const empty = [columnFromValues('z', [null, null, null]), columnFromValues('y', [1, 2, 3])];
    const found = await messageOf(() => scanWeightedCodes(new MemoryScanner(empty), ['y', 'z'], {}));
    expect(found.message).toBe((await messageOf(() => analyze(empty, {}))).message);
  });

  it('should stop past the cap on distinct rows with the limit in the detail', async () => {
    const error = await messageOf(() => scanWeightedCodes(new MemoryScanner(columns), names, { bins: 'quantile:8' }, { maxDistinctRows: 50 }));
    expect(error.kind).toBe('limit');
    expect(error.detail).toEqual({ limit: 'distinct_rows', count: 50 });
    expect(MAX_DISTINCT_ROWS).toBe(5_000_000);
  });

  it('should report its stages, asking details only when a rule needs them', async () => {
    const stages: ScanStage[] = [];
    const scanner = new MemoryScanner(columns);
    await scanWeightedCodes(scanner, ['b', 'd', 'e'], {}, { onStage: stage => stages.push(stage) });
    // b (5 levels) stays categorical under auto: it needs its distinct values
    expect(stages).toEqual(['facts', 'details', 'group', 'binning']);
    const textOnly = new MemoryScanner(columns);
    await scanWeightedCodes(textOnly, ['d', 'e'], {});
    expect(textOnly.calls).toEqual(['facts', 'group']);
  });
});

describe('planScan', () => {
  it('should send equal-width edges as uniform keys and user edges as plain ones', async () => {
    const plan = await planScan(new MemoryScanner(columns), ['a', 'c', 'd'], { binsByColumn: { a: 'width:4', c: 'edges:0,5,1000' } });
    const [a, c, d] = plan.columns.map(column => column.key);
    expect(a.edges).toHaveLength(5);
    expect(a.uniform).toEqual({ first: a.edges![0], last: a.edges![4] });
    expect(c).toEqual({ name: 'c', edges: [0, 5, 1000] });
    expect(d).toEqual({ name: 'd', edges: null });
    expect(plan.rows).toBe(1500);
  });
});
