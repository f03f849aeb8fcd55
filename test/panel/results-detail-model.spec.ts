/**
 * Specs of the multiplet detail model (src/panel/results/detail-model.ts) on a seeded table
 * with a planted parity triplet (valve, flow, alarm) and a redundant pair: it follows the
 * selection, lists every measure, counts the contingency tables from the run's own codes
 * (checked against counts of the raw labels, which share no code with the binning), flips the
 * triplet's conditional tables, and says plainly what it cannot show without the data.
 */
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyze } from '../../src/engine/analyze';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions } from '../../src/engine/types';
import { DetailModel } from '../../src/panel/results/detail-model';
import { ResultsModel } from '../../src/panel/results/model';
import { categoricalColumn, numericColumn } from '../engine/helpers';

interface IPlanted {
  columns: ColumnView[];
  labels: Record<'valve' | 'flow' | 'alarm', string[]>;
}

/**
 * 500 seeded rows: valve and flow fair coins, alarm their parity with 5 % flips, humidity_b a
 * noisy copy of humidity_a, noise a column of its own; `gaps` rows of noise are missing.
 */
function planted(gaps = 0, rows = 500, seed = 5): IPlanted {
  const rng = xoroshiro128plus(seed);
  const int = (lo: number, hi: number): number => unsafeUniformIntDistribution(lo, hi, rng);
  const labels = { valve: [] as string[], flow: [] as string[], alarm: [] as string[] };
  const a: number[] = [];
  const b: number[] = [];
  const noise: number[] = [];
  for (let i = 0; i < rows; i++) {
    const v = int(0, 1);
    const f = int(0, 1);
    labels.valve.push(v ? 'open' : 'shut');
    labels.flow.push(f ? 'flowing' : 'dry');
    labels.alarm.push(String(int(0, 19) === 0 ? 1 - (v ^ f) : v ^ f));
    const h = int(0, 10000) / 100;
    a.push(h);
    b.push(h + int(0, 100) / 100);
    noise.push(i < gaps ? Number.NaN : int(0, 1000));
  }
  return {
    columns: [
      categoricalColumn('valve', labels.valve),
      categoricalColumn('flow', labels.flow),
      categoricalColumn('alarm', labels.alarm),
      numericColumn('humidity_a', a),
      numericColumn('humidity_b', b),
      numericColumn('noise', noise)
    ],
    labels
  };
}

/** A results model showing a fresh run of `columns`, with its data unless `restored`. */
function show(columns: ColumnView[], options: IAnalyzeOptions, restored = false): { results: ResultsModel; detail: DetailModel; result: IAnalysisResult } {
  const result = analyze(columns, options);
  const results = new ResultsModel();
  results.setResult(result, restored ? { restored: true } : { data: { columns, options } });
  return { results, detail: new DetailModel({ results }), result };
}

/** Store index of the row of exactly these columns (any order). */
function rowOf(results: ResultsModel, names: string[]): number {
  const rows = results.store!.rows;
  const at = rows.findIndex(row => row.columns.length === names.length && names.every(name => row.columns.includes(name)));
  expect(at).toBeGreaterThanOrEqual(0);
  return at;
}

/** Rows with each pair of labels, counted from the raw labels (no binning involved). */
function labelCounts(x: string[], y: string[], keep: (row: number) => boolean = () => true): Map<string, number> {
  const counts = new Map<string, number>();
  x.forEach((label, row) => {
    if (keep(row)) {
      const key = `${label}|${y[row]}`;
      counts.set(key, (counts.get(key) ?? 0) + 1);
    }
  });
  return counts;
}

