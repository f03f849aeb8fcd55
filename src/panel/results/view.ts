/**
 * The results view (the content of a main-area results document, ./document.ts): a summary of
 * the run with its cautions, the order histograms as a grid, the column-name and order filters,
 * the synergy and redundancy tables at full width, and below them the multiplet detail view of
 * the selected row, what the caller adds, and the conditioning chain of the selected multiplet.
 */
import { Panel, Widget } from '@lumino/widgets';

import { textElement } from '../dom';
import { ChainView } from './chain-view';
import { DetailModel } from './detail-model';
import { DetailView } from './detail-view';
import { formatCount } from '../../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { IAnalysisResult } from '../../engine/types';
import { HistogramsView } from './histograms';
import { ResultsModel } from './model';
import { MultipletTableView } from './table-view';

/** Shows a {@link ResultsModel}. Names and values only go in through `textContent`. */
export class ResultsView extends Panel {
  /** Create the section for `options.model`. */
  constructor(options: ResultsView.IOptions) {
    super();
    this.addClass('pd-Results');
    const translator = options.translator;
    const trans = (this._trans = translationBundle(translator));
    this.title.label = trans.__('Results');
    this._model = options.model;
    this._summary = new Widget({ node: textElement('div', 'pd-Results-summary') });
    this._histograms = new HistogramsView({ model: this._model, translator });
    this._filters = new Widget({ node: this._buildFilters() });
    const select = (index: number): void => this._model.selectMultiplet(index);
    const source = () => this._model.exportSource;
    this._synergy = new MultipletTableView({ model: this._model.synergy, onSelect: select, source, translator });
    this._redundancy = new MultipletTableView({ model: this._model.redundancy, onSelect: select, source, translator });
    this._chain = new ChainView({ model: this._model, translator });
    this._detailModel = new DetailModel({ results: this._model });
    this._detail = new DetailView({ model: this._detailModel, results: this._model, translator });
    this._below = new Panel();
    this._below.addClass('pd-Results-below');
    this._below.addWidget(this._detail);
    for (const extra of options.extras ?? []) {
      this._below.addWidget(extra);
    }
    this._below.addWidget(this._chain);
    const tables = new Panel();
    tables.addClass('pd-Results-tables');
    tables.addWidget(this._synergy);
    tables.addWidget(this._redundancy);
    this._tables = tables;
    for (const widget of [this._summary, this._histograms, this._filters, tables, this._below]) {
      this.addWidget(widget);
    }
    this.node.tabIndex = -1;
    this._model.changed.connect(this._render, this);
    this._render();
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._render, this);
    if (this._debounce !== null) {
      clearTimeout(this._debounce);
    }
    super.dispose();
    this._detailModel.dispose();
  }

  private _buildFilters(): HTMLElement {
    const trans = this._trans;
    const node = textElement('div', 'pd-Results-filters');
    node.setAttribute('role', 'search');
    node.setAttribute('aria-label', trans.__('Filter the results tables'));
    const columnId = `pd-results-column-${Private.nextId++}`;
    const listId = `${columnId}-names`;
    const columnLabel = textElement('label', 'pd-Results-filterLabel', trans.__('Column name'));
    columnLabel.htmlFor = columnId;
    this._column = textElement('input', 'pd-Results-filterInput jp-mod-styled');
    this._column.id = columnId;
    this._column.type = 'search';
    this._column.placeholder = trans.__('any column');
    this._column.setAttribute('list', listId);
    this._column.addEventListener('input', () => {
      // Filtering a million rows takes a moment: wait for a pause in typing.
      if (this._debounce !== null) {
        clearTimeout(this._debounce);
      }
      this._debounce = setTimeout(() => {
        this._debounce = null;
        this._model.setFilter({ column: this._column.value });
      }, 150);
    });
    this._names = textElement('datalist', '');
    this._names.id = listId;
    const orderId = `pd-results-order-${Private.nextId++}`;
    const orderLabel = textElement('label', 'pd-Results-filterLabel', trans.__('Order'));
    orderLabel.htmlFor = orderId;
    this._order = textElement('select', 'pd-Results-filterSelect jp-mod-styled');
    this._order.id = orderId;
    this._order.addEventListener('change', () => {
      const value = this._order.value;
      this._model.setFilter({ order: value === '' ? null : Number(value) });
    });
    this._barNote = textElement('p', 'pd-Results-bar');
    this._barNote.setAttribute('aria-live', 'polite');
    this._clearBar = textElement('button', 'pd-Results-clearBar jp-mod-styled', trans.__('Show all bars'));
    this._clearBar.type = 'button';
    this._clearBar.addEventListener('click', () => this._model.selectBar(null));
    const column = textElement('div', 'pd-Results-filter');
    column.append(columnLabel, this._column, this._names);
    const order = textElement('div', 'pd-Results-filter');
    order.append(orderLabel, this._order);
    const bar = textElement('div', 'pd-Results-barRow');
    bar.append(this._barNote, this._clearBar);
    node.append(column, order, bar);
    return node;
  }

  private _render(): void {
    const trans = this._trans;
    const model = this._model;
    const result = model.result;
    const hasResult = result !== null;
    for (const widget of [this._histograms, this._filters, this._tables, this._below]) {
      widget.setHidden(!hasResult);
    }
    if (!result) {
      this._summary.node.replaceChildren(
        textElement('p', 'pd-Results-empty', trans.__('No results yet: pick a frame in the Polyadic panel and press Run.'))
      );
      this._shown = null;
      return;
    }
    if (result !== this._shown) {
      this._shown = result;
      this._summary.node.replaceChildren(...this._summaryNodes());
      this._column.value = '';
      this._names.replaceChildren(
        ...result.columns.map(column => {
          const option = document.createElement('option');
          option.value = column.name;
          return option;
        })
      );
      const all = textElement('option', '', trans.__('All orders'));
      all.value = '';
      this._order.replaceChildren(
        all,
        ...model.histograms.map(h => {
          const option = textElement('option', '', String(h.order));
          option.value = String(h.order);
          return option;
        })
      );
    }
    const bar = model.bar;
    this._barNote.textContent = bar
      ? trans._n(
          'Tables show the %2 order-%3 multiplet of one histogram bar.',
          'Tables show the %2 order-%3 multiplets of one histogram bar.',
          bar.count,
          formatCount(bar.count),
          bar.order
        )
      : '';
    this._clearBar.hidden = bar === null;
    this._synergy.setSelected(model.selected);
    this._redundancy.setSelected(model.selected);
  }

  private _summaryNodes(): HTMLElement[] {
    const trans = this._trans;
    const model = this._model;
    const result = model.result!;
    const frame = model.context.frame;
    const nodes: HTMLElement[] = [];
    const facts = trans.__(
      '%1 used of %2, %3, %4 of order 2 to %5, %6 estimator, %7.',
      trans._n('%2 row', '%2 rows', result.rows_used, formatCount(result.rows_used)),
      formatCount(result.rows),
      trans._n('%2 column', '%2 columns', result.columns.length, formatCount(result.columns.length)),
      trans._n('%2 multiplet', '%2 multiplets', model.multipletCount, formatCount(model.multipletCount)),
      result.max_order,
      result.estimator,
      result.units
    );
    nodes.push(textElement('p', 'pd-Results-facts', frame ? trans.__('%1: %2', frame, facts) : facts));
    if (model.context.restored) {
      const note = textElement(
        'p',
        'pd-Results-restored',
        trans.__(
          'Restored from the notebook\u2019s record, which keeps the %1 of the two tables and the order histograms. ' +
            'Conditioning chains and the contingency tables need the data: run the analysis again (Run in the ' +
            'Polyadic panel) to see them.',
          trans._n('%2 strongest multiplet', '%2 strongest multiplets', result.multiplets.length, formatCount(result.multiplets.length))
        )
      );
      note.setAttribute('role', 'note');
      nodes.push(note);
    }
    const cautions: string[] = [Private.evidenceCaution(result, model.multipletCount, trans)];
    if (model.inadequateCount > 0) {
      cautions.push(
        trans._n(
          '%2 multiplet has adequacy below 1: fewer rows than possible joint cells of their columns, so their ' +
            'entropies are biased and their values less reliable (marked \u26a0 in the tables).',
          '%2 multiplets have adequacy below 1: fewer rows than possible joint cells of their columns, so their ' +
            'entropies are biased and their values less reliable (marked \u26a0 in the tables).',
          model.inadequateCount,
          formatCount(model.inadequateCount)
        )
      );
    }
    if (!model.complete && !model.context.restored) {
      cautions.push(trans.__('This result keeps only its strongest multiplets: the histograms show those, not every multiplet.'));
    }
    for (const text of cautions) {
      const note = textElement('p', 'pd-Results-caution', text);
      note.setAttribute('role', 'note');
      nodes.push(note);
    }
    for (const warning of result.warnings) {
      nodes.push(textElement('p', 'pd-Results-warning', warning));
    }
    return nodes;
  }

  private readonly _model: ResultsModel;
  private readonly _trans: TranslationBundle;
  private readonly _summary: Widget;
  private readonly _histograms: HistogramsView;
  private readonly _filters: Widget;
  private readonly _synergy: MultipletTableView;
  private readonly _redundancy: MultipletTableView;
  private readonly _chain: ChainView;
  private readonly _detailModel: DetailModel;
  private readonly _detail: DetailView;
  private readonly _below: Panel;
  private readonly _tables: Panel;
  private _column!: HTMLInputElement;
  private _names!: HTMLDataListElement;
  private _order!: HTMLSelectElement;
  private _barNote!: HTMLParagraphElement;
  private _clearBar!: HTMLButtonElement;
  private _debounce: ReturnType<typeof setTimeout> | null = null;
  private _shown: unknown = null;
}

