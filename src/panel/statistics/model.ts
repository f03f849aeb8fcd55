/**
 * The Statistics section's state: how much evidence against chance a run computes with its
 * multiplets (independence surrogates, bootstrap resamples, the pairwise-preserving null), the
 * seed, the tail and the level; whether those choices are valid (checked by the engine's own
 * resolveStatistics, so the panel says exactly what the CLI says), and a rough time estimate.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { isPolyadicError, PolyadicError } from '../../engine/errors';
import {
  DEFAULT_FIT_DRAWS,
  resolveStatistics,
  type IStatisticsOptions,
  type StatisticsTail
} from '../../engine/statistics/options';
import type { IStatisticsSettings } from '../../record/types';

/** A field of the section, named as the engine's options name it (the error detail's `option`). */
export type StatisticsField = 'surrogates' | 'seed' | 'bootstrap' | 'tail' | 'alpha' | 'beyondPairs' | 'sharpen';

/**
 * Nanoseconds per multiplet and row of one lattice walk on one worker (measured with
 * `npm run bench:statistics`: 1,000 surrogates of 1,350 multiplets × 2,000 rows in 16.9 s on
 * one thread); the estimate is only meant to tell seconds from minutes.
 */
export const WALK_NS_PER_MULTIPLET_ROW = 6.3;

/**
 * Which rows a run's statistics go over: `rows`, the rows themselves (every part), or
 * `weighted`, a scanned frame's distinct binned rows with their counts, which the bootstrap
 * (multinomial resampling of the weights) and the pairwise-preserving null take, but surrogates
 * and sharpening do not (they shuffle each column's rows on its own, and those rows are merged).
 */
export type StatisticsScope = 'rows' | 'weighted';

/** The fields a run on weighted rows leaves out (see {@link StatisticsScope}). */
export const ROWS_ONLY_FIELDS: readonly StatisticsField[] = ['surrogates', 'sharpen'];

/** The choices of the Statistics section. */
export class StatisticsModel {
  /** Fires when a choice changes. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The text typed for each field, as typed (a field holds text until the engine checks it). */
  get values(): Readonly<Record<StatisticsField, string>> {
    return this._values;
  }

  /** Set one field's text (what the user typed); marks the section as the user's. */
  set(field: StatisticsField, text: string): void {
    if (this._values[field] === text) {
      return;
    }
    this._values = { ...this._values, [field]: text };
    this._touched = true;
    this._changed.emit();
  }

  /** Take the settings' defaults (surrogates, seed, level) unless the user has changed the section. */
  setDefaults(defaults: { surrogates: number; seed: number; alpha: number }): void {
    if (this._touched) {
      return;
    }
    this._values = {
      ...this._values,
      surrogates: String(defaults.surrogates),
      seed: String(defaults.seed),
      alpha: String(defaults.alpha)
    };
    this._changed.emit();
  }

  /** Show the settings of a recorded analysis (none computed: every count 0). */
  restore(settings: IStatisticsSettings | null): void {
    const s = settings ?? { surrogates: 0, seed: 0, bootstrap: 0, tail: 'two', alpha: 0.05, beyond_pairs: 0, fit_draws: 0, sharpen: 0 };
    this._values = {
      surrogates: String(s.surrogates),
      seed: String(s.seed),
      bootstrap: String(s.bootstrap),
      tail: s.tail,
      alpha: String(s.alpha),
      beyondPairs: String(s.beyond_pairs),
      sharpen: String(s.sharpen)
    };
    this._fitDraws = s.fit_draws > 0 ? s.fit_draws : DEFAULT_FIT_DRAWS;
    this._touched = true;
    this._changed.emit();
  }

  /**
   * The engine options of the choices, or undefined when they ask for no evidence. Throws the
   * engine's PolyadicError (its detail names the option) when a choice is not valid. With
   * scope `weighted` the fields of {@link ROWS_ONLY_FIELDS} are 0, whatever they hold.
   */
  options(scope: StatisticsScope = 'rows'): IStatisticsOptions | undefined {
    const v = this._values;
    const number = (field: StatisticsField): number =>
      scope === 'weighted' && ROWS_ONLY_FIELDS.includes(field) ? 0 : Private.number(field, v[field]);
    const options: IStatisticsOptions = {
      surrogates: number('surrogates'),
      seed: number('seed'),
      bootstrap: number('bootstrap'),
      tail: v.tail as StatisticsTail,
      alpha: number('alpha'),
      beyondPairs: number('beyondPairs'),
      fitDraws: this._fitDraws,
      sharpen: number('sharpen')
    };
    return resolveStatistics(options) === null ? undefined : options;
  }

  /** What is wrong with the choices (the engine's error, naming the option), or null. */
  get problem(): PolyadicError | null {
    return this.problemOf('rows');
  }

  /** What is wrong with the choices a run of `scope` takes, or null. */
  problemOf(scope: StatisticsScope): PolyadicError | null {
    try {
      this.options(scope);
      return null;
    } catch (error) {
      return isPolyadicError(error) ? error : new PolyadicError('usage', String(error));
    }
  }

  /**
   * A rough time of the replicates on `workers` workers for `multiplets` multiplets over `rows`
   * rows, in ms, or null when no replicates are asked for or the choices are not valid.
   * Sharpening and the pairwise-preserving null are not in it (their cost depends on the
   * multiplets they reach); the section says so.
   */
  estimateMs(multiplets: number, rows: number, workers: number, scope: StatisticsScope = 'rows'): number | null {
    let options: IStatisticsOptions | undefined;
    try {
      options = this.options(scope);
    } catch {
      return null;
    }
    const replicates = (options?.surrogates ?? 0) + (options?.bootstrap ?? 0);
    if (replicates === 0) {
      return null;
    }
    return (replicates * multiplets * rows * WALK_NS_PER_MULTIPLET_ROW) / 1e6 / Math.max(1, workers);
  }

  /** Disconnect every listener. */
  dispose(): void {
    Signal.clearData(this);
  }

  private _values: Record<StatisticsField, string> = {
    surrogates: '0',
    seed: '0',
    bootstrap: '0',
    tail: 'two',
    alpha: '0.05',
    beyondPairs: '0',
    sharpen: '0'
  };
  private _fitDraws = DEFAULT_FIT_DRAWS;
  private _touched = false;
  private _changed = new Signal<this, void>(this);
}

namespace Private {
  /** What each field holds, for the message about text that is not a number. */
  const WHAT: Record<StatisticsField, string> = {
    surrogates: 'The number of surrogates',
    seed: 'The seed',
    bootstrap: 'The number of bootstrap resamples',
    tail: 'The tail',
    alpha: 'The level alpha',
    beyondPairs: 'The number of multiplets per table for the pairwise-preserving null',
    sharpen: 'The number of sharpening surrogates'
  };

  /** The number typed; text that is not a number is refused naming the field. */
  export function number(field: StatisticsField, text: string): number {
    const trimmed = text.trim();
    const value = trimmed === '' ? Number.NaN : Number(trimmed);
    if (Number.isNaN(value)) {
      const shown = trimmed === '' ? 'empty' : `'${trimmed.slice(0, 40)}'`;
      throw new PolyadicError('usage', `${WHAT[field]} must be a number, not ${shown}.`, { option: field, value: trimmed });
    }
    return value;
  }
}
