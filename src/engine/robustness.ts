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
 *
 * Verdicts (our rule, no source): the union of the top N multiplets of each table (the N most
 * negative co-informations, the synergy table, and the N most positive, the redundancy table)
 * under the base and under every variant is followed across the variants: the base's first,
 * then those only a variant ranks that high (marked: not in the base's top N). A multiplet's
 * sign of reference is its table's (negative for synergy, positive for redundancy). Under a
 * variant it *holds* when its co-information has that sign and it is among that variant's N most
 * extreme of the table. It is *robust* when the base and every variant give it that sign and it
 * stays in the top N under at least {@link ROBUST_TOP_SHARE} (80 %) of the variants; otherwise
 * *not robust*. The verdict text says how many variants it holds in ("holds in 9 of 10
 * variants"), and "(not in the base's top N)" for a multiplet a variant brought in.
 *
 * Overlap (for every two variants): how many of the 10 most negative (and of the 10 most positive)
 * multiplets of one are among the 10 of the other. Ties are broken by the walk's order, so each
 * list has exactly min(10, multiplets) members.
 */

import { latticeInput, prepareColumns, resolveOptions } from './analyze';
import { parseBinSpec } from './binning';
import { averageRanks } from './copula/transform';
import { isPolyadicError, PolyadicError } from './errors';
import { checkEstimator, ESTIMATORS, fromNats } from './estimators';
import { coinformationAll } from './measures';
import { forEachMultiplet } from './multiplets';
import type { ColumnView, EstimatorName, IAnalyzeOptions, IColumnBinning, MissingPolicy } from './types';
import { isContinuousEstimator, walkLattice } from './walk';

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

/** Rank agreement between two variants. */
export interface IRobustnessAgreement {
  a: string;
  b: string;
  /** Kendall's τ-b between their co-informations over every multiplet of order ≥ 2. */
  kendall_tau: number;
  /** Shared members of the two variants' {@link OVERLAP_SIZE} most negative multiplets. */
  overlap_synergy: number;
  /** Shared members of the two variants' {@link OVERLAP_SIZE} most positive multiplets. */
  overlap_redundancy: number;
  /** Members of each list compared: min(OVERLAP_SIZE, multiplets). */
  overlap_of: number;
}

/** Which table of the base a followed multiplet comes from. */
export type RobustnessTable = 'synergy' | 'redundancy';

/** The verdict on one followed multiplet (of the top N of a table under the base or a variant). */
export interface IRobustnessVerdict {
  columns: string[];
  order: number;
  table: RobustnessTable;
  /** Co-information per variant (the base first), in the result's units. */
  values: number[];
  /** Rank per variant (the base first), 1 = most negative. */
  ranks: number[];
  /** Share of the variants (the base not counted) with its table's sign (the base's sign for the base's top N). */
  same_sign: number;
  /** Whether it is among the base's top N of its table (false: a variant brought it in). */
  in_base_top: boolean;
  /** Per variant (the base not counted): among the top N of its table. */
  in_top: boolean[];
  /** Variants (the base not counted) under which it holds: same sign and in the top N. */
  holds: number;
  /** Its table's sign under the base and every variant, and in the top N under ≥ 80 % of the variants. */
  robust: boolean;
  /** The verdict in plain words, e.g. 'robust: holds in 9 of 10 variants'. */
  verdict: string;
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
  /** N of the verdicts: the top N of each table, under the base or any variant, are followed. */
  top: number;
  /**
   * One per followed multiplet: the base's top N (the synergy table's first, most negative first,
   * then the redundancy table's), then those a variant's top N adds, variant by variant.
   */
  verdicts: IRobustnessVerdict[];
  warnings: string[];
}

/** Label of the base analysis. */
export const BASE_LABEL = 'base';

/** N of the verdicts when the run is given no `top`. */
export const DEFAULT_ROBUSTNESS_TOP = 10;

/** Length of the lists whose overlap is reported between two variants. */
export const OVERLAP_SIZE = 10;

/** Least share of the variants under which a robust multiplet stays in the top N (our choice, no source). */
export const ROBUST_TOP_SHARE = 0.8;

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
    if (variant.options.bins !== undefined) {
      // `bins` re-bins every numeric column: the base's per-column specs give way to it (a base
      // recorded column by column then runs the same variant as the base it was recorded from).
      options.binsByColumn = { ...(variant.options.binsByColumn ?? {}) };
    } else if (variant.options.binsByColumn) {
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
      const size = Math.min(OVERLAP_SIZE, m);
      const shared = overlapOfTops(values[a], values[b], size);
      agreement.push({
        a: labels[a],
        b: labels[b],
        kendall_tau: kendallTau(values[a], values[b]),
        overlap_synergy: shared.synergy,
        overlap_redundancy: shared.redundancy,
        overlap_of: size
      });
    }
  }
  const followed = top ?? DEFAULT_ROBUSTNESS_TOP;
  const verdicts = Private.verdicts(rows, values, followed);
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
    top: followed,
    verdicts,
    warnings
  };
}

