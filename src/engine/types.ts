/**
 * Shared data types of the engine: the contract between the table readers, the binning,
 * the lattice, the measures, the CLI, the worker and the panel. Plain objects and typed
 * arrays only, so every value crosses a worker boundary by structured clone.
 */

import type { IStatisticsOptions, StatisticsTail } from './statistics/options';

/** Numeric typed arrays a column may arrive as (Arrow's value buffers). */
export type NumericArray =
  | Float64Array
  | Float32Array
  | Int8Array
  | Int16Array
  | Int32Array
  | Uint8Array
  | Uint16Array
  | Uint32Array
  | BigInt64Array
  | BigUint64Array;

/**
 * A numeric column: one value per row. `missing[i] === 1` marks row i missing (from an
 * Arrow validity bitmap, already expanded); `null` means no row is missing. NaN in a float
 * column also counts as missing (pandas' convention, common practice).
 */
export interface INumericColumn {
  kind: 'numeric';
  name: string;
  /** Source type as the user knows it, e.g. 'float64', 'int32', 'bool', 'datetime64[ns]'. */
  dtype: string;
  values: NumericArray;
  missing: Uint8Array | null;
}

/**
 * A categorical column: dictionary codes into `categories`. A code of -1, or
 * `missing[i] === 1`, marks row i missing.
 */
export interface ICategoricalColumn {
  kind: 'categorical';
  name: string;
  dtype: string;
  codes: Int32Array;
  categories: string[];
  missing: Uint8Array | null;
}

/** One column of input, as the engine reads it. */
export type ColumnView = INumericColumn | ICategoricalColumn;

/** Binning method names (DESIGN.md glossary). */
export type BinMethod =
  | 'width'
  | 'quantile'
  | 'fd'
  | 'scott'
  | 'sturges'
  | 'rice'
  | 'sqrt'
  | 'doane'
  | 'kmeans'
  | 'edges'
  | 'categorical'
  /** Not a binning: the Gaussian-copula estimator's normal scores of the column's ranks. */
  | 'copula';

/**
 * What a spec may name: a binning method, or `auto`, the default rule that picks one per column
 * (`categorical` for a column of few distinct values, else `quantile:4`; see binning/spec.ts).
 */
export type BinSpecMethod = BinMethod | 'auto';

/** A parsed binning spec: `auto`, `width:K`, `quantile:K`, `kmeans:K`, `edges:a,b,…`, a rule, or `categorical`. */
export interface IBinSpec {
  method: BinSpecMethod;
  /** K for width, quantile and kmeans. */
  count?: number;
  /** The user's edges for `edges:`. */
  edges?: number[];
}

/** How missing values are handled across the selected columns. */
export type MissingPolicy = 'drop' | 'category' | 'error';

/** Entropy estimators: four from counts of binned codes, and the Gaussian copula from ranks. */
export type EstimatorName = 'plugin' | 'miller-madow' | 'chao-shen' | 'shrinkage' | 'gaussian-copula';

/** Units of every information value. */
export type Units = 'bits' | 'nats';

/** The binning that was applied to one column, as reported and recorded. */
export interface IColumnBinning {
  name: string;
  /** Number of codes (bins or categories, plus one for missing under `category`). */
  bins: number;
  binning: {
    /** The method applied (under the spec `auto`, the one it chose). */
    method: BinMethod;
    /** The spec as text, e.g. 'quantile:4' or 'auto'. */
    spec: string;
    edges?: number[];
    categories?: string[];
    /** The code of missing values under the missing-value policy `category` (the last code). */
    missing_code?: number;
  };
}

/** The six measures of a multiplet, in the order rows, CSV columns and bootstrap replicates list them. */
export const MULTIPLET_MEASURES = [
  'entropy',
  'co_information',
  'total_correlation',
  'dual_total_correlation',
  'o_information',
  's_information'
] as const;

/** One of {@link MULTIPLET_MEASURES}. */
export type MultipletMeasure = (typeof MULTIPLET_MEASURES)[number];

