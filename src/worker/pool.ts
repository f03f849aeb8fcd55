/**
 * The pool of engine workers that runs analyses off the main thread (DESIGN.md §3: the walk is
 * split across workers by subtree; results must not depend on the number of workers).
 *
 * One run at a time: the first worker bins the columns, every worker walks units of the lattice
 * (largest first, each idle worker taking the next), and the first worker assembles the lattice
 * in its fixed index order and computes the result. Progress goes to a plain callback at least
 * every `progressInterval` ms. `cancel()` terminates the run's workers at once; new ones start
 * lazily with the next run. Previews of a column's binning go to a worker of their own, so they
 * stay quick while a run occupies the pool.
 *
 * No DOM and no Lumino here: the pool runs in the browser, in Node and in jest alike; the worker
 * itself comes from the injected `createWorker`.
 */

import { PolyadicError } from '../engine/errors';
import type { ILattice, ILatticeInput, ISubtreeResult } from '../engine/lattice';
import { isContinuousEstimator } from '../engine/walk';
import { createIndexing } from '../engine/multiplets';
import { IResolvedStatistics, resolveStatistics } from '../engine/statistics/options';
import {
  IReplicateBlock,
  IReplicateTargets,
  planReplicateBlocks,
  ReplicateBlockResult
} from '../engine/statistics/replicates';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions } from '../engine/types';
import type { IPreparedCodes } from '../engine/binning';
import type { IRobustnessResult, IRobustnessVariant } from '../engine/robustness';
import { deserializeError } from './errors';
import {
  EngineRequest,
  EngineResponse,
  IColumnPreview,
  IEngineWorker,
  IErrorResponse,
  IWorkUnit,
  PROTOCOL_VERSION
} from './protocol';
import { IPackedRows, unpackRows } from './rows';
import { addColumn, packColumn, TransferList } from './transfer';
import { IPlannedUnit, planUnits } from './units';

/** Most workers a pool starts by default (more rarely pays: memory grows with each copy of the codes). */
export const MAX_DEFAULT_WORKERS = 4;

/** Default worker count: one core left for the page, at most {@link MAX_DEFAULT_WORKERS}, at least 1. */
export function defaultWorkerCount(hardwareConcurrency?: number): number {
  const cores = hardwareConcurrency && hardwareConcurrency > 0 ? Math.floor(hardwareConcurrency) : 2;
  return Math.max(1, Math.min(cores - 1, MAX_DEFAULT_WORKERS));
}

/** The rejection of a run that was cancelled (or whose pool was disposed). */
export class RunCancelled extends PolyadicError {
  /** Always 'cancelled' (the one kind {@link isCancellation} recognises). */
  declare readonly kind: 'cancelled';

  /** Create the error; `message` says what stopped the run. */
  constructor(message = 'The analysis was cancelled.') {
    super('cancelled', message);
    this.name = 'RunCancelled';
  }
}

/** Whether a value is a {@link RunCancelled}. */
export function isRunCancelled(value: unknown): value is RunCancelled {
  return value instanceof RunCancelled;
}

/**
 * The phase a run is in: binning the columns, walking the lattice, computing the replicates of
 * the statistics (surrogates and resamples), computing the measures, done.
 */
export type RunPhase = 'binning' | 'walking' | 'testing' | 'measuring' | 'done';

/** A progress report of a run. */
export interface IRunProgress {
  run: number;
  phase: RunPhase;
  /** Fraction done, 0 … 1, never decreasing; 1 only with phase 'done'. */
  fraction: number;
  unitsDone: number;
  unitsTotal: number;
  multipletsDone: number;
  multipletsTotal: number;
  /** Replicates (surrogates and bootstrap resamples) done and asked for; 0 of 0 without statistics. */
  replicatesDone: number;
  replicatesTotal: number;
  elapsedMs: number;
  /** Estimated time left; null until there is something to estimate from. */
  remainingMs: number | null;
}

/** What a run gives back. */
export interface IRunResult {
  result: IAnalysisResult;
  /** The lattice (entropies in nats by multiplet index), when asked for. */
  lattice?: ILattice;
  /** Workers that walked the lattice. */
  workers: number;
  elapsedMs: number;
}

