/**
 * The exported form of a chart: the on-screen figure redrawn for paper, with a title, a line
 * naming its frame and record, both axis titles, type large enough to read in print, and dark
 * ink on a white ground whatever the theme. Pure: no DOM, no plotly import.
 */
import type { IChartColors, IFigure } from './types';

/**
 * Text for plotly labels: plotly reads a small HTML-like markup in labels (links, bold,
 * line breaks), so untrusted text has its markup characters written as entities, which plotly
 * shows as the characters themselves.
 */
export function plotlyText(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** What an exported chart says about itself (plain text; escaped here for plotly). */
export interface IChartExport {
  /** Title over the chart. */
  title: string;
  /** A smaller line under the title: the frame, the record and the settings. */
  subtitle: string;
  /** Title of the horizontal axis, with units. */
  xTitle: string;
  /** Title of the vertical axis. */
  yTitle: string;
  /** File name without extension. */
  filename: string;
}

/**
 * Size of an exported chart in CSS pixels, and the pixel ratio of PNGs: 1200 × 720 at ratio 2
 * is 2400 × 1440 pixels, 8 × 4.8 inches at 300 dpi (a common print resolution, no source).
 */
export const PRINT_SIZE = { width: 1200, height: 720, scale: 2 } as const;

/** Base font size of an exported chart in CSS pixels (titles are larger). */
export const PRINT_FONT_SIZE = 20;

/** Ink and ground of an exported chart; the synergy and redundancy colours stay the theme's. */
export function printColors(theme: IChartColors): IChartColors {
  return { ...theme, text: '#000000', muted: '#333333', grid: '#cccccc', background: '#ffffff' };
}

/**
 * The figure for export: `figure` (built with {@link printColors}) with the title and subtitle,
 * the axis titles, print-sized type and margins, and the export size in its layout.
 */
export function printFigure(figure: IFigure, about: IChartExport, colors: IChartColors): IFigure {
  const layout = figure.layout;
  const axis = (key: 'xaxis' | 'yaxis', title: string): Record<string, unknown> => ({
    ...((layout[key] as Record<string, unknown> | undefined) ?? {}),
    title: { text: plotlyText(title), font: { size: PRINT_FONT_SIZE } },
    tickfont: { size: PRINT_FONT_SIZE - 2 },
    automargin: true
  });
  return {
    data: figure.data,
    layout: {
      ...layout,
      width: PRINT_SIZE.width,
      height: PRINT_SIZE.height,
      autosize: false,
      paper_bgcolor: colors.background,
      plot_bgcolor: colors.background,
      font: { family: colors.font, size: PRINT_FONT_SIZE, color: colors.text },
      showlegend: false,
      title: {
        text: `${plotlyText(about.title)}<br><span style="font-size:${PRINT_FONT_SIZE - 4}px">${plotlyText(about.subtitle)}</span>`,
        x: 0.5,
        xanchor: 'center',
        font: { size: PRINT_FONT_SIZE + 6 }
      },
      margin: { l: 100, r: 40, t: 120, b: 100 },
      xaxis: axis('xaxis', about.xTitle),
      yaxis: axis('yaxis', about.yTitle)
    }
  };
}
