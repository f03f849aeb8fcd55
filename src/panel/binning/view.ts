/**
 * The Binning section: one spec field per column, "apply to all numeric columns", and the
 * preview of the focused column: its distribution, the bin edges drawn on it and the rows
 * per bin. The chart is plain SVG whose colours are CSS classes over --jp-* variables, so a
 * theme change recolours it without a redraw. Column names and category labels are text.
 */
import { AUTO_NUMERIC_SPEC } from '../../engine/binning';
import { formatCount, plural } from '../../engine/text';
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
    super({ model: options.model, className: 'pd-Binning', label: 'Binning' });
    const listId = `pd-binning-forms-${Private.nextId()}`;
    this._datalist = document.createElement('datalist');
    this._datalist.id = listId;
    this._datalist.append(...SPEC_SUGGESTIONS.map(spec => Object.assign(document.createElement('option'), { value: spec })));
    this._listId = listId;
    this._empty = textElement('p', 'pd-Binning-empty', 'Pick a dataframe in the Dataframe section to choose how its columns are binned.');
    this._rows = textElement('div', 'pd-Binning-rows');
    this._apply = textElement('button', 'pd-Binning-apply jp-mod-styled', 'Apply to all numeric columns');
    this._apply.type = 'button';
    this._apply.addEventListener('click', () => {
      const focused = this.model.focused;
      if (focused !== null) {
        this.model.applyToAllNumeric(focused);
      }
    });
    this._preview = textElement('figure', 'pd-Binning-preview');
    this._preview.setAttribute('aria-live', 'polite');
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
      const text = this.model.problemOf(name);
      problem.textContent = text ?? '';
      problem.hidden = text === null;
      input.setAttribute('aria-invalid', text === null ? 'false' : 'true');
      row.classList.toggle('jp-mod-active', this.model.focused === name);
      Private.showOutcome(outcome, text === null ? this.model.outcomeOf(name) : null);
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
    input.setAttribute('aria-label', `Binning of column ${name}`);
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
      figure.replaceChildren(textElement('figcaption', 'pd-Binning-caption', `Preview of ${state.column}`), textElement('p', 'pd-Binning-problem', state.error));
      return;
    }
    const preview = state.preview;
    if (preview === null) {
      figure.replaceChildren(textElement('figcaption', 'pd-Binning-caption', `Preview of ${state.column}…`));
      return;
    }
    if (preview === this._drawn) {
      return;
    }
    this._drawn = preview;
    figure.replaceChildren(
      textElement('figcaption', 'pd-Binning-caption', `Preview of ${preview.name}: ${state.spec} → ${Private.binsText(preview.binCounts.length, preview.binning.binning.method)}`),
      Private.chart(preview),
      Private.binTable(preview),
      ...preview.warnings.map(warning => textElement('p', 'pd-Binning-warning', warning))
    );
  }

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
  }
}

namespace Private {
  const SVG = 'http://www.w3.org/2000/svg';
  const WIDTH = 300;
  const HEIGHT = 110;
  const PAD = 4;

  let counter = 0;

  /** A fresh number for element ids. */
  export function nextId(): number {
    return ++counter;
  }

  /** "4 bins", or "2 categories" for a categorical binning. */
  export function binsText(bins: number, method: string | null): string {
    return method === 'categorical' ? plural(bins, 'category', 'categories') : plural(bins, 'bin');
  }

  /**
   * A column's row under its spec field: what the spec gave (under `auto`, which method it
   * chose) and the engine's warnings about the column, such as values merged into one bin.
   */
  export function showOutcome(node: HTMLElement, outcome: IBinOutcome | null): void {
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
    const chose = outcome.spec === 'auto' ? ` (${outcome.method === 'categorical' ? 'each value kept' : AUTO_NUMERIC_SPEC})` : '';
    const summary = textElement('p', 'pd-Binning-result', `→ ${binsText(outcome.bins, outcome.method)}${chose}`);
    node.classList.toggle('pd-mod-warning', outcome.warnings.length > 0);
    node.replaceChildren(summary, ...outcome.warnings.map(warning => textElement('p', 'pd-Binning-rowWarning', warning)));
  }

