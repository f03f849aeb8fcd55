/**
 * The summary of a record (top multiplets, order histograms) and recordFromResult, on the
 * invented greenhouse table. The histogram rules are numpy.histogram's; test_fingerprint.py
 * also compares orderHistogram with numpy.histogram computed at test time.
 */
import fc from 'fast-check';

import { readDelimitedText } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { IAnalyzeOptions, IMultipletRow } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { isRecordId } from '../../src/record/ids';
import { defaultLabel, recordFromResult } from '../../src/record/recordFromResult';
import { histogramsOfRows, orderHistogram, topMultiplets } from '../../src/record/summary';
import { validateAnalysis } from '../../src/record/validate';
import { greenhouseTable, toCsv } from './helpers';

function row(columns: string[], coInformation: number): IMultipletRow {
  return {
    columns,
    order: columns.length,
    entropy: 1,
    co_information: coInformation,
    total_correlation: 0,
    dual_total_correlation: 0,
    o_information: 0,
    s_information: 0
  };
}

describe('summary', () => {
  describe('#topMultiplets', () => {
    const rows = [
      row(['a'], 1.2),
      row(['a', 'b'], 0.3),
      row(['a', 'c'], -0.1),
      row(['b', 'c'], 0),
      row(['a', 'b', 'c'], -0.4),
      row(['a', 'd'], 0.3),
      row(['c', 'd'], 0.9),
      row(['b', 'd'], -0.1)
    ];

    it('should keep order ≥ 2, negatives most negative first and positives most positive first', () => {
      const { synergy, redundancy } = topMultiplets(rows, 10);
      expect(synergy.map(m => m.columns.join(''))).toEqual(['abc', 'ac', 'bd']);
      expect(redundancy.map(m => m.columns.join(''))).toEqual(['cd', 'ab', 'ad']);
    });

    it('should cut each side to the size asked, ties in input order', () => {
      const { synergy, redundancy } = topMultiplets(rows, 2);
      expect(synergy.map(m => m.columns.join(''))).toEqual(['abc', 'ac']);
      expect(redundancy.map(m => m.columns.join(''))).toEqual(['cd', 'ab']);
      expect(synergy[0]).not.toHaveProperty('s_information');
    });

    it('should pick what a stable sort of every row followed by a cut picks', () => {
      // the reference: Array.prototype.sort is stable (ECMAScript 2019), so ties keep input order
      const reference = (all: IMultipletRow[], size: number, sign: number): string[] =>
        all
          .filter(r => r.order >= 2 && sign * r.co_information > 0)
          .sort((a, b) => sign * (b.co_information - a.co_information))
          .slice(0, size)
          .map(r => r.columns.join(''));
      const value = fc.constantFrom(-2, -1, -0.5, 0, 0.5, 1, 2, Number.NaN);
      fc.assert(
        fc.property(
          fc.array(fc.tuple(fc.integer({ min: 1, max: 3 }), value), { maxLength: 60 }),
          fc.integer({ min: 0, max: 8 }),
          (specs, size) => {
            const all = specs.map(([order, co], i) => ({ ...row([`m${i}`], co), order }));
            const { synergy, redundancy } = topMultiplets(all, size);
            expect(synergy.map(m => m.columns.join(''))).toEqual(reference(all, size, -1));
            expect(redundancy.map(m => m.columns.join(''))).toEqual(reference(all, size, 1));
          }
        )
      );
    });
  });

  describe('#orderHistogram', () => {
    it('should bin as numpy.histogram(values, bins=⌈√n⌉) does', () => {
      // numpy.histogram([0, 1, 2, 3], bins=2) → counts [2, 2], edges [0, 1.5, 3]: the last bin
      // is closed, so 3 counts in it (numpy documentation, histogram "Notes")
      expect(orderHistogram(2, [0, 1, 2, 3])).toEqual({ order: 2, edges: [0, 1.5, 3], counts: [2, 2] });
      const nine = orderHistogram(3, [-1, -0.5, 0, 0.5, 1, 1, 1, 1, 1]);
      expect(nine.counts).toEqual([2, 1, 6]);
      expect(nine.edges).toHaveLength(4);
      [-1, -1 / 3, 1 / 3, 1].forEach((edge, i) => expect(nine.edges[i]).toBeCloseTo(edge, 15));
    });

    it('should use at most 20 bins', () => {
      const values = Array.from({ length: 1000 }, (_, i) => i);
      const histogram = orderHistogram(2, values);
      expect(histogram.counts).toHaveLength(20);
      expect(histogram.counts.every(count => count === 50)).toBe(true);
    });

    it('should widen a constant input by 0.5 on each side, as numpy does', () => {
      const histogram = orderHistogram(2, [4, 4, 4, 4]);
      expect(histogram.edges).toEqual([3.5, 4, 4.5]);
      expect(histogram.counts).toEqual([0, 4]);
    });
  });

  describe('#histogramsOfRows', () => {
    it('should leave the histograms out when the rows are not every multiplet', () => {
      const rows = [row(['a'], 1), row(['b'], 1), row(['a', 'b'], 0.5)];
      // one value: one bin, widened by 0.5 on each side
      expect(histogramsOfRows(rows, 3, 2)).toEqual([{ order: 2, edges: [0, 1], counts: [1] }]);
      expect(histogramsOfRows(rows.slice(2), 3, 2)).toBeUndefined();
    });
  });
});

