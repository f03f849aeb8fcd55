/**
 * The Estimator and order section's state: the entropy estimator, the units, the highest
 * order, and what they imply for the selected columns: the number of multiplets and the
 * adequacy of the data for the largest multiplets.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { ALL_ORDERS_UP_TO, DEFAULT_MAX_ORDER } from '../../engine/analyze';
import { multipletCount } from '../../engine/multiplets';
import type { EstimatorName, Units } from '../../engine/types';
import type { MaxOrderRule } from '../../settings';
import { SignalOwner } from '../disposable';

/** The estimators the panel offers, with their labels. */
export const ESTIMATOR_CHOICES: readonly { value: EstimatorName; label: string }[] = [
  { value: 'plugin', label: 'Plug-in (maximum likelihood)' },
  { value: 'miller-madow', label: 'Miller–Madow' },
  { value: 'chao-shen', label: 'Chao–Shen' },
  { value: 'shrinkage', label: 'James–Stein shrinkage' },
  { value: 'gaussian-copula', label: 'Gaussian copula (continuous columns)' }
];

/** What the section says while the Gaussian copula is chosen (it does not bin). */
export const COPULA_NOTE =
  'Gaussian copula: no binning. Each column is replaced by the normal scores of its ranks and every entropy comes ' +
  'from their covariance, bias-corrected (Ince et al. 2017). It sees only monotone dependence, takes continuous ' +
  'numeric columns only, and drops rows with a missing value.';

/** Adequacy below which the panel cautions (rows per possible joint cell; common practice). */
export const ADEQUACY_CAUTION = 1;

/** Rows per possible joint cell of the largest multiplets, and the cells it was computed from. */
export interface IAdequacy {
  /** rows / cells. */
  value: number;
  /** Possible joint cells of the multiplet with the most: the product of the largest bin counts. */
  cells: number;
  /** The order the cells are counted for. */
  order: number;
}

/**
 * Adequacy (DESIGN.md §3): rows divided by the possible joint cells of the largest multiplets
 * of order `order`, i.e. the product of the `order` largest bin counts; null without counts.
 */
export function adequacyOf(rows: number, binCounts: readonly number[], order: number): IAdequacy | null {
  if (binCounts.length === 0 || order < 1 || binCounts.some(count => !(count >= 1))) {
    return null;
  }
  const largest = [...binCounts].sort((a, b) => b - a).slice(0, order);
  const cells = largest.reduce((product, count) => product * count, 1);
  return { value: rows / cells, cells, order: largest.length };
}

/** The highest order a rule gives for `columns` selected columns. */
export function maxOrderByRule(rule: MaxOrderRule, fixed: number, columns: number): number {
  if (columns < 1) {
    return 0;
  }
  if (rule === 'all') {
    return columns;
  }
  if (rule === 'fixed') {
    return Math.min(fixed, columns);
  }
  // The engine's own default, so the panel and the CLI agree.
  return columns <= ALL_ORDERS_UP_TO ? columns : Math.min(DEFAULT_MAX_ORDER, columns);
}

/** The choices of the Estimator and order section, as kept for one notebook. */
export interface IEstimatorChoices {
  estimator: EstimatorName;
  units: Units;
  /** The highest order chosen by the person, or null to follow the settings' rule. */
  maxOrder: number | null;
}

/** A highest order asked for (by the person or the settings' fixed order) above the columns selected. */
export interface IOrderClamp {
  /** The order asked for. */
  asked: number;
  /** The order used: the number of selected columns. */
  used: number;
  /** Who asked: the person in this section, or the settings' fixed highest order. */
  source: 'choice' | 'settings';
}

/** State of the Estimator and order section. */
export class EstimatorModel extends SignalOwner {
  /** Fires when a choice changes. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The entropy estimator. */
  get estimator(): EstimatorName {
    return this._estimator;
  }
  set estimator(value: EstimatorName) {
    this._set(() => (this._estimator = value), value !== this._estimator);
  }

  /** The units of every information value. */
  get units(): Units {
    return this._units;
  }
  set units(value: Units) {
    this._set(() => (this._units = value), value !== this._units);
  }

  /** The highest order chosen by the user, or null to follow the settings' rule. */
  get maxOrder(): number | null {
    return this._maxOrder;
  }
  set maxOrder(value: number | null) {
    this._set(() => (this._maxOrder = value), value !== this._maxOrder);
  }

  /** How the highest order is chosen when the user has not chosen one. */
  setRule(rule: MaxOrderRule, fixed: number): void {
    this._rule = rule;
    this._fixed = fixed;
    this._changed.emit();
  }

  /** Take the settings' estimator and units (before the user changes them). */
  setDefaults(estimator: EstimatorName, units: Units): void {
    this._estimator = estimator;
    this._units = units;
    this._changed.emit();
  }

  /** The current choices (to keep them with a notebook). */
  get choices(): IEstimatorChoices {
    return { estimator: this._estimator, units: this._units, maxOrder: this._maxOrder };
  }

  /** Put choices back at once (another notebook followed), with one `changed`. */
  setChoices(choices: IEstimatorChoices): void {
    this._estimator = choices.estimator;
    this._units = choices.units;
    this._maxOrder = choices.maxOrder;
    this._changed.emit();
  }

  /**
   * When the order asked for is above the `columns` selected columns and so is lowered to
   * `columns`, what was asked and used; null when nothing is lowered.
   */
  orderClamp(columns: number): IOrderClamp | null {
    const asked = this._maxOrder ?? (this._rule === 'fixed' ? this._fixed : null);
    if (asked === null || columns < 1 || asked <= columns) {
      return null;
    }
    return { asked, used: columns, source: this._maxOrder === null ? 'settings' : 'choice' };
  }

  /** The highest order a run on `columns` selected columns uses. */
  effectiveMaxOrder(columns: number): number {
    if (columns < 1) {
      return 0;
    }
    return this._maxOrder === null ? maxOrderByRule(this._rule, this._fixed, columns) : Math.min(this._maxOrder, columns);
  }

  /** Multiplets of order 1 … max order among `columns` columns. */
  multiplets(columns: number): bigint {
    const order = this.effectiveMaxOrder(columns);
    return order < 1 ? 0n : multipletCount(columns, order);
  }

  private _set(apply: () => void, changed: boolean): void {
    if (changed) {
      apply();
      this._changed.emit();
    }
  }

  private _estimator: EstimatorName = 'plugin';
  private _units: Units = 'bits';
  private _maxOrder: number | null = null;
  private _rule: MaxOrderRule = 'auto';
  private _fixed = DEFAULT_MAX_ORDER;
  private _changed = new Signal<this, void>(this);
}
