/**
 * The Binning section: one spec field per column, "apply to all numeric columns", and the
 * preview of the focused column: its distribution, the bin edges drawn on it and the rows
 * per bin. The chart is the chart module's (src/panel/charts, as in the results view): theme
 * colours from the --pd-* tokens, redrawn on a theme change, PNG and SVG export. Column names
 * and category labels are text.
 */
import { Widget } from '@lumino/widgets';

import { AUTO_NUMERIC_SPEC } from '../../engine/binning';
import { formatCount, formatDataValue } from '../../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import { ChartView, plotlyText } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/chart';
import { textElement } from '../dom';
import { SectionView } from '../section';
import type { IColumnPreview } from '../../worker/protocol';
import { BinningModel, IBinOutcome } from './model';

/** The forms a spec may take, offered as suggestions (DESIGN.md glossary). */
const SPEC_SUGGESTIONS = [
  'auto',
  'quantile:4',
  'width:5',
  'fd',
  'scott',
  'sturges',
  'rice',
  'sqrt',
  'doane',
  'kmeans:3',
  'edges:0,1,2',
  'categorical'
];

/** Shows a {@link BinningModel}. */
export class BinningView extends SectionView<BinningModel> {
  /** Create the section for `options.model`. */
  constructor(options: BinningView.IOptions) {
    const trans = translationBundle(options.translator);
    super({ model: options.model, className: 'pd-Binning', label: trans.__('Binning'), translator: options.translator });
    const listId = `pd-binning-forms-${Private.nextId()}`;
    this._datalist = document.createElement('datalist');
    this._datalist.id = listId;
    this._datalist.append(...SPEC_SUGGESTIONS.map(spec => Object.assign(document.createElement('option'), { value: spec })));
    this._listId = listId;
    this._empty = textElement('p', 'pd-Binning-empty', trans.__('Pick a dataframe in the Dataframe section to choose how its columns are binned.'));
    this._rows = textElement('div', 'pd-Binning-rows');
    this._apply = textElement('button', 'pd-Binning-apply jp-mod-styled', trans.__('Apply to all numeric columns'));
    this._apply.type = 'button';
    this._apply.addEventListener('click', () => {
      const focused = this.model.focused;
      if (focused !== null) {
        this.model.applyToAllNumeric(focused);
      }
    });
    this._preview = textElement('figure', 'pd-Binning-preview');
    this._preview.setAttribute('aria-live', 'polite');
    // one chart, redrawn for each column and spec (the chart module of the results view)
    this._chart = new ChartView({
      label: trans.__('Binning preview'),
      filename: 'polyadic-binning-preview',
      height: 130,
      exportAs: () => {
        const preview = this._drawn;
        const name = preview?.name ?? trans.__('column');
        return {
          title: trans.__('Binning of %1: %2', name, this.model.preview.spec ?? ''),
          subtitle: preview
            ? trans.__('%1 · %2', Private.rowsText(preview.rows, trans), Private.binsText(preview.binCounts.length, preview.binning.binning.method, trans))
            : '',
          xTitle: name,
          yTitle: trans.__('rows'),
          filename: `polyadic-binning-${name.replace(/[^A-Za-z0-9._-]+/g, '_').slice(0, 60)}`
        };
      }
    });
    this._chart.addClass('pd-Binning-chart');
    this._chartHost = textElement('div', 'pd-Binning-chartHost');
    this._unused = textElement('p', 'pd-Binning-unused pd-mod-warning');
    this._unused.setAttribute('role', 'status');
    this.node.append(this._datalist, this._unused, this._empty, this._rows, this._apply, this._preview);
    this.render();
  }

