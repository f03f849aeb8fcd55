/**
 * The order histograms: one bar chart per order of the co-information of all its multiplets,
 * counts on a logarithmic axis (a bar of one multiplet stays visible beside bars of thousands),
 * a strip under the bars with the most extreme multiplets as ticks (a single outlier is never
 * lost in a wide bar), the negative (synergy) side shaded, the null band when tested, the sign
 * convention written beside each chart, counts on hover. A click on a bar (or the bar picker
 * under it, for the keyboard) filters the tables; a click on a tick selects that multiplet; the
 * selected table row's bar and tick are outlined.
 */
import { Panel, Widget } from '@lumino/widgets';

import { ChartView, plotlyText } from '../charts/chart';
import { histogramFigure } from '../charts/histogram';
import type { IChartColors, IFigure } from '../charts/chart';
import { textElement } from '../dom';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { MultipletStore } from './store';
import { exportFileName, provenanceLine } from './export';
import { formatCount, formatValue } from './format';
import type { IResultsHistogram } from './model';
import { ResultsModel } from './model';

/** Shows the order histograms of a {@link ResultsModel}. */
export class HistogramsView extends Panel {
  /** Create the view of `options.model`. */
  constructor(options: HistogramsView.IOptions) {
    super();
    this.addClass('pd-Histograms');
    this._translator = options.translator;
    this._trans = translationBundle(options.translator);
    this._model = options.model;
    // Widget.dispose clears the signal connections this view receives
    this._model.changed.connect(this._update, this);
    this._update();
  }


  private _update(): void {
    const result = this._model.result;
    if (result !== this._shown) {
      this._shown = result;
      for (const widget of [...this.widgets]) {
        widget.dispose();
      }
      this._charts = [];
      if (result) {
        for (const histogram of this._model.histograms) {
          this._add(histogram, result.units);
        }
      }
    }
    const bar = this._model.bar;
    const row = this._model.selectedBar;
    const store = this._model.store;
    const index = this._model.selected;
    for (const entry of this._charts) {
      const order = entry.histogram.order;
      const selected = bar && bar.order === order ? bar.bar : -1;
      const marked = row && row.order === order ? row.bar : -1;
      const markedRow = row && row.order === order ? index : -1;
      if (selected !== entry.selected || markedRow !== entry.markedRow) {
        entry.selected = selected;
        entry.markedRow = markedRow;
        entry.picker.value = String(selected);
        entry.node.dataset.markedBar = String(marked);
        if (store) {
          entry.chart.setFigure(colors => Private.figure(entry.histogram, store, { selected, marked, row: markedRow }, colors, this._trans));
        }
      }
    }
  }

  private _add(histogram: IResultsHistogram, units: string): void {
    const order = histogram.order;
    const trans = this._trans;
    const multiplets = trans._n('%2 multiplet', '%2 multiplets', histogram.total, formatCount(histogram.total));
    const header = new Widget({ node: textElement('div', 'pd-Histogram-header') });
    header.node.append(
      textElement('h4', 'pd-Histogram-title', trans.__('Order %1: %2', order, multiplets)),
      textElement(
        'p',
        'pd-Histogram-convention',
        trans.__(
          'Co-information in %1. Left of 0 (shaded): negative, synergy-dominated; right of 0: positive, ' +
            'redundancy-dominated (sign convention of Bell 2003). Counts on a log scale; ticks under the bars: ' +
            'the most extreme multiplets of this order (click one to select it).',
          units
        ) +
          (histogram.band
            ? trans.__(
                ' Grey band: where 95 % of the independence surrogates fall (%1 to %2); bars outside it stand out from chance.',
                formatValue(histogram.band.low),
                formatValue(histogram.band.high)
              )
            : '')
      )
    );
    const chart = new ChartView({
      label: trans.__('Order %1 histogram of co-information', order),
      translator: this._translator,
      filename: `polyadic-order-${order}-histogram`,
      height: 200,
      exportAs: () => {
        const source = this._model.exportSource;
        return {
          title: trans.__('Order %1 histogram of co-information (%2)', order, multiplets),
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: trans.__('co-information (%1): < 0 synergy-dominated, > 0 redundancy-dominated', units),
          yTitle: trans.__('multiplets'),
          filename: exportFileName(source ?? {}, `order-${order}-histogram`)
        };
      },
      onClick: (trace, point) => {
        if (trace === 0) {
          this._toggle(order, point);
        } else {
          const row = histogram.extremes[point];
          if (row !== undefined) {
            this._model.selectMultiplet(row);
          }
        }
      }
    });
    const pickerRow = new Widget({ node: textElement('div', 'pd-Histogram-picker') });
    const pickerId = `pd-histogram-picker-${Private.nextId++}`;
    const label = textElement('label', 'pd-Histogram-pickerLabel', trans.__('Filter tables to bar'));
    label.htmlFor = pickerId;
    const picker = textElement('select', 'pd-Histogram-pickerSelect jp-mod-styled');
    picker.id = pickerId;
    const none = textElement('option', '', trans.__('All values'));
    none.value = '-1';
    picker.append(none);
    histogram.counts.forEach((count, i) => {
      const option = textElement(
        'option',
        '',
        trans.__('%1 to %2 (%3)', formatValue(histogram.edges[i]), formatValue(histogram.edges[i + 1]), formatCount(count))
      );
      option.value = String(i);
      picker.append(option);
    });
    picker.addEventListener('change', () => {
      const bar = Number(picker.value);
      this._model.selectBar(bar < 0 ? null : order, bar);
    });
    pickerRow.node.append(label, picker);
    const group = new Panel();
    group.addClass('pd-Histogram');
    group.node.setAttribute('role', 'group');
    group.node.setAttribute('aria-label', trans.__('Order %1 histogram', order));
    group.addWidget(header);
    group.addWidget(chart);
    group.addWidget(pickerRow);
    this.addWidget(group);
    this._charts.push({ histogram, chart, picker, node: group.node, selected: -2, markedRow: -2 });
  }

