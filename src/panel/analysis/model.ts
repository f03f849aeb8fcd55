/**
 * The analysis state that ties the Data, Binning, Estimator and Run sections together: it
 * builds the engine options from the three sections, runs them (fetch the selected columns
 * through the bridge, then the engine pool), keeps the latest result and announces it to the
 * Results and Record sections through the contract of ./types.ts.
 */
import type { JSONObject } from '@lumino/coreutils';
import { ISignal, Signal } from '@lumino/signaling';

import type { IFetchedFrame } from '../../bridge/decode';
import { KernelScanner } from '../../bridge/kernel-scanner';
import { scanEngineName } from '../../bridge/protocol';
import { scanWeightedCodes, ScanStage } from '../../engine/aggregate/scan';
import type { IPreparedCodes } from '../../engine/binning';
import { asPolyadicError, errorMessage, isCancellation, PolyadicError } from '../../engine/errors';
import { formatCount, plural, wordFor } from '../../engine/text';
import type { ColumnView, IAnalyzeOptions } from '../../engine/types';
import { newRecordId } from '../../record/ids';
import type { IPolyadicSettings } from '../../settings';
import type { IPolyadicPanel } from '../../tokens';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { EnginePool, IRunProgress, IRunResult } from '../../worker/pool';
import type { IColumnPreview } from '../../worker/protocol';
import { BinningModel } from '../binning/model';
import { DataModel } from '../data/model';
import { StatisticsModel, type StatisticsScope } from '../statistics/model';
import { adequacyOf, EstimatorModel, IAdequacy, type IEstimatorChoices, type IOrderClamp } from '../estimator/model';
import type { IRunCompleted, IRunStatus, RunState } from './types';

/** What the model needs of the engine pool (an {@link EnginePool} in the panel). */
export interface IEngineRunner {
  analyze(columns: ColumnView[], options: IAnalyzeOptions, runOptions: EnginePool.IRunOptions): Promise<IRunResult>;
  /** Walk codes binned elsewhere: a scanned frame's weighted distinct rows. */
  analyzePrepared(prepared: IPreparedCodes, options: IAnalyzeOptions, runOptions: EnginePool.IRunOptions): Promise<IRunResult>;
  preview(column: ColumnView, spec?: string): Promise<IColumnPreview>;
  cancel(): void;
}

/** The state of one analysis in the panel. */
export class AnalysisModel implements IPolyadicPanel.IAnalysis {
  /** Create the model over an engine runner. */
  constructor(options: AnalysisModel.IOptions) {
    this._engine = options.engine;
    this._now = options.now ?? (() => globalThis.performance.now());
    this._recordIdFor = options.recordIdFor ?? null;
    this._trans = translationBundle(options.translator);
    this.data = new DataModel({});
    this.binning = new BinningModel({
      preview: (column, spec) => this._engine.preview(column, spec),
      debounceMs: options.previewDebounceMs
    });
    this.estimator = new EstimatorModel();
    this.statistics = new StatisticsModel();
    this.data.changed.connect(this._onDataChanged, this);
    this.data.frameChanged.connect(this._onFrameChanged, this);
    this.binning.changed.connect(this._onInputsChanged, this);
    this.estimator.changed.connect(this._onInputsChanged, this);
    this.statistics.changed.connect(this._onInputsChanged, this);
  }

  /** The Data section's state. */
  readonly data: DataModel;
  /** The Binning section's state. */
  readonly binning: BinningModel;
  /** The Estimator and order section's state. */
  readonly estimator: EstimatorModel;
  /** The Statistics section's state. */
  readonly statistics: StatisticsModel;

  /** Fires when anything the sections show changes (inputs, adequacy). */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The latest completed run, or null. */
  get latest(): IRunCompleted | null {
    return this._latest;
  }

  /** Fires when `latest` changes. */
  get resultChanged(): ISignal<this, IRunCompleted | null> {
    return this._resultChanged;
  }

