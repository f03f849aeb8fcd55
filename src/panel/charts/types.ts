/**
 * The types the chart module's parts share: theme colours and a figure as plotly.js takes it.
 * No code, so every part (chart.ts, print.ts, histogram.ts) imports it without a circle.
 */
import type * as PlotlyModule from 'plotly.js-dist-min';

/** Theme colours a figure is built with (CSS colour strings). */
export interface IChartColors {
  text: string;
  muted: string;
  grid: string;
  background: string;
  synergy: string;
  redundancy: string;
  /** A column's own distribution (the binning preview). */
  distribution: string;
  accent: string;
  font: string;
}

/** A figure: traces and layout, as plotly.js takes them. */
export interface IFigure {
  data: PlotlyModule.Data[];
  layout: PlotlyModule.Layout;
}

/** Builds a figure for the current theme colours. */
export type FigureBuilder = (colors: IChartColors) => IFigure;
