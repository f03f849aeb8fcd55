/**
 * The Estimator and order section: estimator, units and highest order, with the number of
 * multiplets they imply and a caution when the rows are too few for the joint cells.
 */
import { Widget } from '@lumino/widgets';

import { plural } from '../../engine/text';
import type { EstimatorName, Units } from '../../engine/types';
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
    this.title.label = 'Estimator and order';
    this._model = options.model;
    const estimator = this._model.estimator;
    this._estimator = labelledSelect(
      'Estimator',
      ESTIMATOR_CHOICES.map(choice => [choice.value, choice.label]),
      value => (estimator.estimator = value as EstimatorName)
    );
    this._units = labelledSelect(
      'Units',
      [
        ['bits', 'bits (log base 2)'],
        ['nats', 'nats (natural log)']
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
    const orderLabel = textElement('label', 'pd-Field-label', 'Maximum order');
    orderLabel.htmlFor = orderId;
    orderRow.append(orderLabel, this._order);
    this._count = textElement('p', 'pd-Estimator-count');
    this._count.setAttribute('aria-live', 'polite');
    this._clamp = textElement('p', 'pd-Estimator-clamp pd-mod-warning');
    this._clamp.setAttribute('role', 'status');
    this._clamp.hidden = true;
    this._adequacy = textElement('p', 'pd-Estimator-adequacy');
    this._copula = textElement('p', 'pd-Estimator-copula', COPULA_NOTE);
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
    this._estimator.select.value = model.estimator.estimator;
    this._units.select.value = model.estimator.units;
    this._copula.hidden = model.estimator.estimator !== 'gaussian-copula';
    const columns = model.data.selected.length;
    const order = model.maxOrder;
    this._order.max = String(Math.max(1, columns));
    this._order.placeholder = columns > 0 ? `${order} (automatic)` : 'automatic';
    if (document.activeElement !== this._order) {
      this._order.value = model.estimator.maxOrder === null ? '' : String(model.estimator.maxOrder);
    }
    if (columns === 0) {
      this._count.textContent = 'Select columns to see how many multiplets a run computes.';
    } else {
      const count = model.multipletCount;
      this._count.textContent =
        `${plural(count, 'multiplet')} of order 1 to ${order} among ${plural(columns, 'column')}.`;
    }
    const clamp = model.orderClamp;
    this._clamp.hidden = clamp === null;
    this._clamp.textContent =
      clamp === null
        ? ''
        : `${clamp.source === 'choice' ? 'Maximum order' : 'The settings’ fixed highest order'} ${clamp.asked} is above the ` +
          `${plural(clamp.used, 'selected column')}, so order ${clamp.used} is the highest computed.`;
    const adequacy = model.adequacy;
    this._adequacy.classList.toggle('pd-mod-warning', adequacy !== null && adequacy.value < ADEQUACY_CAUTION);
    if (adequacy === null) {
      this._adequacy.textContent = '';
    } else if (adequacy.value < ADEQUACY_CAUTION) {
      this._adequacy.textContent =
        `Caution: adequacy ${formatAdequacy(adequacy.value)} — ${plural(adequacy.cells, 'possible joint cell')} ` +
        `for the largest multiplets of order ${adequacy.order}, more than the rows. Entropies of these multiplets are ` +
        'biased low; use fewer bins, a lower order or a bias-corrected estimator.';
    } else {
      this._adequacy.textContent =
        `Adequacy ${formatAdequacy(adequacy.value)} rows per possible joint cell ` +
        `(${plural(adequacy.cells, 'cell')} at order ${adequacy.order}).`;
    }
    this._adequacy.hidden = adequacy === null;
  }

  private _model: AnalysisModel;
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
  }
}