  /** Redraw from the model. */
  protected render(): void {
    const names = this.model.names;
    const unused = this.model.unusedBecause;
    this._unused.textContent = unused ?? '';
    this._unused.hidden = unused === null;
    this._empty.hidden = names.length > 0;
    this._apply.hidden = names.length === 0;
    const key = JSON.stringify(names);
    if (key !== this._key) {
      this._key = key;
      this._fields.clear();
      this._rows.replaceChildren(...names.map(name => this._row(name)));
    }
    for (const [name, { input, problem, outcome, row }] of this._fields) {
      const spec = this.model.specOf(name) ?? '';
      if (input.value !== spec && document.activeElement !== input) {
        input.value = spec;
      }
      const fault = this.model.faultOf(name);
      problem.textContent = fault?.message ?? '';
      problem.hidden = fault === null;
      input.setAttribute('aria-invalid', fault === null ? 'false' : 'true');
      row.classList.toggle('pd-mod-fault', fault !== null);
      row.classList.toggle('jp-mod-active', this.model.focused === name);
      Private.showOutcome(outcome, fault === null ? this.model.outcomeOf(name) : null, this.trans);
    }
    const focused = this.model.focused;
    this._apply.disabled = focused === null || !this.model.isNumeric(focused);
    this._renderPreview();
  }

  private _row(name: string): HTMLElement {
    const row = textElement('div', 'pd-Binning-row');
    const id = `pd-binning-${Private.nextId()}`;
    const label = textElement('label', 'pd-Binning-name', name);
    label.htmlFor = id;
    const input = document.createElement('input');
    input.id = id;
    input.type = 'text';
    input.className = 'pd-Binning-spec jp-mod-styled';
    input.spellcheck = false;
    input.setAttribute('list', this._listId);
    input.setAttribute('aria-label', this.trans.__('Binning of column %1', name));
    input.value = this.model.specOf(name) ?? '';
    input.addEventListener('input', () => this.model.setSpec(name, input.value));
    input.addEventListener('focus', () => this.model.focus(name));
    const problem = textElement('p', 'pd-Binning-problem');
    problem.setAttribute('role', 'alert');
    problem.hidden = true;
    const outcome = textElement('div', 'pd-Binning-outcome');
    outcome.setAttribute('aria-live', 'polite');
    outcome.hidden = true;
    row.append(label, input, problem, outcome);
    this._fields.set(name, { input, problem, outcome, row });
    return row;
  }

  private _renderPreview(): void {
    const trans = this.trans;
    const state = this.model.preview;
    const figure = this._preview;
    figure.classList.toggle('jp-mod-pending', state.pending);
    figure.dataset.column = state.column ?? '';
    figure.dataset.spec = state.spec ?? '';
    if (state.column === null) {
      figure.replaceChildren();
      return;
    }
    if (state.error !== null) {
      figure.replaceChildren(textElement('figcaption', 'pd-Binning-caption', trans.__('Preview of %1', state.column)), textElement('p', 'pd-Binning-problem', state.error.message));
      return;
    }
    const preview = state.preview;
    if (preview === null) {
      figure.replaceChildren(textElement('figcaption', 'pd-Binning-caption', trans.__('Preview of %1…', state.column)));
      return;
    }
    if (preview === this._drawn) {
      return;
    }
    this._drawn = preview;
    const label = Private.chartLabel(preview, trans);
    this._chart.plotNode.setAttribute('aria-label', label);
    this._chart.node.dataset.edges = String(preview.binning.binning.edges?.length ?? 0);
    figure.replaceChildren(
      textElement(
        'figcaption',
        'pd-Binning-caption',
        trans.__('Preview of %1: %2 → %3', preview.name, state.spec, Private.binsText(preview.binCounts.length, preview.binning.binning.method, trans))
      ),
      this._chartHost,
      Private.binTable(preview, trans),
      ...preview.warnings.map(warning => textElement('p', 'pd-Binning-warning', warning))
    );
    this._chart.setFigure(colors => Private.figure(preview, colors, trans));
  }

  /** Attach the preview's chart into its place (a widget of its own inside this section's node). */
  protected onAfterAttach(): void {
    if (!this._chart.isAttached) {
      // attached where the section's node is in the page, then kept in its host, which each
      // preview puts back in place (a moved node stays the same attached widget)
      Widget.attach(this._chart, this._preview);
      this._chartHost.append(this._chart.node);
    }
  }

