/**
 * Specs of the Results section's models: the multiplet store, the synergy and redundancy
 * tables (sort, filter, paging, CSV) and the ResultsModel (order histograms, bar filter,
 * adequacy, conditioning chains), on a seeded table with a planted parity triplet and a
 * redundant pair.
 */
import { execFileSync } from 'child_process';
import * as path from 'path';

import Papa from 'papaparse';
import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { analyze, prepareColumns } from '../../src/engine/analyze';
import { chainAlong, extremalChains, jointEntropy } from '../../src/engine/measures';
import type { IAnalysisResult, IMultipletRow } from '../../src/engine/types';
import { formatCsv } from '../../src/cli/output';
import { ResultsModel } from '../../src/panel/results/model';
import { MultipletStore } from '../../src/panel/results/store';
import { MultipletTable } from '../../src/panel/results/table';
import { MULTIPLET_FIELDS } from '../../src/results-format';
import { categoricalColumn, numericColumn } from '../engine/helpers';

const TAG = '<img src=x onerror=alert(1)>';
const FORMULA = '=1+2,3';

/**
 * 600 seeded rows: valve and flow are fair coins, alarm their parity with 5 % flips (synergy),
 * humidity_b a noisy copy of humidity_a (redundancy), and two noise columns whose names are
 * hostile (markup and a spreadsheet formula with a comma).
 */
function plantedColumns(rows = 600, seed = 11) {
  const rng = xoroshiro128plus(seed);
  const int = (lo: number, hi: number): number => unsafeUniformIntDistribution(lo, hi, rng);
  const valve: string[] = [];
  const flow: string[] = [];
  const alarm: string[] = [];
  const humidityA: number[] = [];
  const humidityB: number[] = [];
  const noise1: number[] = [];
  const noise2: number[] = [];
  for (let i = 0; i < rows; i++) {
    const v = int(0, 1);
    const f = int(0, 1);
    const parity = v ^ f;
    valve.push(String(v));
    flow.push(String(f));
    alarm.push(String(int(0, 19) === 0 ? 1 - parity : parity));
    const h = int(0, 10000) / 100;
    humidityA.push(h);
    humidityB.push(h + int(0, 100) / 100);
    noise1.push(int(0, 10000));
    noise2.push(int(0, 10000));
  }
  return [
    categoricalColumn('valve', valve),
    categoricalColumn('flow', flow),
    categoricalColumn('alarm', alarm),
    numericColumn('humidity_a', humidityA),
    numericColumn('humidity_b', humidityB),
    numericColumn(TAG, noise1),
    numericColumn(FORMULA, noise2)
  ];
}

function plantedResult(): IAnalysisResult {
  return analyze(plantedColumns(), { maxOrder: 4 });
}

function sameSet(a: string[], b: string[]): boolean {
  return a.length === b.length && a.every(name => b.includes(name));
}

describe('MultipletStore', () => {
  describe('#constructor', () => {
    it('should compute adequacy as rows used over the product of the members\' bin counts', () => {
      const result = plantedResult();
      const store = new MultipletStore(result);
      const bins = new Map(result.columns.map(c => [c.name, c.bins]));
      result.multiplets.forEach((row, i) => {
        const cells = row.columns.reduce((p, name) => p * bins.get(name)!, 1);
        expect(store.adequacy[i]).toBe(result.rows_used / cells);
        expect(store.order[i]).toBe(row.order);
        expect(store.co_information[i]).toBe(row.co_information);
      });
      // valve, flow, alarm have 2 codes each and the numeric columns 4 (quantile:4): a quartet of
      // four numeric columns has 256 cells, 600 rows → 2.34375.
      const quartet = result.multiplets.findIndex(r => sameSet(r.columns, ['humidity_a', 'humidity_b', TAG, FORMULA]));
      expect(store.adequacy[quartet]).toBeCloseTo(600 / 256, 12);
    });

    it('should refuse a multiplet naming a column the result does not list', () => {
      const result = plantedResult();
      const broken = { ...result, multiplets: [{ ...result.multiplets[0], columns: ['nowhere'] }] };
      expect(() => new MultipletStore(broken)).toThrow(/names a column 'nowhere'/);
    });
  });
});

