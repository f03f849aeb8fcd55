/**
 * Tokens, identifiers and shared types of the Polyadic front end. Other plugins depend on
 * these names, so they change only with a migration note.
 */
import { Token } from '@lumino/coreutils';
import type { ISignal } from '@lumino/signaling';
import type { Widget } from '@lumino/widgets';

import type { EstimatorName, Units } from './engine/types';
import type { IAnalysisState, IRunCompleted } from './panel/analysis/types';
import type { IDataCheck, IRecordsNotebook, IRestoreRequest, IRunFrame } from './panel/records/types';
import type { IAnalysisRecord, IStatisticsSettings } from './record/types';

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
  /** The state the panel shows: the analysis being set up and the notebook's records. */
  readonly model: IPolyadicPanel.IModel;
}

/**
 * The faces of the panel's models that other plugins see. The concrete models (src/panel)
 * implement them; a plugin codes against these and never against a model class.
 */
export namespace IPolyadicPanel {
  /** The panel's state, as far as plugins use it. */
  export interface IModel {
    /** The analysis being set up and run in the panel's sections. */
    readonly analysis: IAnalysis;
    /** The analyses recorded in the followed notebook. */
    readonly records: IRecords;
  }

  /**
   * The analysis of the panel: its run and result (read-only), and the settings of the Data,
   * Binning, Estimator and Statistics sections that a recorded analysis can be put back into.
   */
  export interface IAnalysis extends IAnalysisState {
    /** The Dataframe section: the frame picked, its columns and which are selected. */
    readonly data: IAnalysis.IFrameChoice;
    /** The Binning section: one spec per column. */
    readonly binning: IAnalysis.IBinningChoice;
    /** The Estimator section: estimator, units and highest order. */
    readonly estimator: IAnalysis.IEstimatorChoice;
    /** The Statistics section; absent where an analysis offers none. */
    readonly statistics?: IAnalysis.IStatisticsChoice;
  }

  /** The parts of {@link IAnalysis}. */
  export namespace IAnalysis {
    /** The Dataframe section's frame and column choice. */
    export interface IFrameChoice {
      /** Fires when the frame, its columns, the selection or the fetched rows change. */
      readonly changed: ISignal<unknown, void>;
      /** Name of the frame picked, or null. */
      readonly frame: string | null;
      /** The kernel's frames. */
      readonly frames: readonly { name: string }[];
      /** True while the notebook's kernel connects and its first listing of frames has not arrived. */
      readonly listingPending: boolean;
      /** The columns of the frame picked. */
      readonly columns: readonly { name: string }[];
      /** The rows fetched for the frame picked, or null before they arrive. */
      readonly fetched: IRunFrame | null;
      /** Pick a frame (or none) and fetch it. */
      pick(name: string | null): Promise<void>;
      /** Select or leave out a column. */
      setSelected(name: string, selected: boolean): void;
      /** Whether a column is selected. */
      isSelected(name: string): boolean;
    }

    /** The Binning section's specs. */
    export interface IBinningChoice {
      /** The spec of a column, or undefined for a column the section does not show. */
      specOf(name: string): string | undefined;
      /** Set the spec of a column. */
      setSpec(name: string, spec: string): void;
    }

    /** The Estimator section's choices. */
    export interface IEstimatorChoice {
      /** The estimator of entropies. */
      estimator: EstimatorName;
      /** Units of information. */
      units: Units;
      /** The highest order asked for, or null for the settings' rule. */
      maxOrder: number | null;
    }

    /** The Statistics section, as a restore sets it. */
    export interface IStatisticsChoice {
      /** Take a record's statistics settings (null: the run computed no evidence). */
      restore(settings: IStatisticsSettings | null): void;
    }
  }

  /** The records of analyses in the followed notebook's metadata. */
  export interface IRecords {
    /** Fires after the record, the choice, the data check or the last notice changed. */
    readonly changed: ISignal<IRecords, void>;
    /** Fires when the person asks to put a recorded analysis' settings back. */
    readonly restoreRequested: ISignal<IRecords, IRestoreRequest>;
    /** Id of the chosen analysis, or null. */
    readonly selectedId: string | null;
    /** The chosen analysis, or null. */
    readonly selected: IAnalysisRecord | null;
    /** The latest data check of an analysis, or null when none was made. */
    dataCheckOf(id: string): IDataCheck | null;
    /** Follow another notebook (or none) and read its record. */
    setNotebook(notebook: IRecordsNotebook | null): void;
    /** Read the record again (the notebook's metadata changed). */
    refresh(): void;
    /** Compare fetched rows with the chosen analysis' fingerprint. */
    checkData(frame: IRunFrame): Promise<IDataCheck | null>;
    /** Record a completed run in the followed notebook; null when it could not be. */
    recordRun(run: IRunCompleted): Promise<IAnalysisRecord | null>;
    /** Show a sentence about the last action, or clear it with null. */
    setNotice(message: string | null): void;
  }
}

/** Token of the Polyadic side panel. */
export const IPolyadicPanel = new Token<IPolyadicPanel>(
  `${EXTENSION_ID}:IPolyadicPanel`,
  'The Polyadic side panel and its model: the current notebook and the user settings.'
);
