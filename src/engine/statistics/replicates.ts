/**
 * Replicates of a lattice: independence surrogates and bootstrap resamples, computed in fixed
 * blocks so that a pool of workers can share them and the combined result does not depend on
 * how many workers there were (DESIGN.md §3).
 *
 * - A surrogate permutes each column's codes on its own (Fisher–Yates with a seeded
 *   xoroshiro128+ from pure-rand), which keeps every column's distribution and destroys all
 *   dependence between columns; its lattice is walked to the same maximum order.
 * - A bootstrap resample draws the rows with replacement (same generator); on weighted rows it
 *   draws new weights ~ Multinomial(N, w/N), the same law (multinomial.ts).
 *
 * Replicate r draws from its own generator, seeded by the r-th output of a master generator
 * seeded by the user's seed (one stream for surrogates, another for resamples), so a
 * replicate's data is the same whichever block or worker computes it. A block accumulates,
 * in replicate order, the counts of surrogate values at or beyond the observed value and the
 * sums behind the null mean and spread; blocks are merged in block order
 * ({@link ReplicateAccumulator}), so every floating-point sum is added in one fixed order.
 */

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import { PolyadicError } from '../errors';
import type { ILattice, ILatticeInput } from '../lattice';
import { coinformationAll, computeMeasures, multipletMeasures } from '../measures';
import { membersOfIndex } from '../multiplets';
import { walkLattice } from '../walk';
import { MULTIPLET_MEASURES } from '../types';
import { keepWeightedRows, multinomialWeights, sortedByCodes } from './multinomial';
import type { IResolvedStatistics } from './options';

/** Which replicates a block holds. */
export type ReplicateKind = 'surrogate' | 'bootstrap';

/** Replicates `first … first + count − 1` of one kind. */
export interface IReplicateBlock {
  kind: ReplicateKind;
  /** Index of the block among the blocks of its kind (the merge order). */
  index: number;
  first: number;
  count: number;
}

/** Most blocks per kind: enough for an even share on a few workers, few enough to merge cheaply. */
export const MAX_BLOCKS = 32;

/** Values kept to draw the null band of each order (surrogate values of every multiplet). */
export const NULL_BAND_VALUES = 2 ** 21;

/** The six measures a bootstrap resample records per multiplet, in this order. */
export const BOOTSTRAP_MEASURES = MULTIPLET_MEASURES;

/** What a run's replicates compare against and record. */
export interface IReplicateTargets {
  /** Observed co-information of every multiplet (nats, lattice index). */
  coinformation: Float64Array;
  /** Observed O-information of every multiplet (nats, lattice index). */
  oInformation: Float64Array;
  /** Lattice indices of the multiplets that get bootstrap intervals. */
  bootstrapped: Int32Array;
}

/** What one block of surrogates gives. */
export interface ISurrogateBlockResult {
  kind: 'surrogate';
  index: number;
  count: number;
  /** Per multiplet: surrogates with co-information ≤ observed (within the tolerance), ≥ observed. */
  coLow: Int32Array;
  coHigh: Int32Array;
  coSum: Float64Array;
  coSumSquares: Float64Array;
  /** The same for O-information. */
  oLow: Int32Array;
  oHigh: Int32Array;
  oSum: Float64Array;
  oSumSquares: Float64Array;
  /** Co-information of every multiplet for this block's replicates below the band limit, replicate after replicate. */
  band: Float64Array;
}

/** What one block of bootstrap resamples gives. */
export interface IBootstrapBlockResult {
  kind: 'bootstrap';
  index: number;
  count: number;
  /** values[(r · multiplets + j) · 6 + m]: measure m of bootstrapped multiplet j in resample r (nats). */
  values: Float64Array;
}

/** A block's result. */
export type ReplicateBlockResult = ISurrogateBlockResult | IBootstrapBlockResult;

/** The blocks of a run: surrogates first, then resamples; sizes depend only on the counts. */
export function planReplicateBlocks(statistics: IResolvedStatistics): IReplicateBlock[] {
  return [
    ...blocksOf('surrogate', statistics.surrogates),
    ...blocksOf('bootstrap', statistics.bootstrap)
  ];
}

/** Replicates of the surrogate null band: the first ones, as many as fit {@link NULL_BAND_VALUES}. */
export function bandReplicates(surrogates: number, size: number): number {
  return Math.min(surrogates, Math.max(1, Math.floor(NULL_BAND_VALUES / Math.max(1, size))));
}

