/**
 * State of the panel's records section: the analyses recorded in the followed notebook's
 * metadata, which one is chosen, and whether the data the panel fetched still matches the
 * chosen analysis' fingerprint. Every change goes through src/record/store.ts, so only the
 * `polyadic` metadata key is ever written and an invalid or newer record is never rewritten.
 * No JupyterLab imports: the metadata arrives through {@link IMetadataAccess}, so the model
 * runs in unit tests without a DOM.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { scanEngineName } from '../../bridge/protocol';
import { asPolyadicError, errorMessage, PolyadicError } from '../../engine/errors';
import { formatCount } from '../../engine/text';
import { fingerprintColumns, type IFingerprint } from '../../record/fingerprint';
import { recordFromResult } from '../../record/recordFromResult';
import { fingerprintScan, type IScanFingerprint } from '../../record/scan-fingerprint';
import { withRobustness } from '../../record/robustness';
import type { IRobustnessResult } from '../../engine/robustness';
import { compareFingerprint, optionsFromRecord } from '../../record/settings';
import {
  addAnalysis,
  deleteAnalysis,
  findAnalysis,
  readRecords,
  renameAnalysis,
  replaceAnalysis,
  sameRun,
  type IMetadataAccess,
  type IRecordState
} from '../../record/store';
import type { IAnalysisRecord, ISampleInfo } from '../../record/types';
import type { IPolyadicPanel } from '../../tokens';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { IRunCompleted, IScannedRun } from '../analysis/types';
import type { IDataCheck, IRecordsNotebook, IRestoreRequest, IRunFrame } from './types';
import { SignalOwner } from '../disposable';

export type { IDataCheck, IRecordsNotebook, IRestoreRequest, IRunFrame } from './types';

/** Holds the followed notebook's record and signals every change of it. */
export class RecordsModel extends SignalOwner implements IPolyadicPanel.IRecords {
  /** Create the model; `options.translator` translates its messages (as written without one). */
  constructor(options: RecordsModel.IOptions = {}) {
    super();
    this._trans = translationBundle(options.translator);
  }

  /** Emitted after the record, the choice, the data check or the last error changed. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** Emitted when the person asks to restore an analysis' settings. */
  get restoreRequested(): ISignal<this, IRestoreRequest> {
    return this._restoreRequested;
  }

  /** The followed notebook, or `null` when none is open. */
  get notebook(): IRecordsNotebook | null {
    return this._notebook;
  }

  /** The record as last read, or `null` without a notebook. */
  get state(): IRecordState | null {
    return this._state;
  }

  /** Id of the chosen analysis, or `null`. */
  get selectedId(): string | null {
    return this._selectedId;
  }

  /** The chosen analysis, or `null`. */
  get selected(): IAnalysisRecord | null {
    if (this._state === null || this._selectedId === null) {
      return null;
    }
    return findAnalysis(this._state, this._selectedId) ?? null;
  }

  /** The data check of the chosen analysis, or `null` when none was made. */
  get dataCheck(): IDataCheck | null {
    return this._selectedId === null ? null : this.dataCheckOf(this._selectedId);
  }

  /** The latest data check of an analysis, or `null` when none was made since the notebook was opened. */
  dataCheckOf(id: string): IDataCheck | null {
    return this._checks.get(id) ?? null;
  }

  /** Why the last action failed (its message is what the section shows), or `null`. */
  get error(): PolyadicError | null {
    return this._error;
  }

  /** Show a sentence about the last action (e.g. what a restore could not set), or clear it. */
  setNotice(message: string | null): void {
    if (message === (this._error?.message ?? null)) {
      return;
    }
    this._error = message === null ? null : new PolyadicError('usage', message);
    this._changed.emit();
  }

  /** Follow another notebook (or none) and read its record. */
  setNotebook(notebook: IRecordsNotebook | null): void {
    if (this._notebook?.path === notebook?.path && this._notebook?.metadata === notebook?.metadata) {
      return;
    }
    this._notebook = notebook;
    this._selectedId = null;
    this._checks.clear();
    this._error = null;
    this.refresh();
  }

  /** Read the record again (the notebook's metadata changed). */
  refresh(): void {
    this._state = this._notebook === null ? null : readRecords(this._notebook.metadata);
    if (this._selectedId !== null && this.selected === null) {
      this._selectedId = null;
    }
    this._changed.emit();
  }