/** The multiplet measures of one multiplet, as reported. */
export interface IMultipletRow {
  columns: string[];
  order: number;
  entropy: number;
  co_information: number;
  total_correlation: number;
  dual_total_correlation: number;
  o_information: number;
  s_information: number;
  /** Rows used per possible joint cell (the product of the members' code counts); below 1 is flagged. */
  adequacy?: number;
  /** Surrogate evidence on co-information (present with surrogates; null for a single column). */
  p_value?: number | null;
  /** Benjamini–Hochberg q-value over the tested family (orders ≥ 2). */
  q_value?: number | null;
  /** Surrogates behind p_value: N, or the fresh surrogates of a sharpened multiplet. */
  p_surrogates?: number | null;
  /** Mean and standard deviation of co-information over the independence surrogates. */
  null_mean?: number | null;
  null_sd?: number | null;
  /** Observed co-information minus the surrogate mean. */
  co_information_corrected?: number | null;
  /** Surrogate evidence on O-information (orders ≥ 3; null below). */
  o_information_p_value?: number | null;
  o_information_q_value?: number | null;
  o_information_null_mean?: number | null;
  o_information_null_sd?: number | null;
  /** Bootstrap percentile interval of co-information (level 1 − alpha). */
  ci_low?: number | null;
  ci_high?: number | null;
  /** Share of bootstrap resamples whose co-information has the observed sign. */
  same_sign?: number | null;
  /** Bootstrap percentile intervals of the other measures. */
  entropy_ci_low?: number | null;
  entropy_ci_high?: number | null;
  total_correlation_ci_low?: number | null;
  total_correlation_ci_high?: number | null;
  dual_total_correlation_ci_low?: number | null;
  dual_total_correlation_ci_high?: number | null;
  o_information_ci_low?: number | null;
  o_information_ci_high?: number | null;
  s_information_ci_low?: number | null;
  s_information_ci_high?: number | null;
  /** Connected information of order k: entropy of the fit to the (k−1)-marginals minus the data's (pairwise-preserving null). */
  connected_information?: number | null;
  /** Its parametric-bootstrap p-value. */
  connected_p_value?: number | null;
}

/** Options of one analysis (`analyze`). Defaults as in DESIGN.md and issue texts. */
export interface IAnalyzeOptions {
  /** Column names to use; default all. */
  columns?: string[];
  /** Spec for every numeric column (text and boolean columns stay `categorical`); default `auto`. */
  bins?: string;
  /** Per-column specs, overriding `bins`. */
  binsByColumn?: Record<string, string>;
  missing?: MissingPolicy;
  estimator?: EstimatorName;
  units?: Units;
  /** Default: all orders when ≤ 12 columns, else 3. */
  maxOrder?: number;
  /** Refuse more multiplets than this; default 2^24. */
  maxMultiplets?: number;
  /** Keep only the N lowest and N highest co-information multiplets of order ≥ 2. */
  top?: number;
  /** Evidence against chance (surrogates, bootstrap, pairwise-preserving null); off by default. */
  statistics?: IStatisticsOptions;
  /**
   * Conditioning chains to add to the result (see chains.ts): an ordering of column names (two
   * up to the maximum order), or `greedy-synergy` / `greedy-redundancy`.
   */
  chains?: ChainRequest[];
}

/** What a chain follows: an ordering of column names, or a greedy growth. */
export type ChainRequest = readonly string[] | 'greedy-synergy' | 'greedy-redundancy';

/** One conditioning chain in a run's units (see chains.ts). */
export interface IChainResult {
  /** `ordering` for a given ordering, else the greedy growth it is. */
  kind: 'ordering' | 'greedy-synergy' | 'greedy-redundancy';
  /** Column names in chain order (at least two). */
  columns: string[];
  /** Co-information of each prefix from the pair on: values[i] holds the first i + 2 columns. */
  values: number[];
  /** What each column after the pair adds: steps[i] = values[i + 1] − values[i]. */
  steps: number[];
}

/** The result of one analysis; field names are the CLI's JSON fields. */
export interface IAnalysisResult {
  engine: { name: string; version: string };
  rows: number;
  rows_used: number;
  units: Units;
  estimator: EstimatorName;
  max_order: number;
  columns: IColumnBinning[];
  multiplets: IMultipletRow[];
  multiplet_count: number;
  /** Multiplets of order ≥ 2 with adequacy below 1 (fewer rows than possible joint cells). */
  inadequate_count?: number;
  /** What the evidence was computed with and over; absent when no statistics were asked for. */
  statistics?: IStatisticsReport;
  /** The conditioning chains asked for, in the order asked; absent when none were. */
  chains?: IChainResult[];
  warnings: string[];
}

/** The statistics of a result: settings, tested families, null bands (in the result's units). */
export interface IStatisticsReport {
  surrogates: number;
  seed: number;
  tail: StatisticsTail;
  bootstrap: number;
  alpha: number;
  /** Level of the bootstrap intervals, 1 − alpha. */
  interval_level: number;
  /** Families over which q-values control the false discovery rate. */
  families: {
    co_information: { orders: number[]; count: number } | null;
    o_information: { orders: number[]; count: number } | null;
  };
  /** Per order: 2.5 % and 97.5 % quantiles and mean of the surrogate co-information. */
  null_bands: { order: number; low: number; high: number; mean: number; values: number }[];
  /** Fresh surrogates per sharpened multiplet (0 = off), and how many multiplets were sharpened. */
  sharpen: number;
  sharpened: number;
  /** Multiplets that got bootstrap intervals. */
  bootstrap_multiplets: number;
  /** The pairwise-preserving null: how many multiplets per table, the draws, how many were fitted. */
  beyond_pairs: { per_table: number; draws: number; fitted: number; refused: { columns: string[]; reason: string }[] } | null;
}
