/**
 * The panel's records section: the analyses recorded in the followed notebook, with restore,
 * rename, delete and "insert analysis cell" per analysis, the banner of a record that is
 * invalid, newer or migrated, and the "data changed" banner of the chosen analysis.
 */
import { formatCount } from '../../engine/text';
import { translationBundle, type ITranslator } from '../../translation';
import type { IAnalysisRecord, IRecordProblem } from '../../record/types';
import { textElement } from '../dom';
import { SectionView } from '../section';
import { RecordsModel } from './model';
import { scanOriginText } from './origin';

/** Shows a {@link RecordsModel}. Labels, frame and column names go in through `textContent` only. */
export class RecordsView extends SectionView<RecordsModel> {
  /** Create the section for `options.model`. */
  constructor(options: RecordsView.IOptions) {
    const trans = translationBundle(options.translator);
    super({ model: options.model, className: 'pd-Records', label: trans.__('Records'), translator: options.translator });
    this._onInsertCell = options.onInsertCell ?? null;
    this.render();
  }

  /** Redraw from the model. */
  protected render(): void {
    const trans = this.trans;
    const model = this.model;
    const state = model.state;
    const parts: HTMLElement[] = [];
    if (state === null) {
      parts.push(textElement('p', 'pd-Records-note', trans.__('Open a notebook to see the analyses recorded in it.')));
      this.node.replaceChildren(...parts);
      return;
    }
    if (state.notice !== null) {
      parts.push(Private.notice(state.status, state.notice, state.problems));
    }
    if (model.error !== null) {
      const error = textElement('p', 'pd-Records-error', model.error.message);
      error.setAttribute('role', 'alert');
      parts.push(error);
    }
    if (state.status !== 'invalid') {
      if (state.analyses.length === 0) {
        parts.push(
          textElement(
            'p',
            'pd-Records-note',
            trans.__(
              'No analysis is recorded in this notebook yet. Every completed run is recorded here, ' +
                'in the notebook’s metadata, and saved with the notebook.'
            )
          )
        );
      } else {
        const list = textElement('ul', 'pd-Records-list');
        list.setAttribute('aria-label', trans.__('Recorded analyses'));
        for (const analysis of state.analyses) {
          list.append(this._item(analysis, state.readOnly));
        }
        parts.push(list);
      }
    }
    this.node.replaceChildren(...parts);
  }

  /** One analysis of the list. */
  private _item(analysis: IAnalysisRecord, readOnly: boolean): HTMLElement {
    const trans = this.trans;
    const model = this.model;
    const chosen = model.selectedId === analysis.id;
    const item = textElement('li', `pd-Records-item${chosen ? ' jp-mod-selected' : ''}`);
    item.dataset.recordId = analysis.id;

    const label = textElement('button', 'pd-Records-label', analysis.label);
    label.type = 'button';
    label.title = trans.__('Choose this analysis (%1)', analysis.id);
    label.setAttribute('aria-pressed', String(chosen));
    label.addEventListener('click', () => model.select(chosen ? null : analysis.id));
    item.append(label);
    item.append(
      textElement(
        'p',
        'pd-Records-meta',
        trans.__(
          '%1 · %2 · orders ≤ %3 · %4 · %5',
          analysis.source.frame,
          trans._n('%2 column', '%2 columns', analysis.columns.length, formatCount(analysis.columns.length)),
          analysis.max_order,
          analysis.estimator,
          Private.when(analysis.created)
        )
      )
    );

    const scanned = scanOriginText(analysis, trans);
    if (scanned !== null) {
      item.append(textElement('p', 'pd-Records-origin', scanned));
    }

    const check = model.dataCheckOf(analysis.id);
    if (check !== null && check.status !== 'same') {
      const banner = textElement(
        'p',
        `pd-Records-banner ${check.status === 'changed' ? 'jp-mod-warning' : 'jp-mod-info'}`,
        check.message
      );
      banner.setAttribute('role', 'status');
      item.append(banner);
    }
    if (chosen) {
      if (this._renaming === analysis.id) {
        item.append(this._renameForm(analysis));
      } else if (this._confirmingDelete === analysis.id) {
        item.append(this._deleteConfirm(analysis));
      } else {
        item.append(this._actions(analysis, readOnly));
      }
    }
    return item;
  }

