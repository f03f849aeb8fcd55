/**
 * The pairwise-preserving null of a multiplet and its connected information (DESIGN.md §3).
 *
 * For a multiplet of k ≥ 3 columns, the pairwise-preserving null is the maximum-entropy
 * distribution over the k-way joint table that has the same (k − 1)-order marginals as the data
 * (for k = 3, the same pairwise tables). It is fitted by iterative proportional fitting (Deming &
 * Stephan 1940, Ann. Math. Stat. 11:427–444; Darroch & Ratcliff 1972, "Generalized iterative
 * scaling for log-linear models", Ann. Math. Stat. 43:1470–1480): start from the uniform table and
 * rescale it to each (k − 1)-marginal in turn. Its fitted values are those of the Poisson
 * log-linear model with every (k − 1)-way interaction (Bishop, Fienberg & Holland 1975, "Discrete
 * Multivariate Analysis", ch. 3).
 *
 * Connected information of order k (Schneidman, Still, Berry & Bialek 2003, PRL 91:238701; Amari
 * 2001, IEEE Trans. Inf. Theory 47:1701) is H(fit) − H(data), plug-in entropies of the joint
 * table in nats: the part of the joint structure that no (k − 1)-order marginal explains. At the
 * fit's fixed point it equals D(data ‖ fit), and that is how it is computed: the divergence is
 * stationary at the fixed point (the fit minimises it over the log-linear family), so a fit
 * stopped at a marginal misfit δ moves it by O(δ²), while the entropy difference moves by O(δ)
 * (about 1e-12 nats at the default tolerance); and it is ≥ 0 by construction. Its p-value comes
 * from a parametric bootstrap: tables of N rows drawn from the fit, each fitted and measured the
 * same way.
 *
 * Every logarithm is detmath's `ln` and every random number comes from integers, so a browser and
 * Node give the same bits for the same seed.
 */

import { xoroshiro128plus } from 'pure-rand';
import type { RandomGenerator } from 'pure-rand';

import { ln } from './detmath';
import { PolyadicError } from './errors';

/**
 * Most cells of a joint table the pairwise-preserving null fits: 65,536 (2^16, e.g. 16 codes in
 * each of four columns, or 40 in each of three).
 *
 * Memory is not what limits it (a fit holds about three tables of doubles: 1.5 MiB at the cap);
 * time is. One cycle of the fit reads every cell about 3k times, and the bootstrap refits once
 * per draw: at the cap a fit that converges takes tens of milliseconds, so 1,000 draws take about
 * a minute per multiplet, and a fit that never reaches the tolerance (its maximum lies on the
 * boundary, where the fit approaches it slowly) runs all its cycles, about half a minute (figures
 * measured in Node while writing this module, not tests). Above it the table is also mostly
 * empty for any table a notebook holds (a million rows leave a 65,536-cell table about 15 rows a
 * cell, fewer where the data concentrate), and the connected information of a sparse table
 * measures the sparsity more than the data. Coarser binning (fewer codes per column) brings a
 * multiplet under the cap.
 */
export const MAX_FIT_CELLS = 65536;

/** Largest (k − 1)-marginal misfit, in probability, at which the fit stops by default. */
export const DEFAULT_FIT_TOLERANCE = 1e-12;

/** Most cycles of the fit by default; a fit that needs more reports `converged: false`. */
export const DEFAULT_FIT_MAX_ITERATIONS = 10000;

/** Options of the fit. */
export interface IMaxEntFitOptions {
  /** Column names, one per code array, for messages; default "column 1", "column 2", …. */
  names?: string[];
  /** Stop when every (k − 1)-marginal is within this of the data's (default 1e-12). */
  tolerance?: number;
  /** Stop after this many cycles over the k marginals (default 10,000). */
  maxIterations?: number;
  /**
   * Weighted rows (an aggregated source's distinct rows): row i counts `weights[i]` times (each
   * ≥ 1). The table, hence the fit and every draw from it, is that of the expanded rows.
   */
  weights?: Int32Array;
}