/** Runs analyses and binning previews in workers. */
export class EnginePool {
  /** Create a pool; no worker starts until it is needed. */
  constructor(options: EnginePool.IOptions) {
    this._createWorker = options.createWorker;
    this._size = options.workers ?? defaultWorkerCount(Private.hardwareConcurrency());
    if (!(Number.isInteger(this._size) && this._size >= 1)) {
      throw new PolyadicError('usage', `A pool needs a whole number of workers ≥ 1, not ${this._size}.`, {
        option: 'workers',
        value: String(this._size)
      });
    }
    this._interval = options.progressInterval ?? 150;
    this._now = options.now ?? (() => globalThis.performance.now());
  }

  /** Number of workers a run may use. */
  get size(): number {
    return this._size;
  }

  /** Workers started and not terminated, the preview worker included. */
  get liveWorkers(): number {
    return this._slots.length + (this._previewSlot ? 1 : 0) + (this._robustnessSlot ? 1 : 0);
  }

  /** Whether a run is in progress. */
  get isRunning(): boolean {
    return this._run !== null;
  }

  /** Whether the pool is disposed. */
  get isDisposed(): boolean {
    return this._disposed;
  }

  /**
   * Analyze columns as `analyze` does, in the workers. Rejects with a {@link PolyadicError}
   * (bad input or options, limits, engine failures) or a {@link RunCancelled}.
   */
  analyze(
    columns: ColumnView[],
    options: IAnalyzeOptions = {},
    runOptions: EnginePool.IRunOptions = {}
  ): Promise<IRunResult> {
    return this._analyze(columns, null, options, runOptions);
  }

  /**
   * Analyze columns already binned elsewhere, as `analyzeCodes` does, in the workers: the
   * weighted distinct rows of a scanned frame (their weights go into every walk). The codes
   * are copied. Rejects as {@link analyze} does.
   */
  analyzePrepared(
    prepared: IPreparedCodes,
    options: IAnalyzeOptions = {},
    runOptions: EnginePool.IRunOptions = {}
  ): Promise<IRunResult> {
    return this._analyze([], prepared, { ...options, columns: prepared.names }, runOptions);
  }

  private _analyze(
    columns: ColumnView[],
    prepared: IPreparedCodes | null,
    options: IAnalyzeOptions,
    runOptions: EnginePool.IRunOptions
  ): Promise<IRunResult> {
    if (this._disposed) {
      return Promise.reject(new RunCancelled('The engine pool is disposed.'));
    }
    if (this._run) {
      return Promise.reject(
        new PolyadicError('usage', 'An analysis is already running; wait for it to finish or cancel it.')
      );
    }
    let statistics: IResolvedStatistics | null;
    try {
      statistics = resolveStatistics(options.statistics);
    } catch (error) {
      return Promise.reject(error);
    }
    const selected = options.columns?.length ?? columns.length;
    const slots = this._ensureSlots(Math.max(1, Math.min(this._size, selected)));
    const transfer = new TransferList();
    const wanted = options.columns ? new Set(options.columns) : null;
    const packed = columns.map(column => {
      if (wanted && !wanted.has(column.name)) {
        // Only its name and kind matter (checks and messages list every column): send no rows.
        return Private.withoutRows(column);
      }
      const copy = packColumn(column, runOptions.transferColumns ?? false);
      addColumn(transfer, copy);
      return copy;
    });
    return new Promise<IRunResult>((resolve, reject) => {
      const run: Private.IRun = {
        id: ++this._runCount,
        options,
        runOptions,
        resolve,
        reject,
        started: this._now(),
        phase: 'binning',
        slots,
        input: null,
        units: [],
        next: 0,
        unitsDone: 0,
        multipletsDone: 0,
        multipletsTotal: 0,
        inFlight: new Map(),
        parts: [],
        fraction: 0,
        timer: null,
        walkers: 0,
        statistics,
        targets: null,
        blocks: statistics ? planReplicateBlocks(statistics) : [],
        nextBlock: 0,
        blocksInFlight: new Map(),
        blockResults: [],
        replicatesDone: 0,
        withTargets: new Set()
      };
      this._run = run;
      if (runOptions.onProgress) {
        run.timer = setInterval(() => this._report(run), this._interval);
      }
      this._report(run);
      const prepare: EngineRequest = {
        type: 'prepare',
        id: this._nextId(),
        protocol: PROTOCOL_VERSION,
        run: run.id,
        columns: packed,
        ...(prepared !== null ? { prepared } : {}),
        options,
        shareCodes: slots.length > 1
      };
      this._send(slots[0], prepare, transfer.buffers);
    });
  }