  /** Choose an analysis (or none). */
  select(id: string | null): void {
    if (id === this._selectedId) {
      return;
    }
    this._selectedId = id !== null && this._state !== null && findAnalysis(this._state, id) ? id : null;
    this._changed.emit();
  }

  /**
   * The id of the recorded analysis that `run` repeats (the same settings on the same data), or
   * null when it repeats none. The analysis section asks before it announces a run, so the
   * kernel's results, the exports and the record all carry the one id.
   */
  async rerunOf(run: IRunCompleted): Promise<string | null> {
    const state = this._state;
    if (state === null || state.readOnly || (run.frame.columns === undefined && run.frame.scan === undefined)) {
      return null;
    }
    try {
      const candidate = await this._analysisOf(run);
      return state.analyses.find(existing => sameRun(existing, candidate))?.id ?? null;
    } catch {
      // recordRun says why the run cannot be recorded
      return null;
    }
  }

  /**
   * Record a completed run in the followed notebook (the metadata change marks it dirty) and
   * choose it. A re-run with the same settings on the same data replaces the analysis it
   * repeats, which keeps its id (so its analysis cells still find it) and its label (which the
   * person may have given it), instead of adding a second one. Resolves to the analysis
   * recorded, or `null` when it could not be recorded (the reason is in {@link error}).
   */
  async recordRun(run: IRunCompleted): Promise<IAnalysisRecord | null> {
    const notebook = this._notebook;
    if (notebook === null) {
      return this._fail(this._trans.__('No notebook is open, so the run was not recorded.'));
    }
    if (run.frame.columns === undefined && run.frame.scan === undefined) {
      return this._fail(this._trans.__('The run was not recorded: the analysis section did not pass on the columns it read.'));
    }
    let analysis: IAnalysisRecord;
    try {
      analysis = await this._analysisOf(run);
    } catch (error) {
      return this._fail(this._trans.__('The run was not recorded: %1', errorMessage(error)), error);
    }
    // the person may have switched notebooks while the fingerprint was computed
    if (this._notebook !== notebook) {
      return this._fail(this._trans.__('The notebook changed while the run was being recorded, so it was not recorded.'));
    }
    const repeated =
      this._state?.analyses.find(existing => existing.id === analysis.id) ??
      this._state?.analyses.find(existing => sameRun(existing, analysis));
    try {
      if (repeated !== undefined) {
        analysis = { ...analysis, id: repeated.id, label: repeated.label };
        this._state = replaceAnalysis(notebook.metadata, analysis);
      } else {
        this._state = addAnalysis(notebook.metadata, analysis);
      }
    } catch (error) {
      return this._fail(this._trans.__('The run was not recorded: %1', errorMessage(error)), error);
    }
    // a re-run on the same data answers the data check of the analysis it replaces
    this._checks.delete(analysis.id);
    this._recordedAs.set(run.analysisId, analysis.id);
    this._selectedId = analysis.id;
    this._error = null;
    this._changed.emit();
    return analysis;
  }

  /**
   * Add the robustness block of a completed check to the analysis recorded for `run` (replacing
   * any earlier block). Resolves to null when recorded, else why not (also in {@link error}).
   */
  async recordRobustness(run: IRunCompleted, result: IRobustnessResult): Promise<string | null> {
    const notebook = this._notebook;
    if (notebook === null) {
      this._fail(this._trans.__('No notebook is open, so the robustness check was not recorded.'));
      return this._error?.message ?? null;
    }
    const id = this._recordedAs.get(run.analysisId) ?? run.analysisId;
    const analysis = this._state === null ? undefined : findAnalysis(this._state, id);
    if (analysis === undefined) {
      this._fail(this._trans.__("The robustness check was not recorded: analysis '%1' is not in this notebook's record.", id));
      return this._error?.message ?? null;
    }
    try {
      this._state = replaceAnalysis(notebook.metadata, withRobustness(analysis, result));
    } catch (error) {
      this._fail(this._trans.__('The robustness check was not recorded: %1', errorMessage(error)), error);
      return this._error?.message ?? null;
    }
    this._error = null;
    this._changed.emit();
    return null;
  }

  /** Rename an analysis. Returns whether it was renamed (else see {@link error}). */
  rename(id: string, label: string): boolean {
    return this._change(metadata => renameAnalysis(metadata, id, label));
  }

  /** Delete an analysis. Returns whether it was deleted (else see {@link error}). */
  remove(id: string): boolean {
    return this._change(metadata => deleteAnalysis(metadata, id));
  }

