/**
 * The message protocol between the main thread and the engine workers: every request and every
 * response, with request ids. Shared by the worker entry, the handlers and the pool.
 *
 * An analysis is three kinds of request (DESIGN.md §3: the walk is split by subtree):
 *
 * 1. `prepare` (one worker): select and bin the columns, apply the missing-value policy and check
 *    the options; the worker keeps the codes for the run and, when other workers will help, sends
 *    back a copy of them.
 * 2. `walk` (every worker of the pool): walk work units (subtrees of the lattice, by first
 *    column); `progress` after each unit, then the `parts`.
 * 3. `finish` (the preparing worker): put the parts together into the lattice and compute the
 *    measures and the multiplet rows.
 *
 * With statistics, step 3 stops at the observed measures (`planned`), and two more follow:
 *
 * 4. `replicates` (every worker): compute one block of surrogates or bootstrap resamples
 *    against the observed values; the answer is the block's tallies (`replicated`).
 * 5. `conclude` (the preparing worker): merge the blocks in block order and compute the evidence
 *    and the result.
 *
 * `robustness` re-runs one analysis under variants in a worker of its own (not split).
 *
 * `release` ends a run in a worker (its codes are dropped). Cancelling is not a message: a worker
 * reads its next message only after the current unit, so the pool terminates the workers.
 *
 * Every value here crosses a worker boundary by structured clone; typed arrays are listed as
 * transferables where the sender no longer needs them.
 */

import type { ISubtreeResult, ILattice, ILatticeInput } from '../engine/lattice';
import type { IErrorDetail, PolyadicErrorKind } from '../engine/errors';
import type { IResolvedStatistics } from '../engine/statistics/options';
import type { IReplicateBlock, IReplicateTargets, ReplicateBlockResult } from '../engine/statistics/replicates';
import type { IRobustnessResult, IRobustnessVariant } from '../engine/robustness';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions, IColumnBinning } from '../engine/types';
import type { IPreparedCodes } from '../engine/binning';
import type { IPackedRows } from './rows';

/** Version of this protocol; a worker bundle answers requests of another version with an error. */
export const PROTOCOL_VERSION = 2;

/** Default number of fine bins of a preview's distribution. */
export const DEFAULT_PREVIEW_RESOLUTION = 256;

/** Largest number of fine bins a preview accepts. */
export const MAX_PREVIEW_RESOLUTION = 65536;

/**
 * A work unit: the subtrees of the lattice whose smallest column is `first` … `last` (indices
 * into the selected columns, inclusive). A unit is one subtree, the tail of subtrees that runs
 * to the last column, or (with `slices`) part of one large subtree.
 */
export interface IWorkUnit {
  first: number;
  last: number;
  /** Only the multiplets of subtree `first` (= `last`) whose second column is slices[0] … slices[1]. */
  slices?: [number, number];
}

/** Fields every request carries. */
export interface IRequestBase {
  /** Unique per pool; every response to the request carries it. */
  id: number;
  protocol: number;
}

/** Bin the columns of a run and keep the codes (step 1 of an analysis). */
export interface IPrepareRequest extends IRequestBase {
  type: 'prepare';
  run: number;
  columns: ColumnView[];
  /** Codes binned elsewhere (a scanned frame's weighted distinct rows): used instead of binning `columns`. */
  prepared?: IPreparedCodes;
  options: IAnalyzeOptions;
  /** Send a copy of the codes back, for the other workers of the pool. */
  shareCodes: boolean;
}

/** Walk work units of a run (step 2). */
export interface IWalkRequest extends IRequestBase {
  type: 'walk';
  run: number;
  units: IWorkUnit[];
  /** The run's lattice input; left out when this worker already holds it. */
  input?: ILatticeInput;
}

/** Assemble the lattice and compute the result (step 3), in the worker that prepared the run. */
export interface IFinishRequest extends IRequestBase {
  type: 'finish';
  run: number;
  /** One part per subtree, every subtree once. */
  parts: ISubtreeResult[];
  /** Send the lattice (entropies and occupied cells of every multiplet) back with the result. */
  includeLattice: boolean;
  /** Leave the result's multiplets empty: the caller makes them from the lattice (multipletRows). */
  omitRows?: boolean;
}

/** Compute one block of replicates (step 4); the first block a worker gets carries the targets. */
export interface IReplicatesRequest extends IRequestBase {
  type: 'replicates';
  run: number;
  block: IReplicateBlock;
  statistics: IResolvedStatistics;
  /** What the replicates compare against; left out when this worker already holds it. */
  targets?: IReplicateTargets;
}

/** Merge the replicate blocks and compute the evidence and the result (step 5). */
export interface IConcludeRequest extends IRequestBase {
  type: 'conclude';
  run: number;
  /** Every block once, any order. */
  blocks: ReplicateBlockResult[];
  includeLattice: boolean;
}

/** Drop the codes this worker keeps for a run. */
export interface IReleaseRequest extends IRequestBase {
  type: 'release';
  run: number;
}

/** Bin one column and describe the result for drawing (the binning preview). */
export interface IPreviewRequest extends IRequestBase {
  type: 'preview';
  column: ColumnView;
  /** Binning spec text; default the column's default spec. */
  spec?: string;
  /** Number of fine bins of the raw-value distribution (default {@link DEFAULT_PREVIEW_RESOLUTION}). */
  resolution?: number;
}