describe('MultipletTable', () => {
  const result = plantedResult();
  const store = new MultipletStore(result);

  describe('#setStore', () => {
    it('should rank the planted triplet first in the synergy table', () => {
      const table = new MultipletTable({ side: 'synergy' });
      table.setStore(store);
      const first = store.rows[table.visible[0]];
      expect(sameSet(first.columns, ['valve', 'flow', 'alarm'])).toBe(true);
      // Noisy parity with 5 % flips: I(V;F;A) = I(V;F) − I(V;F|A) ≈ 0 − (1 − H2(0.05)) ≈ −0.71 bits.
      expect(first.co_information).toBeLessThan(-0.5);
    });

    it('should rank the planted pair first in the redundancy table', () => {
      const table = new MultipletTable({ side: 'redundancy' });
      table.setStore(store);
      const first = store.rows[table.visible[0]];
      expect(first.columns).toEqual(['humidity_a', 'humidity_b']);
    });

    it('should hold only order ≥ 2 rows of its sign, most extreme first', () => {
      for (const side of ['synergy', 'redundancy'] as const) {
        const table = new MultipletTable({ side });
        table.setStore(store);
        const expected = result.multiplets.filter(
          r => r.order >= 2 && (side === 'synergy' ? r.co_information < 0 : r.co_information > 0)
        ).length;
        expect(table.totalCount).toBe(expected);
        expect(table.totalCount).toBeGreaterThan(0);
        const values = Array.from(table.visible, i => store.co_information[i]);
        for (let j = 1; j < values.length; j++) {
          if (side === 'synergy') {
            expect(values[j]).toBeGreaterThanOrEqual(values[j - 1]);
          } else {
            expect(values[j]).toBeLessThanOrEqual(values[j - 1]);
          }
        }
      }
    });
  });

  describe('#setSort', () => {
    it('should sort by any measure and flip on a second call', () => {
      const table = new MultipletTable({ side: 'redundancy' });
      table.setStore(store);
      for (const key of ['o_information', 'total_correlation', 'dual_total_correlation', 'adequacy', 'order'] as const) {
        table.setSort(key, false);
        const up = Array.from(table.visible, i => store.numeric(key)[i]);
        expect(up).toEqual([...up].sort((a, b) => a - b));
        table.setSort(key);
        expect(table.sort.descending).toBe(true);
        const down = Array.from(table.visible, i => store.numeric(key)[i]);
        expect(down).toEqual([...up].sort((a, b) => b - a));
      }
    });

    it('should sort by multiplet names and keep the engine order among ties', () => {
      const table = new MultipletTable({ side: 'synergy' });
      table.setStore(store);
      table.setSort('columns', false);
      const names = Array.from(table.visible, i => store.rows[i].columns.join('\u0000'));
      expect(names).toEqual([...names].sort());
      table.setSort('order', false);
      const visible = Array.from(table.visible);
      for (let j = 1; j < visible.length; j++) {
        const a = visible[j - 1];
        const b = visible[j];
        expect(store.order[a] < store.order[b] || (store.order[a] === store.order[b] && a < b)).toBe(true);
      }
    });
  });

  describe('#setFilter', () => {
    it('should keep only rows with a member whose name contains the text, any case', () => {
      const table = new MultipletTable({ side: 'redundancy' });
      table.setStore(store);
      table.setFilter({ column: 'HUMIDITY_B' });
      expect(table.rowCount).toBeGreaterThan(0);
      for (const i of table.visible) {
        expect(store.rows[i].columns).toContain('humidity_b');
      }
      const expected = result.multiplets.filter(
        r => r.order >= 2 && r.co_information > 0 && r.columns.includes('humidity_b')
      ).length;
      expect(table.rowCount).toBe(expected);
    });

    it('should match markup in a name as plain text', () => {
      const table = new MultipletTable({ side: 'synergy' });
      table.setStore(store);
      table.setFilter({ column: 'onerror=' });
      expect(table.rowCount).toBeGreaterThan(0);
      for (const i of table.visible) {
        expect(store.rows[i].columns).toContain(TAG);
      }
    });

    it('should combine the order filter and keep the sort', () => {
      const table = new MultipletTable({ side: 'synergy' });
      table.setStore(store);
      table.setFilter({ column: 'flow', order: 3 });
      const rows = Array.from(table.visible, i => store.rows[i]);
      expect(rows.length).toBe(
        result.multiplets.filter(r => r.order === 3 && r.co_information < 0 && r.columns.includes('flow')).length
      );
      expect(rows.every(r => r.order === 3)).toBe(true);
      expect(sameSet(rows[0].columns, ['valve', 'flow', 'alarm'])).toBe(true);
      table.setFilter({ column: '', order: null });
      expect(table.rowCount).toBe(table.totalCount);
    });
  });

  describe('#setPage', () => {
    it('should page the filtered rows and clamp the page', () => {
      const table = new MultipletTable({ side: 'redundancy', pageSize: 7 });
      table.setStore(store);
      const all = Array.from(table.visible);
      expect(table.pageCount).toBe(Math.ceil(all.length / 7));
      table.setPage(1);
      expect(Array.from(table.pageRows())).toEqual(all.slice(7, 14));
      table.setPage(10_000);
      expect(table.page).toBe(table.pageCount - 1);
      expect(Array.from(table.pageRows())).toEqual(all.slice(7 * (table.pageCount - 1)));
      table.setPage(-3);
      expect(table.page).toBe(0);
      table.setFilter({ order: 2 });
      expect(table.page).toBe(0);
    });
  });

  describe('#csv', () => {
    it('should write the CLI header and the filtered rows in table order', () => {
      const table = new MultipletTable({ side: 'synergy' });
      table.setStore(store);
      table.setFilter({ order: 3 });
      const csv = table.csv();
      const cliHeader = formatCsv(result).split('\n')[0];
      expect(csv.split('\n')[0]).toBe(cliHeader);
      expect(cliHeader).toBe([...MULTIPLET_FIELDS, 'adequacy'].join(','));
      const parsed = Papa.parse<string[]>(csv.trimEnd(), { header: false });
      const body = parsed.data.slice(1);
      expect(body.length).toBe(table.rowCount);
      body.forEach((cells, j) => {
        const row = store.rows[table.visible[j]];
        expect(Number(cells[3])).toBe(row.co_information);
        expect(Number(cells[6])).toBe(row.o_information);
      });
    });

    it('should quote a formula-like first name and keep markup as characters', () => {
      const rows: IMultipletRow[] = [FORMULA, TAG].map((name, i) => ({
        columns: [name, 'alarm'],
        order: 2,
        entropy: 1,
        co_information: 0.5 + i,
        total_correlation: 0.5,
        dual_total_correlation: 0.5,
        o_information: 0,
        s_information: 1
      }));
      const small: IAnalysisResult = {
        ...result,
        columns: [FORMULA, TAG, 'alarm'].map(name => ({ name, bins: 2, binning: { method: 'categorical', spec: 'categorical' } })),
        multiplets: rows,
        multiplet_count: rows.length
      };
      const table = new MultipletTable({ side: 'redundancy' });
      table.setStore(new MultipletStore(small));
      const lines = table.csv().split('\n');
      // papaparse's escapeFormulae prefixes a quote mark and the comma forces CSV quoting
      // (RFC 4180 §2.6); the markup row has neither.
      expect(lines[1]).toBe(`${TAG}|alarm,2,1,1.5,0.5,0.5,0,1`);
      expect(lines[2]).toBe(`"'=1+2,3|alarm",2,1,0.5,0.5,0.5,0,1`);
      expect(lines).toHaveLength(4);
      expect(lines[3]).toBe('');
    });
  });
});

