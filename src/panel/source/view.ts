/**
 * The panel's data section: the notebook the panel follows, or an empty state that says
 * what to do when no notebook is open.
 */
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import { textElement } from '../dom';
import { SectionView } from '../section';
import { INotebookSummary, SourceModel } from './model';

/** Shows a {@link SourceModel}. Text only goes in through `textContent`. */
export class SourceView extends SectionView<SourceModel> {
  /** Create the section for `options.model`. */
  constructor(options: SourceView.IOptions) {
    const trans = translationBundle(options.translator);
    super({ model: options.model, className: 'pd-Source', label: trans.__('Notebook'), translator: options.translator });
    this._onNewNotebook = options.onNewNotebook ?? null;
    this.render();
  }

  /** Redraw from the model. */
  protected render(): void {
    const notebook = this.model.notebook;
    this.node.replaceChildren(
      notebook === null ? this._renderEmpty() : Private.renderNotebook(notebook, this.trans)
    );
  }

  private _renderEmpty(): HTMLElement {
    const box = textElement('div', 'pd-EmptyState');
    box.setAttribute('role', 'status');
    box.append(
      textElement('p', 'pd-EmptyState-title', this.trans.__('No notebook is open')),
      textElement(
        'p',
        'pd-EmptyState-text',
        this.trans.__(
          'Polyadic works on a dataframe (pandas, polars or pyarrow) held by a ' +
            'notebook’s Python kernel. Open or create a notebook and load your table ' +
            'there; this panel follows the notebook you used last.'
        )
      )
    );
    const onNewNotebook = this._onNewNotebook;
    if (onNewNotebook !== null) {
      const button = textElement(
        'button',
        'pd-EmptyState-action jp-mod-styled jp-mod-accept',
        this.trans.__('New notebook')
      );
      button.type = 'button';
      button.addEventListener('click', () => onNewNotebook());
      box.append(button);
    }
    return box;
  }

  private readonly _onNewNotebook: (() => void) | null;
}

/** The statics of {@link SourceView}. */
export namespace SourceView {
  /** Options of a {@link SourceView}. */
  export interface IOptions {
    /** The model to show. */
    model: SourceModel;
    /** Called by the empty state's "New notebook" button; no button without it. */
    onNewNotebook?: () => void;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** The followed notebook and its kernel as a definition list. */
  export function renderNotebook(notebook: INotebookSummary, trans: TranslationBundle): HTMLElement {
    const list = textElement('dl', 'pd-Facts');
    const name = textElement('dd', 'pd-Facts-value', notebook.name);
    name.title = notebook.path;
    const kernel =
      notebook.kernel === null
        ? textElement('dd', 'pd-Facts-value jp-mod-warning', trans.__('No kernel: choose one in the notebook'))
        : textElement(
            'dd',
            'pd-Facts-value',
            trans.__('%1 (%2)', notebook.kernel.displayName, notebook.kernel.status)
          );
    list.append(
      textElement('dt', 'pd-Facts-label', trans.__('Notebook')),
      name,
      textElement('dt', 'pd-Facts-label', trans.__('Kernel')),
      kernel
    );
    return list;
  }
}