  /** Dispose the chart with the section. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._chart.dispose();
    super.dispose();
  }

  private readonly _chart: ChartView;
  private readonly _chartHost: HTMLElement;
  private _datalist: HTMLDataListElement;
  private _listId: string;
  private _empty: HTMLElement;
  private _rows: HTMLElement;
  private _apply: HTMLButtonElement;
  private _preview: HTMLElement;
  private _unused: HTMLElement;
  private _fields = new Map<string, { input: HTMLInputElement; problem: HTMLElement; outcome: HTMLElement; row: HTMLElement }>();
  private _key = '';
  private _drawn: IColumnPreview | null = null;
}

/** The statics of {@link BinningView}. */
export namespace BinningView {
  /** Options of a {@link BinningView}. */
  export interface IOptions {
    /** The section's state. */
    model: BinningModel;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  let counter = 0;

  /** A fresh number for element ids. */
  export function nextId(): number {
    return ++counter;
  }

  /** "4 bins", or "2 categories" for a categorical binning. */
  export function binsText(bins: number, method: string | null, trans: TranslationBundle): string {
    return method === 'categorical'
      ? trans._n('%2 category', '%2 categories', bins, formatCount(bins))
      : trans._n('%2 bin', '%2 bins', bins, formatCount(bins));
  }

  /** "1,000 rows". */
  export function rowsText(rows: number, trans: TranslationBundle): string {
    return trans._n('%2 row', '%2 rows', rows, formatCount(rows));
  }

  /**
   * A column's row under its spec field: what the spec gave (under `auto`, which method it
   * chose) and the engine's warnings about the column, such as values merged into one bin.
   */
  export function showOutcome(node: HTMLElement, outcome: IBinOutcome | null, trans: TranslationBundle): void {
    const key = outcome === null ? '' : JSON.stringify(outcome);
    if (node.dataset.key === key) {
      return;
    }
    node.dataset.key = key;
    node.hidden = outcome === null || Number.isNaN(outcome.bins);
    if (outcome === null || Number.isNaN(outcome.bins)) {
      node.replaceChildren();
      return;
    }
    const bins = binsText(outcome.bins, outcome.method, trans);
    const chose = outcome.method === 'categorical' ? trans.__('each value kept') : AUTO_NUMERIC_SPEC;
    const summary = textElement('p', 'pd-Binning-result', outcome.spec === 'auto' ? trans.__('→ %1 (%2)', bins, chose) : trans.__('→ %1', bins));
    node.classList.toggle('pd-mod-warning', outcome.warnings.length > 0);
    node.replaceChildren(summary, ...outcome.warnings.map(warning => textElement('p', 'pd-Binning-rowWarning', warning)));
  }

  /** What the preview's chart shows, for screen readers. */
  export function chartLabel(preview: IColumnPreview, trans: TranslationBundle): string {
    const distribution = preview.distribution;
    if (distribution.kind === 'numeric' && Number.isFinite(distribution.low)) {
      const edges = preview.binning.binning.edges ?? [];
      return trans.__(
        'Distribution of %1 from %2 to %3 with %4 drawn as lines',
        preview.name,
        format(distribution.low),
        format(distribution.high),
        trans._n('%2 bin edge', '%2 bin edges', edges.length, formatCount(edges.length))
      );
    }
    const categories = distribution.counts.length;
    return trans.__('Counts of the %1 of %2', trans._n('%2 category', '%2 categories', categories, formatCount(categories)), preview.name);
  }

