/**
 * What an engine worker does, as plain functions that jest calls without a Worker: prepare a
 * run, walk work units, finish a run, preview a column's binning; and {@link WorkerHost}, which
 * routes requests to them and keeps each run's codes between requests.
 */

import {
  analyzeCodes,
  concludeRun,
  IEvidencePlan,
  latticeInput,
  planEvidence,
  prepareColumns,
  resolveOptions
} from '../engine/analyze';
import {
  IReplicateTargets,
  ReplicateAccumulator,
  ReplicateBlockResult,
  runReplicateBlock
} from '../engine/statistics/replicates';
import { binColumn } from '../engine/binning';
import type { IPreparedCodes } from '../engine/binning';
import { PolyadicError } from '../engine/errors';
import { robustnessRun } from '../engine/robustness';
import { assembleLattice } from '../engine/lattice';
import type { ILattice, ILatticeInput, ISubtreeResult } from '../engine/lattice';
import { checkMultipletCount, createIndexing, DEFAULT_MAX_MULTIPLETS } from '../engine/multiplets';
import { linspace } from '../engine/floatmath';
import { columnLength } from '../engine/table';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions } from '../engine/types';
import {
  DEFAULT_PREVIEW_RESOLUTION,
  EngineRequest,
  EngineResponse,
  ICategoryDistribution,
  IColumnPreview,
  INumericDistribution,
  IWorkUnit,
  MAX_PREVIEW_RESOLUTION,
  PROTOCOL_VERSION
} from './protocol';
import { serializeError } from './errors';
import { packedBuffers, packRows } from './rows';
import { TransferList } from './transfer';
import { unitMultiplets, walkUnit } from './units';

/** A prepared run: the binned codes and the lattice input they make. */
export interface IPreparedRun {
  prepared: IPreparedCodes;
  input: ILatticeInput;
  options: IAnalyzeOptions;
  /** Number of multiplets the run computes. */
  multiplets: number;
}

/** Step 1 of an analysis: select, bin, apply the missing-value policy, check the options and the multiplet count. */
export function prepareRun(columns: ColumnView[], options: IAnalyzeOptions = {}, binned?: IPreparedCodes): IPreparedRun {
  const prepared = binned ?? prepareColumns(columns, options);
  const input = latticeInput(prepared, options);
  const multiplets = checkMultipletCount(
    input.codes.length,
    input.maxOrder,
    input.maxMultiplets ?? DEFAULT_MAX_MULTIPLETS
  );
  return { prepared, input, options, multiplets };
}

/** Whether a prepared run asks for statistics (then step 3 is {@link planRun}). */
export function runHasStatistics(run: IPreparedRun): boolean {
  return resolveOptions(run.options, run.input.codes.length).statistics !== null;
}

/** A run whose lattice is walked and whose replicates are to come. */
export interface IPlannedRun {
  run: IPreparedRun;
  lattice: ILattice;
  plan: IEvidencePlan;
}

/** Step 3 of an analysis with statistics: the lattice from its parts and what the replicates compare against. */
export function planRun(run: IPreparedRun, parts: ISubtreeResult[]): IPlannedRun {
  const lattice = assembleLattice(run.input, parts);
  return { run, lattice, plan: planEvidence(run.prepared, run.options, lattice) };
}

/** Step 5: merge the replicate blocks (in block order) and compute the result with its evidence. */
export function concludePlannedRun(
  planned: IPlannedRun,
  blocks: ReplicateBlockResult[]
): { result: IAnalysisResult; lattice: ILattice } {
  const { run, lattice, plan } = planned;
  const statistics = resolveOptions(run.options, run.input.codes.length).statistics;
  if (!statistics) {
    throw new PolyadicError('internal', 'A run without statistics was sent its replicates.');
  }
  const accumulator = new ReplicateAccumulator(lattice.indexing.size, statistics, plan.targets.bootstrapped.length);
  for (const block of blocks) {
    accumulator.add(block);
  }
  const evidence = concludeRun(run.prepared, run.options, lattice, plan, accumulator);
  return { result: analyzeCodes(run.prepared, run.options, lattice, evidence), lattice };
}

