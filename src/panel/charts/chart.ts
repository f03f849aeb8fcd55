/**
 * A small chart widget over plotly.js: colours come from the JupyterLab theme's CSS variables
 * (read from the widget's own node, so `--pd-*` tokens of the section apply), the chart is
 * redrawn when the theme changes, and PNG and SVG export buttons sit under every chart; an
 * export is the figure redrawn for print (./print.ts): titled, axes named, print-sized.
 * plotly.js is loaded on first draw, so the panel does not pay for it until there is a result.
 */
import { Widget } from '@lumino/widgets';
import type * as PlotlyModule from 'plotly.js-dist-min';

import { translationBundle, type ITranslator } from '../../translation';
import { textElement } from '../dom';
import { type IChartExport, plotlyText, PRINT_SIZE, printColors, printFigure } from './print';
import type { FigureBuilder, IChartColors } from './types';

export type { FigureBuilder, IChartColors, IFigure } from './types';

/** One chart with its export buttons. */
export class ChartView extends Widget {
  /** Create an empty chart. */
  constructor(options: ChartView.IOptions) {
    super();
    this.addClass('pd-Plot');
    this._options = options;
    this._plot = textElement('div', 'pd-Plot-area');
    this._plot.setAttribute('role', 'img');
    this._plot.setAttribute('aria-label', options.label);
    // plotly sizes its SVG to the layout height; the box must reserve the same room.
    this._plot.style.height = `${options.height}px`;
    const trans = translationBundle(options.translator);
    const actions = textElement('div', 'pd-Plot-actions');
    for (const format of ['png', 'svg'] as const) {
      const button = textElement('button', 'pd-Plot-export jp-mod-styled', format.toUpperCase());
      button.type = 'button';
      button.title = trans.__('Save this chart as %1', format.toUpperCase());
      button.setAttribute('aria-label', trans.__('Save %1 as %2', options.label, format.toUpperCase()));
      button.addEventListener('click', () => void this.exportImage(format));
      actions.append(button);
    }
    this.node.append(this._plot, actions);
    this._observer = new MutationObserver(() => this._draw());
    this._observer.observe(document.body, {
      attributes: true,
      attributeFilter: ['data-jp-theme-name', 'data-jp-theme-light']
    });
  }

  /** The element plotly draws into (for tests and events). */
  get plotNode(): HTMLElement {
    return this._plot;
  }

  /** Set the figure builder and draw. */
  setFigure(build: FigureBuilder): void {
    this._build = build;
    this._draw();
  }

  /**
   * Download the chart as an image for print: the figure redrawn at {@link PRINT_SIZE} with dark
   * ink on white, its title, a line naming the frame and record, and both axis titles.
   */
  async exportImage(format: 'png' | 'svg'): Promise<void> {
    const build = this._build;
    if (build === null) {
      return;
    }
    const Plotly = await Private.plotly();
    const about: IChartExport = this._options.exportAs?.() ?? {
      title: this._options.label,
      subtitle: '',
      xTitle: '',
      yTitle: '',
      filename: this._options.filename
    };
    const colors = printColors(Private.colors(this.node));
    const figure = printFigure(build(colors), about, colors);
    const url = await Plotly.toImage(figure, {
      format,
      width: PRINT_SIZE.width,
      height: PRINT_SIZE.height,
      scale: format === 'png' ? PRINT_SIZE.scale : 1
    });
    const link = document.createElement('a');
    link.href = url;
    link.download = `${about.filename}.${format}`;
    link.style.display = 'none';
    document.body.append(link);
    link.click();
    link.remove();
  }