describe('ResultsModel', () => {
  const result = plantedResult();

  describe('#setResultInSlices', () => {
    /** What a model shows, as plain data. */
    const shown = (model: ResultsModel) => ({
      histograms: model.histograms,
      inadequate: model.inadequateCount,
      count: model.multipletCount,
      synergy: Array.from(model.synergy.visible),
      redundancy: Array.from(model.redundancy.visible),
      store: model.store && {
        order: Array.from(model.store.order),
        co: Array.from(model.store.co_information),
        adequacy: Array.from(model.store.adequacy),
        members: Array.from(model.store.members),
        evidence: [...model.store.evidence.keys()]
      }
    });

    it('should show what setResult shows, changing once, after pausing between slices', async () => {
      const withStatistics = analyze(plantedColumns(), { maxOrder: 3, statistics: { surrogates: 19, seed: 3 } });
      for (const one of [result, withStatistics]) {
        const direct = new ResultsModel();
        direct.setResult(one, { frame: 'planted' });
        const sliced = new ResultsModel();
        let changes = 0;
        sliced.changed.connect(() => changes++);
        let pauses = 0;
        const done = sliced.setResultInSlices(one, { frame: 'planted' }, async () => {
          pauses++;
          expect(sliced.pending).toBe(true);
          expect(sliced.result).toBeNull();
        });
        await expect(done).resolves.toBe(true);
        expect(pauses).toBeGreaterThan(2);
        expect(changes).toBe(1);
        expect(sliced.pending).toBe(false);
        expect(shown(sliced)).toEqual(shown(direct));
      }
    });

    it('should give way to a result set or cleared while it was being prepared', async () => {
      const model = new ResultsModel();
      const later = analyze(plantedColumns(200, 5), { maxOrder: 2 });
      const first = model.setResultInSlices(result, {}, async () => undefined);
      model.setResult(later);
      await expect(first).resolves.toBe(false);
      expect(model.result).toBe(later);
      const second = model.setResultInSlices(result, {}, async () => undefined);
      model.clear();
      await expect(second).resolves.toBe(false);
      expect(model.result).toBeNull();
      expect(model.pending).toBe(false);
    });
  });

  describe('#setResult', () => {
    it('should bin each order\'s co-information as numpy.histogram does', () => {
      const model = new ResultsModel();
      model.setResult(result, { frame: 'planted' });
      expect(model.histograms.map(h => h.order)).toEqual([2, 3, 4]);
      const byOrder: Record<number, number[]> = {};
      for (const row of result.multiplets) {
        if (row.order >= 2) {
          (byOrder[row.order] ??= []).push(row.co_information);
        }
      }
      // Reference: numpy.histogram computed now, bins = min(20, ⌈√n⌉) as orderHistogram documents.
      const python = path.join(__dirname, '..', '..', '.venv', 'bin', 'python');
      const script =
        'import json,math,sys\nimport numpy as np\n' +
        'data=json.load(sys.stdin)\nout={}\n' +
        'for k,v in data.items():\n' +
        '    c,e=np.histogram(np.array(v,dtype=float),bins=min(20,math.ceil(math.sqrt(len(v)))))\n' +
        '    out[k]={"counts":c.tolist(),"edges":e.tolist()}\n' +
        'print(json.dumps(out))\n';
      const reference = JSON.parse(
        execFileSync(python, ['-c', script], { input: JSON.stringify(byOrder) }).toString()
      ) as Record<string, { counts: number[]; edges: number[] }>;
      for (const histogram of model.histograms) {
        const numpy = reference[String(histogram.order)];
        expect(histogram.counts).toEqual(numpy.counts);
        histogram.edges.forEach((edge, i) => expect(edge).toBeCloseTo(numpy.edges[i], 12));
        expect(histogram.total).toBe(byOrder[histogram.order].length);
      }
    });

    it('should count multiplets of adequacy below 1', () => {
      const model = new ResultsModel();
      model.setResult(analyze(plantedColumns(100), { maxOrder: 4 }));
      const store = model.store!;
      let low = 0;
      for (let i = 0; i < store.size; i++) {
        if (store.order[i] >= 2 && store.adequacy[i] < 1) {
          low++;
        }
      }
      // 100 rows; four quantile:4 columns give 256 cells, so some quartets are under 1.
      expect(low).toBeGreaterThan(0);
      expect(model.inadequateCount).toBe(low);
    });
  });

  describe('#selectBar', () => {
    it('should filter both tables to the multiplets of the clicked bar', () => {
      const model = new ResultsModel();
      model.setResult(result);
      const histogram = model.histograms.find(h => h.order === 3)!;
      const bar = histogram.counts.findIndex(c => c > 0);
      model.selectBar(3, bar);
      expect(model.bar!.count).toBe(histogram.counts[bar]);
      const shown = [...model.synergy.visible, ...model.redundancy.visible].map(i => model.store!.rows[i]);
      const zeros = result.multiplets.filter(
        r => r.order === 3 && r.co_information === 0 && r.co_information >= histogram.edges[bar] && r.co_information <= histogram.edges[bar + 1]
      ).length;
      expect(shown.length + zeros).toBe(histogram.counts[bar]);
      for (const row of shown) {
        expect(row.order).toBe(3);
        expect(row.co_information).toBeGreaterThanOrEqual(histogram.edges[bar]);
        expect(row.co_information).toBeLessThanOrEqual(histogram.edges[bar + 1]);
      }
      model.selectBar(null);
      expect(model.bar).toBeNull();
      expect(model.synergy.rowCount).toBe(model.synergy.totalCount);
    });

    it('should put the planted triplet alone in the lowest bar of order 3', () => {
      const model = new ResultsModel();
      model.setResult(result);
      model.selectBar(3, 0);
      expect(model.synergy.rowCount).toBe(1);
      expect(sameSet(model.store!.rows[model.synergy.visible[0]].columns, ['valve', 'flow', 'alarm'])).toBe(true);
    });
  });

  describe('#selectMultiplet', () => {
    it('should give the chain of prefixes, equal to chainAlong on the binned codes', () => {
      const model = new ResultsModel();
      model.setResult(result);
      const store = model.store!;
      const index = model.synergy.visible[0];
      model.selectMultiplet(index, ['alarm', 'valve', 'flow']);
      const chain = model.chain!;
      expect(chain.columns).toEqual(['alarm', 'valve', 'flow']);
      // Independent path: the engine's chainAlong on the codes themselves (no lattice).
      const prepared = prepareColumns(plantedColumns(), {});
      const names = prepared.names;
      const source = { codes: prepared.codes, bins: prepared.bins, estimator: result.estimator };
      const reference = chainAlong(source, chain.columns.map(n => names.indexOf(n)));
      // The chain starts at the pair: values are the co-information of each prefix from the pair on.
      expect(chain.values).toHaveLength(2);
      chain.values.forEach((v, i) => expect(v).toBeCloseTo(reference.values[i + 1] / Math.LN2, 10));
      // The last value is the multiplet's own co-information; its step is minus the pair's
      // co-information conditioned on the third column, from the subset entropies.
      expect(chain.values[1]).toBeCloseTo(store.co_information[index], 10);
      const [a, b, c] = chain.columns.map(n => names.indexOf(n));
      const entropyOf = (cols: number[]): number => jointEntropy(source, cols) / Math.LN2;
      const conditional = entropyOf([a, c]) + entropyOf([b, c]) - entropyOf([a, b, c]) - entropyOf([c]);
      expect(chain.steps[0]).toBeCloseTo(-conditional, 10);
      // The first value is I(alarm; valve): the pair's mutual information, ≈ 0 for a parity triplet.
      expect(chain.values[0]).toBeCloseTo(entropyOf([a]) + entropyOf([b]) - entropyOf([a, b]), 10);
      model.rotateChain();
      expect(model.chain!.columns).toEqual(['valve', 'flow', 'alarm']);
      expect(model.chain!.values[1]).toBeCloseTo(chain.values[1], 10);
    });

    it('should say why when the result keeps only its top multiplets', () => {
      const model = new ResultsModel();
      const top = analyze(plantedColumns(), { maxOrder: 3, top: 5 });
      model.setResult(top);
      model.selectMultiplet(model.synergy.visible[0]);
      expect(model.chain).toBeNull();
      expect(model.chainError).toMatch(/every multiplet/);
      // With the codes at hand the chain works on a cut result too.
      const prepared = prepareColumns(plantedColumns(), {});
      model.setResult(top, { source: { codes: prepared.codes, bins: prepared.bins, estimator: top.estimator } });
      model.selectMultiplet(model.synergy.visible[0]);
      expect(model.chain!.values).toHaveLength(2);
    });
  });

  describe('#showExtremalChain', () => {
    it('should start the synergy chain with the planted triplet', () => {
      const model = new ResultsModel();
      model.setResult(result);
      model.showExtremalChain('synergy');
      expect(sameSet(model.chain!.columns.slice(0, 3), ['valve', 'flow', 'alarm'])).toBe(true);
      model.showExtremalChain('redundancy');
      expect(sameSet(model.chain!.columns.slice(0, 2), ['humidity_a', 'humidity_b'])).toBe(true);
      // Same chains as extremalChains on the codes themselves (no lattice), values in bits.
      const prepared = prepareColumns(plantedColumns(), {});
      const source = { codes: prepared.codes, bins: prepared.bins, estimator: result.estimator };
      const reference = extremalChains(source, 4);
      for (const kind of ['synergy', 'redundancy'] as const) {
        model.showExtremalChain(kind);
        expect(model.chain!.columns).toEqual(reference[kind].columns.map(c => prepared.names[c]));
        model.chain!.values.forEach((v, i) => expect(v).toBeCloseTo(reference[kind].values[i + 1] / Math.LN2, 10));
      }
    });
  });
});