  /** Fires once per successful run, after `latest` is set. */
  get runCompleted(): ISignal<this, IRunCompleted> {
    return this._runCompleted;
  }

  /** Where the current or last run stands. */
  get runState(): RunState {
    return this._run.state;
  }

  /** The run's state, progress and message. */
  get run(): IRunStatus {
    return this._run;
  }

  /** Fires on every progress report and state change of a run. */
  get runChanged(): ISignal<this, IRunStatus> {
    return this._runChanged;
  }

  /** Whether a run (fetch or engine) is in progress. */
  get isRunning(): boolean {
    return this._run.state === 'fetching' || this._run.state === 'running';
  }

  /**
   * Follow another notebook (its panel's id; null without one). The estimator, units and
   * highest order chosen are the choices of one notebook: those of the notebook left are kept
   * for when it is followed again, and a notebook followed for the first time starts from the
   * settings.
   */
  setNotebook(key: string | null): void {
    if (key === this._notebook) {
      return;
    }
    if (this._notebook !== null) {
      this._choices.set(this._notebook, { ...this.estimator.choices, touched: this._estimatorTouched });
    }
    this._notebook = key;
    // choices never touched are the settings', which may have changed since
    const kept = key === null ? undefined : this._choices.get(key);
    const settings = this._settings;
    this._applyingSettings = true;
    try {
      if (kept?.touched) {
        this.estimator.setChoices(kept);
      } else {
        this.estimator.setChoices({
          estimator: settings?.estimator ?? this.estimator.estimator,
          units: settings?.units ?? this.estimator.units,
          maxOrder: null
        });
      }
    } finally {
      this._applyingSettings = false;
    }
    this._estimatorTouched = kept?.touched ?? false;
  }

  /** The highest order asked for when it is above the selected columns and lowered, else null. */
  get orderClamp(): IOrderClamp | null {
    return this.estimator.orderClamp(this.data.selected.length);
  }

  /** Take the user settings: row cap, estimator, units, order rule, limits, numeric binning. */
  applySettings(settings: IPolyadicSettings): void {
    this._settings = settings;
    this.data.rowCap = settings.rowCap;
    this.binning.numericDefault = settings.numericBinning;
    // The settings' own changes must not count as the user's choice.
    this._applyingSettings = true;
    try {
      this.estimator.setRule(settings.maxOrderRule, settings.fixedMaxOrder);
      if (!this._estimatorTouched) {
        this.estimator.setDefaults(settings.estimator, settings.units);
      }
      this.statistics.setDefaults({ surrogates: settings.surrogates, seed: settings.seed, alpha: settings.alpha });
    } finally {
      this._applyingSettings = false;
    }
  }

  /** Multiplets the current choices imply. */
  get multipletCount(): bigint {
    return this.estimator.multiplets(this.data.selected.length);
  }

  /** The highest order the current choices imply. */
  get maxOrder(): number {
    return this.estimator.effectiveMaxOrder(this.data.selected.length);
  }

  /** Adequacy of the loaded rows for the largest multiplets, or null while bin counts are unknown. */
  get adequacy(): IAdequacy | null {
    const fetched = this.data.fetched;
    const selected = this.data.selected;
    // Adequacy counts possible joint cells of binned columns; the Gaussian copula does not bin.
    if (fetched === null || selected.length === 0 || this.estimator.estimator === 'gaussian-copula') {
      return null;
    }
    const counts = selected.map(name => this.binning.binCount(name));
    if (counts.some(count => count === null)) {
      return null;
    }
    return adequacyOf(fetched.rows, counts as number[], this.maxOrder);
  }

  /**
   * The rows the statistics go over: a scanned frame's weighted distinct rows (no surrogates
   * nor sharpening, see {@link StatisticsScope}) or the fetched rows.
   */
  get statisticsScope(): StatisticsScope {
    return this.data.isScanned ? 'weighted' : 'rows';
  }