  /** Stop following the theme and release plotly's resources. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._observer.disconnect();
    if (Private.loaded) {
      Private.loaded.purge(this._plot);
    }
    super.dispose();
  }

  protected onAfterAttach(): void {
    this._draw();
  }

  protected onResize(): void {
    if (this._drawn && Private.loaded) {
      void Private.loaded.Plots.resize(this._plot);
    }
  }

  protected onAfterShow(): void {
    this._draw();
  }

  private _draw(): void {
    const build = this._build;
    if (!build || !this.isAttached || this.isDisposed) {
      return;
    }
    const ticket = ++this._ticket;
    void Private.plotly().then(async Plotly => {
      // One chart per task: a results view of many charts never draws them in one long freeze.
      await Private.nextTurn();
      if (ticket !== this._ticket || this.isDisposed || !this.isAttached) {
        return;
      }
      const colors = Private.colors(this.node);
      const figure = build(colors);
      const layout: PlotlyModule.Layout = {
        height: this._options.height,
        autosize: true,
        margin: { l: 40, r: 8, t: 8, b: 36 },
        paper_bgcolor: colors.background,
        plot_bgcolor: colors.background,
        font: { family: colors.font, size: 11, color: colors.text },
        showlegend: false,
        hoverlabel: { bgcolor: colors.background, bordercolor: colors.grid, font: { color: colors.text } },
        ...figure.layout
      };
      const root = await Plotly.react(this._plot, figure.data, layout, {
        displayModeBar: false,
        responsive: true
      });
      if (!this._drawn) {
        this._drawn = true;
        root.on('plotly_click', event => {
          const point = event.points[0];
          if (point && this._options.onClick) {
            this._options.onClick(point.curveNumber, point.pointIndex ?? point.pointNumber);
          }
        });
      }
    });
  }

  private readonly _options: ChartView.IOptions;
  private readonly _plot: HTMLDivElement;
  private readonly _observer: MutationObserver;
  private _build: FigureBuilder | null = null;
  private _drawn = false;
  private _ticket = 0;
}

/** The statics of {@link ChartView}. */
export namespace ChartView {
  /** Options of a {@link ChartView}. */
  export interface IOptions {
    /** Accessible name of the chart, also used by the export buttons. */
    label: string;
    /** File name (without extension) of exported images, when `exportAs` gives none. */
    filename: string;
    /** Title, provenance line, axis titles and file name of an exported image. */
    exportAs?: () => IChartExport;
    /** Height in CSS pixels. */
    height: number;
    /** Called with the trace and point index when a point or bar is clicked. */
    onClick?: (trace: number, point: number) => void;
    /** Translates the export buttons' names (the label comes translated). */
    translator?: ITranslator;
  }
}

export { plotlyText };

namespace Private {
  /** The loaded plotly module, once loaded. */
  export let loaded: typeof PlotlyModule | null = null;
  let loading: Promise<typeof PlotlyModule> | null = null;

  /** The end of the queue of chart draws. */
  let queue: Promise<void> = Promise.resolve();

  /** Resolves on a task of its own after every draw queued before it has had its task. */
  export function nextTurn(): Promise<void> {
    const turn = queue.then(() => new Promise<void>(resolve => setTimeout(resolve, 0)));
    queue = turn;
    return turn;
  }

  /** Load plotly.js once, on first use. */
  export function plotly(): Promise<typeof PlotlyModule> {
    if (!loading) {
      loading = import('plotly.js-dist-min').then(module => {
        const Plotly = ((module as unknown as { default?: typeof PlotlyModule }).default ?? module) as typeof PlotlyModule;
        loaded = Plotly;
        return Plotly;
      });
    }
    return loading;
  }

  /** Theme colours as the node sees them. */
  export function colors(node: HTMLElement): IChartColors {
    const style = getComputedStyle(node);
    const read = (name: string, fallback: string): string => style.getPropertyValue(name).trim() || fallback;
    return {
      text: read('--jp-ui-font-color1', '#000'),
      muted: read('--jp-ui-font-color2', '#666'),
      grid: read('--jp-border-color2', '#ccc'),
      background: read('--jp-layout-color1', '#fff'),
      synergy: read('--pd-synergy-color', '#c60'),
      redundancy: read('--pd-redundancy-color', '#16c'),
      distribution: read('--pd-distribution-color', '#888'),
      accent: read('--jp-brand-color1', '#16c'),
      font: read('--jp-ui-font-family', 'sans-serif')
    };
  }
}
