/**
 * The user settings of the Polyadic front end (schema/settings/plugin.json), as types. Kept out
 * of tokens.ts so that the panel's models, which the tokens' interfaces name, can import them
 * without an import circle; tokens.ts re-exports them for other plugins.
 */
import type { EstimatorName, MissingPolicy, Units } from './engine/types';

/** Which highest order an analysis uses when the user does not choose one. */
export type MaxOrderRule = 'auto' | 'all' | 'fixed';

/**
 * The user settings of schema/settings/plugin.json, as the settings registry returns them
 * (defaults already merged). The defaults live in the schema only.
 */
export interface IPolyadicSettings {
  /** Largest number of rows taken from a dataframe. */
  rowCap: number;
  /** Largest number of multiplets one analysis may compute. */
  multipletCap: number;
  /** Entropy estimator. */
  estimator: EstimatorName;
  /** Units of every information value. */
  units: Units;
  /** Missing-value policy across the selected columns. */
  missing: MissingPolicy;
  /** Binning spec for numeric columns, e.g. `auto` or `quantile:4`. */
  numericBinning: string;
  /** How the highest order is chosen. */
  maxOrderRule: MaxOrderRule;
  /** Highest order when `maxOrderRule` is `fixed`. */
  fixedMaxOrder: number;
  /** Surrogate datasets per significance test; 0 turns the test off. */
  surrogates: number;
  /** Seed of the surrogate and bootstrap random streams. */
  seed: number;
  /** False discovery rate at which a multiplet is reported as significant. */
  alpha: number;
}