  /** Why Run cannot start now, or null. */
  get blocker(): string | null {
    const trans = this._trans;
    if (this.data.bridge === null || this.data.status?.state !== 'ready') {
      return trans.__('Connect to a notebook whose kernel has polyadic installed.');
    }
    if (this.data.frame === null) {
      return trans.__('Pick a dataframe first.');
    }
    if (this.data.load.state !== 'loaded') {
      return trans.__('Wait until the dataframe has loaded.');
    }
    const selected = this.data.selected;
    if (selected.length === 0) {
      return trans.__('Select at least one column.');
    }
    const bad = selected.find(name => this.binning.problemOf(name) !== null);
    if (bad !== undefined) {
      return trans.__('The binning of column "%1" is not valid.', bad);
    }
    if (this.data.isScanned && this.estimator.estimator === 'gaussian-copula') {
      return trans.__(
        'A scanned frame is binned and counted in its engine, and the Gaussian-copula estimator needs the ranks of every row; choose a count estimator.'
      );
    }
    const statistics = this.statistics.problemOf(this.statisticsScope);
    if (statistics !== null) {
      return `Statistics: ${statistics.message}`;
    }
    const cap = this._settings?.multipletCap;
    if (cap !== undefined && this.multipletCount > BigInt(cap)) {
      return (
        `${plural(this.multipletCount, 'multiplet')} ${wordFor(this.multipletCount, 'exceeds', 'exceed')} the limit of ` +
        `${formatCount(cap)} in the settings; lower the maximum order or select fewer columns.`
      );
    }
    return null;
  }

  /** The engine options of the current choices. */
  options(): IAnalyzeOptions {
    const columns = this.data.selected;
    const options: IAnalyzeOptions = {
      columns,
      binsByColumn: this.binning.specsFor(columns),
      estimator: this.estimator.estimator,
      units: this.estimator.units,
      maxOrder: this.maxOrder
    };
    // the blocker has refused invalid statistics before a run asks for the options; a scanned
    // frame's run takes the bootstrap and the pairwise-preserving null, never surrogates
    const scope = this.statisticsScope;
    const statistics = this.statistics.problemOf(scope) === null ? this.statistics.options(scope) : undefined;
    if (statistics !== undefined) {
      options.statistics = statistics;
    }
    if (this._settings !== null) {
      options.missing = this._settings.missing;
      options.maxMultiplets = this._settings.multipletCap;
    }
    return options;
  }

  /**
   * Run the analysis: fetch the selected columns, run the engine, keep the result, send the
   * multiplets to the kernel. Resolves when the run has ended, however it ended.
   */
  async start(): Promise<void> {
    const blocker = this.blocker;
    const bridge = this.data.bridge;
    const frameName = this.data.frame;
    if (this.isRunning || blocker !== null || bridge === null || frameName === null) {
      if (!this.isRunning && blocker !== null) {
        this._setRun({ state: 'error', progress: null, error: new PolyadicError('usage', blocker) });
      }
      return;
    }
    const ticket = ++this._ticket;
    const started = this._now();
    const options = this.options();
    const listed = this.data.frameInfo;
    this._setRun({ state: 'fetching', progress: null, error: null });
    this.binning.setRunFault(null);
    this.data.setRunFault(null);
    if (this.data.isScanned) {
      await this._startScan(ticket, started, frameName, options);
      return;
    }
    try {
      const fetched: IFetchedFrame = await bridge.fetch(frameName, options.columns ?? [], {
        rowCap: this._settings?.rowCap,
        onProgress: progress => {
          if (ticket === this._ticket && progress.bytesTotal > 0) {
            this._fetchFraction = progress.bytesReceived / progress.bytesTotal;
            this._setRun({ state: 'fetching', progress: null, error: null });
          }
        }
      });
      if (ticket !== this._ticket) {
        return;
      }
      // the run read the frame as it is now: the loaded frame (and the "data changed" check on
      // the chosen record) follows at once, before the engine has finished
      this.data.adopt(fetched);
      this._setRun({ state: 'running', progress: null, error: null });
      const outcome = await this._engine.analyze(fetched.columns, options, {
        onProgress: progress => {
          if (ticket === this._ticket) {
            this._setRun({ state: 'running', progress, error: null });
          }
        }
      });
      if (ticket !== this._ticket) {
        return;
      }
      const completed: IRunCompleted = {
        analysisId: newRecordId(),
        result: outcome.result,
        options,
        frame: {
          name: fetched.name,
          listed,
          fields: fetched.fields,
          rows: fetched.rows,
          originalRows: fetched.originalRows,
          sampled: fetched.sampled,
          seed: fetched.seed,
          bytes: fetched.bytes,
          columns: fetched.columns
        },
        finished: new Date().toISOString(),
        elapsedMs: this._now() - started,
        workers: outcome.workers
      };
      if (await this._keepsRecordedId(ticket, completed)) {
        await this._finish(completed);
      }
    } catch (error) {
      this._fail(ticket, error);
    }
  }

