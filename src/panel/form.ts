/**
 * The side panel's set-up form: one scrolling column of sections, each with a header button
 * that folds it. Unlike an accordion, sections never share a fixed height: an open section is
 * as tall as its content and the whole form scrolls, so a long column list stays readable.
 */
import { Panel, Widget } from '@lumino/widgets';

import { translationBundle, type ITranslator, type TranslationBundle } from '../translation';
import { textElement, uniqueId } from './dom';

/** One foldable section: a header button (the section's title label) above the section. */
export class FoldSection extends Panel {
  /** Wrap `content`; its `title.label` names the section. */
  constructor(content: Widget, options: { expanded?: boolean; translator?: ITranslator } = {}) {
    super();
    this._trans = translationBundle(options.translator);
    this.addClass('pd-Fold');
    this.content = content;
    const header = new Widget({ node: textElement('h3', 'pd-Fold-header') });
    this._button = textElement('button', 'pd-Fold-title');
    this._button.type = 'button';
    const bodyId = uniqueId('pd-fold');
    content.id = content.id || bodyId;
    this._button.setAttribute('aria-controls', content.id);
    this._caret = textElement('span', 'pd-Fold-caret');
    this._caret.setAttribute('aria-hidden', 'true');
    this._label = textElement('span', 'pd-Fold-label', content.title.label);
    this._button.append(this._caret, this._label);
    this._button.addEventListener('click', () => this.setExpanded(!this.expanded));
    header.node.append(this._button);
    content.addClass('pd-Fold-body');
    content.node.setAttribute('role', 'region');
    // "Notebook Section": the name JupyterLab's own sidebar sections give their regions
    const name = (): void => {
      this._label.textContent = content.title.label;
      content.node.setAttribute('aria-label', this._trans.__('%1 Section', content.title.label));
      // "Run section", so the header is not taken for the section's own Run button
      this._button.setAttribute('aria-label', this._trans.__('%1 section', content.title.label));
    };
    name();
    content.title.changed.connect(name);
    this.addWidget(header);
    this.addWidget(content);
    this.setExpanded(options.expanded ?? true);
  }

  /** The section inside. */
  readonly content: Widget;

  /** Whether the section is open. */
  get expanded(): boolean {
    return !this.content.isHidden;
  }

  /** Open or fold the section. */
  setExpanded(expanded: boolean): void {
    this.content.setHidden(!expanded);
    this._button.setAttribute('aria-expanded', String(expanded));
    this.toggleClass('pd-mod-folded', !expanded);
  }

  private readonly _trans: TranslationBundle;
  private readonly _button: HTMLButtonElement;
  private readonly _caret: HTMLSpanElement;
  private readonly _label: HTMLSpanElement;
}

/** The scrolling column of {@link FoldSection}s the side panel shows. */
export class FoldForm extends Panel {
  /** Create the form; `options.translator` translates the sections' accessible names. */
  constructor(options: { translator?: ITranslator } = {}) {
    super();
    this.addClass('pd-FoldForm');
    this._translator = options.translator;
  }

  /** Add `widget` as a foldable section (open unless `expanded` is false). */
  addSection(widget: Widget, expanded = true): FoldSection {
    const section = new FoldSection(widget, { expanded, translator: this._translator });
    this.addWidget(section);
    return section;
  }

  /** The sections, in order. */
  get sections(): FoldSection[] {
    return this.widgets.filter((w): w is FoldSection => w instanceof FoldSection);
  }

  private readonly _translator: ITranslator | undefined;
}