  /** Choose an analysis and ask for its settings to be restored. Returns whether it was found. */
  restore(id: string): boolean {
    const analysis = this._state === null ? undefined : findAnalysis(this._state, id);
    if (analysis === undefined) {
      this._fail(this._trans.__("No analysis with id '%1' is recorded in this notebook.", id.slice(0, 80)));
      return false;
    }
    this.select(id);
    this._restoreRequested.emit({
      analysis,
      frame: analysis.source.frame,
      options: optionsFromRecord(analysis),
      statistics: analysis.statistics ? { ...analysis.statistics } : null
    });
    return true;
  }

  /**
   * Compare a frame the panel fetched with the chosen analysis' fingerprint (the "data
   * changed" banner). A frame of another name is ignored; a different sample, or columns the
   * fetch lacks, make the check `not-comparable`.
   */
  async checkData(frame: IRunFrame): Promise<IDataCheck | null> {
    const analysis = this.selected;
    if (analysis === null || frame.name !== analysis.source.frame) {
      return null;
    }
    const notebook = this._notebook;
    const check = await Private.check(analysis, frame, this._trans);
    if (this._notebook !== notebook) {
      return null;
    }
    this._checks.set(analysis.id, check);
    this._changed.emit();
    return check;
  }

  private _change(write: (metadata: IMetadataAccess) => IRecordState): boolean {
    if (this._notebook === null) {
      this._fail(this._trans.__('No notebook is open.'));
      return false;
    }
    try {
      this._state = write(this._notebook.metadata);
    } catch (error) {
      this._fail(errorMessage(error), error);
      return false;
    }
    if (this._selectedId !== null && this.selected === null) {
      this._selectedId = null;
    }
    this._error = null;
    this._changed.emit();
    return true;
  }

  /** The record of a run (not yet written), its fingerprint computed once per run. */
  private async _analysisOf(run: IRunCompleted): Promise<IAnalysisRecord> {
    if (run.frame.scan !== undefined) {
      return this._scannedAnalysisOf(run, run.frame.scan);
    }
    const fetched = run.frame.columns ?? [];
    const selected = run.result.columns.map(column => column.name);
    const byName = new Map(fetched.map(column => [column.name, column]));
    const columns = selected.map(name => {
      const column = byName.get(name);
      if (column === undefined) {
        throw new Error(this._trans.__("The run used column '%1', which the fetched frame '%2' does not hold.", name, run.frame.name));
      }
      return column;
    });
    if (this._fingerprinted?.run !== run) {
      this._fingerprinted = { run, fingerprint: fingerprintColumns(columns) };
    }
    const fingerprint = await this._fingerprinted.fingerprint;
    return recordFromResult({
      options: run.options,
      result: run.result,
      source: { frame: run.frame.name, columns, fingerprint, sample: Private.sampleOf(run.frame) },
      // the kernel keeps the results under the same id, so polyadic.show finds them
      id: run.analysisId,
      created: Private.dateOf(run.finished)
    });
  }

  /**
   * The record of a scanned frame's run: the `pdsc1` fingerprint of the weighted table the walk
   * took, and the origin block (the engine, the input rows, the distinct binned rows), as
   * `polyadic verify --via duckdb` re-derives them.
   */
  private async _scannedAnalysisOf(run: IRunCompleted, scan: IScannedRun): Promise<IAnalysisRecord> {
    const engine = scan.engine;
    if (engine !== 'duckdb' && engine !== 'spark') {
      throw new PolyadicError('input', this._trans.__("The run was scanned by an engine the record does not know ('%1').", engine.slice(0, 40)));
    }
    if (this._fingerprinted?.run !== run) {
      this._fingerprinted = { run, fingerprint: fingerprintScan(scan.table, run.result.rows, run.result.columns) };
    }
    const fingerprint = await this._fingerprinted.fingerprint;
    return recordFromResult({
      options: run.options,
      result: run.result,
      source: {
        frame: run.frame.name,
        columns: scan.columns,
        fingerprint,
        scan: { engine: { name: engine, version: scan.version }, table: scan.table }
      },
      id: run.analysisId,
      created: Private.dateOf(run.finished)
    });
  }

  /** Keep a failure: `message` says what was not done; `cause`, if any, gives its kind and detail. */
  private _fail(message: string, cause?: unknown): null {
    const origin = cause === undefined ? null : asPolyadicError(cause);
    this._error = new PolyadicError(origin?.kind ?? 'usage', message, origin?.detail);
    this._changed.emit();
    return null;
  }