/** Re-run an analysis under variants and compare (engine/robustness.ts), in one worker. */
export interface IRobustnessRequest extends IRequestBase {
  type: 'robustness';
  columns: ColumnView[];
  base: IAnalyzeOptions;
  variants: IRobustnessVariant[];
  top?: number;
}

/** Every request a worker understands. */
export type EngineRequest =
  | IRobustnessRequest
  | IPrepareRequest
  | IWalkRequest
  | IFinishRequest
  | IReplicatesRequest
  | IConcludeRequest
  | IReleaseRequest
  | IPreviewRequest;

/** The answer to `prepare`. */
export interface IPreparedResponse {
  type: 'prepared';
  id: number;
  run: number;
  /** The lattice input; its `codes` are an empty array unless `shareCodes` was asked. */
  input: ILatticeInput;
  /** Number of multiplets the run computes. */
  multiplets: number;
  rows: number;
  rowsUsed: number;
}

/** Sent by `walk` after each unit. */
export interface IProgressResponse {
  type: 'progress';
  id: number;
  run: number;
  unitsDone: number;
  unitsTotal: number;
  /** Multiplets computed so far by this request. */
  multipletsDone: number;
}

/** The answer to `walk`: one part per subtree of its units. */
export interface IPartsResponse {
  type: 'parts';
  id: number;
  run: number;
  parts: ISubtreeResult[];
}

/** The answer to `finish`. */
export interface IResultResponse {
  type: 'result';
  id: number;
  run: number;
  /** The result; its `multiplets` are empty when they travel in `packed`. */
  result: IAnalysisResult;
  /** The result's multiplet rows column-wise (src/worker/rows.ts), their buffers transferred. */
  packed?: IPackedRows;
  lattice?: ILattice;
}

/** The answer to `finish` when the run has statistics: what the replicates compare against. */
export interface IPlannedResponse {
  type: 'planned';
  id: number;
  run: number;
  targets: IReplicateTargets;
  /** Slots of the lattice (its index range). */
  size: number;
}

/** The answer to `replicates`. */
export interface IReplicatedResponse {
  type: 'replicated';
  id: number;
  run: number;
  result: ReplicateBlockResult;
}

/** The answer to `release`. */
export interface IReleasedResponse {
  type: 'released';
  id: number;
  run: number;
}

/** The answer to `preview`. */
export interface IPreviewResponse {
  type: 'preview';
  id: number;
  preview: IColumnPreview;
}

/** The answer to `robustness`. */
export interface IRobustnessResponse {
  type: 'robustness';
  id: number;
  result: IRobustnessResult;
}

/** A {@link PolyadicError} as a plain value. */
export interface ISerializedError {
  kind: PolyadicErrorKind;
  message: string;
  detail: IErrorDetail;
}

/** Any request that failed; `run` is set for the requests of a run. */
export interface IErrorResponse {
  type: 'error';
  id: number;
  run?: number;
  error: ISerializedError;
}

/** Every response a worker sends. */
export type EngineResponse =
  | IPreparedResponse
  | IProgressResponse
  | IPartsResponse
  | IResultResponse
  | IPlannedResponse
  | IReplicatedResponse
  | IReleasedResponse
  | IPreviewResponse
  | IRobustnessResponse
  | IErrorResponse;

/**
 * The distribution of a numeric column's finite values over equal fine bins, as
 * `numpy.histogram(x, bins=counts.length)` gives it.
 */
export interface INumericDistribution {
  kind: 'numeric';
  /** Range of the bins: the smallest and largest finite value (± 0.5 when they are equal; NaN when there is none). */
  low: number;
  high: number;
  /** The counts.length + 1 bin edges; bin i holds edges[i] ≤ x < edges[i + 1], the last bin also x = high. */
  edges: Float64Array;
  /** Count per fine bin. */
  counts: Int32Array;
  /** Values that are ±Infinity (not in `counts`). */
  infinite: number;
}

/** The counts of a categorical column's categories. */
export interface ICategoryDistribution {
  kind: 'categorical';
  categories: string[];
  counts: Int32Array;
}

/** What the binning preview draws for one column under one spec. */
export interface IColumnPreview {
  name: string;
  rows: number;
  /** Rows with a missing value (not in any count). */
  missing: number;
  /** The binning as it would be recorded: method, spec, edges or categories. */
  binning: IColumnBinning;
  /** Rows per bin, in code order. */
  binCounts: Int32Array;
  /** The raw values, at a finer resolution than the bins. */
  distribution: INumericDistribution | ICategoryDistribution;
  warnings: string[];
}

/**
 * What the pool needs of a worker: a browser Worker (src/worker/browser.ts), a worker thread, or
 * the in-process stand-in (src/worker/inprocess.ts) that tests and Node use.
 */
export interface IEngineWorker {
  /** Send a request, transferring the listed buffers. */
  post(request: EngineRequest, transfer: ArrayBuffer[]): void;
  /**
   * Set the receivers of responses and of failures (the worker failed to start, crashed, or sent
   * a message that could not be read); set once, before the first `post`.
   */
  listen(onResponse: (response: EngineResponse) => void, onFailure: (reason: string) => void): void;
  /** Stop the worker at once; nothing is received after this. */
  terminate(): void;
}
