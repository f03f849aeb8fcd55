/**
 * The Dataframe section: the bridge's state as a one-liner, the dataframe picker and the column
 * checklist (type, distinct and missing counts, warnings). Column names, types and messages
 * are untrusted text and only ever reach the DOM through `textContent`.
 */
import { formatCount } from '../../engine/text';
import { scanEngineName } from '../../bridge/protocol';
import { translationBundle, type ITranslator } from '../../translation';
import { textElement } from '../dom';
import { SectionView } from '../section';
import { IColumnEntry, DataModel } from './model';
import { WARNING_BADGE, WARNING_TEXT } from './stats';

/** Shows a {@link DataModel}. */
export class DataView extends SectionView<DataModel> {
  /** Create the section for `options.model`. */
  constructor(options: DataView.IOptions) {
    const trans = translationBundle(options.translator);
    super({ model: options.model, className: 'pd-Data', label: trans.__('Dataframe'), translator: options.translator });
    this._status = textElement('div', 'pd-Data-status');
    this._status.setAttribute('role', 'status');
    const pickerId = `pd-frame-picker-${Private.nextId()}`;
    const label = textElement('label', 'pd-Data-label', trans.__('Dataframe'));
    label.htmlFor = pickerId;
    this._picker = document.createElement('select');
    this._picker.id = pickerId;
    this._picker.className = 'pd-Data-picker jp-mod-styled';
    this._picker.addEventListener('change', () => void this.model.pick(this._picker.value === '' ? null : this._picker.value));
    this._pickerRow = textElement('div', 'pd-Data-pickerRow');
    this._pickerRow.append(label, this._picker);
    this._progress = document.createElement('progress');
    this._progress.className = 'pd-Data-progress';
    this._progress.max = 1;
    this._progress.setAttribute('aria-label', trans.__('Loading the dataframe'));
    this._message = textElement('p', 'pd-Data-message');
    this._list = textElement('div', 'pd-Data-columns');
    this._sample = textElement('p', 'pd-Data-sample');
    this.node.append(this._status, this._pickerRow, this._progress, this._message, this._sample, this._list);
    this.render();
  }

  /** Redraw from the model. */
  protected render(): void {
    const model = this.model;
    this._renderStatus();
    const ready = model.status?.state === 'ready';
    this._pickerRow.hidden = !ready || model.frames.length === 0;
    this._renderPicker();
    const load = model.load;
    this._progress.hidden = load.state !== 'loading';
    this._progress.value = load.fraction;
    if (ready && model.frames.length === 0) {
      this._message.textContent = this.trans.__(
        'No dataframe in this notebook’s kernel yet. Load a table in a cell, for example ' +
          'df = pd.read_csv("data.csv"), and it appears here.'
      );
    } else if (ready && model.frame === null) {
      this._message.textContent = this.trans.__('Pick a dataframe to see its columns.');
    } else if (load.state === 'error') {
      this._message.textContent = load.error?.message ?? this.trans.__('The dataframe could not be loaded.');
    } else if (load.state === 'loading') {
      this._message.textContent = this.trans.__('Loading the columns…');
    } else {
      this._message.textContent = '';
    }
    this._message.hidden = this._message.textContent === '';
    this._renderSample();
    this._renderColumns();
  }

  /** Say plainly when the checklist and the binning previews read a sample, and what Run reads. */
  private _renderSample(): void {
    const fetched = this.model.fetched;
    const info = this.model.frameInfo;
    const trans = this.trans;
    let text = '';
    if (fetched !== null && fetched.sampled) {
      const sample = trans.__(
        'The distinct and missing counts and the binning previews show a seeded sample of %1 of %2 rows (seed %3).',
        formatCount(fetched.rows),
        formatCount(fetched.originalRows),
        fetched.seed
      );
      text = this.model.isScanned
        ? trans.__('%1 Run scans every row in %2.', sample, scanEngineName(info?.engine?.name))
        : trans.__('%1 Run reads the same sample.', sample);
    } else if (fetched !== null && this.model.isScanned) {
      text = trans.__('The previews show all %1 rows; Run scans them in %2.', formatCount(fetched.rows), scanEngineName(info?.engine?.name));
    }
    this._sample.textContent = text;
    this._sample.hidden = text === '';
  }

  private _renderStatus(): void {
    const status = this.model.status;
    const box = this._status;
    box.replaceChildren();
    if (status === null) {
      box.append(textElement('p', 'pd-Data-statusText', this.trans.__('Open a notebook to analyse one of its dataframes.')));
      box.dataset.state = 'no-notebook';
      return;
    }
    box.dataset.state = status.state;
    if (status.state === 'ready') {
      return;
    }
    box.append(textElement('p', 'pd-Data-statusText', status.message));
    for (const command of status.commands) {
      const line = textElement('p', 'pd-Data-command');
      line.append(textElement('code', 'pd-Code', command));
      box.append(line);
    }
    if (status.state === 'error' || status.state === 'missing-package') {
      const retry = textElement('button', 'pd-Data-retry jp-mod-styled jp-mod-accept', this.trans.__('Try again'));
      retry.type = 'button';
      retry.addEventListener('click', () => this.model.reconnect());
      box.append(retry);
    }
  }

