/**
 * What the Results section exports: the CLI's CSV with the provenance comment lines and an
 * adequacy column (src/panel/results/export.ts), file names that name the frame and record, and
 * charts redrawn for print with a title and axis titles (src/panel/charts/print.ts).
 */
import { Signal } from '@lumino/signaling';
import Papa from 'papaparse';

import { analyze } from '../../src/engine/analyze';
import type { ColumnView } from '../../src/engine/types';
import type { IAnalysisState, IRunCompleted } from '../../src/panel/analysis/types';
import type { IChartColors } from '../../src/panel/charts/chart';
import { PRINT_SIZE, printColors, printFigure } from '../../src/panel/charts/print';
import {
  exportFileName,
  provenanceCsv,
  provenanceEntries,
  provenanceLine,
  tableEntries,
  type IExportSource
} from '../../src/panel/results/export';
import { ResultsModel } from '../../src/panel/results/model';
import { MultipletStore } from '../../src/panel/results/store';
import { MultipletTable } from '../../src/panel/results/table';
import { MULTIPLET_FIELDS } from '../../src/results-format';

function numeric(name: string, values: number[]): ColumnView {
  return { kind: 'numeric', name, dtype: 'float64', values: Float64Array.from(values), missing: null };
}

// 16 rows: a and b two fair bits, c = 0 … 15 (16 values: auto bins it by quantile:4, 4 bins)
const rows = Array.from({ length: 16 }, (_, i) => i);
const result = analyze(
  [numeric('a', rows.map(i => i & 1)), numeric('b', rows.map(i => (i >> 1) & 1)), numeric('line\nbreak, c', rows)],
  { estimator: 'miller-madow' }
);
const source: IExportSource = { result, frame: 'green\u0007house', recordId: 'pd-abcdef012345', missing: 'drop' };

/** The comment lines of an export as [key, value] pairs, and the CSV that follows them. */
function split(text: string): { comments: [string, string][]; csv: string } {
  const lines = text.split('\n');
  const first = lines.findIndex(line => !line.startsWith('# '));
  const comments = lines.slice(0, first).map(line => {
    const [key, ...value] = line.slice(2).split(': ');
    return [key, value.join(': ')] as [string, string];
  });
  return { comments, csv: lines.slice(first).join('\n') };
}

describe('provenanceCsv', () => {
  it('should put the provenance above the CLI header and append the adequacy of every row', () => {
    const store = new MultipletStore(result);
    const table = new MultipletTable({ side: 'synergy' });
    table.setStore(store);
    // every multiplet, in the store's order
    const text = provenanceCsv(
      store.rows,
      store.adequacy,
      [...provenanceEntries(source, new Date('2031-03-04T05:06:07.000Z')), ...tableEntries('synergy', table.filter, table.rowCount, table.totalCount)]
    );
    const { comments, csv } = split(text);
    const value = (key: string): string[] => comments.filter(([k]) => k === key).map(([, v]) => v);
    expect(value('frame')).toEqual(['green\\u0007house']);
    expect(value('record')).toEqual(['pd-abcdef012345']);
    expect(value('exported')).toEqual(['2031-03-04T05:06:07.000Z']);
    expect(value('engine')).toEqual([`${result.engine.name} ${result.engine.version}`]);
    expect(value('estimator')).toEqual(['miller-madow']);
    expect(value('units')).toEqual(['bits']);
    expect(value('max_order')).toEqual(['3']);
    expect(value('rows')).toEqual(['16 used of 16']);
    expect(value('binning')).toEqual([
      'a = auto → 2 categories',
      'b = auto → 2 categories',
      'line\\u000abreak, c = auto → quantile, 4 bins'
    ]);
    expect(value('table')[0]).toMatch(/^synergy/);
    expect(value('filter')).toEqual(['none']);
    const parsed = Papa.parse<string[]>(csv.trimEnd(), { header: false });
    expect(parsed.errors).toEqual([]);
    expect(parsed.data[0]).toEqual([...MULTIPLET_FIELDS, 'adequacy']);
    expect(parsed.data).toHaveLength(1 + 7);
    // adequacy = rows used / product of the members' bin counts, worked by hand: {a}, {b}:
    // 16 / 2 = 8; {c}: 16 / 4 = 4; {a, b}: 16 / (2·2) = 4; {a, c}, {b, c}: 16 / (2·4) = 2;
    // {a, b, c}: 16 / 16 = 1
    const byMembers = Object.fromEntries(parsed.data.slice(1).map(cells => [cells[0], Number(cells[cells.length - 1])]));
    expect(byMembers).toEqual({
      a: 8,
      b: 8,
      'line\nbreak, c': 4,
      'a|b': 4,
      'a|line\nbreak, c': 2,
      'b|line\nbreak, c': 2,
      'a|b|line\nbreak, c': 1
    });
    // the co-information column is the CLI's, untouched
    const triplet = store.rows.find(row => row.order === 3)!;
    expect(Number(parsed.data.slice(1).find(cells => cells[0] === 'a|b|line\nbreak, c')![3])).toBe(triplet.co_information);
  });

  it('should say which filters made the rows', () => {
    const entries = tableEntries('redundancy', { column: ' hum ', order: 2, mask: new Uint8Array(1), qAtMost: null }, 3, 40);
    expect(Object.fromEntries(entries)).toMatchObject({
      filter: 'a column name containing "hum", order 2, one histogram bar',
      multiplets: '3 of 40'
    });
    const significant = tableEntries('synergy', { column: '', order: null, mask: null, qAtMost: 0.05 }, 2, 40);
    expect(Object.fromEntries(significant)).toMatchObject({ filter: 'q ≤ 0.05', multiplets: '2 of 40' });
  });
});