  /**
   * Bin one column by a spec (default: the column's default spec) and describe the result for
   * drawing. The column is copied unless `transferColumn` hands it over.
   */
  preview(column: ColumnView, spec?: string, options: EnginePool.IPreviewOptions = {}): Promise<IColumnPreview> {
    if (this._disposed) {
      return Promise.reject(new RunCancelled('The engine pool is disposed.'));
    }
    const slot = this._ensurePreviewSlot();
    const packed = packColumn(column, options.transferColumn ?? false);
    const id = this._nextId();
    return new Promise<IColumnPreview>((resolve, reject) => {
      this._previews.set(id, { resolve, reject });
      this._send(
        slot,
        { type: 'preview', id, protocol: PROTOCOL_VERSION, column: packed, spec, resolution: options.resolution },
        addColumn(new TransferList(), packed).buffers
      );
    });
  }

  /**
   * Re-run an analysis under variants (engine/robustness.ts) in a worker of its own, so analyses
   * and previews go on meanwhile; one robustness run at a time (a new one cancels the last).
   * The columns are copied. Rejects with the engine's error, or a {@link RunCancelled}.
   */
  robustness(columns: ColumnView[], base: IAnalyzeOptions, variants: IRobustnessVariant[], top?: number): Promise<IRobustnessResult> {
    if (this._disposed) {
      return Promise.reject(new RunCancelled('The engine pool is disposed.'));
    }
    this.cancelRobustness();
    if (!this._robustnessSlot) {
      this._robustnessSlot = this._startSlot(false);
      this._robustnessSlot.robustness = true;
    }
    const slot = this._robustnessSlot;
    const packed = columns.map(column => packColumn(column, false));
    const transfer = new TransferList();
    packed.forEach(column => addColumn(transfer, column));
    const id = this._nextId();
    return new Promise<IRobustnessResult>((resolve, reject) => {
      this._robustness.set(id, { resolve, reject });
      this._send(slot, { type: 'robustness', id, protocol: PROTOCOL_VERSION, columns: packed, base, variants, top }, transfer.buffers);
    });
  }

  /** Stop the robustness run in progress (its worker is terminated); returns whether one was running. */
  cancelRobustness(): boolean {
    const running = this._robustness.size > 0;
    if (running) {
      this._dropRobustnessSlot(new RunCancelled('The robustness run was cancelled.'));
    }
    return running;
  }

  /**
   * Cancel the run in progress: the pool's workers are terminated at once (the preview worker
   * stays), the run's promise rejects with a {@link RunCancelled}, and no progress is reported
   * after this. Returns whether a run was cancelled.
   */
  cancel(): boolean {
    const run = this._run;
    if (!run) {
      return false;
    }
    this._terminate(this._slots.slice());
    this._end(run);
    run.reject(new RunCancelled());
    return true;
  }

  /** Terminate every worker; a run or preview still pending rejects with a {@link RunCancelled}. */
  dispose(): void {
    if (this._disposed) {
      return;
    }
    this._disposed = true;
    const run = this._run;
    if (run) {
      this._end(run);
      run.reject(new RunCancelled('The engine pool was disposed during the analysis.'));
    }
    this._terminate(this._slots.slice());
    this._dropPreviewSlot(new RunCancelled('The engine pool was disposed before the preview was ready.'));
    this._dropRobustnessSlot(new RunCancelled('The engine pool was disposed during the robustness run.'));
  }

