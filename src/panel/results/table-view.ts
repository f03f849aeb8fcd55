/**
 * One results table on screen: sortable headers, the rows of the current page only, a pager and
 * CSV export. Every name and value goes in through `textContent`.
 */
import { Widget } from '@lumino/widgets';

import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import { textElement, uniqueId } from '../dom';
import { exportFileName, provenanceCsv, provenanceEntries, tableEntries, type IExportSource } from './export';
import { formatAdequacy, formatCount, formatValue } from './format';
import { RESULTS_COLUMNS, type ResultsColumnKey } from './store';
import { MultipletTable } from './table';

/** Shows a {@link MultipletTable}. */
export class MultipletTableView extends Widget {
  /** Create the view of `options.model`. */
  constructor(options: MultipletTableView.IOptions) {
    super();
    const trans = (this._trans = translationBundle(options.translator));
    this._model = options.model;
    this._onSelect = options.onSelect;
    this._source = options.source ?? (() => null);
    const side = this._model.side;
    this.addClass('pd-ResultsTable');
    this.addClass(`pd-ResultsTable-${side}`);
    const synergySide = side === 'synergy';
    const title = synergySide ? trans.__('Synergy table') : trans.__('Redundancy table');
    const headingId = `pd-results-${side}-${Private.nextId++}`;
    const heading = textElement('h3', 'pd-ResultsTable-title', title);
    heading.id = headingId;
    const note = textElement(
      'p',
      'pd-ResultsTable-note',
      side === 'synergy'
        ? trans.__('Multiplets of negative co-information (synergy-dominated), most negative first.')
        : trans.__('Multiplets of positive co-information (redundancy-dominated), most positive first.')
    );
    this._table = textElement('table', 'pd-ResultsTable-table');
    this._table.setAttribute('aria-labelledby', headingId);
    const head = document.createElement('thead');
    head.append(this._headRow);
    this._body = document.createElement('tbody');
    this._table.append(head, this._body);
    const filterId = `pd-results-q-${side}-${Private.nextId++}`;
    this._qFilter = document.createElement('input');
    this._qFilter.type = 'checkbox';
    this._qFilter.id = filterId;
    this._qFilter.className = 'pd-ResultsTable-qFilter';
    this._qFilter.addEventListener('change', () =>
      this._model.setFilter({ qAtMost: this._qFilter.checked ? this._model.store?.alpha ?? null : null })
    );
    this._qLabel = textElement('label', 'pd-ResultsTable-qLabel');
    this._qLabel.htmlFor = filterId;
    this._qRow = textElement('div', 'pd-ResultsTable-filters');
    this._qRow.append(this._qFilter, this._qLabel);
    const scroll = textElement('div', 'pd-ResultsTable-scroll');
    scroll.append(this._table);
    // The table shows the ranking measures and the evidence on co-information; every other
    // measure is one tick away (and always in the detail view of the selected row and in the CSV).
    const allId = uniqueId('pd-results-all');
    this._all = textElement('input', 'pd-ResultsTable-allToggle');
    this._all.type = 'checkbox';
    this._all.id = allId;
    this._all.addEventListener('change', () => this._render());
    const allLabel = textElement('label', 'pd-ResultsTable-allLabel', trans.__('Every measure'));
    allLabel.htmlFor = allId;
    allLabel.title = trans.__(
      'Add total and dual total correlation, S-information and the other evidence columns (the table may then scroll sideways)'
    );
    const allRow = textElement('div', 'pd-ResultsTable-filters');
    allRow.append(this._all, allLabel);

    const pager = textElement('div', 'pd-ResultsTable-pager');
    this._previous = textElement('button', 'pd-ResultsTable-page jp-mod-styled', trans.__('Previous'));
    this._previous.type = 'button';
    this._previous.setAttribute(
      'aria-label',
      synergySide ? trans.__('Previous page of the synergy table') : trans.__('Previous page of the redundancy table')
    );
    this._previous.addEventListener('click', () => this._model.setPage(this._model.page - 1));
    this._next = textElement('button', 'pd-ResultsTable-page jp-mod-styled', trans.__('Next'));
    this._next.type = 'button';
    this._next.setAttribute('aria-label', synergySide ? trans.__('Next page of the synergy table') : trans.__('Next page of the redundancy table'));
    this._next.addEventListener('click', () => this._model.setPage(this._model.page + 1));
    this._status = textElement('span', 'pd-ResultsTable-status');
    this._status.setAttribute('aria-live', 'polite');
    const exportButton = textElement('button', 'pd-ResultsTable-export jp-mod-styled', trans.__('Export CSV'));
    exportButton.type = 'button';
    exportButton.setAttribute(
      'aria-label',
      synergySide ? trans.__('Export the synergy table as CSV') : trans.__('Export the redundancy table as CSV')
    );
    exportButton.title = trans.__('Save the filtered rows, in table order, as CSV');
    exportButton.addEventListener('click', () => this._export());
    pager.append(this._previous, this._status, this._next, exportButton);

    this.node.append(heading, note, this._qRow, allRow, scroll, pager);
    this._model.changed.connect(this._render, this);
    this._render();
  }