/** The bias-corrected and plug-in estimators a default variant set swaps in (the copula is added apart). */
const DISCRETE_ESTIMATORS: readonly EstimatorName[] = ['plugin', 'miller-madow', 'chao-shen', 'shrinkage'];

/**
 * Parse a variant's text: settings joined by ';', each KEY=VALUE with KEY one of `bins` (every
 * numeric column, replacing the base's per-column specs too), `bin.COLUMN` (one column, over the
 * base's binning), `estimator`, `missing`. The text is the label.
 * Errors are usage errors naming the variant and the setting at fault (an unknown binning
 * rule or estimator is named with the valid ones).
 */
export function parseVariantSpec(spec: string): IRobustnessVariant {
  const options: IRobustnessVariant['options'] = {};
  const fail = (why: string): never => {
    throw new PolyadicError('usage', `Variant '${spec}': ${why}.`, { option: 'variants', value: spec });
  };
  const settings = spec.split(';').map(part => part.trim());
  if (settings.some(part => part === '')) {
    fail('a setting is empty');
  }
  for (const setting of settings) {
    // No value holds '=' (binning specs, estimators and policies never do), so the last one
    // splits: a column named with '=' still goes in a bin.COLUMN key.
    const at = setting.lastIndexOf('=');
    if (at <= 0 || at === setting.length - 1) {
      fail(`'${setting}' is not KEY=VALUE`);
    }
    const key = setting.slice(0, at).trim();
    const value = setting.slice(at + 1).trim();
    if (key === 'bins' || (key.startsWith('bin.') && key.length > 4)) {
      try {
        parseBinSpec(value);
      } catch (error) {
        if (isPolyadicError(error)) {
          fail(error.message.replace(/\.$/, ''));
        }
        throw error;
      }
      if (key === 'bins') {
        options.bins = value;
      } else {
        options.binsByColumn = { ...(options.binsByColumn ?? {}), [key.slice(4)]: value };
      }
    } else if (key === 'estimator') {
      if (!(ESTIMATORS as readonly string[]).includes(value)) {
        fail(`the estimator '${value}' is unknown; use one of ${ESTIMATORS.join(', ')}`);
      }
      options.estimator = value as EstimatorName;
    } else if (key === 'missing') {
      if (!['drop', 'category', 'error'].includes(value)) {
        fail(`missing must be drop, category or error, not '${value}'`);
      }
      options.missing = value as MissingPolicy;
    } else {
      fail(`'${key}' is not a setting a variant may change (bins, bin.COLUMN, estimator, missing)`);
    }
  }
  return { label: spec, options };
}

/**
 * Parse a list of variants, one per line (blank lines and lines starting with '#' skipped);
 * errors name the line.
 */
export function parseVariantList(text: string): IRobustnessVariant[] {
  const variants: IRobustnessVariant[] = [];
  text.split(/\r?\n/).forEach((line, i) => {
    const spec = line.trim();
    if (spec === '' || spec.startsWith('#')) {
      return;
    }
    try {
      variants.push(parseVariantSpec(spec));
    } catch (error) {
      if (isPolyadicError(error)) {
        throw new PolyadicError(error.kind, `Line ${i + 1}: ${error.message}`, { ...error.detail, line: i + 1 });
      }
      throw error;
    }
  });
  return variants;
}

