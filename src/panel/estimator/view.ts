/**
 * The Estimator and order section: estimator, units and highest order, with the number of
 * multiplets they imply and a caution when the rows are too few for the joint cells.
 */
import { Widget } from '@lumino/widgets';

import { formatCount } from '../../engine/text';
import type { EstimatorName, Units } from '../../engine/types';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { AnalysisModel } from '../analysis/model';
import { labelledSelect, textElement, uniqueId, type ILabelledSelect } from '../dom';
import { formatAdequacy } from '../results/format';
import { ADEQUACY_CAUTION, COPULA_NOTE, ESTIMATOR_CHOICES } from './model';

/** Shows the estimator choices of an {@link AnalysisModel}. */
export class EstimatorView extends Widget {
  /** Create the section for `options.model`. */
  constructor(options: EstimatorView.IOptions) {
    super();
    this.addClass('pd-Estimator');
    const trans = (this._trans = translationBundle(options.translator));
    this.title.label = trans.__('Estimator and order');
    this._model = options.model;
    const estimator = this._model.estimator;
    this._estimator = labelledSelect(
      trans.__('Estimator'),
      ESTIMATOR_CHOICES.map(choice => [choice.value, trans.__(choice.label)]),
      value => (estimator.estimator = value as EstimatorName)
    );
    this._units = labelledSelect(
      trans.__('Units'),
      [
        ['bits', trans.__('bits (log base 2)')],
        ['nats', trans.__('nats (natural log)')]
      ],
      value => (estimator.units = value as Units)
    );
    const orderId = uniqueId('pd-max-order');
    this._order = document.createElement('input');
    this._order.id = orderId;
    this._order.type = 'number';
    this._order.min = '1';
    this._order.step = '1';
    this._order.className = 'pd-Estimator-order jp-mod-styled';
    this._order.addEventListener('input', () => {
      const value = Number.parseInt(this._order.value, 10);
      estimator.maxOrder = this._order.value.trim() === '' || !(value >= 1) ? null : value;
    });
    const orderRow = textElement('div', 'pd-Field');
    const orderLabel = textElement('label', 'pd-Field-label', trans.__('Maximum order'));
    orderLabel.htmlFor = orderId;
    orderRow.append(orderLabel, this._order);
    this._count = textElement('p', 'pd-Estimator-count');
    this._count.setAttribute('aria-live', 'polite');
    this._clamp = textElement('p', 'pd-Estimator-clamp pd-mod-warning');
    this._clamp.setAttribute('role', 'status');
    this._clamp.hidden = true;
    this._adequacy = textElement('p', 'pd-Estimator-adequacy');
    this._copula = textElement('p', 'pd-Estimator-copula', trans.__(COPULA_NOTE));
    this.node.append(this._estimator.row, this._copula, this._units.row, orderRow, this._clamp, this._count, this._adequacy);
    this._model.changed.connect(this._render, this);
    this._model.estimator.changed.connect(this._render, this);
    this._render();
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._render, this);
    this._model.estimator.changed.disconnect(this._render, this);
    super.dispose();
  }

  private _render(): void {
    const model = this._model;
    const trans = this._trans;
    this._estimator.select.value = model.estimator.estimator;
    this._units.select.value = model.estimator.units;
    this._copula.hidden = model.estimator.estimator !== 'gaussian-copula';
    const columns = model.data.selected.length;
    const order = model.maxOrder;
    this._order.max = String(Math.max(1, columns));
    this._order.placeholder = columns > 0 ? trans.__('%1 (automatic)', order) : trans.__('automatic');
    if (document.activeElement !== this._order) {
      this._order.value = model.estimator.maxOrder === null ? '' : String(model.estimator.maxOrder);
    }
    if (columns === 0) {
      this._count.textContent = trans.__('Select columns to see how many multiplets a run computes.');
    } else {
      const count = model.multipletCount;
      this._count.textContent = trans.__(
        '%1 of order 1 to %2 among %3.',
        trans._n('%2 multiplet', '%2 multiplets', Number(count), formatCount(count)),
        order,
        trans._n('%2 column', '%2 columns', columns, formatCount(columns))
      );
    }
    const clamp = model.orderClamp;
    this._clamp.hidden = clamp === null;
    this._clamp.textContent =
      clamp === null
        ? ''
        : trans.__(
            '%1 %2 is above the %3, so order %4 is the highest computed.',
            clamp.source === 'choice' ? trans.__('Maximum order') : trans.__('The settings’ fixed highest order'),
            clamp.asked,
            trans._n('%2 selected column', '%2 selected columns', clamp.used, formatCount(clamp.used)),
            clamp.used
          );
    const adequacy = model.adequacy;
    this._adequacy.classList.toggle('pd-mod-warning', adequacy !== null && adequacy.value < ADEQUACY_CAUTION);
    if (adequacy === null) {
      this._adequacy.textContent = '';
    } else if (adequacy.value < ADEQUACY_CAUTION) {
      this._adequacy.textContent = trans.__(
        'Caution: adequacy %1 — %2 for the largest multiplets of order %3, more than the rows. Entropies of these ' +
          'multiplets are biased low; use fewer bins, a lower order or a bias-corrected estimator.',
        formatAdequacy(adequacy.value),
        trans._n('%2 possible joint cell', '%2 possible joint cells', adequacy.cells, formatCount(adequacy.cells)),
        adequacy.order
      );
    } else {
      this._adequacy.textContent = trans.__(
        'Adequacy %1 rows per possible joint cell (%2 at order %3).',
        formatAdequacy(adequacy.value),
        trans._n('%2 cell', '%2 cells', adequacy.cells, formatCount(adequacy.cells)),
        adequacy.order
      );
    }
    this._adequacy.hidden = adequacy === null;
  }

  private _model: AnalysisModel;
  private readonly _trans: TranslationBundle;
  private _estimator: ILabelledSelect;
  private _units: ILabelledSelect;
  private _order: HTMLInputElement;
  private _count: HTMLElement;
  private _clamp: HTMLElement;
  private _adequacy: HTMLElement;
  private _copula: HTMLElement;
}

/** The statics of {@link EstimatorView}. */
export namespace EstimatorView {
  /** Options of an {@link EstimatorView}. */
  export interface IOptions {
    /** The analysis whose choices the section shows. */
    model: AnalysisModel;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}
