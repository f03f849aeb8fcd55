/**
 * Specs of the Statistics section's model and of the evidence in the results tables: the
 * section's choices become the engine's statistics options, a bad choice is refused with the
 * engine's own message naming the option (as the CLI refuses the flag), restoring a record sets
 * the section, and a result with surrogates gives the tables q, p and null columns and a
 * "q ≤ α" filter that keeps exactly the rows whose q is at most α.
 */
import { analyze } from '../../src/engine/analyze';
import { resolveStatistics } from '../../src/engine/statistics/options';
import { MultipletStore } from '../../src/panel/results/store';
import { MultipletTable } from '../../src/panel/results/table';
import { StatisticsModel } from '../../src/panel/statistics/model';
import { categoricalColumn } from '../engine/helpers';

function parityColumns(rows = 400) {
  // a deterministic parity triplet among a fourth, unrelated column: a ^ b = c, d = a ⊕ (i mod 3)
  const a: string[] = [];
  const b: string[] = [];
  const c: string[] = [];
  const d: string[] = [];
  for (let i = 0; i < rows; i++) {
    const x = (i * 7919) % 2;
    const y = Math.floor(i / 2) % 2;
    a.push(String(x));
    b.push(String(y));
    c.push(String(x ^ y ^ (i % 17 === 0 ? 1 : 0)));
    d.push(String(i % 3));
  }
  return [categoricalColumn('a', a), categoricalColumn('b', b), categoricalColumn('c', c), categoricalColumn('d', d)];
}

describe('StatisticsModel', () => {
  describe('#options', () => {
    it('should ask for no evidence while every count is 0', () => {
      const model = new StatisticsModel();
      expect(model.options()).toBeUndefined();
      expect(model.problem).toBeNull();
    });

    it('should give the engine the choices typed, which it resolves as the CLI would', () => {
      const model = new StatisticsModel();
      model.set('surrogates', '99');
      model.set('seed', '7');
      model.set('tail', 'synergy');
      model.set('alpha', '0.1');
      const options = model.options();
      expect(options).toMatchObject({ surrogates: 99, seed: 7, tail: 'synergy', alpha: 0.1, bootstrap: 0 });
      expect(resolveStatistics(options)).toMatchObject({ surrogates: 99, seed: 7, tail: 'synergy', alpha: 0.1 });
    });

    it.each([
      ['surrogates', 'ten', 'surrogates', "The number of surrogates must be a number, not 'ten'."],
      ['surrogates', '2.5', 'surrogates', 'whole number'],
      ['surrogates', '100001', 'surrogates', 'at most 100,000'],
      ['seed', '-1', 'seed', 'The seed must be a whole number'],
      ['alpha', '1.5', 'alpha', 'alpha must be a number between 0 and 1'],
      ['bootstrap', '', 'bootstrap', 'not empty'],
      ['sharpen', '99', 'sharpen', 'ask for surrogates as well']
    ])('should refuse %s = %j, naming the option %s', (field, text, option, message) => {
      const model = new StatisticsModel();
      model.set(field as Parameters<StatisticsModel['set']>[0], text);
      const problem = model.problem;
      expect(problem?.detail.option).toBe(option);
      expect(problem?.message).toContain(message);
    });
  });

  describe('#setDefaults', () => {
    it('should take the settings until the user types, then keep what was typed', () => {
      const model = new StatisticsModel();
      model.setDefaults({ surrogates: 100, seed: 1, alpha: 0.05 });
      expect(model.options()).toMatchObject({ surrogates: 100, seed: 1 });
      model.set('surrogates', '30');
      model.setDefaults({ surrogates: 500, seed: 2, alpha: 0.05 });
      expect(model.options()).toMatchObject({ surrogates: 30, seed: 1 });
    });
  });

  describe('#restore', () => {
    it('should show a recorded analysis’ settings, and none for a record without statistics', () => {
      const model = new StatisticsModel();
      model.restore({ surrogates: 250, seed: 9, bootstrap: 40, tail: 'redundancy', alpha: 0.01, beyond_pairs: 2, fit_draws: 50, sharpen: 0 });
      expect(model.options()).toEqual({
        surrogates: 250,
        seed: 9,
        bootstrap: 40,
        tail: 'redundancy',
        alpha: 0.01,
        beyondPairs: 2,
        fitDraws: 50,
        sharpen: 0
      });
      model.restore(null);
      expect(model.options()).toBeUndefined();
    });
  });

  describe('#estimateMs', () => {
    it('should grow with the replicates, the multiplets and the rows, and shrink with the workers', () => {
      const model = new StatisticsModel();
      expect(model.estimateMs(1000, 1000, 1)).toBeNull();
      model.set('surrogates', '100');
      const one = model.estimateMs(1000, 1000, 1)!;
      expect(one).toBeGreaterThan(0);
      expect(model.estimateMs(2000, 1000, 1)).toBeCloseTo(2 * one, 9);
      expect(model.estimateMs(1000, 1000, 2)).toBeCloseTo(one / 2, 9);
      model.set('bootstrap', '100');
      expect(model.estimateMs(1000, 1000, 1)).toBeCloseTo(2 * one, 9);
    });
  });
});

describe('MultipletTable with evidence', () => {
  // 299 one-sided surrogates: p can reach 1/300, so q of the parity triplet among 11 tests is below 0.05
  const result = analyze(parityColumns(), { statistics: { surrogates: 299, seed: 3, bootstrap: 20, tail: 'synergy' } });
  const store = new MultipletStore(result);

  it('should add the evidence columns the result carries, and none without statistics', () => {
    const keys = store.columns.map(column => column.key);
    expect(keys).toEqual(expect.arrayContaining(['q_value', 'p_value', 'null_mean', 'ci_low', 'ci_high', 'same_sign']));
    expect(keys).not.toContain('connected_information');
    expect(store.alpha).toBe(0.05);
    const plain = new MultipletStore(analyze(parityColumns()));
    expect(plain.columns.map(column => column.key)).not.toContain('q_value');
    expect(plain.alpha).toBeNull();
  });

  it('should keep exactly the rows with q ≤ α under the filter, with the parity triplet among them', () => {
    const table = new MultipletTable({ side: 'synergy' });
    table.setStore(store);
    const all = Array.from(table.visible);
    table.setFilter({ qAtMost: 0.05 });
    const kept = Array.from(table.visible);
    const expected = all.filter(i => (result.multiplets[i].q_value ?? Infinity) <= 0.05);
    expect(kept).toEqual(expected);
    expect(kept.map(i => result.multiplets[i].columns.join())).toContain('a,b,c');
    // the filter drops the untested and the not significant: the rows it keeps are a strict subset
    expect(kept.length).toBeLessThan(all.length);
    table.setFilter({ qAtMost: null });
    expect(Array.from(table.visible)).toEqual(all);
  });

  it('should sort by q ascending on a first click, untested rows last', () => {
    const table = new MultipletTable({ side: 'synergy' });
    table.setStore(store);
    table.setSort('q_value');
    expect(table.sort).toEqual({ key: 'q_value', descending: false });
    const q = Array.from(table.visible, i => result.multiplets[i].q_value ?? Number.NaN);
    const tested = q.filter(v => !Number.isNaN(v));
    expect(tested).toEqual([...tested].sort((x, y) => x - y));
    expect(q.slice(tested.length).every(v => Number.isNaN(v))).toBe(true);
  });
});