  private _actions(analysis: IAnalysisRecord, readOnly: boolean): HTMLElement {
    const trans = this.trans;
    const bar = textElement('div', 'pd-Records-actions');
    bar.append(
      Private.button(trans.__('Restore settings'), trans.__('Put this analysis’ frame, columns and settings back in the panel'), () =>
        this.model.restore(analysis.id)
      )
    );
    const insert = this._onInsertCell;
    if (insert !== null) {
      bar.append(
        Private.button(trans.__('Insert cell'), trans.__('Insert a code cell that shows this analysis in the notebook'), () =>
          insert(analysis.id)
        )
      );
    }
    if (!readOnly) {
      bar.append(
        Private.button(trans.__('Rename'), trans.__('Give this analysis another name'), () => {
          this._renaming = analysis.id;
          this.render();
          this.node.querySelector<HTMLInputElement>('.pd-Records-renameInput')?.focus();
        }),
        Private.button(trans.__('Delete'), trans.__('Remove this analysis from the notebook’s record'), () => {
          this._confirmingDelete = analysis.id;
          this.render();
        })
      );
    }
    return bar;
  }

  private _renameForm(analysis: IAnalysisRecord): HTMLElement {
    const trans = this.trans;
    const form = textElement('form', 'pd-Records-rename');
    const input = textElement('input', 'pd-Records-renameInput jp-mod-styled');
    input.type = 'text';
    input.value = analysis.label;
    input.setAttribute('aria-label', trans.__('New name'));
    const done = (): void => {
      this._renaming = null;
      this.render();
    };
    form.addEventListener('submit', event => {
      event.preventDefault();
      if (this.model.rename(analysis.id, input.value)) {
        done();
      }
    });
    input.addEventListener('keydown', event => {
      if (event.key === 'Escape') {
        event.preventDefault();
        done();
      }
    });
    const save = Private.button(trans.__('Save'), trans.__('Save the new name'), () => undefined);
    save.type = 'submit';
    form.append(input, save, Private.button(trans.__('Cancel'), trans.__('Keep the old name'), done));
    return form;
  }

  private _deleteConfirm(analysis: IAnalysisRecord): HTMLElement {
    const trans = this.trans;
    const box = textElement('div', 'pd-Records-actions');
    box.append(
      textElement('span', 'pd-Records-question', trans.__('Delete this analysis from the record?')),
      Private.button(trans.__('Delete'), trans.__('Delete it for good'), () => {
        this._confirmingDelete = null;
        this.model.remove(analysis.id);
        this.render();
      }),
      Private.button(trans.__('Keep'), trans.__('Keep it'), () => {
        this._confirmingDelete = null;
        this.render();
      })
    );
    return box;
  }

  private readonly _onInsertCell: ((id: string) => void) | null;
  private _renaming: string | null = null;
  private _confirmingDelete: string | null = null;
}

/** The statics of {@link RecordsView}. */
export namespace RecordsView {
  /** Options of a {@link RecordsView}. */
  export interface IOptions {
    /** The model to show. */
    model: RecordsModel;
    /** Inserts a analysis cell for an analysis; no button without it. */
    onInsertCell?: (id: string) => void;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** A small JupyterLab-styled button. */
  export function button(text: string, title: string, onClick: () => void): HTMLButtonElement {
    const node = textElement('button', 'pd-Records-button jp-mod-styled', text);
    node.type = 'button';
    node.title = title;
    node.addEventListener('click', () => onClick());
    return node;
  }

  /** The banner of a record that is invalid, newer or migrated; an invalid one lists its problems by path. */
  export function notice(status: string, text: string, problems: IRecordProblem[]): HTMLElement {
    const box = textElement(
      'div',
      `pd-Records-banner ${status === 'invalid' ? 'jp-mod-error' : status === 'newer' ? 'jp-mod-warning' : 'jp-mod-info'}`
    );
    box.setAttribute('role', status === 'invalid' ? 'alert' : 'status');
    box.append(textElement('p', 'pd-Records-bannerText', text));
    if (problems.length > 1) {
      const list = textElement('ul', 'pd-Records-problems');
      for (const problem of problems.slice(0, 10)) {
        list.append(textElement('li', '', problem.message));
      }
      box.append(list);
    }
    return box;
  }

  /** A recorded time in the person's locale. */
  export function when(iso: string): string {
    const date = new Date(iso);
    return Number.isNaN(date.getTime()) ? iso : date.toLocaleString();
  }
}