/** The pairwise-preserving null of one multiplet: the fitted joint table beside the data's. */
export interface IMaxEntFit {
  /** Used codes of each column: the table's extent along each axis. */
  shape: number[];
  /** The used codes of each column, ascending: position i along axis c stands for code levels[c][i]. */
  levels: Int32Array[];
  /** N: rows of the multiplet. */
  rows: number;
  /** Fitted probabilities, row-major (the last column varies fastest). */
  fitted: Float64Array;
  /** The data's joint probabilities (count / N), in the same layout. */
  empirical: Float64Array;
  /** Cycles over the k marginals that were run. */
  iterations: number;
  /** Whether the largest marginal misfit reached the tolerance within the allowed cycles. */
  converged: boolean;
  /** Largest |fitted − data| over every cell of every (k − 1)-marginal, in probability. */
  maxMarginalError: number;
}

/** Options of {@link connectedInformation}. */
export interface IConnectedInformationOptions extends IMaxEntFitOptions {
  /** Column names, one per code array: messages name the multiplet by them. */
  names: string[];
  /** Parametric bootstrap draws B (default 0: no p-value). */
  draws?: number;
  /** Seed of the draws, a whole number 0 … 2^32 − 1 (default 0). */
  seed?: number;
}

/** Connected information of one multiplet, with its bootstrap p-value. */
export interface IConnectedInformation {
  /** Connected information H(fit) − H(data), computed as D(data ‖ fit), in nats. */
  value: number;
  /** Plug-in entropy of the fitted table, in nats. */
  fitEntropy: number;
  /** Plug-in entropy of the data's joint table, in nats. */
  dataEntropy: number;
  /** (1 + #{draws at least the observed value}) / (B + 1); null when B = 0. */
  pValue: number | null;
  /** B: bootstrap draws made. */
  draws: number;
  /** Mean of the statistic over the draws, in nats; null when B = 0. */
  nullMean: number | null;
  /** Sample standard deviation (denominator B − 1) over the draws, in nats; null when B < 2. */
  nullSd: number | null;
  /** The statistic of each draw, in nats, in the order drawn. */
  nullDraws: Float64Array;
  /** Draws whose own fit stopped at the cycle cap (their statistic is still counted). */
  drawsNotConverged: number;
  /** Cycles of the fit to the data. */
  iterations: number;
  /** Whether the fit to the data converged. */
  converged: boolean;
  /** Largest marginal misfit of the fit to the data, in probability. */
  maxMarginalError: number;
  /** Cells of the joint table (product of the used codes). */
  cells: number;
  /** N: rows of the multiplet. */
  rows: number;
}

/** The maximum-entropy fit to a multiplet's (k − 1)-order marginals, by iterative proportional fitting. */
export function fitPairwisePreserving(codes: ArrayLike<number>[], options: IMaxEntFitOptions = {}): IMaxEntFit {
  const { table, fitter, outcome } = Private.fitData(codes, options);
  const empirical = new Float64Array(table.counts.length);
  for (let cell = 0; cell < empirical.length; cell++) {
    empirical[cell] = table.counts[cell] / table.rows;
  }
  return {
    shape: table.shape,
    levels: table.levels,
    rows: table.rows,
    fitted: fitter.fitted.slice(),
    empirical,
    ...outcome
  };
}

/**
 * Connected information of order k of one multiplet (nats), with a parametric-bootstrap p-value
 * from B tables of N rows drawn from the pairwise-preserving null.
 */
export function connectedInformation(
  codes: ArrayLike<number>[],
  options: IConnectedInformationOptions
): IConnectedInformation {
  const draws = Private.wholeNumber(options.draws ?? 0, 'draws', 'The number of bootstrap draws', 0);
  const seed = Private.wholeNumber(options.seed ?? 0, 'seed', 'The seed', 0, 0xffffffff);
  const { table, fitter, outcome, tolerance, maxIterations } = Private.fitData(codes, options);
  const N = table.rows;
  const fitEntropy = Private.probabilityEntropy(fitter.fitted);
  const dataEntropy = Private.countEntropy(table.counts, N);
  const value = Private.divergence(table.counts, N, fitter.fitted);

  const nullDraws = new Float64Array(draws);
  let drawsNotConverged = 0;
  if (draws > 0) {
    const sampler = new Private.Sampler(fitter.fitted, xoroshiro128plus(seed));
    // The sampler keeps its own cumulative copy of the fit, so the fitter is free for the draws.
    const drawn = new Float64Array(table.counts.length);
    for (let b = 0; b < draws; b++) {
      sampler.draw(N, drawn);
      const drawOutcome = fitter.fit(drawn, N, tolerance, maxIterations);
      if (!drawOutcome.converged) {
        drawsNotConverged++;
      }
      nullDraws[b] = Private.divergence(drawn, N, fitter.fitted);
    }
  }
  const summary = Private.nullSummary(nullDraws, value);
  return {
    value,
    fitEntropy,
    dataEntropy,
    ...summary,
    draws,
    nullDraws,
    drawsNotConverged,
    ...outcome,
    cells: table.counts.length,
    rows: N
  };
}

