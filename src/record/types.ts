/**
 * Types of the record Polyadic keeps in a notebook's metadata (DESIGN.md §4). They mirror
 * schema/record.schema.json field by field; the schema is what is checked, these are what the
 * code reads after a check.
 */

import type { BinMethod, EstimatorName, MissingPolicy, Units } from '../engine/types';

/** The notebook metadata key of the record. */
export const RECORD_METADATA_KEY = 'polyadic';

/** The record layout version this code writes. */
export const RECORD_VERSION = 1;

/** MIME type of a decomposition cell's output: `{ record_id }`, looked up in the notebook's record. */
export const ANALYSIS_MIME_TYPE = 'application/vnd.polyadic.analysis+json';

/** Longest label a record holds, in characters (the schema's `maxLength`). */
export const MAX_LABEL_LENGTH = 200;

/** Name of the canonical encoding the fingerprint hashes (docs/fingerprint.md). */
export const FINGERPRINT_ENCODING = 'pdfp1';

/** The whole record: `{ "version": 1, "analyses": [...] }`. */
export interface IRecordDocument {
  version: typeof RECORD_VERSION;
  analyses: IAnalysisRecord[];
}

/** The fingerprint of the selected columns. */
export interface IFingerprintRef {
  encoding: typeof FINGERPRINT_ENCODING;
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

/** The data an analysis read. */
export interface ISourceRecord {
  frame: string;
  rows: number;
  columns: ISourceColumn[];
  sample?: ISampleInfo;
  fingerprint: IFingerprintRef;
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

/** Significance-testing settings (defaults in the schema). */
export interface IStatisticsSettings {
  surrogates: number;
  seed: number;
  bootstrap: number;
  alpha: number;
}

/** One multiplet of the summary, in the units of the analysis. */
export interface IMultipletSummary {
  columns: string[];
  order: number;
  entropy: number;
  coinformation: number;
  total_correlation: number;
  dual_total_correlation: number;
  o_information: number;
}

/** Order histogram of co-information for one order. */
export interface IOrderHistogram {
  order: number;
  edges: number[];
  counts: number[];
}

/** The results of an analysis in brief. */
export interface IResultSummary {
  synergy: IMultipletSummary[];
  redundancy: IMultipletSummary[];
  multiplet_count: number;
  rows_used: number;
  histograms?: IOrderHistogram[];
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
  statistics: IStatisticsSettings;
  summary: IResultSummary;
}

/** A problem found in a record: where (a JSON Pointer into the stored record) and what. */
export interface IRecordProblem {
  /** JSON Pointer of the offending value inside the record, '' for the record itself. */
  path: string;
  /** A sentence naming the path, e.g. "/analyses/0/estimator must be one of plugin, …". */
  message: string;
}