  private _dropRobustnessSlot(reason: Error): void {
    if (this._robustnessSlot) {
      this._robustnessSlot.worker.terminate();
      this._robustnessSlot = null;
    }
    const pending = Array.from(this._robustness.values());
    this._robustness.clear();
    pending.forEach(run => run.reject(reason));
  }

  private _onRobustnessResponse(response: EngineResponse): void {
    const pending = this._robustness.get(response.id);
    if (!pending) {
      return;
    }
    this._robustness.delete(response.id);
    if (response.type === 'robustness') {
      pending.resolve(response.result);
    } else if (response.type === 'error') {
      pending.reject(deserializeError(response.error));
    } else {
      pending.reject(new PolyadicError('internal', `The robustness worker answered '${response.type}' to a robustness run.`));
    }
  }

  private _nextId(): number {
    return ++this._requestCount;
  }

  private _ensureSlots(count: number): Private.ISlot[] {
    while (this._slots.length < count) {
      this._slots.push(this._startSlot(false));
    }
    return this._slots.slice(0, count);
  }

  private _ensurePreviewSlot(): Private.ISlot {
    if (!this._previewSlot) {
      this._previewSlot = this._startSlot(true);
    }
    return this._previewSlot;
  }

  private _startSlot(preview: boolean): Private.ISlot {
    const slot: Private.ISlot = { worker: this._createWorker(), busy: false, holds: null, preview };
    slot.worker.listen(
      response => this._onResponse(slot, response),
      reason => this._onFailure(slot, reason)
    );
    return slot;
  }

  private _send(slot: Private.ISlot, request: EngineRequest, transfer: ArrayBuffer[]): void {
    slot.worker.post(request, transfer);
  }

  private _terminate(slots: Private.ISlot[]): void {
    for (const slot of slots) {
      slot.worker.terminate();
      const at = this._slots.indexOf(slot);
      if (at >= 0) {
        this._slots.splice(at, 1);
      }
    }
  }

  private _dropPreviewSlot(reason: Error): void {
    if (this._previewSlot) {
      this._previewSlot.worker.terminate();
      this._previewSlot = null;
    }
    const pending = Array.from(this._previews.values());
    this._previews.clear();
    pending.forEach(preview => preview.reject(reason));
  }

  private _onFailure(slot: Private.ISlot, reason: string): void {
    const error = new PolyadicError(
      'internal',
      `An engine worker stopped unexpectedly: ${reason}. A new worker starts with the next request.`,
      { reason }
    );
    if (slot.preview) {
      this._dropPreviewSlot(error);
      return;
    }
    if (slot.robustness) {
      this._dropRobustnessSlot(error);
      return;
    }
    const run = this._run;
    if (run && run.slots.includes(slot)) {
      this._terminate(run.slots);
      this._end(run);
      run.reject(error);
      return;
    }
    this._terminate([slot]);
  }

  private _onResponse(slot: Private.ISlot, response: EngineResponse): void {
    if (slot.preview) {
      this._onPreviewResponse(response);
      return;
    }
    if (slot.robustness) {
      this._onRobustnessResponse(response);
      return;
    }
    const run = this._run;
    if (!run || !('run' in response) || response.run !== run.id) {
      // A late answer of a run that already ended (a release, or parts after an error).
      return;
    }
    switch (response.type) {
      case 'prepared':
        this._onPrepared(run, response.input, response.multiplets);
        return;
      case 'progress': {
        const request = run.inFlight.get(response.id);
        if (request) {
          request.reported = response.multipletsDone;
          this._report(run);
        }
        return;
      }
      case 'parts':
        this._onParts(run, slot, response.id, response.parts);
        return;
      case 'result':
        this._onResult(run, response.result, response.packed, response.lattice);
        return;
      case 'planned':
        this._onPlanned(run, response.targets);
        return;
      case 'replicated':
        this._onReplicated(run, slot, response.id, response.result);
        return;
      case 'error':
        this._onRunError(run, response);
        return;
      default:
        return;
    }
  }

