/**
 * Tokens, identifiers and shared types of the Polyadic front end. Other plugins depend on
 * these names, so they change only with a migration note.
 */
import { Token } from '@lumino/coreutils';
import type { Widget } from '@lumino/widgets';

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

// The settings' types live in ./settings (the models import them without importing the tokens).
export type { IPolyadicSettings, MaxOrderRule } from './settings';

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