describe('recordFromResult', () => {
  const table = greenhouseTable(300, 21);
  const source = readDelimitedText(toCsv(table), 'csv', 'greenhouse.csv');
  const options: IAnalyzeOptions = { maxOrder: 3, estimator: 'shrinkage', units: 'nats' };

  it('should label two runs that differ only in binning, estimator or order differently', () => {
    const picked = source.columns.filter(column => ['flow_l_min', 'leak_alarm', 'air_temp_c'].includes(column.name));
    const labelOf = (run: IAnalyzeOptions): string => defaultLabel('hostile', analyze(picked, run), run.missing);
    const base = labelOf({ maxOrder: 3 });
    // short selections are named, so two selections of the same size differ too
    expect(base).toBe('hostile: flow_l_min, leak_alarm, air_temp_c; binning auto + categorical; plugin, bits; orders up to 3');
    const others = [
      labelOf({ maxOrder: 3, bins: 'quantile:4' }),
      labelOf({ maxOrder: 3, estimator: 'miller-madow' }),
      labelOf({ maxOrder: 2 }),
      labelOf({ maxOrder: 3, units: 'nats' }),
      labelOf({ maxOrder: 3, missing: 'category' })
    ];
    expect(new Set([base, ...others]).size).toBe(6);
    expect(others[0]).toContain('binning quantile:4 + categorical');
    expect(others[4]).toMatch(/; missing as a category$/);
  });

  it('should record the settings, the source and the summary of a run', async () => {
    const result = analyze(source.columns, options);
    const fingerprint = await fingerprintColumns(source.columns);
    const record = recordFromResult({
      options,
      result,
      source: { frame: 'greenhouse', columns: source.columns, fingerprint },
      summarySize: 4
    });
    expect(validateAnalysis(record).ok).toBe(true);
    expect(isRecordId(record.id)).toBe(true);
    expect(record.label).toBe('greenhouse: 6 columns; binning categorical + auto; shrinkage, nats; orders up to 3');
    expect(Date.now() - Date.parse(record.created)).toBeLessThan(60000);
    expect(record.engine).toEqual(result.engine);
    expect(record.source).toEqual({
      frame: 'greenhouse',
      rows: 300,
      columns: source.columns.map((column, i) => ({
        name: column.name,
        dtype: column.dtype,
        kind: column.kind,
        sha256: fingerprint.columns[i].sha256
      })),
      fingerprint: { encoding: 'pdfp1', sha256: fingerprint.sha256 },
      origin: { kind: 'rows' }
    });
    expect(record.columns).toEqual(table.header);
    expect(record.binning.map(b => [b.name, b.spec, b.bins])).toEqual(result.columns.map(c => [c.name, c.binning.spec, c.bins]));
    expect(record.binning[1].edges).toEqual(result.columns[1].binning.edges);
    expect(record.binning[0].categories).toEqual(['false', 'true']);
    // the engine's default policy, as resolveOptions fills it in
    expect(record.missing).toBe('drop');
    expect([record.estimator, record.units, record.max_order]).toEqual(['shrinkage', 'nats', 3]);
    // no evidence was computed, so the record claims none
    expect(record.statistics).toBeUndefined();
    expect(record.summary.evidence).toBeUndefined();
    expect(record.summary.synergy[0].p_value).toBeUndefined();
    expect(record.summary.synergy).toHaveLength(4);
    expect(record.summary.synergy[0].columns).toEqual(['valve_command', 'flow_l_min', 'leak_alarm']);
    expect(record.summary.multiplet_count).toBe(result.multiplet_count);
    expect(record.summary.rows_used).toBe(300);
    const order3 = result.multiplets.filter(m => m.order === 3).map(m => m.co_information);
    expect(record.summary.histograms?.[1]).toEqual(orderHistogram(3, order3));
  });

  it('should keep the sample, the statistics the engine ran with, their evidence and a cleaned label', async () => {
    const withStatistics = { ...options, statistics: { surrogates: 19, seed: 5, alpha: 0.01 } };
    const result = analyze(source.columns, withStatistics);
    const record = recordFromResult({
      options: withStatistics,
      result,
      source: {
        frame: 'greenhouse',
        columns: source.columns,
        fingerprint: await fingerprintColumns(source.columns),
        sample: { seed: 5, row_cap: 300, original_rows: 5000 }
      },
      label: `  Valve\ncheck ${'é'.repeat(300)}`,
      id: 'pd-chosen0001'
    });
    expect(record.id).toBe('pd-chosen0001');
    expect(record.source.sample).toEqual({ seed: 5, row_cap: 300, original_rows: 5000 });
    expect(record.statistics).toEqual({
      surrogates: 19,
      seed: 5,
      bootstrap: 0,
      tail: 'two',
      alpha: 0.01,
      beyond_pairs: 0,
      fit_draws: 0,
      sharpen: 0
    });
    const top = record.summary.synergy[0];
    const row = result.multiplets.find(m => m.columns.join() === top.columns.join());
    expect(top.p_value).toBe(row?.p_value);
    expect(top.q_value).toBe(row?.q_value);
    expect(top.null_mean).toBe(row?.null_mean);
    // p cannot go below 1/(N + 1)
    expect(top.p_value).toBeGreaterThanOrEqual(1 / 20);
    expect(record.summary.evidence?.families.co_information?.count).toBe(result.statistics?.families.co_information?.count);
    expect(record.summary.evidence?.null_bands).toEqual(result.statistics?.null_bands);
    expect(Array.from(record.label)).toHaveLength(200);
    expect(record.label.startsWith('Valve check éé')).toBe(true);
  });

  it('should leave the histograms out of a result cut to its top multiplets', async () => {
    const cut = { ...options, top: 3 };
    const result = analyze(source.columns, cut);
    const record = recordFromResult({
      options: cut,
      result,
      source: { frame: 'greenhouse', columns: source.columns, fingerprint: await fingerprintColumns(source.columns) }
    });
    expect(record.summary.histograms).toBeUndefined();
    expect(record.summary.synergy.length).toBeGreaterThan(0);
  });

  it('should refuse a fingerprint of other columns than the analysis used', async () => {
    const result = analyze(source.columns, { ...options, columns: ['valve_command', 'flow_l_min'] });
    await expect(async () =>
      recordFromResult({
        options,
        result,
        source: { frame: 'greenhouse', columns: source.columns, fingerprint: await fingerprintColumns(source.columns) }
      })
    ).rejects.toThrow('they must be the same, in the same order');
  });

  it('should refuse statistics outside the schema, naming the field', async () => {
    const withStatistics = { ...options, statistics: { surrogates: 9 } };
    const result = analyze(source.columns, withStatistics);
    const tampered = { ...result, statistics: { ...result.statistics!, alpha: 2 } };
    const fingerprint = await fingerprintColumns(source.columns);
    expect(() =>
      recordFromResult({
        options: withStatistics,
        result: tampered,
        source: { frame: 'greenhouse', columns: source.columns, fingerprint }
      })
    ).toThrow('The analysis cannot be recorded: /statistics/alpha must be < 1.');
  });
});