  private _onPreviewResponse(response: EngineResponse): void {
    const pending = this._previews.get(response.id);
    if (!pending) {
      return;
    }
    this._previews.delete(response.id);
    if (response.type === 'preview') {
      pending.resolve(response.preview);
    } else if (response.type === 'error') {
      pending.reject(deserializeError(response.error));
    } else {
      pending.reject(new PolyadicError('internal', `The preview worker answered '${response.type}' to a preview.`));
    }
  }

  private _onPrepared(run: Private.IRun, input: ILatticeInput, multiplets: number): void {
    const n = input.bins.length;
    const indexing = createIndexing(n, Math.min(input.maxOrder, n));
    run.units = planUnits(indexing, run.slots.length, { slices: !isContinuousEstimator(input.estimator) });
    run.multipletsTotal = multiplets;
    run.input = input;
    run.slots[0].holds = run.id;
    // Fewer units than workers: the spare workers stay idle (and alive for the next run).
    run.slots = run.slots.slice(0, Math.min(run.slots.length, run.units.length));
    run.walkers = run.slots.length;
    run.phase = 'walking';
    this._report(run);
    this._dispatch(run);
  }

  /** Give each idle worker of the run its next unit; a worker's first unit carries the codes. */
  private _dispatch(run: Private.IRun): void {
    const input = run.input;
    if (!input) {
      return;
    }
    const needCodes = run.slots.filter(slot => slot.holds !== run.id);
    for (const slot of run.slots) {
      if (slot.busy || run.next >= run.units.length) {
        continue;
      }
      const planned = run.units[run.next++];
      const unit: IWorkUnit = planned.slices
        ? { first: planned.first, last: planned.last, slices: planned.slices }
        : { first: planned.first, last: planned.last };
      const id = this._nextId();
      const transfer = new TransferList();
      let withCodes: ILatticeInput | undefined;
      if (slot.holds !== run.id) {
        // The last worker to need the codes gets the pool's own copy; the others get copies.
        const last = needCodes[needCodes.length - 1] === slot;
        const codes = last ? input.codes : input.codes.map(codes => codes.slice());
        codes.forEach(array => transfer.add(array));
        withCodes = { ...input, codes };
        slot.holds = run.id;
      }
      slot.busy = true;
      run.inFlight.set(id, { slot, unit: planned, reported: 0 });
      const walk: EngineRequest = {
        type: 'walk',
        id,
        protocol: PROTOCOL_VERSION,
        run: run.id,
        units: [unit],
        input: withCodes
      };
      this._send(slot, walk, transfer.buffers);
    }
    if (run.slots.every(slot => slot.holds === run.id)) {
      // Every worker has the codes now; the pool's copy may have been transferred, drop it.
      input.codes = [];
    }
  }

  private _onParts(run: Private.IRun, slot: Private.ISlot, id: number, parts: ISubtreeResult[]): void {
    const request = run.inFlight.get(id);
    if (!request) {
      return;
    }
    run.inFlight.delete(id);
    slot.busy = false;
    run.parts.push(...parts);
    run.unitsDone++;
    run.multipletsDone += request.unit.multiplets;
    if (run.next < run.units.length) {
      this._dispatch(run);
    } else if (run.inFlight.size === 0) {
      run.phase = 'measuring';
      const transfer = new TransferList().addParts(run.parts);
      const finish: EngineRequest = {
        type: 'finish',
        id: this._nextId(),
        protocol: PROTOCOL_VERSION,
        run: run.id,
        parts: run.parts,
        includeLattice: run.runOptions.includeLattice ?? false,
        ...(run.runOptions.omitRows ? { omitRows: true } : {})
      };
      run.parts = [];
      this._send(run.slots[0], finish, transfer.buffers);
    }
    this._report(run);
  }

  /** The observed measures are in: hand out the replicate blocks. */
  private _onPlanned(run: Private.IRun, targets: IReplicateTargets): void {
    run.targets = targets;
    run.phase = 'testing';
    this._report(run);
    if (run.blocks.length === 0) {
      this._conclude(run);
      return;
    }
    this._dispatchBlocks(run);
  }