/** The statics of {@link ResultsView}. */
export namespace ResultsView {
  /** Options of a {@link ResultsView}. */
  export interface IOptions {
    model: ResultsModel;
    /** Widgets shown below the tables, after the multiplet detail view and before the chain. */
    extras?: Widget[];
    /** Translates the view's strings; they stay as written without one. */
    translator?: ITranslator;
  }
}

namespace Private {
  /**
   * The caution of a result: without statistics, that extremes appear by chance alone; with
   * them, against what null p was computed, which family q covers and what q controls and does
   * not (the usual reading of a false discovery rate, Benjamini & Hochberg 1995).
   */
  export function evidenceCaution(result: IAnalysisResult, multiplets: number, trans: TranslationBundle): string {
    const counted = (count: number, one: string, many: string): string => trans._n(one, many, count, formatCount(count));
    const statistics = result.statistics;
    const family = statistics?.families.co_information ?? null;
    if (!statistics || statistics.surrogates === 0 || family === null) {
      return trans.__(
        'These values are estimates from a sample. With %1, some will look extreme by chance alone, and plug-in ' +
          'bias alone makes co-information negative: nothing here is tested against chance. Set surrogates in the ' +
          'Statistics section for p- and q-values.',
        counted(multiplets, '%2 multiplet', '%2 multiplets')
      );
    }
    const orders =
      family.orders.length > 1
        ? trans.__('orders %1–%2', family.orders[0], family.orders[family.orders.length - 1])
        : trans.__('order %1', family.orders[0]);
    const tail = statistics.tail === 'two' ? trans.__('two-sided') : trans.__('one-sided (%1 side)', statistics.tail);
    const floor = `${formatCount(1)}/${formatCount(statistics.surrogates + 1)}`;
    return trans.__(
      'With %1, some look extreme by chance alone; each carries its evidence. p: %2, against %3 (each column ' +
        'shuffled on its own, seed %4); it cannot go below %5. q: Benjamini–Hochberg over %6 of %7. Calling every ' +
        'multiplet with q ≤ %8 significant keeps the expected share of false discoveries among them at most that ' +
        'level; it does not say that any one of them is real, nor how strong it is, and the surrogates test ' +
        'independence, not whether pairs explain a triplet (the pairwise-preserving null does).',
      counted(multiplets, '%2 multiplet', '%2 multiplets'),
      tail,
      counted(statistics.surrogates, '%2 independence surrogate', '%2 independence surrogates'),
      statistics.seed,
      statistics.tail === 'two' ? trans.__('%1 times 2', floor) : floor,
      counted(family.count, '%2 multiplet', '%2 multiplets'),
      orders,
      statistics.alpha
    );
  }

  /** Counter for unique control ids. */
  export let nextId = 0;
}
