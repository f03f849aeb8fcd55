/**
 * The figure of one order histogram of co-information, shared by the results view and the
 * analysis cell: bars over the bin edges (left of 0 in the synergy colour, right of it in the
 * redundancy colour), the negative side shaded, the null band of the order when tested, a
 * dotted zero line, counts on a logarithmic axis from half a multiplet up (a bar of one
 * multiplet keeps its height beside bars of thousands), ticks at the powers of ten.
 * The results view adds its strip of extreme multiplets under the bars (`strip`).
 */
import { formatCount, formatValue } from '../../engine/text';
import { translationBundle, type TranslationBundle } from '../../translation';
import type { IChartColors, IFigure } from './types';

/** What a histogram figure draws. */
export interface IHistogramInput {
  /** Bin edges, one more than the counts. */
  edges: readonly number[];
  /** Multiplets per bin. */
  counts: readonly number[];
  /** The null band of the order (2.5–97.5 % of the surrogates), when tested. */
  band?: { low: number; high: number } | null;
}

/** How a histogram figure is drawn. */
export interface IHistogramOptions {
  /** Bars outlined: the bar filtering the tables (`selected`), the bar of the selected row (`marked`). */
  selected?: number;
  marked?: number;
  /** Values the x range must reach beyond the edges (the extreme ticks of the strip). */
  reach?: readonly number[];
  /** Leave the bottom of the plot for a strip on a second y axis (`y2`). */
  strip?: boolean;
  /** How the hover label writes a bar's edges. */
  formatEdge?: (value: number) => string;
  /** The bundle of the figure's texts: hover label, null band, axis titles (default: as written). */
  trans?: TranslationBundle;
}

/** The figure of one order histogram. */
export function histogramFigure(histogram: IHistogramInput, colors: IChartColors, options: IHistogramOptions = {}): IFigure {
  const { edges, counts } = histogram;
  const selected = options.selected ?? -1;
  const marked = options.marked ?? -1;
  const formatEdge = options.formatEdge ?? formatValue;
  const trans = options.trans ?? translationBundle();
  const centers = counts.map((_c, i) => (edges[i] + edges[i + 1]) / 2);
  const widths = counts.map((_c, i) => edges[i + 1] - edges[i]);
  const low = edges[0];
  const high = edges[edges.length - 1];
  const shapes: Record<string, unknown>[] = [];
  const annotations: Record<string, unknown>[] = [];
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
  const band = histogram.band ?? null;
  if (band) {
    // the null band: where 95 % of the surrogates' co-information of this order lies
    shapes.push({
      type: 'rect',
      xref: 'x',
      yref: 'paper',
      x0: band.low,
      x1: band.high,
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
      x: (band.low + band.high) / 2,
      y: 1,
      yanchor: 'bottom',
      showarrow: false,
      text: trans.__('null 95 %'),
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
  const maxCount = Math.max(1, ...counts);
  const ticks = powersOfTen(maxCount);
  const bars = {
    type: 'bar',
    x: centers,
    y: counts,
    width: widths,
    customdata: counts.map((_c, i) => [formatEdge(edges[i]), formatEdge(edges[i + 1])]),
    // plotly's template: the edges, then the count
    hovertemplate: `${trans.__('%{customdata[0]} to %{customdata[1]}<br>%{y} multiplets')}<extra></extra>`,
    marker: {
      color: centers.map(c => (c < 0 ? colors.synergy : colors.redundancy)),
      line: {
        color: counts.map((_c, i) => (i === marked ? colors.accent : i === selected ? colors.text : colors.background)),
        width: counts.map((_c, i) => (i === marked ? 3 : i === selected ? 2 : 0.5))
      }
    }
  };
  const layout: Record<string, unknown> = {
    bargap: 0,
    shapes,
    annotations,
    showlegend: false,
    xaxis: {
      title: { text: trans.__('co-information') },
      gridcolor: colors.grid,
      zerolinecolor: colors.grid,
      color: colors.muted,
      range: xRange(low, high, options.reach ?? [])
    },
    yaxis: {
      title: { text: trans.__('count (log)') },
      type: 'log',
      // from half a multiplet up, so a bar of one multiplet has height
      range: [Math.log10(0.5), Math.log10(maxCount * 1.6)],
      tickmode: 'array',
      tickvals: ticks,
      ticktext: ticks.map(v => formatCount(v)),
      domain: options.strip ? [0.26, 1] : [0, 1],
      gridcolor: colors.grid,
      zerolinecolor: colors.grid,
      color: colors.muted
    },
    margin: { l: 48, r: 8, t: band ? 16 : 6, b: 38 }
  };
  if (options.strip) {
    layout.yaxis2 = {
      domain: [0, 0.16],
      range: [-1, 1],
      showticklabels: false,
      showgrid: false,
      zeroline: false,
      fixedrange: true
    };
  }
  return { data: [bars] as IFigure['data'], layout: layout as IFigure['layout'] };
}

/** 1, 10, 100, … up to `max`: the ticks of a log count axis. */
export function powersOfTen(max: number): number[] {
  const out = [1];
  while (out[out.length - 1] * 10 <= max) {
    out.push(out[out.length - 1] * 10);
  }
  return out;
}

/** The x range: the bars, and every value of `reach` inside it, with a little room. */
export function xRange(low: number, high: number, reach: readonly number[]): [number, number] {
  const lo = Math.min(low, ...reach);
  const hi = Math.max(high, ...reach);
  const pad = (hi - lo || 1) * 0.03;
  return [lo - pad, hi + pad];
}