  private _renderPicker(): void {
    const frames = this.model.frames;
    const key = JSON.stringify(frames.map(frame => [frame.name, frame.rows, frame.columns.length]));
    if (key !== this._pickerKey) {
      this._pickerKey = key;
      const none = textElement('option', '', this.trans.__('Choose a dataframe…'));
      none.value = '';
      this._picker.replaceChildren(
        none,
        ...frames.map(frame => {
          const option = textElement(
            'option',
            '',
            this.trans.__(
              '%1 (%2 × %3, %4)',
              frame.name,
              frame.rows === null ? this.trans.__('rows unknown') : this.trans._n('%2 row', '%2 rows', frame.rows, formatCount(frame.rows)),
              this.trans._n('%2 column', '%2 columns', frame.columns.length, formatCount(frame.columns.length)),
              frame.kind
            )
          );
          option.value = frame.name;
          return option;
        })
      );
    }
    this._picker.value = this.model.frame ?? '';
  }

  private _renderColumns(): void {
    const columns = this.model.columns;
    const key = JSON.stringify([this.model.frame, columns.map(column => [column.name, column.stats?.distinct ?? null])]);
    if (key !== this._columnsKey) {
      this._columnsKey = key;
      this._boxes.clear();
      this._list.replaceChildren();
      if (columns.length > 0) {
        const table = textElement('table', 'pd-Table pd-Data-table');
        const head = textElement('tr', '');
        const trans = this.trans;
        for (const text of [trans.__('Use'), trans.__('Column'), trans.__('Type'), trans.__('Distinct'), trans.__('Missing')]) {
          const cell = textElement('th', '', text);
          cell.scope = 'col';
          head.append(cell);
        }
        table.append(textElement('thead', ''), textElement('tbody', ''));
        table.tHead!.append(head);
        columns.forEach(column => table.tBodies[0].append(this._row(column)));
        this._list.append(table);
      }
    }
    for (const [name, box] of this._boxes) {
      box.checked = this.model.isSelected(name);
    }
    this._markFault();
  }

  /** Mark the row of the column at fault (the model's fault names it), with the error's message. */
  private _markFault(): void {
    const fault = this.model.fault;
    const column = fault === null ? null : fault.detail.column;
    for (const [name, box] of this._boxes) {
      const row = box.closest('tr');
      if (row === null) {
        continue;
      }
      const atFault = name === column;
      row.classList.toggle('pd-mod-fault', atFault);
      row.querySelector('.pd-Data-fault')?.remove();
      if (atFault && fault !== null) {
        const note = textElement('span', 'pd-Badge pd-mod-error pd-Data-fault', this.trans.__('at fault'));
        note.title = fault.message;
        row.querySelector('.pd-Data-name')?.append(' ', note);
      }
    }
  }

  private _row(column: IColumnEntry): HTMLTableRowElement {
    const row = textElement('tr', 'pd-Data-row');
    const use = textElement('td', '');
    const box = document.createElement('input');
    box.type = 'checkbox';
    box.setAttribute('aria-label', this.trans.__('Use column %1', column.name));
    box.disabled = column.view === null;
    box.addEventListener('change', () => this.model.setSelected(column.name, box.checked));
    this._boxes.set(column.name, box);
    use.append(box);
    const name = textElement('td', 'pd-Data-name');
    name.append(textElement('span', 'pd-Data-columnName', column.name));
    for (const warning of column.stats?.warnings ?? []) {
      const badge = textElement('span', `pd-Badge pd-mod-warning pd-mod-${warning}`, this.trans.__(WARNING_BADGE[warning]));
      badge.dataset.warning = warning;
      badge.title = this.trans.__(WARNING_TEXT[warning]);
      name.append(' ', badge);
    }
    if (column.kind === 'other') {
      const badge = textElement('span', 'pd-Badge pd-mod-warning', this.trans.__('unsupported type'));
      name.append(' ', badge);
    }
    row.append(
      use,
      name,
      textElement('td', 'pd-Data-type', this.trans.__('%1 (%2)', column.dtype, column.kind)),
      textElement('td', 'pd-Number', column.stats === null ? '–' : formatCount(column.stats.distinct)),
      textElement('td', 'pd-Number', column.stats === null ? '–' : formatCount(column.stats.missing))
    );
    return row;
  }

  private _status: HTMLElement;
  private _picker: HTMLSelectElement;
  private _pickerRow: HTMLElement;
  private _progress: HTMLProgressElement;
  private _message: HTMLElement;
  private _sample: HTMLElement;
  private _list: HTMLElement;
  private _boxes = new Map<string, HTMLInputElement>();
  private _pickerKey = '';
  private _columnsKey = '';
}

/** The statics of {@link DataView}. */
export namespace DataView {
  /** Options of a {@link DataView}. */
  export interface IOptions {
    /** The section's state. */
    model: DataModel;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  let counter = 0;

  /** A fresh number for element ids (two panels never share one). */
  export function nextId(): number {
    return ++counter;
  }
}