/** The seeds of replicates 0 … count − 1 of a kind. */
export function replicateSeeds(seed: number, kind: ReplicateKind, count: number): Uint32Array {
  // Two streams from one user seed: the resamples' master is seeded with the seed's bits flipped.
  let rng = xoroshiro128plus(kind === 'surrogate' ? seed | 0 : ~seed | 0);
  const seeds = new Uint32Array(count);
  for (let r = 0; r < count; r++) {
    seeds[r] = rng.unsafeNext() >>> 0;
  }
  return seeds;
}

/**
 * Each column's codes permuted on its own (Fisher–Yates, Knuth TAOCP 2 §3.4.2 Algorithm P),
 * written into `out` (allocated when absent), from the generator seeded with `seed`.
 */
export function shuffleColumns(codes: Int32Array[], seed: number, out?: Int32Array[]): Int32Array[] {
  const rng = xoroshiro128plus(seed | 0);
  const result = out ?? codes.map(column => new Int32Array(column.length));
  for (let c = 0; c < codes.length; c++) {
    const target = result[c];
    target.set(codes[c]);
    for (let i = target.length - 1; i > 0; i--) {
      const j = unsafeUniformIntDistribution(0, i, rng);
      const value = target[i];
      target[i] = target[j];
      target[j] = value;
    }
  }
  return result;
}

/** The rows drawn with replacement (row indices into `rows`) by the generator seeded with `seed`. */
export function resampleRows(rows: number, seed: number, out?: Int32Array): Int32Array {
  const rng = xoroshiro128plus(seed | 0);
  const picks = out ?? new Int32Array(rows);
  for (let i = 0; i < rows; i++) {
    picks[i] = unsafeUniformIntDistribution(0, rows - 1, rng);
  }
  return picks;
}

/**
 * The tolerance of "at least as extreme": values within it of the observed one count as ties,
 * so that equal measures summed in another order still tie (100 machine epsilons of the
 * observed value, as scipy.stats.permutation_test does; from memory of its source).
 */
export function tieTolerance(observed: number): number {
  return Math.abs(observed) * 100 * Number.EPSILON;
}

/** Compute one block of replicates for a run's lattice input. */
export function runReplicateBlock(
  input: ILatticeInput,
  targets: IReplicateTargets,
  statistics: IResolvedStatistics,
  block: IReplicateBlock
): ReplicateBlockResult {
  const columns = input.codes.length;
  if (columns === 0) {
    throw new PolyadicError('internal', 'Replicates of a lattice without columns.');
  }
  const rows = input.codes[0].length;
  const total = block.kind === 'surrogate' ? statistics.surrogates : statistics.bootstrap;
  if (!(block.first >= 0 && block.count >= 1 && block.first + block.count <= total)) {
    throw new PolyadicError('internal', `Replicate block ${block.first} + ${block.count} is outside 0 … ${total}.`);
  }
  if (block.kind === 'surrogate' && input.weights) {
    throw new PolyadicError('internal', 'Surrogates of weighted rows (they shuffle rows, which weighted rows are not).');
  }
  const seeds = replicateSeeds(statistics.seed, block.kind, block.first + block.count);
  const scratch = input.codes.map(() => new Int32Array(rows));
  if (block.kind === 'surrogate') {
    return Private.surrogateBlock(input, targets, statistics, block, seeds, scratch);
  }
  return Private.bootstrapBlock(input, targets, block, seeds, scratch);
}

/** Blocks merged in block order, whatever order they arrive in. */
export class ReplicateAccumulator {
  /** Start empty for a lattice of `size` slots and `bootstrapped` multiplets with intervals. */
  constructor(
    readonly size: number,
    readonly statistics: IResolvedStatistics,
    readonly bootstrapped: number
  ) {
    this._bandLimit = bandReplicates(statistics.surrogates, size);
    this.coLow = new Int32Array(statistics.surrogates ? size : 0);
    this.coHigh = new Int32Array(this.coLow.length);
    this.coSum = new Float64Array(this.coLow.length);
    this.coSumSquares = new Float64Array(this.coLow.length);
    this.oLow = new Int32Array(this.coLow.length);
    this.oHigh = new Int32Array(this.coLow.length);
    this.oSum = new Float64Array(this.coLow.length);
    this.oSumSquares = new Float64Array(this.coLow.length);
    this.band = new Float64Array(statistics.surrogates ? this._bandLimit * size : 0);
    this.bootstrap = new Float64Array(statistics.bootstrap * bootstrapped * BOOTSTRAP_MEASURES.length);
    this._expected = {
      surrogate: blocksOf('surrogate', statistics.surrogates),
      bootstrap: blocksOf('bootstrap', statistics.bootstrap)
    };
  }