namespace Private {
  /**
   * Draws within this many nats below the observed value count as ties, hence as extreme (common
   * practice for statistics equal in theory but not in floating point; it keeps the p-value
   * conservative). Two equal divergences differ in computation by rounding and by the fits'
   * misfit to second order, both far below 1e-12 nats at the default tolerance.
   */
  export const TIE_SLACK = 1e-12;

  /** The data of a multiplet as a joint table of counts over the used codes. */
  export interface ITable {
    shape: number[];
    levels: Int32Array[];
    counts: Float64Array;
    rows: number;
  }

  /** Names for messages: the caller's, checked against the number of columns, or "column i". */
  function columnNames(k: number, names: string[] | undefined): string[] {
    if (names === undefined) {
      return Array.from({ length: k }, (_, c) => `column ${c + 1}`);
    }
    if (names.length !== k) {
      throw new PolyadicError('internal', `${k} code arrays but ${names.length} column names.`);
    }
    return names;
  }

  /** The multiplet as a person reads it: {a, b, c}. */
  function multipletLabel(names: string[]): string {
    return `{${names.join(', ')}}`;
  }

  /** A whole-number option in least … most, or a usage error naming it. */
  export function wholeNumber(value: number, option: string, what: string, least: number, most = Infinity): number {
    if (!(Number.isInteger(value) && value >= least && value <= most)) {
      const range = most === Infinity ? `≥ ${least}` : `from ${least} to ${most}`;
      throw new PolyadicError('usage', `${what} must be a whole number ${range}, not ${String(value)}.`, {
        option,
        value: String(value)
      });
    }
    return value;
  }

  /** The data's table and its fit, after checking the fit's options and the columns. */
  export function fitData(
    codes: ArrayLike<number>[],
    options: IMaxEntFitOptions
  ): { table: ITable; fitter: Fitter; outcome: IFitOutcome; tolerance: number; maxIterations: number } {
    const names = columnNames(codes.length, options.names);
    const tolerance = options.tolerance ?? DEFAULT_FIT_TOLERANCE;
    if (!(typeof tolerance === 'number' && tolerance >= 0 && tolerance < Infinity)) {
      throw new PolyadicError('usage', `The fit tolerance must be a number ≥ 0, not ${String(tolerance)}.`, {
        option: 'tolerance',
        value: String(tolerance)
      });
    }
    const maxIterations = wholeNumber(
      options.maxIterations ?? DEFAULT_FIT_MAX_ITERATIONS,
      'maxIterations',
      'The most cycles of the fit',
      1
    );
    const table = tabulate(codes, names, options.weights);
    const fitter = new Fitter(table.shape);
    const outcome = fitter.fit(table.counts, table.rows, tolerance, maxIterations);
    return { table, fitter, outcome, tolerance, maxIterations };
  }

