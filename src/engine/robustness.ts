/**
 * The robustness run: one analysis re-run under a set of variants (another binning, another
 * estimator, another missing-value policy), and how far its conclusions hold across them.
 *
 * For every multiplet of order ≥ 2: its co-information under each variant, its rank among the
 * multiplets under that variant (1 = most negative, i.e. most synergy-dominated; ties get their
 * average rank), and the share of the variants whose co-information has the base analysis' sign.
 * For every pair of variants: Kendall's τ-b between their co-informations over all multiplets
 * of order ≥ 2 (Kendall 1945, Biometrika 33:239–251, the tie-corrected τ-b), computed in
 * O(m log m) by Knight's merge-sort method (Knight 1966, JASA 61:436–439).
 *
 * The variants may not change the selection or the maximum order (the multiplets must be the
 * same), nor ask for statistics.
 */

import { latticeInput, prepareColumns, resolveOptions } from './analyze';
import { averageRanks } from './copula/transform';
import { isPolyadicError, PolyadicError } from './errors';
import { fromNats } from './estimators';
import { coinformationAll } from './measures';
import { forEachMultiplet } from './multiplets';
import type { ColumnView, IAnalyzeOptions } from './types';
import { walkLattice } from './walk';

/** One variant: a label and the options it changes. */
export interface IRobustnessVariant {
  label: string;
  options: Pick<IAnalyzeOptions, 'bins' | 'binsByColumn' | 'estimator' | 'missing'>;
}

/** One multiplet across the variants (the base analysis first). */
export interface IRobustnessRow {
  columns: string[];
  order: number;
  /** Co-information per variant, in the result's units. */
  values: number[];
  /** Rank per variant among the multiplets of order ≥ 2 (1 = most negative). */
  ranks: number[];
  /** Share of the variants (the base not counted) whose co-information has the base's sign. */
  same_sign: number;
}

/** Kendall's τ-b between two variants' co-informations. */
export interface IRobustnessAgreement {
  a: string;
  b: string;
  kendall_tau: number;
}

/** The result of a robustness run. */
export interface IRobustnessResult {
  /** Labels, the base first. */
  variants: { label: string; estimator: string; bins: string[]; rows_used: number }[];
  units: string;
  max_order: number;
  /** Multiplets of order ≥ 2 compared. */
  multiplet_count: number;
  /** The rows, most extreme first by the base's co-information when `top` is given, else in the base's order. */
  multiplets: IRobustnessRow[];
  agreement: IRobustnessAgreement[];
  warnings: string[];
}

/** Label of the base analysis. */
export const BASE_LABEL = 'base';

/**
 * Re-run `base` under each variant. `top` keeps the `top` lowest and `top` highest base
 * co-informations in the table (τ is always over every multiplet of order ≥ 2).
 */
export function robustnessRun(
  columns: ColumnView[],
  base: IAnalyzeOptions,
  variants: IRobustnessVariant[],
  top?: number
): IRobustnessResult {
  if (variants.length === 0) {
    throw new PolyadicError('usage', 'A robustness run needs at least one variant besides the base analysis.', {
      option: 'variants'
    });
  }
  if (base.statistics) {
    throw new PolyadicError('usage', 'A robustness run compares estimates only; run the statistics on the chosen analysis.', {
      option: 'statistics'
    });
  }
  const labels = [BASE_LABEL, ...variants.map(variant => variant.label)];
  const repeated = labels.find((label, i) => labels.indexOf(label) !== i);
  if (repeated !== undefined) {
    throw new PolyadicError('usage', `Two variants are labelled '${repeated}'; give each its own label.`, {
      option: 'variants',
      value: repeated
    });
  }
  const plain: IAnalyzeOptions = { ...base, top: undefined };
  const runs = [Private.coinformations(columns, plain)];
  for (const variant of variants) {
    const options: IAnalyzeOptions = { ...plain, ...variant.options };
    if (variant.options.binsByColumn) {
      options.binsByColumn = { ...(plain.binsByColumn ?? {}), ...variant.options.binsByColumn };
    }
    try {
      runs.push(Private.coinformations(columns, options));
    } catch (error) {
      if (isPolyadicError(error)) {
        throw new PolyadicError(error.kind, `Variant '${variant.label}': ${error.message}`, { ...error.detail, variant: variant.label });
      }
      throw error;
    }
  }
  const first = runs[0];
  if (runs.some(run => run.maxOrder !== first.maxOrder || run.values.length !== first.values.length)) {
    throw new PolyadicError('internal', 'The variants of a robustness run computed different multiplets.');
  }
  const values = runs.map(run => run.values);
  const m = first.values.length;
  const ranks = values.map(column => averageRanks(column));
  const rows: IRobustnessRow[] = first.members.map((columns, j) => {
    const sign = Math.sign(values[0][j]);
    let same = 0;
    for (let v = 1; v < values.length; v++) {
      same += Math.sign(values[v][j]) === sign ? 1 : 0;
    }
    return {
      columns,
      order: columns.length,
      values: values.map(column => column[j]),
      ranks: ranks.map(column => column[j]),
      same_sign: same / (values.length - 1)
    };
  });
  const agreement: IRobustnessAgreement[] = [];
  for (let a = 0; a < values.length; a++) {
    for (let b = a + 1; b < values.length; b++) {
      agreement.push({ a: labels[a], b: labels[b], kendall_tau: kendallTau(values[a], values[b]) });
    }
  }
  // By order, then in the walk's (lexicographic) order: the sort is stable.
  let table = rows.slice().sort((p, q) => p.order - q.order);
  if (top !== undefined) {
    const order = rows.map((_, j) => j).sort((p, q) => values[0][p] - values[0][q] || p - q);
    const chosen = [...order.slice(0, top)];
    const taken = new Set(chosen);
    for (let i = order.length - 1, added = 0; i >= 0 && added < top; i--, added++) {
      if (!taken.has(order[i])) {
        chosen.push(order[i]);
      }
    }
    table = chosen.map(j => rows[j]);
  }
  const warnings = runs.flatMap((run, v) => run.warnings.map(warning => `${labels[v]}: ${warning}`));
  return {
    variants: runs.map((run, v) => ({
      label: labels[v],
      estimator: run.estimator,
      bins: run.bins,
      rows_used: run.rowsUsed
    })),
    units: first.units,
    max_order: first.maxOrder,
    multiplet_count: m,
    multiplets: table,
    agreement,
    warnings
  };
}