  /**
   * Give a re-run of a recorded analysis that analysis' id (in the kernel and the exports too);
   * false when a newer run took over meanwhile.
   */
  private async _keepsRecordedId(ticket: number, completed: IRunCompleted): Promise<boolean> {
    const repeated = this._recordIdFor === null ? null : await this._recordIdFor(completed);
    if (ticket !== this._ticket) {
      return false;
    }
    if (repeated !== null) {
      completed.analysisId = repeated;
    }
    return true;
  }

  /** Keep a completed run and announce it. */
  private async _finish(completed: IRunCompleted): Promise<void> {
    this._latest = completed;
    this._setRun({ state: 'done', progress: null, error: null });
    this._resultChanged.emit(completed);
    // The results view, the record and the upload each take their own task, so the page
    // paints and answers input between them instead of in one long freeze.
    await Private.yieldToPage();
    this._runCompleted.emit(completed);
    await Private.yieldToPage();
    void this._sendToKernel(completed);
  }

  /** End the run of `ticket` as cancelled or failed (unless a newer run took over). */
  private _fail(ticket: number, error: unknown): void {
    if (ticket !== this._ticket) {
      return;
    }
    const failure = asPolyadicError(error);
    this._setRun({ state: isCancellation(failure) ? 'cancelled' : 'error', progress: null, error: failure });
    // the column or binning at fault is marked in its section
    if (!isCancellation(failure)) {
      this.binning.setRunFault(failure);
      this.data.setRunFault(failure);
    }
  }

  /**
   * Cancel the run in progress: the engine's workers stop at once; a fetch is abandoned; a
   * scan is stopped in the kernel (a `cancel` naming it).
   */
  cancel(): void {
    if (!this.isRunning) {
      return;
    }
    this._ticket++;
    this._engine.cancel();
    const scanner = this._scanner;
    this._scanner = null;
    // the kernel's answer does not matter to the run, which ends here as cancelled
    scanner?.cancel().catch(() => undefined);
    this._setRun({ state: 'cancelled', progress: null, error: new PolyadicError('cancelled', this._trans.__('The analysis was cancelled.')) });
  }

  /** Fraction of the fetch of the current run received, 0 … 1. */
  get fetchFraction(): number {
    return this._fetchFraction;
  }