  /**
   * Check the columns and count the rows of each joint cell. Each column's codes are renumbered
   * densely in code order (not order of appearance), so the table does not depend on row order.
   */
  function tabulate(codes: ArrayLike<number>[], names: string[], weights?: Int32Array): ITable {
    const k = codes.length;
    const label = multipletLabel(names);
    if (k < 3) {
      throw new PolyadicError(
        'usage',
        `The pairwise-preserving null and connected information need a multiplet of order 3 or more; ` +
          `${label} has order ${k}. ` +
          (k === 2
            ? `At order 2 it is the mutual information of ${names[0]} and ${names[1]}: read that instead.`
            : 'Select at least three columns.'),
        { option: 'columns', value: names.join(', ') }
      );
    }
    const rows = codes[0].length;
    for (let c = 1; c < k; c++) {
      if (codes[c].length !== rows) {
        throw new PolyadicError(
          'input',
          `Column '${names[c]}' has ${codes[c].length} rows but '${names[0]}' has ${rows}; ` +
            `the columns of the multiplet ${label} must have the same rows.`,
          { column: names[c] }
        );
      }
    }
    if (rows === 0) {
      throw new PolyadicError('input', `The multiplet ${label} has no rows to fit.`, { column: names[0] });
    }
    const dense: Int32Array[] = [];
    const levels: Int32Array[] = [];
    for (let c = 0; c < k; c++) {
      const renumbered = renumber(codes[c], names[c]);
      dense.push(renumbered.dense);
      levels.push(renumbered.levels);
    }
    const shape = levels.map(level => level.length);
    let cells = 1;
    for (const extent of shape) {
      cells *= extent;
    }
    if (cells > MAX_FIT_CELLS) {
      throw new PolyadicError(
        'limit',
        `The joint table of the multiplet ${label} has ${cells} cells (${shape.join(' × ')} used codes), ` +
          `above the ${MAX_FIT_CELLS} the pairwise-preserving null fits. Bin its columns more coarsely ` +
          'or leave this multiplet out of the connected-information test.',
        { value: String(cells), multiplet: names.slice(), cells, limit: MAX_FIT_CELLS }
      );
    }
    if (weights && weights.length !== rows) {
      throw new PolyadicError('internal', `${weights.length} row weights for ${rows} rows of the multiplet ${label}.`);
    }
    const counts = new Float64Array(cells);
    let total = 0;
    for (let i = 0; i < rows; i++) {
      let cell = 0;
      for (let c = 0; c < k; c++) {
        cell = cell * shape[c] + dense[c][i];
      }
      const weight = weights ? weights[i] : 1;
      counts[cell] += weight;
      total += weight;
    }
    return { shape, levels, counts, rows: total };
  }

  /** Largest code renumbered through a lookup array by code (4 bytes a code); larger ones are sorted. */
  const RANK_TABLE_LIMIT = 1 << 22;

  /** Codes renumbered 0 … used − 1 in code order, and the used codes. */
  function renumber(codes: ArrayLike<number>, name: string): { dense: Int32Array; levels: Int32Array } {
    const rows = codes.length;
    let largest = 0;
    for (let i = 0; i < rows; i++) {
      const code = codes[i];
      if (!(Number.isInteger(code) && code >= 0 && code <= 0x7fffffff)) {
        throw new PolyadicError(
          'input',
          `Column '${name}' row ${i} has code ${String(code)}; codes must be whole numbers ≥ 0 (no missing values).`,
          { column: name, row: i, value: String(code) }
        );
      }
      largest = Math.max(largest, code);
    }
    const dense = new Int32Array(rows);
    if (largest < RANK_TABLE_LIMIT) {
      // Binned codes are small: mark the used ones, then number them in code order (1-based while marking).
      const rank = new Int32Array(largest + 1);
      for (let i = 0; i < rows; i++) {
        rank[codes[i]] = 1;
      }
      const used: number[] = [];
      for (let code = 0; code <= largest; code++) {
        if (rank[code]) {
          used.push(code);
          rank[code] = used.length;
        }
      }
      for (let i = 0; i < rows; i++) {
        dense[i] = rank[codes[i]] - 1;
      }
      return { dense, levels: Int32Array.from(used) };
    }
    const sorted = Int32Array.from(codes).sort();
    let used = 0;
    for (let i = 0; i < rows; i++) {
      if (i === 0 || sorted[i] !== sorted[i - 1]) {
        sorted[used++] = sorted[i];
      }
    }
    const levels = sorted.slice(0, used);
    for (let i = 0; i < rows; i++) {
      let lo = 0;
      let hi = used - 1;
      while (lo < hi) {
        const mid = (lo + hi) >>> 1;
        if (levels[mid] < codes[i]) {
          lo = mid + 1;
        } else {
          hi = mid;
        }
      }
      dense[i] = lo;
    }
    return { dense, levels };
  }

  /** −Σ q ln q over the cells, in nats. */
  export function probabilityEntropy(probabilities: Float64Array): number {
    let sum = 0;
    for (let cell = 0; cell < probabilities.length; cell++) {
      const q = probabilities[cell];
      if (q > 0) {
        sum -= q * ln(q);
      }
    }
    return sum;
  }

  /** Plug-in entropy of counts summing to N, in nats: ln N − Σ n ln n / N, as the estimators compute it. */
  export function countEntropy(counts: Float64Array, N: number): number {
    let sum = 0;
    for (let cell = 0; cell < counts.length; cell++) {
      const n = counts[cell];
      if (n > 1) {
        sum += n * ln(n);
      }
    }
    return ln(N) - sum / N;
  }