/**
 * The default variant set of an analysis, as variant texts (see {@link parseVariantSpec}), built
 * from the base's binning of the selected columns:
 * - binning neighbours of every numeric column the base bins (a column the base keeps as
 *   categories, e.g. a small-integer column under `auto`, stays so): quantile with one bin fewer
 *   (when that leaves at least 2) and one more than the column's count under the base,
 *   Freedman–Diaconis (`fd`), and k-means with the same count; each neighbour changes every such
 *   column at once and is skipped when it is the base's own binning of all of them;
 * - the other discrete estimators of plug-in, Miller–Madow, Chao–Shen and shrinkage;
 * - the Gaussian copula when every selected column is numeric and binned by the base (continuous).
 * When the base is the Gaussian copula (no binning), the variants are the four discrete
 * estimators under the default binning. A column whose name holds ';' or '=' cannot be named in a
 * variant's text; then use a uniform base binning (one `bins=` setting covers it). Errors: those of
 * the base analysis (unknown column, bad spec).
 *
 * `binnings`: the base's binning of the selected columns when it is known already (a run's
 * `result.columns`), so the columns are not binned again; without it they are binned here.
 */
export function defaultVariants(
  columns: ColumnView[],
  base: IAnalyzeOptions,
  binnings?: readonly IColumnBinning[]
): string[] {
  const estimator = checkEstimator(base.estimator ?? 'plugin');
  if (isContinuousEstimator(estimator)) {
    return DISCRETE_ESTIMATORS.map(name => `estimator=${name}`);
  }
  const baseBinnings = binnings ?? prepareColumns(columns, { ...base, statistics: undefined, top: undefined }).binnings;
  const kinds = new Map(columns.map(column => [column.name, column.kind]));
  const binned: { name: string; spec: string; count: number }[] = [];
  for (const { name, binning, bins } of baseBinnings) {
    if (kinds.get(name) !== 'numeric' || binning.method === 'categorical') {
      continue;
    }
    const parsed = parseBinSpec(binning.spec);
    // The count the user asked for; a rule without one gives its resulting bins (missing code not counted).
    const count = parsed.count ?? bins - (binning.missing_code === undefined ? 0 : 1);
    binned.push({ name, spec: binning.spec === 'auto' ? `${binning.method}:${count}` : binning.spec, count });
  }
  const variants: string[] = [];
  if (binned.length > 0) {
    // `bins=` re-bins every numeric column (the base's per-column specs give way to it): one
    // setting says it when every selected column is binned and gets the same spec.
    const uniform = binned.length === baseBinnings.length && binned.every(column => column.count === binned[0].count);
    const neighbour = (rule: (count: number) => string | null): void => {
      const specs = binned.map(column => rule(column.count));
      if (specs.some(spec => spec === null) || specs.every((spec, i) => spec === binned[i].spec)) {
        return;
      }
      // One `bins=` when it means the same for every selected column, else one setting per column.
      variants.push(
        uniform && specs.every(spec => spec === specs[0])
          ? `bins=${specs[0]}`
          : binned.map((column, i) => `bin.${column.name}=${specs[i]}`).join(';')
      );
    };
    neighbour(count => (count - 1 >= 2 ? `quantile:${count - 1}` : null));
    neighbour(count => `quantile:${count + 1}`);
    neighbour(() => 'fd');
    neighbour(count => `kmeans:${count}`);
  }
  for (const name of DISCRETE_ESTIMATORS) {
    if (name !== estimator) {
      variants.push(`estimator=${name}`);
    }
  }
  if (binned.length === baseBinnings.length) {
    variants.push('estimator=gaussian-copula');
  }
  return variants;
}

/**
 * How many of the `size` most negative (most positive) entries of `a` are among those of `b`,
 * by index; ties broken by index (the walk's order).
 */