/**
 * Kendall's τ-b of two equally long vectors (NaN when either is constant or shorter than 2):
 * (C − D) / √((n0 − n1)(n0 − n2)) with n0 = n(n − 1)/2 and n1, n2 the pairs tied in x, in y
 * (Kendall 1945). C − D comes from sorting by (x, y) and counting the exchanges a stable merge
 * sort by y makes (Knight 1966): C − D = n0 − n1 − n2 + n3 − 2·exchanges, n3 the pairs tied in both.
 */
export function kendallTau(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const n = x.length;
  if (y.length !== n) {
    throw new PolyadicError('internal', `Kendall's tau of vectors of ${n} and ${y.length} values.`);
  }
  if (n < 2) {
    return NaN;
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a] - x[b] || y[a] - y[b]);
  let tiedX = 0;
  let tiedBoth = 0;
  for (let i = 0, xRun = 1, bothRun = 1; i < n; i++) {
    const last = i === n - 1;
    const sameX = !last && x[order[i + 1]] === x[order[i]];
    const sameBoth = sameX && y[order[i + 1]] === y[order[i]];
    if (sameX) {
      xRun++;
    } else {
      tiedX += (xRun * (xRun - 1)) / 2;
      xRun = 1;
    }
    if (sameBoth) {
      bothRun++;
    } else {
      tiedBoth += (bothRun * (bothRun - 1)) / 2;
      bothRun = 1;
    }
  }
  // Stable bottom-up merge sort of y in the (x, y) order, counting exchanges.
  let current = Float64Array.from(order, i => y[i]);
  let scratch = new Float64Array(n);
  let exchanges = 0;
  for (let width = 1; width < n; width *= 2) {
    for (let start = 0; start < n; start += 2 * width) {
      const middle = Math.min(start + width, n);
      const end = Math.min(start + 2 * width, n);
      let i = start;
      let j = middle;
      let k = start;
      while (i < middle && j < end) {
        if (current[j] < current[i]) {
          scratch[k++] = current[j++];
          exchanges += middle - i;
        } else {
          scratch[k++] = current[i++];
        }
      }
      while (i < middle) {
        scratch[k++] = current[i++];
      }
      while (j < end) {
        scratch[k++] = current[j++];
      }
    }
    [current, scratch] = [scratch, current];
  }
  let tiedY = 0;
  for (let i = 0, run = 1; i < n; i++) {
    if (i < n - 1 && current[i + 1] === current[i]) {
      run++;
    } else {
      tiedY += (run * (run - 1)) / 2;
      run = 1;
    }
  }
  const pairs = (n * (n - 1)) / 2;
  const denominator = Math.sqrt((pairs - tiedX) * (pairs - tiedY));
  if (!(denominator > 0)) {
    return NaN;
  }
  return (pairs - tiedX - tiedY + tiedBoth - 2 * exchanges) / denominator;
}

namespace Private {
  /** One analysis' co-information of every multiplet of order ≥ 2 (result units), in walk order. */
  export interface IRun {
    values: Float64Array;
    members: string[][];
    estimator: string;
    units: string;
    maxOrder: number;
    bins: string[];
    rowsUsed: number;
    warnings: string[];
  }

  /** Prepare, walk and take the co-information of every multiplet, as analyze() would report it. */
  export function coinformations(columns: ColumnView[], options: IAnalyzeOptions): IRun {
    const prepared = prepareColumns(columns, options);
    const resolved = resolveOptions(options, prepared.codes.length);
    const lattice = walkLattice(latticeInput(prepared, options));
    const co = coinformationAll(lattice);
    const values: number[] = [];
    const members: string[][] = [];
    forEachMultiplet(lattice.indexing, (index, ids, order) => {
      if (order >= 2) {
        values.push(fromNats(co[index], resolved.units));
        members.push(Array.from(ids.subarray(0, order), c => prepared.names[c]));
      }
    });
    return {
      values: Float64Array.from(values),
      members,
      estimator: resolved.estimator,
      units: resolved.units,
      maxOrder: resolved.maxOrder,
      bins: prepared.binnings.map(binning => `${binning.name}=${binning.binning.spec}`),
      rowsUsed: prepared.rowsUsed,
      warnings: [...prepared.warnings, ...resolved.warnings]
    };
  }
}