  /** Give each idle worker of the run its next replicate block; a worker's first block carries the targets. */
  private _dispatchBlocks(run: Private.IRun): void {
    const targets = run.targets;
    const statistics = run.statistics;
    if (!targets || !statistics) {
      return;
    }
    for (const slot of run.slots) {
      if (slot.busy || run.nextBlock >= run.blocks.length) {
        continue;
      }
      const block = run.blocks[run.nextBlock++];
      const id = this._nextId();
      let withTargets: IReplicateTargets | undefined;
      // The preparing worker kept its own targets; the others get copies.
      if (slot !== run.slots[0] && !run.withTargets.has(slot)) {
        withTargets = {
          coinformation: targets.coinformation.slice(),
          oInformation: targets.oInformation.slice(),
          bootstrapped: targets.bootstrapped.slice()
        };
        run.withTargets.add(slot);
      }
      slot.busy = true;
      run.blocksInFlight.set(id, { slot, block });
      const transfer = new TransferList();
      if (withTargets) {
        transfer.add(withTargets.coinformation).add(withTargets.oInformation).add(withTargets.bootstrapped);
      }
      this._send(
        slot,
        { type: 'replicates', id, protocol: PROTOCOL_VERSION, run: run.id, block, statistics, targets: withTargets },
        transfer.buffers
      );
    }
  }

  private _onReplicated(run: Private.IRun, slot: Private.ISlot, id: number, result: ReplicateBlockResult): void {
    const request = run.blocksInFlight.get(id);
    if (!request) {
      return;
    }
    run.blocksInFlight.delete(id);
    slot.busy = false;
    run.blockResults.push(result);
    run.replicatesDone += request.block.count;
    if (run.nextBlock < run.blocks.length) {
      this._dispatchBlocks(run);
    } else if (run.blocksInFlight.size === 0) {
      this._conclude(run);
    }
    this._report(run);
  }

  /** Every replicate is in: the preparing worker merges them and computes the result. */
  private _conclude(run: Private.IRun): void {
    run.phase = 'measuring';
    const transfer = new TransferList();
    for (const result of run.blockResults) {
      if (result.kind === 'bootstrap') {
        transfer.add(result.values);
      } else {
        transfer
          .add(result.coLow)
          .add(result.coHigh)
          .add(result.coSum)
          .add(result.coSumSquares)
          .add(result.oLow)
          .add(result.oHigh)
          .add(result.oSum)
          .add(result.oSumSquares)
          .add(result.band);
      }
    }
    const blocks = run.blockResults;
    run.blockResults = [];
    this._send(
      run.slots[0],
      {
        type: 'conclude',
        id: this._nextId(),
        protocol: PROTOCOL_VERSION,
        run: run.id,
        blocks,
        includeLattice: run.runOptions.includeLattice ?? false
      },
      transfer.buffers
    );
  }

  private _onResult(
    run: Private.IRun,
    result: IAnalysisResult,
    packed: IPackedRows | undefined,
    lattice: ILattice | undefined
  ): void {
    const helpers = run.slots.slice(1).filter(slot => slot.holds === run.id);
    run.phase = 'done';
    // Ended first, so a listener that cancels on the last report cannot turn the result into a rejection.
    this._end(run);
    this._report(run, true);
    for (const slot of helpers) {
      this._send(slot, { type: 'release', id: this._nextId(), protocol: PROTOCOL_VERSION, run: run.id }, []);
    }
    const settle = (multiplets: IAnalysisResult['multiplets']): void =>
      run.resolve({ result: { ...result, multiplets }, lattice, workers: run.walkers, elapsedMs: this._now() - run.started });
    if (packed === undefined) {
      settle(result.multiplets);
      return;
    }
    // The row objects are rebuilt in slices: the page paints and answers input in between.
    unpackRows(packed, Private.pause).then(settle, run.reject);
  }

  private _onRunError(run: Private.IRun, response: IErrorResponse): void {
    if (run.phase !== 'binning') {
      // A failure after binning leaves other workers mid-walk: start afresh next time.
      this._terminate(run.slots);
    }
    this._end(run);
    run.reject(deserializeError(response.error));
  }

