/**
 * Types of the record Polyadic keeps in a notebook's metadata (DESIGN.md §4). They mirror
 * src/record/record.schema.json field by field; the schema is what is checked, these are what the
 * code reads after a check.
 */

import type { IOrderHistogram } from '../engine/histogram';
import type { IRobustnessVerdict } from '../engine/robustness';
import type { StatisticsTail } from '../engine/statistics/options';
import type { BinMethod, EstimatorName, IMultipletRow, IStatisticsReport, MissingPolicy, Units } from '../engine/types';
import type { CoreMultipletField } from '../results-format';

/** The notebook metadata key of the record. */
export const RECORD_METADATA_KEY = 'polyadic';

/** The record layout version this code writes. */
export const RECORD_VERSION = 2;

/** MIME type of an analysis cell's output: `{ record_id }`, looked up in the notebook's record. */
export const ANALYSIS_MIME_TYPE = 'application/vnd.polyadic.analysis+json';

/** Longest label a record holds, in characters (the schema's `maxLength`). */
export const MAX_LABEL_LENGTH = 200;

/** Name of the canonical encoding the fingerprint hashes (docs/fingerprint.md). */
export const FINGERPRINT_ENCODING = 'pdfp1';

/** Name of the encoding of a scanned source's sorted weighted table (docs/fingerprint.md). */
export const SCAN_FINGERPRINT_ENCODING = 'pdsc1';

/** The whole record: `{ "version": 2, "analyses": [...] }`. */
export interface IRecordDocument {
  version: typeof RECORD_VERSION;
  analyses: IAnalysisRecord[];
}

/** The fingerprint of the selected columns. */
export interface IFingerprintRef {
  encoding: typeof FINGERPRINT_ENCODING | typeof SCAN_FINGERPRINT_ENCODING;
  /** 64 lower-case hexadecimal digits. */
  sha256: string;
}

/** One selected column as the engine read it. */
export interface ISourceColumn {
  name: string;
  dtype: string;
  kind: 'numeric' | 'categorical';
  /** Digest of this column's encoding; absent in records migrated from version 0. */
  sha256?: string;
}

/** The row-cap sample an analysis read, when the frame had more rows than the cap. */
export interface ISampleInfo {
  seed: number;
  row_cap: number;
  original_rows: number;
}

/**
 * How the rows reached the engine: read one by one ('rows'), or binned and grouped by another
 * engine into distinct binned rows with their counts ('scan').
 */
export type ISourceOrigin =
  | { kind: 'rows' }
  | { kind: 'scan'; engine: { name: 'duckdb' | 'spark'; version: string }; input_rows: number; distinct_rows: number };

/** The data an analysis read. */
export interface ISourceRecord {
  frame: string;
  rows: number;
  columns: ISourceColumn[];
  sample?: ISampleInfo;
  fingerprint: IFingerprintRef;
  /** Absent in records that predate it (they read rows). */
  origin?: ISourceOrigin;
}

/** How one column was binned. */
export interface IColumnBinningRecord {
  name: string;
  method: BinMethod;
  spec: string;
  bins: number;
  edges?: number[];
  categories?: string[];
  missing_code?: number;
}

/** The settings of the evidence against chance an analysis computed (the engine's resolved options). */
export interface IStatisticsSettings {
  surrogates: number;
  seed: number;
  bootstrap: number;
  tail: StatisticsTail;
  alpha: number;
  beyond_pairs: number;
  fit_draws: number;
  sharpen: number;
}

/** The evidence fields a summary multiplet may carry (those the engine computed for it). */
export type MultipletEvidence = Partial<Pick<IMultipletRow, Exclude<keyof IMultipletRow, CoreMultipletField>>>;

/** What the evidence was computed over (the engine's report without the settings). */
export interface IEvidenceSummary {
  families: IStatisticsReport['families'];
  null_bands: IStatisticsReport['null_bands'];
  interval_level: number;
  sharpened: number;
  bootstrap_multiplets: number;
  /** Present when the pairwise-preserving null was asked for. */
  fitted?: number;
  refused?: { columns: string[]; reason: string }[];
}

/** One multiplet of the summary, in the units of the analysis. */
export interface IMultipletSummary
  extends MultipletEvidence,
    Pick<IMultipletRow, 'columns' | 'order' | 'entropy' | 'co_information' | 'total_correlation' | 'dual_total_correlation' | 'o_information'> {}

/** Order histogram of co-information for one order (the engine's, engine/histogram.ts). */
export type { IOrderHistogram };

/** The results of an analysis in brief. */
export interface IResultSummary {
  synergy: IMultipletSummary[];
  redundancy: IMultipletSummary[];
  multiplet_count: number;
  rows_used: number;
  histograms?: IOrderHistogram[];
  /** Multiplets of order ≥ 2 with adequacy below 1. */
  inadequate_count?: number;
  /** Present when the analysis computed evidence against chance. */
  evidence?: IEvidenceSummary;
}

/** One analysis of the record. */
export interface IAnalysisRecord {
  id: string;
  label: string;
  created: string;
  engine: { name: string; version: string };
  source: ISourceRecord;
  columns: string[];
  binning: IColumnBinningRecord[];
  missing: MissingPolicy;
  estimator: EstimatorName;
  units: Units;
  max_order: number;
  /** Present when the analysis computed evidence against chance. */
  statistics?: IStatisticsSettings;
  summary: IResultSummary;
  /** Present when a robustness run of the analysis completed. */
  robustness?: IRobustnessRecord;
}

/** One followed multiplet of a robustness run, as recorded (non-finite numbers as null). */
export interface IRobustnessVerdictRecord extends Omit<IRobustnessVerdict, 'values' | 'order'> {
  values: (number | null)[];
}

/** Rank agreement between two variants, as recorded (an undefined τ as null). */
export interface IRobustnessAgreementRecord {
  a: string;
  b: string;
  kendall_tau: number | null;
  overlap_synergy: number;
  overlap_redundancy: number;
  overlap_of: number;
}

/** The robustness block of an analysis: its settings and results (engine/robustness.ts). */
export interface IRobustnessRecord {
  settings: { variants: string[]; top: number };
  results: { verdicts: IRobustnessVerdictRecord[]; agreement: IRobustnessAgreementRecord[] };
}

/** A problem found in a record: where (a JSON Pointer into the stored record) and what. */
export interface IRecordProblem {
  /** JSON Pointer of the offending value inside the record, '' for the record itself. */
  path: string;
  /** A sentence naming the path, e.g. "/analyses/0/estimator must be one of plugin, …". */
  message: string;
}

/** The notebook metadata, as far as the record needs it. */
export interface IMetadataAccess {
  get(key: string): unknown;
  set(key: string, value: unknown): void;
}

/** How current data compares with an analysis' recorded fingerprint. */
export interface IDataComparison {
  /** Whether the fingerprints are equal: the data is the data the analysis read. */
  same: boolean;
  /**
   * Selected columns whose own digest differs (empty when the record has no per-column
   * digests, as records migrated from version 0).
   */
  changedColumns: string[];
  /** Selected columns that the current fingerprint does not cover (gone or renamed). */
  missingColumns: string[];
}