  private _toggle(order: number, bar: number): void {
    const current = this._model.bar;
    if (current && current.order === order && current.bar === bar) {
      this._model.selectBar(null);
    } else {
      this._model.selectBar(order, bar);
    }
  }

  private readonly _model: ResultsModel;
  private readonly _translator: ITranslator | undefined;
  private readonly _trans: TranslationBundle;
  private _shown: unknown = null;
  private _charts: {
    histogram: IResultsHistogram;
    chart: ChartView;
    picker: HTMLSelectElement;
    node: HTMLElement;
    selected: number;
    markedRow: number;
  }[] = [];
}

/** The statics of {@link HistogramsView}. */
export namespace HistogramsView {
  /** Options of a {@link HistogramsView}. */
  export interface IOptions {
    model: ResultsModel;
    /** Translates the view's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** Counter for unique control ids. */
  export let nextId = 0;

  /** What a figure outlines: the bar filtering the tables, the bar and tick of the selected row. */
  export interface IMarks {
    selected: number;
    marked: number;
    row: number;
  }

  /**
   * The bar chart of one histogram (bars left of 0 in the synergy colour, counts on a log axis)
   * over a strip of its most extreme multiplets.
   */
  export function figure(
    histogram: IResultsHistogram,
    store: MultipletStore,
    marks: IMarks,
    colors: IChartColors,
    trans: TranslationBundle
  ): IFigure {
    const extremes = histogram.extremes;
    const extremeValues = extremes.map(i => store.co_information[i]);
    const base = histogramFigure(histogram, colors, {
      selected: marks.selected,
      marked: marks.marked,
      reach: extremeValues,
      strip: true,
      formatEdge: formatValue,
      trans
    });
    const strip = {
      type: 'scatter',
      mode: 'markers',
      x: extremeValues,
      y: extremes.map(() => 0),
      yaxis: 'y2',
      customdata: extremes.map(i => [plotlyText(store.namesOf(i).join(' \u00b7 ')), formatValue(store.co_information[i])]),
      hovertemplate: '%{customdata[0]}<br>%{customdata[1]}<extra></extra>',
      marker: {
        symbol: 'line-ns-open',
        size: extremes.map(i => (i === marks.row ? 22 : 14)),
        line: {
          width: extremes.map(i => (i === marks.row ? 3 : 1.5)),
          color: extremes.map((i, k) => (i === marks.row ? colors.accent : extremeValues[k] < 0 ? colors.synergy : colors.redundancy))
        }
      }
    };
    const data: Record<string, unknown>[] = [...(base.data as Record<string, unknown>[]), strip];
    if (marks.row >= 0 && !extremes.includes(marks.row)) {
      // the selected row, when it is not among the extremes, gets its own tick
      data.push({
        type: 'scatter',
        mode: 'markers',
        x: [store.co_information[marks.row]],
        y: [0],
        yaxis: 'y2',
        hoverinfo: 'skip',
        marker: { symbol: 'line-ns-open', size: 22, line: { width: 3, color: colors.accent } }
      });
    }
    return { data: data as IFigure['data'], layout: base.layout };
  }
}