  /** What went wrong sending the latest result to the kernel, or null. */
  get kernelMessage(): string | null {
    return this._kernelMessage;
  }

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Cancel any run and dispose the section models. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this.cancel();
    this._isDisposed = true;
    this.data.dispose();
    this.binning.dispose();
    this.estimator.dispose();
    this.statistics.dispose();
    Signal.clearData(this);
  }

  /**
   * Run on a scanned frame: the engine's scan driver plans the binning from the kernel's
   * facts and details, the kernel groups the binned rows, and the workers walk the weighted
   * distinct rows. The run line shows each stage.
   */
  private async _startScan(ticket: number, started: number, frameName: string, options: IAnalyzeOptions): Promise<void> {
    const bridge = this.data.bridge;
    const listed = this.data.frameInfo;
    if (bridge === null) {
      return;
    }
    const trans = this._trans;
    const engine = scanEngineName(listed?.engine?.name);
    const stageText: Record<ScanStage, string> = {
      facts: trans.__('%1 counts the rows, missing values and extremes of each column…', engine),
      details: trans.__('%1 computes the order statistics and moments the binning needs…', engine),
      group: trans.__('%1 bins and groups every row…', engine),
      binning: trans.__('Reading the grouped table…')
    };
    const show = (stage: string): void => {
      if (ticket === this._ticket) {
        this._setRun({ state: 'fetching', progress: null, error: null, stage });
      }
    };
    const scanner = new KernelScanner({ bridge, name: frameName, onStage: stage => show(trans.__('%1: %2', engine, stage)) });
    this._scanner = scanner;
    try {
      const { prepared, plan } = await scanWeightedCodes(scanner, options.columns ?? [], options, {
        maxDistinctRows: AnalysisModel.SCAN_MAX_DISTINCT_ROWS,
        onStage: stage => show(stageText[stage])
      });
      if (ticket !== this._ticket) {
        return;
      }
      this._setRun({ state: 'running', progress: null, error: null });
      const outcome = await this._engine.analyzePrepared(prepared, options, {
        onProgress: progress => {
          if (ticket === this._ticket) {
            this._setRun({ state: 'running', progress, error: null });
          }
        }
      });
      if (ticket !== this._ticket) {
        return;
      }
      const completed: IRunCompleted = {
        analysisId: newRecordId(),
        result: outcome.result,
        options,
        frame: {
          name: frameName,
          listed,
          fields: [],
          rows: prepared.rows,
          originalRows: prepared.rows,
          sampled: false,
          seed: 0,
          bytes: 0,
          scan: {
            engine: plan.engine.name,
            version: plan.engine.version,
            distinctRows: prepared.weights.length,
            // the page keeps its own copy (the pool clones what it sends to the workers)
            table: { codes: prepared.codes, weights: prepared.weights },
            columns: plan.columns.map(column => ({
              name: column.name,
              dtype: column.dtype,
              kind: column.kind === 'numeric' ? 'numeric' : 'categorical'
            }))
          }
        },
        finished: new Date().toISOString(),
        elapsedMs: this._now() - started,
        workers: outcome.workers
      };
      if (await this._keepsRecordedId(ticket, completed)) {
        await this._finish(completed);
      }
    } catch (error) {
      this._fail(ticket, error);
    } finally {
      if (this._scanner === scanner) {
        this._scanner = null;
      }
    }
  }

  private async _sendToKernel(completed: IRunCompleted): Promise<void> {
    const bridge = this.data.bridge;
    if (bridge === null) {
      return;
    }
    const meta: JSONObject = {
      frame: completed.frame.name,
      units: completed.result.units,
      estimator: completed.result.estimator,
      max_order: completed.result.max_order
    };
    try {
      await bridge.sendResults(completed.analysisId, completed.result.multiplets, { meta, chunkBytes: Private.UPLOAD_CHUNK_BYTES });
      this._kernelMessage = null;
    } catch (error) {
      this._kernelMessage = this._trans.__('The results could not be sent to the kernel: %1', errorMessage(error));
    }
    this._changed.emit();
  }

  private _setRun(status: IRunStatus): void {
    if (status.state !== 'fetching') {
      this._fetchFraction = status.state === 'running' || status.state === 'done' ? 1 : 0;
    }
    this._run = status;
    this._runChanged.emit(status);
  }

  private _onDataChanged(): void {
    const fetched = this.data.fetched;
    const frame = this.data.frame;
    // The same frame read again (changed in the kernel): the binning keeps its specs, also
    // while the new rows are on their way.
    const rereading = fetched === null && frame !== null && frame === this._binnedFrame && this.data.load.state === 'loading';
    if (fetched !== this._binned && !rereading) {
      // The picked frame's rows arrived (or went): the binning section follows its columns.
      const keepSpecs = fetched !== null && fetched.name === this._binnedFrame;
      this._binned = fetched;
      this._binnedFrame = fetched?.name ?? null;
      this.binning.setColumns(fetched?.columns ?? [], { keepSpecs });
    }
    this.binning.requestBinCounts(this.data.selected);
    this._changed.emit();
  }

  private _onFrameChanged(): void {
    if (this.isRunning) {
      this.cancel();
    }
    // A new frame: the previous result no longer belongs to what the sections show.
    if (this._latest !== null) {
      this._latest = null;
      this._resultChanged.emit(null);
    }
    if (this._run.state !== 'idle') {
      this._setRun({ state: 'idle', progress: null, error: null });
    }
  }

  private _onInputsChanged(sender: unknown): void {
    if (sender === this.estimator && !this._applyingSettings) {
      this._estimatorTouched = true;
    }
    if (sender === this.estimator) {
      this.binning.unusedBecause =
        this.estimator.estimator === 'gaussian-copula'
          ? this._trans.__(
              'Not used by the Gaussian-copula estimator: it does not bin, but replaces each column by the normal ' +
                'scores of its ranks. These specs apply again when a binned estimator is chosen.'
            )
          : null;
    }
    this._changed.emit();
  }

  private _engine: IEngineRunner;
  private _scanner: KernelScanner | null = null;
  private readonly _trans: TranslationBundle;
  private _now: () => number;
  private _recordIdFor: ((run: IRunCompleted) => Promise<string | null>) | null;
  private _settings: IPolyadicSettings | null = null;
  private _binned: IFetchedFrame | null = null;
  private _binnedFrame: string | null = null;
  private _estimatorTouched = false;
  private _notebook: string | null = null;
  private _choices = new Map<string, IEstimatorChoices & { touched: boolean }>();
  private _applyingSettings = false;
  private _latest: IRunCompleted | null = null;
  private _run: IRunStatus = { state: 'idle', progress: null, error: null };
  private _fetchFraction = 0;
  private _kernelMessage: string | null = null;
  private _ticket = 0;
  private _isDisposed = false;
  private _changed = new Signal<this, void>(this);
  private _resultChanged = new Signal<this, IRunCompleted | null>(this);
  private _runCompleted = new Signal<this, IRunCompleted>(this);
  private _runChanged = new Signal<this, IRunStatus>(this);
}