describe('DetailModel', () => {
  describe('#detail', () => {
    it('should follow the selected row and list every measure with its units', () => {
      const { results, detail, result } = show(planted().columns, { maxOrder: 3 });
      expect(detail.detail).toBeNull();
      let emitted = 0;
      detail.changed.connect(() => emitted++);
      const index = rowOf(results, ['valve', 'flow', 'alarm']);
      results.selectMultiplet(index);
      expect(emitted).toBe(1);
      const shown = detail.detail!;
      expect(shown.index).toBe(index);
      const row = result.multiplets[index];
      const byKey = new Map(shown.measures.map(m => [m.key, m]));
      for (const key of ['co_information', 'o_information', 'total_correlation', 'dual_total_correlation', 's_information', 'entropy'] as const) {
        expect(byKey.get(key)!.value).toBe(row[key]);
        expect(byKey.get(key)!.unit).toBe('bits');
        expect(byKey.get(key)!.label.length).toBeGreaterThan(0);
      }
      // 500 rows over 2·2·2 cells
      expect(byKey.get('adequacy')!.value).toBe(500 / 8);
      expect(shown.evidence).toEqual([]);
      results.selectMultiplet(-1);
      expect(detail.detail).toBeNull();
      expect(emitted).toBe(2);
    });

    it('should list the evidence columns when statistics ran', () => {
      const { results, detail, result } = show(planted(0, 200).columns, { maxOrder: 3, statistics: { surrogates: 19, bootstrap: 10, seed: 3 } });
      const index = rowOf(results, ['valve', 'flow', 'alarm']);
      results.selectMultiplet(index);
      const row = result.multiplets[index];
      const evidence = new Map(detail.detail!.evidence.map(m => [m.key, m]));
      expect(evidence.get('p_value')!.value).toBe(row.p_value);
      expect(evidence.get('q_value')!.value).toBe(row.q_value);
      expect(evidence.get('null_mean')!.unit).toBe('bits');
      // a bootstrap interval is one entry, its two ends together
      expect(row.ci_low).toEqual(expect.any(Number));
      expect(evidence.get('ci_low')).toMatchObject({ value: row.ci_low, high: row.ci_high, unit: 'bits' });
      expect(evidence.has('ci_high')).toBe(false);
      // every evidence field the row carries is listed, as itself or as an interval's end
      const listed = new Set(detail.detail!.evidence.flatMap(m => [m.key, ...(m.high !== undefined ? [m.key.replace('_low', '_high')] : [])]));
      const measures = new Set(detail.detail!.measures.map(m => m.key));
      for (const key of Object.keys(row)) {
        if (key !== 'columns' && key !== 'order') {
          expect(listed.has(key as never) || measures.has(key as never)).toBe(true);
        }
      }
    });

    it('should count the joint table of a pair with the bin labels of both columns', () => {
      const data = planted();
      const { results, detail } = show(data.columns, { maxOrder: 3 });
      results.selectMultiplet(rowOf(results, ['valve', 'flow']));
      const tables = detail.detail!.tables!;
      expect(tables.kind).toBe('pair');
      if (tables.kind !== 'pair') {
        return;
      }
      const { table } = tables;
      expect(table.total).toBe(500);
      const expected = labelCounts(data.labels[table.rowColumn as 'valve'], data.labels[table.columnColumn as 'flow']);
      table.rowLabels.forEach((x, i) => table.columnLabels.forEach((y, j) => expect(table.counts[i][j]).toBe(expected.get(`${x}|${y}`) ?? 0)));
      expect(new Set(table.rowLabels)).toEqual(new Set(['open', 'shut']));
    });

    it('should label the quantile bins of a numeric pair by their edges', () => {
      const { results, detail, result } = show(planted().columns, { maxOrder: 2 });
      results.selectMultiplet(rowOf(results, ['humidity_a', 'humidity_b']));
      const tables = detail.detail!.tables!;
      if (tables.kind !== 'pair') {
        throw new Error('expected a pair');
      }
      const edges = result.columns.find(c => c.name === 'humidity_a')!.binning.edges!;
      expect(tables.table.rowLabels).toHaveLength(4);
      expect(tables.table.rowLabels[0].startsWith('[')).toBe(true);
      expect(tables.table.rowLabels[3].endsWith(']')).toBe(true);
      expect(tables.table.rowLabels[0]).toContain(String(Number(edges[0].toPrecision(4))));
      // a noisy copy: most rows on the diagonal of the quartile table
      const diagonal = tables.table.counts.reduce((sum, row, i) => sum + row[i], 0);
      expect(diagonal / tables.table.total).toBeGreaterThan(0.9);
    });

    it('should split the planted triplet by each level of the conditioning column, and the tables flip', () => {
      const data = planted();
      const { results, detail, result } = show(data.columns, { maxOrder: 3 });
      results.selectMultiplet(rowOf(results, ['valve', 'flow', 'alarm']));
      const tables = detail.detail!.tables!;
      if (tables.kind !== 'triplet') {
        throw new Error('expected a triplet');
      }
      expect(tables.choices.map(c => c.column)).toEqual(detail.detail!.columns);
      expect(tables.chosenBy).toBe('default');
      expect(tables.defaultConditioning).toBe(tables.conditioning);
      // 500 rows over the 2 × 2 cells of the pooled pair
      expect(tables.pooled.rowsPerCell).toBe(125);
      // the default is the choice of least pooled mutual information
      const least = Math.min(...tables.choices.map(c => c.pooledMutualInformation));
      expect(tables.choices.find(c => c.column === tables.conditioning)!.pooledMutualInformation).toBe(least);
      // each choice's pooled mutual information is the co-information of the other two's pair row
      for (const choice of tables.choices) {
        const pair = detail.detail!.columns.filter(name => name !== choice.column);
        expect(choice.pooledMutualInformation).toBeCloseTo(result.multiplets[rowOf(results, pair)].co_information, 12);
      }
      expect(tables.levels).toHaveLength(2);
      expect(tables.flips).toBe(true);
      // the levels sum to the pooled table, and each matches counts of the raw labels
      const z = tables.conditioning as 'valve';
      for (const level of tables.levels) {
        const x = data.labels[level.rowColumn as 'valve'];
        const y = data.labels[level.columnColumn as 'valve'];
        const expected = labelCounts(x, y, row => data.labels[z][row] === level.level!.label);
        level.rowLabels.forEach((a, i) => level.columnLabels.forEach((b, j) => expect(level.counts[i][j]).toBe(expected.get(`${a}|${b}`) ?? 0)));
        // parity with 5 % flips: within a level, nearly one bit of mutual information
        expect(level.mutualInformation).toBeGreaterThan(0.5);
      }
      expect(tables.levels[0].total + tables.levels[1].total).toBe(tables.pooled.total);
      expect(tables.pooled.mutualInformation).toBeLessThan(0.05);
      // I(X;Y|Z) − I(X;Y) = −I(X;Y;Z): the row's co-information (plug-in, the same counts)
      expect(tables.pooled.mutualInformation - tables.conditionalMutualInformation).toBeCloseTo(result.multiplets[rowOf(results, detail.detail!.columns)].co_information, 12);
    });

    it('should not call the tables of a redundant pair and a noise column a flip', () => {
      // humidity_b copies humidity_a: the diagonal of their quartile table in every level of the
      // noise, so the most over-represented cell may move among diagonal cells by chance, but
      // conditioning adds about nothing: no flip.
      const { results, detail } = show(planted().columns, { maxOrder: 3 });
      results.selectMultiplet(rowOf(results, ['humidity_a', 'humidity_b', 'noise']));
      detail.setConditioning('noise');
      const tables = detail.detail!.tables!;
      if (tables.kind !== 'triplet') {
        throw new Error('expected a triplet');
      }
      expect(tables.levels).toHaveLength(4);
      // the over-represented cell does move (seed 5), and conditioning adds a little by chance
      expect(new Set(tables.levels.map(level => `${level.overRepresented!.rowLabel}|${level.overRepresented!.columnLabel}`)).size).toBeGreaterThan(1);
      expect(tables.conditionalMutualInformation).toBeGreaterThan(tables.pooled.mutualInformation);
      expect(tables.flips).toBe(false);
      // the parity triplet conditioned on any of its columns flips
      results.selectMultiplet(rowOf(results, ['valve', 'flow', 'alarm']));
      for (const column of ['valve', 'flow', 'alarm']) {
        detail.setConditioning(column);
        expect((detail.detail!.tables as { flips: boolean }).flips).toBe(true);
      }
    });

    it('should put the flip threshold at the chi-square mean plus three standard deviations', () => {
      // 2 × 2 tables over 2 levels: df = 1, threshold 1 + 3·√2; 4 × 4 over 4 levels: df = 27, 27 + 3·√54.
      expect(DetailModel.flipThreshold(2, 2, 2)).toBeCloseTo(1 + 3 * Math.SQRT2, 14);
      expect(DetailModel.flipThreshold(4, 4, 4)).toBeCloseTo(27 + 3 * Math.sqrt(54), 14);
    });

    it('should take the user\'s conditioning column and go back to the default', () => {
      const { results, detail } = show(planted().columns, { maxOrder: 3 });
      results.selectMultiplet(rowOf(results, ['valve', 'flow', 'alarm']));
      const first = (detail.detail!.tables as { conditioning: string }).conditioning;
      const other = detail.detail!.columns.find(name => name !== first)!;
      detail.setConditioning(other);
      const tables = detail.detail!.tables!;
      if (tables.kind !== 'triplet') {
        throw new Error('expected a triplet');
      }
      expect(tables.conditioning).toBe(other);
      expect(tables.chosenBy).toBe('user');
      expect(tables.defaultConditioning).toBe(first);
      expect(tables.levels.every(level => level.level!.column === other)).toBe(true);
      expect(tables.levels.every(level => level.rowColumn !== other && level.columnColumn !== other)).toBe(true);
      detail.setConditioning('not a member');
      expect((detail.detail!.tables as { conditioning: string }).conditioning).toBe(other);
      detail.setConditioning(null);
      expect((detail.detail!.tables as { conditioning: string; chosenBy: string }).conditioning).toBe(first);
      // another row starts from the default again
      results.selectMultiplet(rowOf(results, ['valve', 'flow', 'humidity_a']));
      expect((detail.detail!.tables as { chosenBy: string }).chosenBy).toBe('default');
    });

    it('should count only the rows the run used when missing values were dropped', () => {
      const data = planted(40);
      const { results, detail, result } = show(data.columns, { maxOrder: 3, missing: 'drop' });
      expect(result.rows_used).toBe(460);
      results.selectMultiplet(rowOf(results, ['valve', 'flow']));
      const tables = detail.detail!.tables!;
      if (tables.kind !== 'pair') {
        throw new Error('expected a pair');
      }
      expect(tables.table.total).toBe(460);
      const expected = labelCounts(data.labels[tables.table.rowColumn as 'valve'], data.labels[tables.table.columnColumn as 'valve'], row => row >= 40);
      tables.table.rowLabels.forEach((a, i) =>
        tables.table.columnLabels.forEach((b, j) => expect(tables.table.counts[i][j]).toBe(expected.get(`${a}|${b}`) ?? 0))
      );
    });

    it('should say that the tables need the data and the run in a view restored from the record', () => {
      const { results, detail } = show(planted().columns, { maxOrder: 3 }, true);
      results.selectMultiplet(rowOf(results, ['valve', 'flow', 'alarm']));
      expect(detail.detail!.tables).toBeNull();
      expect(detail.detail!.tablesNote).toMatch(/need the data and the run/);
      expect(detail.detail!.measures.length).toBeGreaterThan(0);
    });

    it('should give the co-information of every sub-multiplet of a larger multiplet, by order', () => {
      const { results, detail, result } = show(planted().columns, { maxOrder: 4 });
      const names = ['valve', 'flow', 'alarm', 'humidity_a'];
      results.selectMultiplet(rowOf(results, names));
      const subs = detail.detail!.subMultiplets!;
      expect(subs.source).toBe('result');
      expect(subs.missing).toBe(0);
      expect(subs.orders.map(o => [o.order, o.members.length])).toEqual([
        [2, 6],
        [3, 4],
        [4, 1]
      ]);
      for (const { members } of subs.orders) {
        for (const member of members) {
          expect(member.value).toBe(result.multiplets[rowOf(results, member.columns)].co_information);
        }
      }
    });

    it('should compute the sub-multiplets a top-N result leaves out from the run\'s codes', () => {
      const columns = planted().columns;
      const full = show(columns, { maxOrder: 4 });
      const cut = show(columns, { maxOrder: 4, top: 3 });
      const row = cut.result.multiplets.find(r => r.order === 4);
      expect(row).toBeDefined();
      cut.results.selectMultiplet(rowOf(cut.results, row!.columns));
      const subs = cut.detail.detail!.subMultiplets!;
      expect(subs.source).toBe('data');
      for (const { members } of subs.orders) {
        for (const member of members) {
          expect(member.value).toBeCloseTo(full.result.multiplets[rowOf(full.results, member.columns)].co_information, 12);
        }
      }
      // restored from a record: only what the result keeps, and a note saying so
      const restored = show(columns, { maxOrder: 4, top: 3 }, true);
      restored.results.selectMultiplet(rowOf(restored.results, row!.columns));
      expect(restored.detail.detail!.subMultiplets!.missing).toBeGreaterThan(0);
      expect(restored.detail.detail!.subMultipletsNote).toMatch(/keeps .* of 11/);
    });

    it('should say why a Gaussian-copula run has no contingency tables', () => {
      const { results, detail } = show(planted().columns.slice(3), { maxOrder: 2, estimator: 'gaussian-copula' });
      results.selectMultiplet(rowOf(results, ['humidity_a', 'humidity_b']));
      expect(detail.detail!.tables).toBeNull();
      expect(detail.detail!.tablesNote).toMatch(/ranks, not bins/);
    });
  });

  describe('#dispose', () => {
    it('should stop following the results model', () => {
      const { results, detail } = show(planted().columns, { maxOrder: 2 });
      detail.dispose();
      results.selectMultiplet(0);
      expect(detail.detail).toBeNull();
      expect(detail.isDisposed).toBe(true);
    });
  });
});