  function svg<K extends keyof SVGElementTagNameMap>(tag: K, attributes: Record<string, string | number>): SVGElementTagNameMap[K] {
    const node = document.createElementNS(SVG, tag);
    for (const [name, value] of Object.entries(attributes)) {
      node.setAttribute(name, String(value));
    }
    return node;
  }

  /** The distribution as bars, with the bin edges as lines over it (numeric) or one bar per category. */
  export function chart(preview: IColumnPreview): SVGSVGElement {
    const root = svg('svg', { class: 'pd-Chart', viewBox: `0 0 ${WIDTH} ${HEIGHT}`, role: 'img', preserveAspectRatio: 'none' });
    const distribution = preview.distribution;
    const counts = distribution.counts;
    const top = Math.max(1, ...Array.from(counts));
    const barWidth = (WIDTH - 2 * PAD) / Math.max(1, counts.length);
    const plotHeight = HEIGHT - 2 * PAD;
    for (let i = 0; i < counts.length; i++) {
      const h = (counts[i] / top) * plotHeight;
      root.append(
        svg('rect', {
          class: 'pd-Chart-bar',
          x: PAD + i * barWidth,
          y: HEIGHT - PAD - h,
          width: Math.max(0.5, barWidth - (counts.length > 60 ? 0 : 1)),
          height: h
        })
      );
    }
    let label: string;
    if (distribution.kind === 'numeric' && Number.isFinite(distribution.low)) {
      const { low, high } = distribution;
      const span = high - low || 1;
      const edges = preview.binning.binning.edges ?? [];
      for (const edge of edges) {
        const x = PAD + ((edge - low) / span) * (WIDTH - 2 * PAD);
        root.append(svg('line', { class: 'pd-Chart-edge', x1: x, x2: x, y1: PAD, y2: HEIGHT - PAD }));
      }
      label = `Distribution of ${preview.name} from ${format(low)} to ${format(high)} with ${plural(edges.length, 'bin edge')} drawn as lines`;
    } else {
      label = `Counts of the ${plural(counts.length, 'category', 'categories')} of ${preview.name}`;
    }
    root.setAttribute('aria-label', label);
    const title = svg('title', {});
    title.textContent = label;
    root.prepend(title);
    return root;
  }

  /** Rows per bin, with each bin's range or category. */
  export function binTable(preview: IColumnPreview): HTMLTableElement {
    const table = textElement('table', 'pd-Table pd-Binning-counts');
    table.append(textElement('caption', 'pd-Binning-caption', 'Rows per bin'));
    const head = textElement('tr', '');
    for (const text of ['Bin', 'Rows']) {
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
        name = categories[i] ?? `code ${i}`;
      } else if (edges !== undefined && i + 1 < edges.length) {
        name = `[${format(edges[i])}, ${format(edges[i + 1])}${i + 2 === edges.length ? ']' : ')'}`;
      } else {
        name = `bin ${i + 1}`;
      }
      const row = textElement('tr', '');
      row.append(textElement('td', 'pd-Binning-bin', name), textElement('td', 'pd-Number', formatCount(preview.binCounts[i])));
      body.append(row);
    }
    table.append(textElement('thead', ''), body);
    table.tHead!.append(head);
    if (preview.missing > 0) {
      const row = textElement('tr', '');
      row.append(textElement('td', 'pd-Binning-bin', 'missing'), textElement('td', 'pd-Number', formatCount(preview.missing)));
      body.append(row);
    }
    return table;
  }

  /** A number in at most four significant digits. */
  function format(value: number): string {
    return Number.isInteger(value) ? String(value) : Number(value.toPrecision(4)).toString();
  }
}
