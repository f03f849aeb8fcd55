/**
 * Tokens, identifiers and shared types of the Polyadic front end. Other plugins depend on
 * these names, so they change only with a migration note.
 */
import { Token } from '@lumino/coreutils';
import type { Widget } from '@lumino/widgets';

import type { EstimatorName, MissingPolicy, Units } from './engine/types';
import type { PanelModel } from './panel/model';

/** The npm name of the extension; prefix of every plugin and token id. */
export const EXTENSION_ID = 'jupyterlab-polyadic';

/**
 * Id of the main plugin. Its settings schema is schema/settings/plugin.json, which JupyterLab
 * binds to `<package name>:plugin`, so the id must keep this exact form.
 */
export const PLUGIN_ID = `${EXTENSION_ID}:plugin`;

/** Command ids (`polyadic:verb-noun`). */
export namespace CommandIDs {
  /** Show the Polyadic panel in the right sidebar and give it focus. */
  export const openPanel = 'polyadic:open-panel';
  /** Open (or bring to the front) the results view of an analysis: args `{ id }`, a record id. */
  export const openResults = 'polyadic:open-results';
  /** Bring the results view of the latest run to the front. */
  export const showLatestResults = 'polyadic:show-latest-results';
}

/** Category of Polyadic's commands in the command palette. */
export const PALETTE_CATEGORY = 'Polyadic';

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

/** The Polyadic side panel, for plugins that add sections to it or react to it. */
export interface IPolyadicPanel {
  /** The panel widget in the right sidebar. */
  readonly widget: Widget;
  /** The state the panel shows: current notebook and settings. */
  readonly model: PanelModel;
}

/** Token of the Polyadic side panel. */
export const IPolyadicPanel = new Token<IPolyadicPanel>(
  `${EXTENSION_ID}:IPolyadicPanel`,
  'The Polyadic side panel and its model: the current notebook and the user settings.'
);