  /**
   * D(data ‖ fit) = Σ p ln(p / q) over the occupied cells, p = n / N, in nats. One logarithm of
   * the ratio per cell: near the fixed point the ratio is near 1, and a log of the ratio does not
   * cancel the way ln p − ln q would.
   */
  export function divergence(counts: Float64Array, N: number, fitted: Float64Array): number {
    let sum = 0;
    for (let cell = 0; cell < counts.length; cell++) {
      const n = counts[cell];
      if (n > 0) {
        // The fit is 0 only where a data marginal is 0, hence where n is 0 too.
        sum += n * ln(n / (N * fitted[cell]));
      }
    }
    return sum / N;
  }

  /** p-value, mean and standard deviation of the bootstrap statistics. */
  export function nullSummary(
    statistics: Float64Array,
    observed: number
  ): { pValue: number | null; nullMean: number | null; nullSd: number | null } {
    const B = statistics.length;
    if (B === 0) {
      return { pValue: null, nullMean: null, nullSd: null };
    }
    let extreme = 0;
    let mean = 0;
    let squares = 0;
    for (let b = 0; b < B; b++) {
      const x = statistics[b];
      if (x >= observed - TIE_SLACK) {
        extreme++;
      }
      // Welford's update (Welford 1962, Technometrics 4:419–420): no cancellation for a small spread.
      const delta = x - mean;
      mean += delta / (b + 1);
      squares += delta * (x - mean);
    }
    return {
      pValue: (1 + extreme) / (B + 1),
      nullMean: mean,
      // ECMA-262 defines Math.sqrt as the correctly rounded root, so it is the same bits everywhere.
      nullSd: B >= 2 ? Math.sqrt(squares / (B - 1)) : null
    };
  }

  /** Outcome of one fit. */
  export interface IFitOutcome {
    iterations: number;
    converged: boolean;
    maxMarginalError: number;
  }

  /**
   * Iterative proportional fitting over a fixed table shape, with its buffers allocated once so
   * that the bootstrap refits without allocating.
   *
   * The marginal that leaves out axis j has one cell per (outer, inner) pair, where outer runs over
   * the axes before j and inner over those after it; a joint cell's index is
   * (outer · extent_j + s) · inner_j + inner, so three nested loops visit the table in memory order
   * with no division.
   */
  export class Fitter {
    /** Fitted probabilities after {@link fit}. */
    readonly fitted: Float64Array;

    constructor(shape: number[]) {
      const k = shape.length;
      let cells = 1;
      for (const extent of shape) {
        cells *= extent;
      }
      this.fitted = new Float64Array(cells);
      this._k = k;
      this._extent = Int32Array.from(shape);
      this._outer = new Int32Array(k);
      this._inner = new Int32Array(k);
      this._targets = [];
      let largest = 0;
      for (let j = 0; j < k; j++) {
        let outer = 1;
        for (let d = 0; d < j; d++) {
          outer *= shape[d];
        }
        const inner = cells / (outer * shape[j]);
        this._outer[j] = outer;
        this._inner[j] = inner;
        this._targets.push(new Float64Array(outer * inner));
        largest = Math.max(largest, outer * inner);
      }
      this._current = new Float64Array(largest);
    }

    /**
     * Fit to the (k − 1)-marginals of a table of counts summing to N, from the uniform table.
     * Each cycle rescales to the k marginals in turn; the misfit is measured over all of them
     * after every cycle, ending with marginal 0 so that its sums serve the next cycle's first step.
     */
    fit(counts: Float64Array, N: number, tolerance: number, maxIterations: number): IFitOutcome {
      const k = this._k;
      for (let j = 0; j < k; j++) {
        // Counts are whole numbers, so their marginal sums are exact; one division per cell follows.
        const target = this._targets[j];
        this._marginal(j, counts, target);
        for (let m = 0; m < target.length; m++) {
          target[m] /= N;
        }
      }
      this.fitted.fill(1 / this.fitted.length);
      let error = this._misfit();
      let iterations = 0;
      while (!(error <= tolerance) && iterations < maxIterations) {
        for (let j = 0; j < k; j++) {
          if (j > 0) {
            this._marginal(j, this.fitted, this._current);
          }
          this._scale(j);
        }
        iterations++;
        error = this._misfit();
      }
      return { iterations, converged: error <= tolerance, maxMarginalError: error };
    }

