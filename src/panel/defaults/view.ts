/**
 * The panel's defaults section: the settings new analyses start from, with a way to the
 * Settings Editor.
 */
import { translationBundle, type ITranslator } from '../../translation';
import { textElement } from '../dom';
import { SectionView } from '../section';
import { DefaultsModel } from './model';

/** Shows a {@link DefaultsModel}. Text only goes in through `textContent`. */
export class DefaultsView extends SectionView<DefaultsModel> {
  /** Create the section for `options.model`. */
  constructor(options: DefaultsView.IOptions) {
    const trans = translationBundle(options.translator);
    super({ model: options.model, className: 'pd-Defaults', label: trans.__('Defaults'), translator: options.translator });
    this._onOpenSettings = options.onOpenSettings ?? null;
    this.render();
  }

  /** Redraw from the model. */
  protected render(): void {
    const children: HTMLElement[] = [];
    const error = this.model.error;
    if (error !== null) {
      const message = textElement('p', 'pd-Defaults-error', error.message);
      message.setAttribute('role', 'alert');
      children.push(message);
    } else if (this.model.rows.length === 0) {
      children.push(textElement('p', 'pd-Defaults-note', this.trans.__('Loading settings…')));
    } else {
      const list = textElement('dl', 'pd-Facts');
      for (const row of this.model.rows) {
        list.append(
          textElement('dt', 'pd-Facts-label', row.label),
          textElement('dd', 'pd-Facts-value', row.value)
        );
      }
      children.push(list);
    }
    const onOpenSettings = this._onOpenSettings;
    if (onOpenSettings !== null) {
      const button = textElement('button', 'pd-Defaults-action jp-mod-styled', this.trans.__('Edit settings'));
      button.type = 'button';
      button.addEventListener('click', () => onOpenSettings());
      children.push(button);
    }
    this.node.replaceChildren(...children);
  }

  private readonly _onOpenSettings: (() => void) | null;
}

/** The statics of {@link DefaultsView}. */
export namespace DefaultsView {
  /** Options of a {@link DefaultsView}. */
  export interface IOptions {
    /** The model to show. */
    model: DefaultsModel;
    /** Called by the "Edit settings" button; no button without it. */
    onOpenSettings?: () => void;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}
