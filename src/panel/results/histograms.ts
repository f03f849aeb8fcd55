/**
 * The order histograms: one small bar chart per order of the co-information of all its
 * multiplets, the negative (synergy) side shaded, the sign convention written beside each
 * chart, counts on hover, and a click on a bar (or the bar picker under it, for the keyboard)
 * filtering the tables.
 */
import { Panel, Widget } from '@lumino/widgets';

import { ChartView } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/chart';
import { textElement } from '../dom';
import { plural } from '../../engine/text';
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
    this._model = options.model;
    this._model.changed.connect(this._update, this);
    this._update();
  }

  /** Disconnect from the model and dispose the charts. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._update, this);
    super.dispose();
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
    for (const entry of this._charts) {
      const selected = bar && bar.order === entry.histogram.order ? bar.bar : -1;
      if (selected !== entry.selected) {
        entry.selected = selected;
        entry.picker.value = String(selected);
        entry.chart.setFigure(colors => Private.figure(entry.histogram, selected, colors));
      }
    }
  }

  private _add(histogram: IResultsHistogram, units: string): void {
    const order = histogram.order;
    const header = new Widget({ node: textElement('div', 'pd-Histogram-header') });
    header.node.append(
      textElement('h4', 'pd-Histogram-title', `Order ${order}: ${plural(histogram.total, 'multiplet')}`),
      textElement(
        'p',
        'pd-Histogram-convention',
        `Co-information in ${units}. Left of 0 (shaded): negative, synergy-dominated; right of 0: ` +
          'positive, redundancy-dominated (sign convention of Bell 2003).' +
          (histogram.band
            ? ` Grey band: where 95 % of the independence surrogates fall (${formatValue(histogram.band.low)} to ` +
              `${formatValue(histogram.band.high)}); bars outside it stand out from chance.`
            : '')
      )
    );
    const chart = new ChartView({
      label: `Order ${order} histogram of co-information`,
      filename: `polyadic-order-${order}-histogram`,
      height: 150,
      exportAs: () => {
        const source = this._model.exportSource;
        return {
          title: `Order ${order} histogram of co-information (${plural(histogram.total, 'multiplet')})`,
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: `co-information (${units}): < 0 synergy-dominated, > 0 redundancy-dominated`,
          yTitle: 'multiplets',
          filename: exportFileName(source ?? {}, `order-${order}-histogram`)
        };
      },
      onClick: (_trace, point) => this._toggle(order, point)
    });
    const pickerRow = new Widget({ node: textElement('div', 'pd-Histogram-picker') });
    const pickerId = `pd-histogram-picker-${Private.nextId++}`;
    const label = textElement('label', 'pd-Histogram-pickerLabel', 'Filter tables to bar');
    label.htmlFor = pickerId;
    const picker = textElement('select', 'pd-Histogram-pickerSelect jp-mod-styled');
    picker.id = pickerId;
    const none = textElement('option', '', 'All values');
    none.value = '-1';
    picker.append(none);
    histogram.counts.forEach((count, i) => {
      const option = textElement(
        'option',
        '',
        `${formatValue(histogram.edges[i])} to ${formatValue(histogram.edges[i + 1])} (${formatCount(count)})`
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
    group.node.setAttribute('aria-label', `Order ${order} histogram`);
    group.addWidget(header);
    group.addWidget(chart);
    group.addWidget(pickerRow);
    this.addWidget(group);
    this._charts.push({ histogram, chart, picker, selected: -2 });
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
  private _shown: unknown = null;
  private _charts: {
    histogram: IResultsHistogram;
    chart: ChartView;
    picker: HTMLSelectElement;
    selected: number;
  }[] = [];
}

/** The statics of {@link HistogramsView}. */
export namespace HistogramsView {
  /** Options of a {@link HistogramsView}. */
  export interface IOptions {
    model: ResultsModel;
  }
}

namespace Private {
  /** Counter for unique control ids. */
  export let nextId = 0;

  /** The bar chart of one histogram; bars left of 0 in the synergy colour. */
  export function figure(histogram: IResultsHistogram, selected: number, colors: IChartColors): IFigure {
    const { edges, counts } = histogram;
    const centers = counts.map((_c, i) => (edges[i] + edges[i + 1]) / 2);
    const widths = counts.map((_c, i) => edges[i + 1] - edges[i]);
    const low = edges[0];
    const high = edges[edges.length - 1];
    const shapes: Record<string, unknown>[] = [];
    if (low < 0) {
      shapes.push({
        type: 'rect',
        xref: 'x',
        yref: 'paper',
        x0: low,
        x1: Math.min(0, high),
        y0: 0,
        y1: 1,
        fillcolor: colors.synergy,
        opacity: 0.14,
        line: { width: 0 },
        layer: 'below'
      });
    }
    const annotations: Record<string, unknown>[] = [];
    if (histogram.band) {
      // the null band: where 95 % of the surrogates' co-information of this order lies
      shapes.push({
        type: 'rect',
        xref: 'x',
        yref: 'paper',
        x0: histogram.band.low,
        x1: histogram.band.high,
        y0: 0,
        y1: 1,
        fillcolor: colors.muted,
        opacity: 0.28,
        line: { color: colors.muted, width: 1, dash: 'dash' },
        layer: 'below'
      });
      annotations.push({
        xref: 'x',
        yref: 'paper',
        x: (histogram.band.low + histogram.band.high) / 2,
        y: 1,
        yanchor: 'bottom',
        showarrow: false,
        text: 'null 95 %',
        font: { size: 10, color: colors.muted }
      });
    }
    if (low <= 0 && high >= 0) {
      shapes.push({
        type: 'line',
        xref: 'x',
        yref: 'paper',
        x0: 0,
        x1: 0,
        y0: 0,
        y1: 1,
        line: { color: colors.muted, width: 1, dash: 'dot' }
      });
    }
    return {
      data: [
        {
          type: 'bar',
          x: centers,
          y: counts,
          width: widths,
          customdata: counts.map((_c, i) => [formatValue(edges[i]), formatValue(edges[i + 1])]),
          hovertemplate: '%{customdata[0]} to %{customdata[1]}<br>%{y} multiplets<extra></extra>',
          marker: {
            color: centers.map(c => (c < 0 ? colors.synergy : colors.redundancy)),
            line: {
              color: counts.map((_c, i) => (i === selected ? colors.text : colors.background)),
              width: counts.map((_c, i) => (i === selected ? 2 : 0.5))
            }
          }
        }
      ],
      layout: {
        bargap: 0,
        shapes,
        annotations,
        xaxis: { title: { text: 'co-information' }, gridcolor: colors.grid, zerolinecolor: colors.grid, color: colors.muted },
        yaxis: { title: { text: 'count' }, gridcolor: colors.grid, zerolinecolor: colors.grid, color: colors.muted, rangemode: 'tozero' },
        margin: { l: 44, r: 8, t: histogram.band ? 16 : 6, b: 38 }
      }
    };
  }
}