    /** Largest |fitted − target| over every marginal; leaves marginal 0's sums in `_current`. */
    private _misfit(): number {
      let error = 0;
      for (let j = this._k - 1; j >= 0; j--) {
        const target = this._targets[j];
        const current = this._current;
        this._marginal(j, this.fitted, current);
        for (let m = 0; m < target.length; m++) {
          const gap = Math.abs(current[m] - target[m]);
          if (!(gap <= error)) {
            error = gap;
          }
        }
      }
      return error;
    }

    /** Sums of `table` over axis j into `out`. */
    private _marginal(j: number, table: Float64Array, out: Float64Array): void {
      const outer = this._outer[j];
      const extent = this._extent[j];
      const inner = this._inner[j];
      out.fill(0, 0, outer * inner);
      let cell = 0;
      for (let o = 0; o < outer; o++) {
        const base = o * inner;
        for (let s = 0; s < extent; s++) {
          for (let i = 0; i < inner; i++) {
            out[base + i] += table[cell++];
          }
        }
      }
    }

    /**
     * Rescale the fit so that its marginal j (whose sums are in `_current`) equals the target. A
     * marginal cell the fit has emptied holds no data either, so it stays empty.
     */
    private _scale(j: number): void {
      const outer = this._outer[j];
      const extent = this._extent[j];
      const inner = this._inner[j];
      const target = this._targets[j];
      const factor = this._current;
      for (let m = 0; m < target.length; m++) {
        factor[m] = factor[m] > 0 ? target[m] / factor[m] : 0;
      }
      const fitted = this.fitted;
      let cell = 0;
      for (let o = 0; o < outer; o++) {
        const base = o * inner;
        for (let s = 0; s < extent; s++) {
          for (let i = 0; i < inner; i++) {
            fitted[cell++] *= factor[base + i];
          }
        }
      }
    }

    private readonly _k: number;
    private readonly _extent: Int32Array;
    private readonly _outer: Int32Array;
    private readonly _inner: Int32Array;
    /** The data's (k − 1)-marginals as probabilities, one array per left-out axis. */
    private readonly _targets: Float64Array[];
    /** The fit's marginal sums, then the scaling factors of one step. */
    private readonly _current: Float64Array;
  }

  /**
   * Multinomial tables drawn from fixed cell probabilities: each row is a uniform in [0, 1) scaled
   * to the total and located by binary search in the cumulative probabilities of the non-empty cells.
   */
  export class Sampler {
    constructor(probabilities: Float64Array, rng: RandomGenerator) {
      let positive = 0;
      for (let cell = 0; cell < probabilities.length; cell++) {
        if (probabilities[cell] > 0) {
          positive++;
        }
      }
      this._cells = new Int32Array(positive);
      this._cumulative = new Float64Array(positive);
      let total = 0;
      let next = 0;
      for (let cell = 0; cell < probabilities.length; cell++) {
        if (probabilities[cell] > 0) {
          total += probabilities[cell];
          this._cells[next] = cell;
          this._cumulative[next] = total;
          next++;
        }
      }
      this._total = total;
      this._rng = rng;
    }

    /** Fill `counts` (one entry per cell of the table) with a draw of N rows. */
    draw(N: number, counts: Float64Array): void {
      counts.fill(0);
      const cumulative = this._cumulative;
      const last = cumulative.length - 1;
      for (let r = 0; r < N; r++) {
        const target = this._uniform() * this._total;
        // First cell whose cumulative probability exceeds the target; the last one if rounding left none.
        let lo = 0;
        let hi = last;
        while (lo < hi) {
          const mid = (lo + hi) >>> 1;
          if (cumulative[mid] > target) {
            hi = mid;
          } else {
            lo = mid + 1;
          }
        }
        counts[this._cells[lo]]++;
      }
    }

    /**
     * A uniform double in [0, 1) from 53 random bits of two 32-bit outputs (27 and 26 high bits),
     * the construction of the Mersenne Twister reference code's genrand_res53 (Matsumoto &
     * Nishimura 1998, ACM TOMACS 8:3–30): integer arithmetic only, so every engine agrees.
     */
    private _uniform(): number {
      const a = this._rng.unsafeNext() >>> 5;
      const b = this._rng.unsafeNext() >>> 6;
      return (a * 67108864 + b) / 9007199254740992;
    }

    private readonly _cells: Int32Array;
    private readonly _cumulative: Float64Array;
    private readonly _total: number;
    private readonly _rng: RandomGenerator;
  }
}