export function overlapOfTops(
  a: ArrayLike<number>,
  b: ArrayLike<number>,
  size: number
): { synergy: number; redundancy: number } {
  const shared = (end: RobustnessTable): number => {
    const first = new Set(Private.extreme(a, size, end));
    return Private.extreme(b, size, end).filter(j => first.has(j)).length;
  };
  return { synergy: shared('synergy'), redundancy: shared('redundancy') };
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
  /**
   * Indices of the `count` most negative (or most positive) values, most extreme first; ties by
   * index. A short list is kept by insertion in one pass (O(m·count) at worst, about O(m) on
   * unsorted values), a long one by sorting; NaN values come last.
   */
  export function extreme(values: ArrayLike<number>, count: number, end: RobustnessTable): number[] {
    const sign = end === 'synergy' ? 1 : -1;
    const key = (j: number): number => {
      const value = sign * values[j];
      return Number.isNaN(value) ? Infinity : value;
    };
    const m = values.length;
    const size = Math.min(count, m);
    if (size > 64) {
      return Array.from({ length: m }, (_, j) => j)
        .sort((p, q) => key(p) - key(q) || p - q)
        .slice(0, size);
    }
    const kept: number[] = [];
    for (let j = 0; j < m; j++) {
      const k = key(j);
      // a later index with an equal key ranks after: reject it when the list is full
      if (kept.length === size && !(k < key(kept[size - 1]))) {
        continue;
      }
      let at = kept.length === size ? size - 1 : kept.length;
      while (at > 0 && k < key(kept[at - 1])) {
        at--;
      }
      if (kept.length === size) {
        kept.pop();
      }
      kept.splice(at, 0, j);
    }
    return kept;
  }

  /** Whether multiplet j is among the `count` most extreme of `values` at `end` (ties by walk order, as {@link extreme}). */
  function inTop(values: Float64Array, j: number, count: number, end: RobustnessTable): boolean {
    let before = 0;
    for (let i = 0; i < values.length; i++) {
      const more = end === 'synergy' ? values[i] < values[j] : values[i] > values[j];
      if (more || (values[i] === values[j] && i < j)) {
        before++;
      }
    }
    return before < count;
  }

  /**
   * The verdicts on the top `count` of each table under the base and under each variant (see the
   * file comment for the rule).
   */
  export function verdicts(rows: IRobustnessRow[], values: Float64Array[], count: number): IRobustnessVerdict[] {
    const variants = values.length - 1;
    const out: IRobustnessVerdict[] = [];
    const taken = new Set<number>();
    // the base's top N first, then what each variant's top N adds
    values.forEach((column, v) => {
      for (const table of ['synergy', 'redundancy'] as const) {
        for (const j of extreme(column, count, table)) {
          // only a negative value belongs in the synergy table, a positive one in the redundancy table
          if ((table === 'synergy' && !(column[j] < 0)) || (table === 'redundancy' && !(column[j] > 0)) || taken.has(j)) {
            continue;
          }
          taken.add(j);
          out.push(verdictOf(rows[j], j, table, v === 0, values, count, variants));
        }
      }
    });
    return out;
  }

  /** The verdict on multiplet j followed in `table`. */
  function verdictOf(
    row: IRobustnessRow,
    j: number,
    table: RobustnessTable,
    inBaseTop: boolean,
    values: Float64Array[],
    count: number,
    variants: number
  ): IRobustnessVerdict {
    const sign = table === 'synergy' ? -1 : 1;
    const sameSign = values.slice(1).map(column => Math.sign(column[j]) === sign);
    const inTopList = values.slice(1).map(column => inTop(column, j, count, table));
    const holds = sameSign.filter((same, v) => same && inTopList[v]).length;
    const stays = inTopList.filter(Boolean).length;
    const robust = Math.sign(values[0][j]) === sign && sameSign.every(Boolean) && stays >= ROBUST_TOP_SHARE * variants;
    return {
      columns: row.columns,
      order: row.order,
      table,
      values: row.values,
      ranks: row.ranks,
      same_sign: variants === 0 ? 1 : sameSign.filter(Boolean).length / variants,
      in_base_top: inBaseTop,
      in_top: inTopList,
      holds,
      robust,
      verdict:
        `${robust ? 'robust' : 'not robust'}: holds in ${holds} of ${variants} variant${variants === 1 ? '' : 's'}` +
        (inBaseTop ? '' : ` (not in the base's top ${count})`)
    };
  }

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