/** Step 3 of an analysis: the lattice from its parts, then the result as `analyze` gives it. */
export function finishRun(
  run: IPreparedRun,
  parts: ISubtreeResult[],
  withRows = true
): { result: IAnalysisResult; lattice: ILattice } {
  const lattice = assembleLattice(run.input, parts);
  return { result: analyzeCodes(run.prepared, run.options, lattice, undefined, withRows), lattice };
}

/** Options of {@link previewColumn}. */
export interface IPreviewOptions {
  /** Number of fine bins of a numeric distribution (default {@link DEFAULT_PREVIEW_RESOLUTION}). */
  resolution?: number;
}

/**
 * The binning preview of one column: rows per bin under the spec, the binning itself, and the
 * raw values' distribution at a finer resolution (numeric) or per category (categorical).
 */
export function previewColumn(column: ColumnView, spec?: string, options: IPreviewOptions = {}): IColumnPreview {
  const resolution = options.resolution ?? DEFAULT_PREVIEW_RESOLUTION;
  if (!(Number.isInteger(resolution) && resolution >= 1 && resolution <= MAX_PREVIEW_RESOLUTION)) {
    throw new PolyadicError(
      'usage',
      `The preview resolution must be a whole number from 1 to ${MAX_PREVIEW_RESOLUTION}, not ${resolution}.`,
      { option: 'resolution', value: String(resolution), column: column.name }
    );
  }
  const binned = binColumn(column, spec);
  const binCounts = new Int32Array(binned.bins);
  for (let i = 0; i < binned.codes.length; i++) {
    const code = binned.codes[i];
    if (code >= 0) {
      binCounts[code]++;
    }
  }
  return {
    name: column.name,
    rows: columnLength(column),
    missing: binned.missingCount,
    binning: binned.binning,
    binCounts,
    distribution:
      column.kind === 'categorical' ? Private.categoryDistribution(column) : Private.numericDistribution(column, resolution),
    warnings: binned.warnings
  };
}

/** How a host sends a response. */
export type PostResponse = (response: EngineResponse, transfer: ArrayBuffer[]) => void;

/**
 * The worker's side of the protocol: answers each request with its response (or an error
 * response) and keeps the prepared runs and lattice inputs between requests of a run. The worker
 * entry wires it to `self`; the in-process worker uses it directly.
 */
export class WorkerHost {
  /** Create a host that answers through `post`. */
  constructor(post: PostResponse) {
    this._post = post;
  }

  /** Runs this host holds data for (for tests and diagnostics). */
  get heldRuns(): number[] {
    return Array.from(new Set([...this._prepared.keys(), ...this._inputs.keys()])).sort((a, b) => a - b);
  }

  /** Answer one request. Never throws: failures become error responses. */
  handle(request: EngineRequest): void {
    const id = typeof request?.id === 'number' ? request.id : -1;
    const run = request && 'run' in request && typeof request.run === 'number' ? request.run : undefined;
    try {
      if (request?.protocol !== PROTOCOL_VERSION) {
        throw new PolyadicError(
          'internal',
          `The engine worker speaks protocol ${PROTOCOL_VERSION} but was sent protocol ${String(request?.protocol)}; ` +
            'reload the page after updating Polyadic.'
        );
      }
      this._dispatch(request);
    } catch (error) {
      if (run !== undefined) {
        this._forget(run);
      }
      this._post({ type: 'error', id, run, error: serializeError(error) }, []);
    }
  }

