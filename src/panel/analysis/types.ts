/**
 * The contract between the analysis state (data, binning, estimator, run sections) and the
 * sections that consume a finished run (results, records). Plain data only: the Results and
 * Record sections code against these interfaces, never against the analysis model's internals.
 */
import type { ISignal } from '@lumino/signaling';

import type { PolyadicError } from '../../engine/errors';
import type { IFetchedField } from '../../bridge/decode';
import type { IFrameInfo } from '../../bridge/protocol';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions } from '../../engine/types';
import type { IWeightedTable } from '../../record/scan-fingerprint';
import type { IRunProgress } from '../../worker/pool';

/** Where a run stands. */
export type RunState = 'idle' | 'fetching' | 'running' | 'done' | 'cancelled' | 'error';

/** The frame an analysis ran on, as far as the front end knows it. */
export interface IAnalysisFrameInfo {
  /** Variable name of the frame in the kernel. */
  name: string;
  /** The kernel's listing entry of the frame at fetch time (all of its columns). */
  listed: IFrameInfo | null;
  /** How each fetched column was encoded, in the order of the selected columns. */
  fields: IFetchedField[];
  /** Rows received (and analysed before missing-value handling). */
  rows: number;
  /** Rows of the frame in the kernel. */
  originalRows: number;
  /** Whether `rows` is a seeded random sample of `originalRows`. */
  sampled: boolean;
  /** Seed of the row sample (reported even when not sampled). */
  seed: number;
  /** Length of the IPC stream received, in bytes. */
  bytes: number;
  /**
   * The fetched columns the engine read (the selected ones, in order). The record section
   * fingerprints them (src/record/fingerprint.ts); without them a run is not recorded.
   */
  columns?: readonly ColumnView[];
  /** A scanned frame's run: the engine that scanned it and the distinct binned rows walked. */
  scan?: IScannedRun;
}

/** What a scanned frame's run keeps of its scan: enough to record it (src/record/scan-fingerprint.ts). */
export interface IScannedRun {
  /** The engine's name as the kernel gives it (`duckdb`, `spark`) and its version. */
  engine: string;
  version: string;
  /** Distinct binned rows the walk took (after the missing-value policy). */
  distinctRows: number;
  /** Those rows' codes, one array per selected column, and each row's count: the record's `pdsc1` fingerprint covers them. */
  table: IWeightedTable;
  /** The selected columns as the scan read them: name, the engine's type, and how they were binned. */
  columns: { name: string; dtype: string; kind: 'numeric' | 'categorical' }[];
}

/** Everything a finished run leaves behind; carried by `runCompleted`. */
export interface IRunCompleted {
  /** Record id of this run (`pd-…`, src/record/ids.ts); also the kernel's results key. */
  analysisId: string;
  /** The engine's result. */
  result: IAnalysisResult;
  /**
   * The options the engine ran with, fully spelt out: `columns` (selected, in order),
   * `binsByColumn` (one spec per selected column), `estimator`, `units`, `maxOrder`,
   * `missing`, `maxMultiplets`.
   */
  options: IAnalyzeOptions;
  /** The frame the run read. */
  frame: IAnalysisFrameInfo;
  /** When the run finished (ISO 8601). */
  finished: string;
  /** Wall time from pressing Run to the result, in ms (fetch included). */
  elapsedMs: number;
  /** Workers that walked the lattice. */
  workers: number;
}

/**
 * The read-only face of the analysis model that the Results and Record sections use.
 * `resultChanged` fires with the latest completed run, or null when the result is cleared
 * (another frame picked, notebook switched); `runCompleted` fires once per successful run.
 */
export interface IAnalysisState {
  /** The latest completed run, or null. */
  readonly latest: IRunCompleted | null;
  /** Fires when `latest` changes. */
  readonly resultChanged: ISignal<IAnalysisState, IRunCompleted | null>;
  /** Fires once per successful run, after `latest` is set. */
  readonly runCompleted: ISignal<IAnalysisState, IRunCompleted>;
  /** Where the current or last run stands. */
  readonly runState: RunState;
  /** Fires on every progress report and state change of a run. */
  readonly runChanged: ISignal<IAnalysisState, IRunStatus>;
}

/** The run's state for views: progress while running, the message when it ended badly. */
export interface IRunStatus {
  state: RunState;
  /** The latest progress report while running. */
  progress: IRunProgress | null;
  /**
   * Why the run did not finish (state 'error' or 'cancelled'): its message is one or two
   * sentences for the user, its `detail` the column, row or option at fault.
   */
  error: PolyadicError | null;
  /** While a scanned frame is scanned: the scan's stage (the driver's or the kernel's words). */
  stage?: string;
}