  /** Surrogates with co-information ≤ observed, per multiplet. */
  readonly coLow: Int32Array;
  /** Surrogates with co-information ≥ observed. */
  readonly coHigh: Int32Array;
  /** Σ surrogate co-information, in replicate-block order. */
  readonly coSum: Float64Array;
  /** Σ squares of it. */
  readonly coSumSquares: Float64Array;
  /** The same four for O-information. */
  readonly oLow: Int32Array;
  readonly oHigh: Int32Array;
  readonly oSum: Float64Array;
  readonly oSumSquares: Float64Array;
  /** Surrogate co-information of every multiplet for the first replicates (the null bands). */
  readonly band: Float64Array;
  /** Bootstrap values, laid out as in {@link IBootstrapBlockResult.values} for all resamples. */
  readonly bootstrap: Float64Array;

  /** Replicates merged so far (both kinds). */
  get merged(): number {
    return this._merged;
  }

  /** Whether every block of both kinds is merged. */
  get complete(): boolean {
    return (
      this._next.surrogate === this._expected.surrogate.length && this._next.bootstrap === this._expected.bootstrap.length
    );
  }

  /** Add a block's result; it is merged once every block before it of its kind is. */
  add(result: ReplicateBlockResult): void {
    const kind = result.kind;
    const expected = this._expected[kind];
    if (!(result.index >= 0 && result.index < expected.length) || result.count !== expected[result.index].count) {
      throw new PolyadicError('internal', `Unexpected ${kind} block ${result.index} of ${result.count} replicates.`);
    }
    const waiting = this._waiting[kind];
    if (result.index < this._next[kind] || waiting.has(result.index)) {
      throw new PolyadicError('internal', `The ${kind} block ${result.index} arrived twice.`);
    }
    waiting.set(result.index, result);
    for (;;) {
      const next = waiting.get(this._next[kind]);
      if (!next) {
        break;
      }
      waiting.delete(this._next[kind]);
      this._merge(next, expected[this._next[kind]]);
      this._next[kind]++;
    }
  }

  private _merge(result: ReplicateBlockResult, block: IReplicateBlock): void {
    this._merged += result.count;
    if (result.kind === 'bootstrap') {
      this.bootstrap.set(result.values, block.first * this.bootstrapped * BOOTSTRAP_MEASURES.length);
      return;
    }
    for (let i = 0; i < this.size; i++) {
      this.coLow[i] += result.coLow[i];
      this.coHigh[i] += result.coHigh[i];
      this.coSum[i] += result.coSum[i];
      this.coSumSquares[i] += result.coSumSquares[i];
      this.oLow[i] += result.oLow[i];
      this.oHigh[i] += result.oHigh[i];
      this.oSum[i] += result.oSum[i];
      this.oSumSquares[i] += result.oSumSquares[i];
    }
    if (result.band.length > 0) {
      this.band.set(result.band, block.first * this.size);
    }
  }

  private _bandLimit: number;
  private _expected: Record<ReplicateKind, IReplicateBlock[]>;
  private _next: Record<ReplicateKind, number> = { surrogate: 0, bootstrap: 0 };
  private _waiting: Record<ReplicateKind, Map<number, ReplicateBlockResult>> = {
    surrogate: new Map(),
    bootstrap: new Map()
  };
  private _merged = 0;
}

/** Compute every block in this thread and merge them (the CLI's single-thread path, verify, tests). */
export function runAllReplicates(
  input: ILatticeInput,
  targets: IReplicateTargets,
  statistics: IResolvedStatistics,
  size: number,
  onBlock?: (merged: number) => void
): ReplicateAccumulator {
  const accumulator = new ReplicateAccumulator(size, statistics, targets.bootstrapped.length);
  for (const block of planReplicateBlocks(statistics)) {
    accumulator.add(runReplicateBlock(input, targets, statistics, block));
    onBlock?.(accumulator.merged);
  }
  return accumulator;
}

function blocksOf(kind: ReplicateKind, total: number): IReplicateBlock[] {
  if (total <= 0) {
    return [];
  }
  const count = Math.min(MAX_BLOCKS, total);
  const blocks: IReplicateBlock[] = [];
  let first = 0;
  for (let index = 0; index < count; index++) {
    // Sizes differ by at most one, larger blocks first: a function of the total alone.
    const size = Math.floor(total / count) + (index < total % count ? 1 : 0);
    blocks.push({ kind, index, first, count: size });
    first += size;
  }
  return blocks;
}

