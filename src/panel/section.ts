/**
 * The skeleton the side panel's sections share: a widget that shows one model and redraws
 * when that model says it changed.
 */
import { ISignal } from '@lumino/signaling';
import { Widget } from '@lumino/widgets';

import { translationBundle, type ITranslator, type TranslationBundle } from '../translation';

/**
 * A section of the side panel that follows `options.model`'s `changed` signal.
 *
 * The base connects the signal but does not draw: a base constructor runs before the subclass's
 * own fields exist, so each subclass builds its nodes and then calls `render()` itself at the
 * end of its constructor.
 */
export abstract class SectionView<M extends SectionView.IModel> extends Widget {
  /** Create the section for `options.model`, with its CSS class and tab label. */
  constructor(options: SectionView.IOptions<M>) {
    super();
    this.addClass(options.className);
    this.title.label = options.label;
    this.trans = translationBundle(options.translator);
    this._model = options.model;
    this._model.changed.connect(this.render, this);
  }

  /** The section's strings in the user's language. */
  protected readonly trans: TranslationBundle;

  /** The model this section shows. */
  protected get model(): M {
    return this._model;
  }

  /** Disconnect from the model and dispose the widget (whose own dispose runs `Signal.clearData(this)`). */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this.render, this);
    super.dispose();
  }

  /** Bring the section's DOM up to date with the model; runs on every `changed`. */
  protected abstract render(): void;

  private readonly _model: M;
}

/** The statics of {@link SectionView}. */
export namespace SectionView {
  /** What a section needs of its model: a signal that fires when it changed. */
  export interface IModel {
    /** Fires when anything the section shows may have changed. */
    readonly changed: ISignal<unknown, void>;
  }

  /** Options of a {@link SectionView}. */
  export interface IOptions<M extends IModel> {
    /** The model to show. */
    model: M;
    /** The section's CSS class, `pd-<Name>`. */
    className: string;
    /** The section's title label, already translated. */
    label: string;
    /** Translates the section's strings; they stay as written without one. */
    translator?: ITranslator;
  }
}
