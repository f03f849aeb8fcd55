/**
 * The plain data the records section exchanges with the notebook, the analysis sections and
 * the plugins: types only, so the tokens can name them without loading the records model.
 */
import type { ColumnView, IAnalyzeOptions } from '../../engine/types';
import type { IAnalysisRecord, IDataComparison, IMetadataAccess, IStatisticsSettings } from '../../record/types';

/** The notebook whose record the section shows. */
export interface IRecordsNotebook {
  /** Path relative to the server root; tells one notebook from another. */
  path: string;
  /** Its metadata, as far as the record needs it. */
  metadata: IMetadataAccess;
}

/** The rows an analysis read, as the bridge fetched them. */
export interface IRunFrame {
  /** Dataframe name in the kernel. */
  name: string;
  /** The columns the engine read, in the order it read them. */
  columns: readonly ColumnView[];
  /** Rows received. */
  rows: number;
  /** Rows of the frame in the kernel. */
  originalRows: number;
  /** Whether the rows are a seeded sample of the frame. */
  sampled: boolean;
  /** Seed of the sample. */
  seed: number;
}

/** A request to put a recorded analysis' settings back into the analysis section. */
export interface IRestoreRequest {
  /** The recorded analysis. */
  analysis: IAnalysisRecord;
  /** Dataframe the analysis read. */
  frame: string;
  /** Engine options that re-run it exactly. */
  options: IAnalyzeOptions;
  /** Its statistics settings, or null when it computed no evidence. */
  statistics: IStatisticsSettings | null;
}

/** How the data the panel fetched compares with the chosen analysis. */
export interface IDataCheck {
  /** Id of the analysis compared. */
  id: string;
  /** `same`, `changed`, or `not-comparable` (a different sample or missing columns). */
  status: 'same' | 'changed' | 'not-comparable';
  /** A sentence for the banner. */
  message: string;
  /** Column-level detail of a comparison that was made. */
  comparison: IDataComparison | null;
}