describe('exportFileName', () => {
  it('should name the frame and the record, in characters every file system takes', () => {
    expect(exportFileName(source, 'synergy')).toBe('polyadic-green_house-pd-abcdef012345-synergy');
    expect(exportFileName({ frame: 'a/b c' }, 'order-2-histogram')).toBe('polyadic-a_b_c-order-2-histogram');
  });
});

describe('printFigure', () => {
  const theme: IChartColors = {
    text: '#eee',
    muted: '#aaa',
    grid: '#444',
    background: '#111',
    synergy: '#c60',
    redundancy: '#16c',
    distribution: '#888',
    accent: '#16c',
    font: 'sans-serif'
  };

  it('should title the chart, name both axes, print dark on white at the print size', () => {
    const colors = printColors(theme);
    const figure = printFigure(
      { data: [{ type: 'bar', x: [0], y: [1] }], layout: { xaxis: { title: { text: 'co-information' } }, yaxis: {} } },
      {
        title: 'Order 2 histogram of <b>co-information</b>',
        subtitle: provenanceLine(source),
        xTitle: 'co-information (bits)',
        yTitle: 'multiplets',
        filename: 'x'
      },
      colors
    );
    const layout = figure.layout as Record<string, any>;
    expect([layout.width, layout.height]).toEqual([PRINT_SIZE.width, PRINT_SIZE.height]);
    // 1200 × 720 CSS pixels at ratio 2: 2400 × 1440 pixels, 8 × 4.8 inches at 300 dpi
    expect([PRINT_SIZE.width * PRINT_SIZE.scale, PRINT_SIZE.height * PRINT_SIZE.scale]).toEqual([2400, 1440]);
    expect(layout.title.text).toContain('Order 2 histogram of &lt;b&gt;co-information&lt;/b&gt;');
    expect(layout.title.text).toContain('green\u0007house · record pd-abcdef012345 · 16 rows · miller-madow · bits');
    expect(layout.xaxis.title.text).toBe('co-information (bits)');
    expect(layout.yaxis.title.text).toBe('multiplets');
    expect([layout.paper_bgcolor, layout.font.color]).toEqual(['#ffffff', '#000000']);
    // the meaning of the colours stays the theme's
    expect([colors.synergy, colors.redundancy]).toEqual(['#c60', '#16c']);
  });
});

describe('ResultsModel', () => {
  describe('#exportSource', () => {
    it('should carry the run’s frame, record id, missing-value policy and sample to the exports', () => {
      const state = { latest: null, resultChanged: new Signal<IAnalysisState, IRunCompleted | null>({} as IAnalysisState) };
      const model = new ResultsModel();
      model.follow(state as unknown as IAnalysisState);
      expect(model.exportSource).toBeNull();
      const run = {
        analysisId: 'pd-abcdef012345',
        result,
        options: { missing: 'category' },
        frame: { name: 'greenhouse', rows: 16, originalRows: 900, sampled: true, seed: 7 }
      } as unknown as IRunCompleted;
      state.resultChanged.emit(run);
      expect(model.exportSource).toEqual({
        result,
        frame: 'greenhouse',
        recordId: 'pd-abcdef012345',
        missing: 'category',
        sample: { rows: 16, originalRows: 900, seed: 7 }
      });
      expect(Object.fromEntries(provenanceEntries(model.exportSource!)).sample).toBe('16 of 900 rows, seed 7');
      model.dispose();
    });
  });
});