  private _dispatch(request: EngineRequest): void {
    switch (request.type) {
      case 'prepare': {
        const prepared = prepareRun(request.columns, request.options, request.prepared);
        this._prepared.set(request.run, prepared);
        this._inputs.set(request.run, prepared.input);
        const transfer = new TransferList();
        const codes = request.shareCodes ? prepared.input.codes.map(codes => codes.slice()) : [];
        codes.forEach(copy => transfer.add(copy));
        this._post(
          {
            type: 'prepared',
            id: request.id,
            run: request.run,
            input: { ...prepared.input, codes, bins: prepared.input.bins.slice() },
            multiplets: prepared.multiplets,
            rows: prepared.prepared.rows,
            rowsUsed: prepared.prepared.rowsUsed
          },
          transfer.buffers
        );
        return;
      }
      case 'walk': {
        if (request.input) {
          this._inputs.set(request.run, request.input);
        }
        const input = this._inputs.get(request.run);
        if (!input) {
          throw new PolyadicError('internal', `This worker holds no codes for run ${request.run}.`);
        }
        this._walk(request.id, request.run, input, request.units);
        return;
      }
      case 'finish': {
        const prepared = this._prepared.get(request.run);
        if (!prepared) {
          throw new PolyadicError('internal', `This worker did not prepare run ${request.run}.`);
        }
        if (runHasStatistics(prepared)) {
          const planned = planRun(prepared, request.parts);
          this._planned.set(request.run, planned);
          this._targets.set(request.run, planned.plan.targets);
          // The targets are copied: this worker keeps its own for its replicate blocks.
          const targets = Private.copyTargets(planned.plan.targets);
          const transfer = new TransferList().add(targets.coinformation).add(targets.oInformation).add(targets.bootstrapped);
          this._post(
            { type: 'planned', id: request.id, run: request.run, targets, size: planned.lattice.indexing.size },
            transfer.buffers
          );
          return;
        }
        this._forget(request.run);
        this._postResult(request.id, request.run, finishRun(prepared, request.parts, !request.omitRows), request.includeLattice);
        return;
      }
      case 'replicates': {
        if (request.targets) {
          this._targets.set(request.run, request.targets);
        }
        const input = this._inputs.get(request.run);
        const targets = this._targets.get(request.run);
        if (!input || !targets) {
          throw new PolyadicError('internal', `This worker holds no codes or targets for run ${request.run}.`);
        }
        const result = runReplicateBlock(input, targets, request.statistics, request.block);
        const transfer = new TransferList();
        Private.blockBuffers(result).forEach(array => transfer.add(array));
        this._post({ type: 'replicated', id: request.id, run: request.run, result }, transfer.buffers);
        return;
      }
      case 'conclude': {
        const planned = this._planned.get(request.run);
        if (!planned) {
          throw new PolyadicError('internal', `This worker did not plan run ${request.run}.`);
        }
        this._forget(request.run);
        this._postResult(request.id, request.run, concludePlannedRun(planned, request.blocks), request.includeLattice);
        return;
      }
      case 'release':
        this._forget(request.run);
        this._post({ type: 'released', id: request.id, run: request.run }, []);
        return;
      case 'preview': {
        const preview = previewColumn(request.column, request.spec, { resolution: request.resolution });
        const transfer = new TransferList().add(preview.binCounts).add(preview.distribution.counts);
        if (preview.distribution.kind === 'numeric') {
          transfer.add(preview.distribution.edges);
        }
        this._post({ type: 'preview', id: request.id, preview }, transfer.buffers);
        return;
      }
      case 'robustness': {
        const result = robustnessRun(request.columns, request.base, request.variants, request.top);
        this._post({ type: 'robustness', id: request.id, result }, []);
        return;
      }
      default:
        throw new PolyadicError(
          'internal',
          `Unknown request type '${String((request as { type?: unknown }).type)}' sent to the engine worker.`
        );
    }
  }

  private _postResult(
    id: number,
    run: number,
    done: { result: IAnalysisResult; lattice: ILattice },
    includeLattice: boolean
  ): void {
    const transfer = new TransferList();
    if (includeLattice) {
      transfer.addLattice(done.lattice);
    }
    // The rows as typed-array columns, transferred: a clone of the row objects would hold the
    // page for seconds after a large run.
    const packed = packRows(done.result.multiplets);
    const result = packed === null ? done.result : { ...done.result, multiplets: [] };
    const buffers = packed === null ? transfer.buffers : [...transfer.buffers, ...packedBuffers(packed)];
    this._post(
      {
        type: 'result',
        id,
        run,
        result,
        ...(packed !== null ? { packed } : {}),
        lattice: includeLattice ? done.lattice : undefined
      },
      buffers
    );
  }