  /**
   * The column's values as bars (fine bins of a numeric column, one bar per category of a
   * categorical one) in the distribution colour, with the bin edges as lines over them.
   */
  export function figure(preview: IColumnPreview, colors: IChartColors, trans: TranslationBundle): IFigure {
    const distribution = preview.distribution;
    const counts = Array.from(distribution.counts);
    const layout: Record<string, unknown> = {
      bargap: distribution.kind === 'numeric' ? 0 : 0.15,
      margin: { l: 40, r: 6, t: 6, b: 28 },
      yaxis: { gridcolor: colors.grid, zerolinecolor: colors.grid, color: colors.muted, rangemode: 'tozero' },
      xaxis: { gridcolor: colors.grid, zerolinecolor: colors.grid, color: colors.muted }
    };
    if (distribution.kind === 'numeric' && Number.isFinite(distribution.low)) {
      const edges = Array.from(distribution.edges);
      const centers = counts.map((_c, i) => (edges[i] + edges[i + 1]) / 2);
      const widths = counts.map((_c, i) => edges[i + 1] - edges[i]);
      layout.shapes = (preview.binning.binning.edges ?? []).map(edge => ({
        type: 'line',
        xref: 'x',
        yref: 'paper',
        x0: edge,
        x1: edge,
        y0: 0,
        y1: 1,
        line: { color: colors.text, width: 1.5 }
      }));
      return {
        data: [
          {
            type: 'bar',
            x: centers,
            y: counts,
            width: widths,
            customdata: counts.map((_c, i) => [format(edges[i]), format(edges[i + 1])]),
            hovertemplate: `${trans.__('%{customdata[0]} to %{customdata[1]}<br>%{y} rows')}<extra></extra>`,
            marker: { color: colors.distribution, line: { width: 0 } }
          }
        ] as IFigure['data'],
        layout: layout as IFigure['layout']
      };
    }
    const categories = distribution.kind === 'categorical' ? distribution.categories : counts.map((_c, i) => trans.__('bin %1', i + 1));
    return {
      data: [
        {
          type: 'bar',
          // category names are data: plotly reads markup in labels, so they go in escaped
          x: categories.map(name => plotlyText(name)),
          y: counts,
          hovertemplate: `${trans.__('%{x}<br>%{y} rows')}<extra></extra>`,
          marker: { color: colors.distribution, line: { width: 0 } }
        }
      ] as IFigure['data'],
      layout: { ...layout, xaxis: { ...(layout.xaxis as object), type: 'category' } } as IFigure['layout']
    };
  }

  /** Rows per bin, with each bin's range or category. */
  export function binTable(preview: IColumnPreview, trans: TranslationBundle): HTMLTableElement {
    const table = textElement('table', 'pd-Table pd-Binning-counts');
    table.append(textElement('caption', 'pd-Binning-caption', trans.__('Rows per bin')));
    const head = textElement('tr', '');
    for (const text of [trans.__('Bin'), trans.__('Rows')]) {
      const cell = textElement('th', '', text);
      cell.scope = 'col';
      head.append(cell);
    }
    const body = textElement('tbody', '');
    const edges = preview.binning.binning.edges;
    const categories = preview.binning.binning.categories;
    for (let i = 0; i < preview.binCounts.length; i++) {
      let name: string;
      if (categories !== undefined) {
        name = categories[i] ?? trans.__('code %1', i);
      } else if (edges !== undefined && i + 1 < edges.length) {
        name = `[${format(edges[i])}, ${format(edges[i + 1])}${i + 2 === edges.length ? ']' : ')'}`;
      } else {
        name = trans.__('bin %1', i + 1);
      }
      const row = textElement('tr', '');
      row.append(textElement('td', 'pd-Binning-bin', name), textElement('td', 'pd-Number', formatCount(preview.binCounts[i])));
      body.append(row);
    }
    table.append(textElement('thead', ''), body);
    table.tHead!.append(head);
    if (preview.missing > 0) {
      const row = textElement('tr', '');
      row.append(textElement('td', 'pd-Binning-bin', trans.__('missing')), textElement('td', 'pd-Number', formatCount(preview.missing)));
      body.append(row);
    }
    return table;
  }

  /** A data value, as every view shows one. */
  const format = formatDataValue;
}