namespace Private {
  export function surrogateBlock(
    input: ILatticeInput,
    targets: IReplicateTargets,
    statistics: IResolvedStatistics,
    block: IReplicateBlock,
    seeds: Uint32Array,
    scratch: Int32Array[]
  ): ISurrogateBlockResult {
    const size = targets.coinformation.length;
    const coLow = new Int32Array(size);
    const coHigh = new Int32Array(size);
    const coSum = new Float64Array(size);
    const coSumSquares = new Float64Array(size);
    const oLow = new Int32Array(size);
    const oHigh = new Int32Array(size);
    const oSum = new Float64Array(size);
    const oSumSquares = new Float64Array(size);
    const bandLimit = bandReplicates(statistics.surrogates, size);
    const bandCount = Math.max(0, Math.min(block.first + block.count, bandLimit) - block.first);
    const band = new Float64Array(bandCount * size);
    const coObserved = targets.coinformation;
    const oObserved = targets.oInformation;
    for (let r = 0; r < block.count; r++) {
      const replicate = block.first + r;
      const codes = shuffleColumns(input.codes, seeds[replicate], scratch);
      const lattice = walkLattice({ ...input, codes });
      const measures = computeMeasures(lattice);
      const co = measures.coinformation;
      const o = measures.oInformation;
      tally(co, coObserved, coLow, coHigh, coSum, coSumSquares);
      tally(o, oObserved, oLow, oHigh, oSum, oSumSquares);
      if (r < bandCount) {
        band.set(co, r * size);
      }
    }
    return {
      kind: 'surrogate',
      index: block.index,
      count: block.count,
      coLow,
      coHigh,
      coSum,
      coSumSquares,
      oLow,
      oHigh,
      oSum,
      oSumSquares,
      band
    };
  }

  export function bootstrapBlock(
    input: ILatticeInput,
    targets: IReplicateTargets,
    block: IReplicateBlock,
    seeds: Uint32Array,
    scratch: Int32Array[]
  ): IBootstrapBlockResult {
    const rows = input.codes[0].length;
    const chosen = targets.bootstrapped;
    const width = BOOTSTRAP_MEASURES.length;
    const values = new Float64Array(block.count * chosen.length * width);
    const picks = new Int32Array(rows);
    const members = new Int32Array(Math.max(1, input.maxOrder));
    // Co-information of many multiplets is cheaper from the whole-lattice transform than from subsets.
    const useAll = chosen.length * 8 > targets.coinformation.length;
    const weights = input.weights ? new Int32Array(rows) : null;
    // weighted rows in a fixed order (by codes), whatever order the scan gave them in
    const sorted = input.weights ? sortedByCodes(input.codes, input.weights) : null;
    for (let r = 0; r < block.count; r++) {
      let lattice: ILattice;
      if (sorted && weights) {
        // weighted rows: new weights by multinomial resampling, the codes unchanged (multinomial.ts)
        multinomialWeights(sorted.weights, seeds[block.first + r], weights);
        lattice = walkLattice({ ...input, ...keepWeightedRows(sorted.codes, weights, scratch, weights) });
      } else {
        resampleRows(rows, seeds[block.first + r], picks);
        for (let c = 0; c < input.codes.length; c++) {
          const from = input.codes[c];
          const to = scratch[c];
          for (let i = 0; i < rows; i++) {
            to[i] = from[picks[i]];
          }
        }
        lattice = walkLattice({ ...input, codes: scratch });
      }
      const co = useAll ? coinformationAll(lattice) : undefined;
      let at = r * chosen.length * width;
      for (let j = 0; j < chosen.length; j++) {
        const order = membersOfIndex(lattice.indexing, chosen[j], members);
        const m = multipletMeasures(lattice, members, order, co);
        values[at++] = m.entropy;
        values[at++] = m.coinformation;
        values[at++] = m.totalCorrelation;
        values[at++] = m.dualTotalCorrelation;
        values[at++] = m.oInformation;
        values[at++] = m.sInformation;
      }
    }
    return { kind: 'bootstrap', index: block.index, count: block.count, values };
  }

  function tally(
    values: Float64Array,
    observed: Float64Array,
    low: Int32Array,
    high: Int32Array,
    sum: Float64Array,
    sumSquares: Float64Array
  ): void {
    for (let i = 1; i < values.length; i++) {
      const v = values[i];
      const o = observed[i];
      const gamma = tieTolerance(o);
      if (v <= o + gamma) {
        low[i]++;
      }
      if (v >= o - gamma) {
        high[i]++;
      }
      sum[i] += v;
      sumSquares[i] += v * v;
    }
  }
}