  /** Stop reporting and forget the run (its promise is settled by the caller). */
  private _end(run: Private.IRun): void {
    if (run.timer !== null) {
      clearInterval(run.timer);
      run.timer = null;
    }
    for (const slot of run.slots) {
      slot.busy = false;
      slot.holds = null;
    }
    run.input = null;
    run.parts = [];
    run.targets = null;
    run.blockResults = [];
    run.blocksInFlight.clear();
    if (this._run === run) {
      this._run = null;
    }
  }

  /** Report a run's progress; after its end only the final report (`last`) goes out. */
  private _report(run: Private.IRun, last = false): void {
    if ((this._run !== run && !last) || !run.runOptions.onProgress) {
      return;
    }
    let walked = run.multipletsDone;
    for (const request of run.inFlight.values()) {
      walked += request.reported;
    }
    const walkedShare = run.multipletsTotal > 0 ? Math.min(1, walked / run.multipletsTotal) : 0;
    // Each replicate re-walks the lattice: the walk is one share, each replicate another.
    const replicatesTotal = Private.replicateCount(run.statistics);
    const walkShare =
      run.phase === 'testing' || run.phase === 'measuring' || run.phase === 'done' ? 1 : walkedShare;
    const replicateShare = run.phase === 'measuring' || run.phase === 'done' ? replicatesTotal : run.replicatesDone;
    const done = (walkShare + replicateShare) / (1 + replicatesTotal);
    const target =
      run.phase === 'done' ? 1 : run.phase === 'binning' ? 0 : Private.BINNING_SHARE + Private.WALKING_SHARE * done;
    run.fraction = Math.max(run.fraction, target);
    const elapsedMs = this._now() - run.started;
    const progress: IRunProgress = {
      run: run.id,
      phase: run.phase,
      fraction: run.fraction,
      unitsDone: run.unitsDone,
      unitsTotal: run.units.length,
      multipletsDone: Math.min(walked, run.multipletsTotal),
      multipletsTotal: run.multipletsTotal,
      replicatesDone: run.replicatesDone,
      replicatesTotal,
      elapsedMs,
      remainingMs:
        run.phase === 'done' ? 0 : run.fraction > 0 ? (elapsedMs * (1 - run.fraction)) / run.fraction : null
    };
    try {
      run.runOptions.onProgress(progress);
    } catch (error) {
      // A failing listener must not stop the run; say so where a developer looks.
      console.error('Polyadic: a progress listener failed', error);
    }
  }

  private _createWorker: () => IEngineWorker;
  private _size: number;
  private _interval: number;
  private _now: () => number;
  private _slots: Private.ISlot[] = [];
  private _previewSlot: Private.ISlot | null = null;
  private _previews = new Map<number, Private.IPendingPreview>();
  private _robustnessSlot: Private.ISlot | null = null;
  private _robustness = new Map<number, Private.IPendingRobustness>();
  private _run: Private.IRun | null = null;
  private _runCount = 0;
  private _requestCount = 0;
  private _disposed = false;
}

/** Types of {@link EnginePool}. */
export namespace EnginePool {
  /** Options of the pool. */
  export interface IOptions {
    /** Start one worker (in the browser: `createEngineWorker` from src/worker/browser.ts). */
    createWorker: () => IEngineWorker;
    /** Workers a run may use; default {@link defaultWorkerCount} of the machine's cores. */
    workers?: number;
    /**
     * Time between two progress reports of a run, in ms (default 150: the panel wants one at
     * least every 250 ms, and a busy page delays timers).
     */
    progressInterval?: number;
    /** Clock in ms (default performance.now); tests inject one. */
    now?: () => number;
  }

  /** Options of one run. */
  export interface IRunOptions {
    /** Called with each progress report. */
    onProgress?: (progress: IRunProgress) => void;
    /** Send the lattice back with the result. */
    includeLattice?: boolean;
    /**
     * With includeLattice and no statistics: leave the result's multiplets empty, for the caller
     * to make one at a time from the lattice (multipletRows in engine/analyze.ts).
     */
    omitRows?: boolean;
    /**
     * Hand the columns' buffers over to the worker instead of copying them; arrays that own
     * their whole buffer are then detached from the caller. Default false.
     */
    transferColumns?: boolean;
  }