/** The statics of {@link AnalysisModel}. */
export namespace AnalysisModel {
  /**
   * Most distinct binned rows a scanned frame's run hands to the walk (our choice: 5 million
   * rows of 20 Int32 codes and a weight are about 420 MB in the page); above it the run stops
   * and says so.
   */
  export const SCAN_MAX_DISTINCT_ROWS = 5_000_000;

  /** Options of an {@link AnalysisModel}. */
  export interface IOptions {
    /** Runs analyses and previews (the engine pool). */
    engine: IEngineRunner;
    /** Debounce of binning previews in ms. */
    previewDebounceMs?: number;
    /** Clock in ms; tests inject one. */
    now?: () => number;
    /**
     * The id of the recorded analysis a completed run repeats (same settings, same data), or
     * null; the run then takes that id instead of a new one.
     */
    recordIdFor?: (run: IRunCompleted) => Promise<string | null>;
    /** Translates the model's messages; they stay as written without one. */
    translator?: ITranslator;
  }
}

/** Progress type re-exported for the run view. */
export type { IRunProgress };

/** Module-private helpers. */
namespace Private {
  /**
   * Bytes per results chunk sent to the kernel: JupyterLab copies a message into its websocket
   * frame in one task, and 1 MiB keeps that task short (the protocol allows 8 MiB).
   */
  export const UPLOAD_CHUNK_BYTES = 1 << 20;

  /** Let the page handle input and paint before the next piece of work. */
  export function yieldToPage(): Promise<void> {
    return new Promise(resolve => setTimeout(resolve, 0));
  }
}