  /** Whether the table shows every measure, not only the compact set. */
  get everyMeasure(): boolean {
    return this._all.checked;
  }

  /** The table model shown. */
  get model(): MultipletTable {
    return this._model;
  }

  /** Mark the row of store index `index` as the selected one (or none with −1). */
  setSelected(index: number): void {
    this._selected = index;
    for (const row of Array.from(this._body.rows)) {
      const selected = Number(row.dataset.index) === index;
      row.classList.toggle('jp-mod-selected', selected);
      row.setAttribute('aria-selected', String(selected));
    }
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._render, this);
    super.dispose();
  }

  private _render(): void {
    const trans = this._trans;
    const model = this._model;
    const store = model.store;
    const { key, descending } = model.sort;
    const every = store ? store.columns : RESULTS_COLUMNS;
    const columns = this._all.checked ? every : every.filter(column => MultipletTableView.COMPACT_COLUMNS.has(column.key));
    this._renderHead(columns);
    columns.forEach((column, i) => {
      this._headers[i].setAttribute(
        'aria-sort',
        column.key === key ? (descending ? 'descending' : 'ascending') : 'none'
      );
    });
    const alpha = store?.alpha ?? null;
    const hasQ = store !== null && store.evidence.has('q_value') && alpha !== null;
    this._qRow.hidden = !hasQ;
    this._qFilter.checked = model.filter.qAtMost !== null;
    this._qLabel.textContent = hasQ ? trans.__('Only q ≤ α (%1): the multiplets the false discovery rate calls significant', alpha) : '';
    const rows: HTMLTableRowElement[] = [];
    if (store) {
      for (const index of model.pageRows()) {
        const tr = document.createElement('tr');
        tr.className = 'pd-ResultsTable-row';
        tr.tabIndex = 0;
        tr.dataset.index = String(index);
        const names = store.namesOf(index);
        const adequacy = store.adequacy[index];
        const multiplet = textElement('td', 'pd-ResultsTable-cell pd-mod-columns');
        names.forEach((name, j) => {
          if (j > 0) {
            multiplet.append(document.createTextNode(' · '));
          }
          multiplet.append(textElement('span', 'pd-ResultsTable-name', name));
        });
        const adequacyCell = textElement('td', 'pd-ResultsTable-cell pd-mod-adequacy', formatAdequacy(adequacy));
        if (adequacy < 1) {
          adequacyCell.classList.add('jp-mod-warning');
          adequacyCell.prepend(textElement('span', 'pd-ResultsTable-flag', '\u26a0 '));
          adequacyCell.title = trans.__('Fewer rows than possible joint cells: treat this value with care.');
        }
        tr.append(
          ...columns.map(column => {
            if (column.key === 'columns') {
              return multiplet;
            }
            if (column.key === 'adequacy') {
              return adequacyCell;
            }
            if (column.key === 'order') {
              return textElement('td', 'pd-ResultsTable-cell pd-mod-order', String(store.order[index]));
            }
            const value = store.numeric(column.key)[index];
            const cell = textElement(
              'td',
              `pd-ResultsTable-cell pd-mod-number pd-mod-${column.key}`,
              Number.isNaN(value) ? '\u2014' : formatValue(value)
            );
            if (column.key === 'q_value' && alpha !== null && value <= alpha) {
              cell.classList.add('pd-mod-significant');
            }
            // the unrounded value, for readers that check sums (the text is rounded)
            cell.dataset.value = String(value);
            return cell;
          })
        );
        tr.title = trans.__('Show this multiplet in the detail view and its conditioning chain (arrow keys move between rows)');
        const select = (): void => this._onSelect(index);
        tr.addEventListener('click', select);
        tr.addEventListener('keydown', event => {
          if (event.key === 'Enter' || event.key === ' ') {
            event.preventDefault();
            select();
          } else if (event.key === 'ArrowDown' || event.key === 'ArrowUp') {
            // the selection follows the focus, so the detail view follows the keyboard
            const next = event.key === 'ArrowDown' ? tr.nextElementSibling : tr.previousElementSibling;
            if (next instanceof HTMLTableRowElement && next.dataset.index !== undefined) {
              event.preventDefault();
              next.focus();
              this._onSelect(Number(next.dataset.index));
            }
          }
        });
        rows.push(tr);
      }
    }
    if (rows.length === 0) {
      const tr = document.createElement('tr');
      const td = textElement(
        'td',
        'pd-ResultsTable-empty',
        model.totalCount === 0 ? trans.__('No multiplets on this side.') : trans.__('No multiplets match the filters.')
      );
      td.colSpan = columns.length;
      tr.append(td);
      rows.push(tr);
    }
    this._body.replaceChildren(...rows);
    this.setSelected(this._selected);
    const first = model.page * model.pageSize;
    const shown = model.pageRows().length;
    const filtered = model.rowCount !== model.totalCount ? trans.__(' (filtered from %1)', formatCount(model.totalCount)) : '';
    this._status.textContent =
      model.rowCount === 0
        ? trans.__('0 rows%1', filtered)
        : trans.__('Rows %1–%2 of %3%4', formatCount(first + 1), formatCount(first + shown), formatCount(model.rowCount), filtered);
    this._previous.disabled = model.page === 0;
    this._next.disabled = model.page >= model.pageCount - 1;
  }

  /** Rebuild the header row when the columns change (a result with or without evidence). */
  private _renderHead(columns: readonly { key: ResultsColumnKey; label: string; title?: string }[]): void {
    const signature = columns.map(column => column.key).join(',');
    if (signature === this._headSignature) {
      return;
    }
    this._headSignature = signature;
    this._headers.length = 0;
    const cells = columns.map(column => {
      const th = textElement('th', `pd-ResultsTable-head pd-mod-${column.key}`);
      th.scope = 'col';
      const label = this._trans.__(column.label);
      const button = textElement('button', 'pd-ResultsTable-sort', label);
      button.type = 'button';
      button.title = column.title ? this._trans.__('%1; sort by it', this._trans.__(column.title)) : this._trans.__('Sort by %1', label.toLowerCase());
      button.addEventListener('click', () => this._model.setSort(column.key));
      th.append(button);
      this._headers.push(th);
      return th;
    });
    this._headRow.replaceChildren(...cells);
  }

  private _export(): void {
    const table = this._model;
    const store = table.store;
    const source = this._source();
    if (store === null || source === null) {
      return;
    }
    const visible = table.visible;
    const text = provenanceCsv(
      Array.from(visible, index => store.rows[index]),
      Float64Array.from(visible, index => store.adequacy[index]),
      [...provenanceEntries(source), ...tableEntries(table.side, table.filter, table.rowCount, table.totalCount)]
    );
    const blob = new Blob([text], { type: 'text/csv;charset=utf-8' });
    const url = URL.createObjectURL(blob);
    const link = document.createElement('a');
    link.href = url;
    link.download = `${exportFileName(source, table.side)}.csv`;
    link.style.display = 'none';
    document.body.append(link);
    link.click();
    link.remove();
    // Revoke after the click has been handled; the download keeps its own copy.
    setTimeout(() => URL.revokeObjectURL(url), 0);
  }

  private readonly _model: MultipletTable;
  private readonly _onSelect: (index: number) => void;
  private readonly _all: HTMLInputElement;
  private readonly _source: () => IExportSource | null;
  private readonly _table: HTMLTableElement;
  private readonly _body: HTMLTableSectionElement;
  private readonly _headers: HTMLTableCellElement[] = [];
  private readonly _trans: TranslationBundle;
  private readonly _headRow = document.createElement('tr');
  private _headSignature = '';
  private readonly _qRow: HTMLElement;
  private readonly _qFilter: HTMLInputElement;
  private readonly _qLabel: HTMLLabelElement;
  private readonly _previous: HTMLButtonElement;
  private readonly _next: HTMLButtonElement;
  private readonly _status: HTMLSpanElement;
  private _selected = -1;
}

/** The statics of {@link MultipletTableView}. */
export namespace MultipletTableView {
  /**
   * The columns of the compact table (the default): the multiplet, its order, the two ranking
   * measures, their evidence (q, p) and adequacy; they fit a results view beside a notebook.
   */
  export const COMPACT_COLUMNS: ReadonlySet<ResultsColumnKey> = new Set<ResultsColumnKey>([
    'columns',
    'order',
    'co_information',
    'o_information',
    'q_value',
    'p_value',
    'adequacy'
  ]);

  /** Options of a {@link MultipletTableView}. */
  export interface IOptions {
    model: MultipletTable;
    /** Called with a row's store index when it is clicked or entered. */
    onSelect: (index: number) => void;
    /** What an export names and carries (the frame, the record, the settings). */
    source?: () => IExportSource | null;
    /** Translates the table's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** Counter for unique heading ids. */
  export let nextId = 0;
}