  private readonly _trans: TranslationBundle;
  private _notebook: IRecordsNotebook | null = null;
  private _state: IRecordState | null = null;
  private _selectedId: string | null = null;
  private _checks = new Map<string, IDataCheck>();
  /** Record id each run of this session was recorded under (a repeated run keeps the old id). */
  private _recordedAs = new Map<string, string>();
  private _fingerprinted: { run: IRunCompleted; fingerprint: Promise<IFingerprint | IScanFingerprint> } | null = null;
  private _error: PolyadicError | null = null;
  private _changed = new Signal<this, void>(this);
  private _restoreRequested = new Signal<this, IRestoreRequest>(this);
}

/** The statics of {@link RecordsModel}. */
export namespace RecordsModel {
  /** Options of a {@link RecordsModel}. */
  export interface IOptions {
    /** Translates the model's messages. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** The sample a record notes, when the frame was sampled. */
  export function sampleOf(frame: Pick<IRunFrame, 'sampled' | 'seed' | 'rows' | 'originalRows'>): ISampleInfo | undefined {
    return frame.sampled ? { seed: frame.seed, row_cap: frame.rows, original_rows: frame.originalRows } : undefined;
  }

  /** The time a run finished, or now when the text is not a date. */
  export function dateOf(text: string): Date {
    const date = new Date(text);
    return Number.isNaN(date.getTime()) ? new Date() : date;
  }

  export async function check(analysis: IAnalysisRecord, frame: IRunFrame, trans: TranslationBundle): Promise<IDataCheck> {
    const rowsText = (rows: number): string => trans._n('%2 row', '%2 rows', rows, formatCount(rows));
    const quoted = (names: string[]): string => names.map(name => `'${name}'`).join(', ');
    const id = analysis.id;
    const origin = analysis.source.origin;
    if (origin?.kind === 'scan') {
      // the panel holds a preview sample of a scanned frame, never the weighted table
      return {
        id,
        status: 'not-comparable',
        comparison: null,
        message: trans.__(
          'This analysis was recorded from a %1 scan of every row of \'%2\'; run it again to compare the data, or check it with polyadic verify.',
          scanEngineName(origin.engine.name),
          frame.name
        )
      };
    }
    const recorded = analysis.source.sample;
    const sampleNow = sampleOf(frame);
    const sameSample =
      recorded === undefined
        ? sampleNow === undefined
        : sampleNow !== undefined && recorded.seed === sampleNow.seed && recorded.row_cap === sampleNow.row_cap;
    if (!sameSample) {
      return {
        id,
        status: 'not-comparable',
        comparison: null,
        message:
          recorded === undefined
            ? trans.__(
                "The panel read a sample of %1 of %2 of '%3', but this analysis read every row; the data cannot be compared.",
                formatCount(frame.rows),
                rowsText(frame.originalRows),
                frame.name
              )
            : frame.sampled
              ? trans.__(
                  'This analysis read a sample of %1 (seed %2); the panel read %3 (seed %4), so the data cannot be compared.',
                  rowsText(recorded.row_cap),
                  recorded.seed,
                  rowsText(frame.rows),
                  frame.seed
                )
              : trans.__(
                  'This analysis read a sample of %1 (seed %2); the panel read %3, so the data cannot be compared.',
                  rowsText(recorded.row_cap),
                  recorded.seed,
                  rowsText(frame.rows)
                )
      };
    }
    const byName = new Map(frame.columns.map(column => [column.name, column]));
    const missing = analysis.columns.filter(name => !byName.has(name));
    if (missing.length > 0) {
      return {
        id,
        status: 'not-comparable',
        comparison: null,
        message: trans._n(
          "The panel has not read column %2 of '%3'; the data cannot be compared.",
          "The panel has not read columns %2 of '%3'; the data cannot be compared.",
          missing.length,
          quoted(missing),
          frame.name
        )
      };
    }
    const fingerprint = await fingerprintColumns(analysis.columns.map(name => byName.get(name)!));
    const comparison = compareFingerprint(analysis, fingerprint);
    if (comparison.same) {
      return { id, status: 'same', comparison, message: trans.__('The data is the data this analysis read.') };
    }
    const changed = comparison.changedColumns;
    const where = changed.length > 0 ? trans._n(' (column %2)', ' (columns %2)', changed.length, quoted(changed)) : '';
    return {
      id,
      status: 'changed',
      comparison,
      message: trans.__("The data of '%1' changed since this analysis was recorded%2.", frame.name, where)
    };
  }
}