  private _walk(id: number, run: number, input: ILatticeInput, units: IWorkUnit[]): void {
    const indexing = createIndexing(input.codes.length, Math.min(input.maxOrder, input.codes.length));
    const parts: ISubtreeResult[] = [];
    let multipletsDone = 0;
    units.forEach((unit, done) => {
      parts.push(...walkUnit(input, unit));
      multipletsDone += unitMultiplets(indexing, unit);
      this._post(
        { type: 'progress', id, run, unitsDone: done + 1, unitsTotal: units.length, multipletsDone },
        []
      );
    });
    this._post({ type: 'parts', id, run, parts }, new TransferList().addParts(parts).buffers);
  }

  private _forget(run: number): void {
    this._prepared.delete(run);
    this._inputs.delete(run);
    this._planned.delete(run);
    this._targets.delete(run);
  }

  private _post: PostResponse;
  private _prepared = new Map<number, IPreparedRun>();
  private _inputs = new Map<number, ILatticeInput>();
  private _planned = new Map<number, IPlannedRun>();
  private _targets = new Map<number, IReplicateTargets>();
}

namespace Private {
  /** Copies of the targets' arrays, to hand over while keeping the originals. */
  export function copyTargets(targets: IReplicateTargets): IReplicateTargets {
    return {
      coinformation: targets.coinformation.slice(),
      oInformation: targets.oInformation.slice(),
      bootstrapped: targets.bootstrapped.slice()
    };
  }

  /** The typed arrays of a block's result (all transferable: the worker keeps none). */
  export function blockBuffers(result: ReplicateBlockResult): (Int32Array | Float64Array)[] {
    return result.kind === 'bootstrap'
      ? [result.values]
      : [
          result.coLow,
          result.coHigh,
          result.coSum,
          result.coSumSquares,
          result.oLow,
          result.oHigh,
          result.oSum,
          result.oSumSquares,
          result.band
        ];
  }

  /**
   * Distribution of a numeric column's finite values over `resolution` equal bins, as
   * `numpy.histogram(x, bins=resolution)` gives it: the range is the values' minimum and maximum
   * (± 0.5 when they are equal), the edges are numpy's linspace, each value goes to the bin with
   * edges[i] ≤ x < edges[i + 1] and the maximum to the last bin. The index is first estimated
   * from the value and then corrected against the edges, as numpy does.
   */
  export function numericDistribution(
    column: Extract<ColumnView, { kind: 'numeric' }>,
    resolution: number
  ): INumericDistribution {
    const values = column.values;
    const missing = column.missing;
    const rows = values.length;
    let min = Infinity;
    let max = -Infinity;
    let infinite = 0;
    const read = (i: number): number => Number(values[i]);
    for (let i = 0; i < rows; i++) {
      if (missing && missing[i]) {
        continue;
      }
      const x = read(i);
      if (x === Infinity || x === -Infinity) {
        infinite++;
      } else if (x === x) {
        if (x < min) {
          min = x;
        }
        if (x > max) {
          max = x;
        }
      }
    }
    const counts = new Int32Array(resolution);
    if (min > max) {
      return { kind: 'numeric', low: NaN, high: NaN, edges: new Float64Array(0), counts, infinite };
    }
    const low = min === max ? min - 0.5 : min;
    const high = min === max ? max + 0.5 : max;
    const edges = Float64Array.from(linspace(low, high, resolution + 1));
    const span = high - low;
    const last = resolution - 1;
    for (let i = 0; i < rows; i++) {
      if (missing && missing[i]) {
        continue;
      }
      const x = read(i);
      if (Number.isFinite(x)) {
        let bin = Math.min(last, Math.floor(((x - low) / span) * resolution));
        while (bin > 0 && x < edges[bin]) {
          bin--;
        }
        while (bin < last && x >= edges[bin + 1]) {
          bin++;
        }
        counts[bin]++;
      }
    }
    return { kind: 'numeric', low, high, edges, counts, infinite };
  }

  /** Counts of each category of a categorical column (missing rows left out). */
  export function categoryDistribution(column: Extract<ColumnView, { kind: 'categorical' }>): ICategoryDistribution {
    const counts = new Int32Array(column.categories.length);
    const { codes, missing } = column;
    for (let i = 0; i < codes.length; i++) {
      const code = codes[i];
      if (code >= 0 && code < counts.length && !(missing && missing[i])) {
        counts[code]++;
      }
    }
    return { kind: 'categorical', categories: column.categories.slice(), counts };
  }
}