  /** Options of a preview. */
  export interface IPreviewOptions {
    /** Fine bins of the raw-value distribution. */
    resolution?: number;
    /** Hand the column's buffers over instead of copying them (see {@link IRunOptions.transferColumns}). */
    transferColumn?: boolean;
  }
}

namespace Private {
  /**
   * Shares of the progress bar: binning, then the walk, then the measures and rows take the rest.
   * Rough proportions of the three steps' times (common practice: a phase gets a fixed slice).
   */
  export const BINNING_SHARE = 0.05;
  export const WALKING_SHARE = 0.85;

  /** One worker of the pool. */
  export interface ISlot {
    worker: IEngineWorker;
    /** Working on a request of the current run. */
    busy: boolean;
    /** The run whose codes this worker holds. */
    holds: number | null;
    /** The preview worker. */
    preview: boolean;
    /** The worker of robustness runs. */
    robustness?: boolean;
  }

  /** A walk request in flight. */
  export interface IInFlight {
    slot: ISlot;
    unit: IPlannedUnit;
    /** Multiplets the worker reported done for it. */
    reported: number;
  }

  /** A pending preview. */
  export interface IPendingPreview {
    resolve: (preview: IColumnPreview) => void;
    reject: (error: Error) => void;
  }

  /** A robustness run waiting for its answer. */
  export interface IPendingRobustness {
    resolve: (result: IRobustnessResult) => void;
    reject: (error: Error) => void;
  }

  /** The state of the run in progress. */
  export interface IRun {
    id: number;
    options: IAnalyzeOptions;
    runOptions: EnginePool.IRunOptions;
    resolve: (result: IRunResult) => void;
    reject: (error: Error) => void;
    started: number;
    phase: RunPhase;
    /** The workers of the run; the first prepares and finishes. */
    slots: ISlot[];
    /** The lattice input from the preparing worker, with the codes until every worker has them. */
    input: ILatticeInput | null;
    units: IPlannedUnit[];
    /** Index of the next unit to hand out. */
    next: number;
    unitsDone: number;
    multipletsDone: number;
    multipletsTotal: number;
    inFlight: Map<number, IInFlight>;
    parts: ISubtreeResult[];
    /** Last fraction reported (reports never go back). */
    fraction: number;
    timer: ReturnType<typeof setInterval> | null;
    /** Workers that walked. */
    walkers: number;
    /** The statistics asked for, or null. */
    statistics: IResolvedStatistics | null;
    /** What the replicates compare against, once the preparing worker has planned them. */
    targets: IReplicateTargets | null;
    /** Every replicate block, in plan order; the next to hand out. */
    blocks: IReplicateBlock[];
    nextBlock: number;
    blocksInFlight: Map<number, { slot: ISlot; block: IReplicateBlock }>;
    blockResults: ReplicateBlockResult[];
    replicatesDone: number;
    /** Workers other than the first that were sent the targets. */
    withTargets: Set<ISlot>;
  }

  /** Surrogates plus bootstrap resamples of a run. */
  export function replicateCount(statistics: IResolvedStatistics | null): number {
    return statistics ? statistics.surrogates + statistics.bootstrap : 0;
  }

  /** Let the page handle input and paint before the next slice of work. */
  export function pause(): Promise<void> {
    return new Promise(resolve => setTimeout(resolve, 0));
  }

  /** A column with its name, kind and type but no rows. */
  export function withoutRows(column: ColumnView): ColumnView {
    return column.kind === 'numeric'
      ? { ...column, values: new Float64Array(0), missing: null }
      : { ...column, codes: new Int32Array(0), categories: [], missing: null };
  }

  /** The machine's logical cores, where the platform says. */
  export function hardwareConcurrency(): number | undefined {
    const navigator = (globalThis as { navigator?: { hardwareConcurrency?: number } }).navigator;
    return navigator?.hardwareConcurrency;
  }
}
