/**
 * Settings of the evidence computed for every multiplet (DESIGN.md §3, Statistics): how many
 * independence surrogates and bootstrap resamples, the seed, the tail of the test, the level
 * of the intervals, and how many multiplets get the pairwise-preserving null. Checked once
 * here, with messages that name the option at fault, for the CLI, the panel and the workers.
 */

import { PolyadicError } from '../errors';

/** Which tail a surrogate p-value measures: both, or only the synergy (negative) or redundancy (positive) side. */
export type StatisticsTail = 'two' | 'synergy' | 'redundancy';

/** Every tail, in the order the interfaces list them. */
export const STATISTICS_TAILS: readonly StatisticsTail[] = ['two', 'synergy', 'redundancy'];

/**
 * Most surrogates one analysis takes. p cannot go below 1/(N + 1), so 100,000 already
 * resolves p ≈ 1e-5; more only costs time (a documented cap, our own choice).
 */
export const MAX_SURROGATES = 100_000;

/** Most bootstrap resamples one analysis takes (as for surrogates: a documented cap). */
export const MAX_BOOTSTRAP = 100_000;

/**
 * Most bootstrap values kept: resamples × multiplets with intervals (each holds six measures,
 * 8 bytes each: 2^21 pairs are about 100 MB). Above it, fewer multiplets get intervals (the
 * most extreme of each table); the result says how many.
 */
export const MAX_BOOTSTRAP_VALUES = 2 ** 21;

/** Largest seed: the generator takes a 32-bit unsigned seed. */
export const MAX_SEED = 0xffffffff;

/** Most multiplets per table that get the pairwise-preserving null. */
export const MAX_BEYOND_PAIRS = 1000;

/** Most parametric-bootstrap draws per multiplet for the pairwise-preserving null. */
export const MAX_FIT_DRAWS = 100_000;

/** Statistics requested with an analysis; every field optional (0 = off). */
export interface IStatisticsOptions {
  /** Independence surrogates N (each column's codes shuffled on its own); 0 = off. */
  surrogates?: number;
  /** Seed of every random draw (surrogates, resamples, fit draws); default 0. */
  seed?: number;
  /** Bootstrap row resamples B; 0 = off. */
  bootstrap?: number;
  /** Tail of the surrogate p-values; default 'two'. */
  tail?: StatisticsTail;
  /**
   * Level of the tests and intervals: intervals cover 1 − alpha, and "q below alpha" filters
   * use it; default 0.05.
   */
  alpha?: number;
  /**
   * Multiplets of order ≥ 3 per table (most negative and most positive co-information) that
   * get the pairwise-preserving null; 0 = off.
   */
  beyondPairs?: number;
  /** Parametric-bootstrap draws from each fit (default 200 when beyondPairs > 0). */
  fitDraws?: number;
  /**
   * Fresh surrogates for each multiplet whose p-value sits at its floor 1/(N + 1) (at most
   * MAX_SHARPENED of ./sharpen.ts, 64, the most extreme first), computed on that multiplet
   * alone; 0 = off. See ./sharpen.ts.
   */
  sharpen?: number;
}

/** Most fresh surrogates per sharpened multiplet. */
export const MAX_SHARPEN = 1_000_000;


/** Statistics settings after checking, every default filled in. */
export interface IResolvedStatistics {
  surrogates: number;
  seed: number;
  bootstrap: number;
  tail: StatisticsTail;
  alpha: number;
  beyondPairs: number;
  fitDraws: number;
  sharpen: number;
}

/** Default draws of the pairwise-preserving null's parametric bootstrap. */
export const DEFAULT_FIT_DRAWS = 200;

/** Default level. */
export const DEFAULT_ALPHA = 0.05;

/**
 * Check statistics options and fill in defaults; null when nothing is requested (no
 * surrogates, no bootstrap, no pairwise-preserving null). Errors name the option.
 */
export function resolveStatistics(options: IStatisticsOptions | undefined): IResolvedStatistics | null {
  if (!options) {
    return null;
  }
  const surrogates = wholeNumber('surrogates', options.surrogates ?? 0, MAX_SURROGATES, 'surrogates');
  const bootstrap = wholeNumber('bootstrap', options.bootstrap ?? 0, MAX_BOOTSTRAP, 'bootstrap resamples');
  const beyondPairs = wholeNumber('beyondPairs', options.beyondPairs ?? 0, MAX_BEYOND_PAIRS, 'multiplets per table');
  const fitDraws = wholeNumber('fitDraws', options.fitDraws ?? DEFAULT_FIT_DRAWS, MAX_FIT_DRAWS, 'draws');
  const sharpen = wholeNumber('sharpen', options.sharpen ?? 0, MAX_SHARPEN, 'sharpening surrogates');
  if (sharpen > 0 && surrogates === 0) {
    throw new PolyadicError(
      'usage',
      'Sharpening refines surrogate p-values at their floor; ask for surrogates as well.',
      { option: 'sharpen', value: String(sharpen) }
    );
  }
  const seed = options.seed ?? 0;
  if (!(typeof seed === 'number' && Number.isInteger(seed) && seed >= 0 && seed <= MAX_SEED)) {
    throw new PolyadicError(
      'usage',
      `The seed must be a whole number from 0 to ${MAX_SEED.toLocaleString('en-US')}, not ${describe(seed)}.`,
      { option: 'seed', value: describe(seed) }
    );
  }
  const tail = options.tail ?? 'two';
  if (!STATISTICS_TAILS.includes(tail)) {
    throw new PolyadicError(
      'usage',
      `Unknown tail '${String(tail)}'; use ${STATISTICS_TAILS.map(t => `'${t}'`).join(', ')}.`,
      { option: 'tail', value: String(tail) }
    );
  }
  const alpha = options.alpha ?? DEFAULT_ALPHA;
  if (!(typeof alpha === 'number' && alpha > 0 && alpha < 1)) {
    throw new PolyadicError('usage', `alpha must be a number between 0 and 1, not ${describe(alpha)}.`, {
      option: 'alpha',
      value: describe(alpha)
    });
  }
  if (surrogates === 0 && bootstrap === 0 && beyondPairs === 0) {
    return null;
  }
  return { surrogates, seed, bootstrap, tail, alpha, beyondPairs, fitDraws, sharpen };
}

function wholeNumber(option: string, value: unknown, cap: number, what: string): number {
  if (!(typeof value === 'number' && Number.isInteger(value) && value >= 0)) {
    throw new PolyadicError('usage', `The number of ${what} must be a whole number ≥ 0, not ${describe(value)}.`, {
      option,
      value: describe(value)
    });
  }
  if (value > cap) {
    throw new PolyadicError(
      'limit',
      `The number of ${what} is at most ${cap.toLocaleString('en-US')}, not ${value.toLocaleString('en-US')}.`,
      { option, value: String(value) }
    );
  }
  return value;
}

function describe(value: unknown): string {
  return typeof value === 'string' ? `'${value}'` : String(value);
}
