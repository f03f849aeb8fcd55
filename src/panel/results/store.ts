/**
 * The multiplet rows of one analysis result held column-wise in typed arrays, so that the
 * results tables can sort, filter and page millions of rows through index arrays without
 * copying row objects.
 */
import type { IAnalysisResult, IMultipletRow } from '../../engine/types';

/** An evidence column the tables show when the run computed it. */
export type EvidenceColumnKey =
  | 'q_value'
  | 'p_value'
  | 'null_mean'
  | 'ci_low'
  | 'ci_high'
  | 'same_sign'
  | 'connected_information'
  | 'connected_p_value';

/** A sortable column of the results tables. */
export type ResultsColumnKey =
  | 'columns'
  | 'order'
  | 'co_information'
  | 'o_information'
  | 'total_correlation'
  | 'dual_total_correlation'
  | 'adequacy'
  | EvidenceColumnKey;

/**
 * The evidence columns in display order, with their headings and what they hold; a table
 * shows those any row of the result carries.
 */
export const EVIDENCE_COLUMNS: readonly { key: EvidenceColumnKey; label: string; title: string }[] = [
  { key: 'q_value', label: 'q', title: 'Benjamini–Hochberg q-value of co-information over every multiplet tested' },
  { key: 'p_value', label: 'p', title: 'Surrogate p-value of co-information' },
  { key: 'null_mean', label: 'Null mean', title: 'Mean co-information of the independence surrogates' },
  { key: 'ci_low', label: 'CI low', title: 'Bootstrap percentile interval of co-information, lower end' },
  { key: 'ci_high', label: 'CI high', title: 'Bootstrap percentile interval of co-information, upper end' },
  { key: 'same_sign', label: 'Same sign', title: 'Share of bootstrap resamples with the sign of the estimate' },
  {
    key: 'connected_information',
    label: 'Connected',
    title: 'Connected information: what the multiplet holds beyond its lower-order marginals (pairwise-preserving null)'
  },
  { key: 'connected_p_value', label: 'Connected p', title: 'Parametric-bootstrap p-value of the connected information' }
];

/** The table columns in display order, with their headings. */
export const RESULTS_COLUMNS: readonly { key: ResultsColumnKey; label: string }[] = [
  { key: 'columns', label: 'Multiplet' },
  { key: 'order', label: 'Order' },
  { key: 'co_information', label: 'Co-information' },
  { key: 'o_information', label: 'O-information' },
  { key: 'total_correlation', label: 'Total correlation' },
  { key: 'dual_total_correlation', label: 'Dual total correlation' },
  { key: 'adequacy', label: 'Adequacy' }
];

/** Column-wise copy of a result's multiplet rows. */
export class MultipletStore {
  /** Build the store of `result`; the row objects are kept by reference, not copied. */
  constructor(result: IAnalysisResult, filled = true) {
    const rows = result.multiplets;
    const n = rows.length;
    this.rows = rows;
    this._rowsUsed = result.rows_used;
    this.columnNames = result.columns.map(column => column.name);
    this.bins = result.columns.map(column => column.bins);
    this.columnNames.forEach((name, i) => this._indexOfName.set(name, i));
    this.order = new Uint8Array(n);
    this.co_information = new Float64Array(n);
    this.o_information = new Float64Array(n);
    this.total_correlation = new Float64Array(n);
    this.dual_total_correlation = new Float64Array(n);
    this.adequacy = new Float64Array(n);
    this.evidence = new Map<EvidenceColumnKey, Float64Array>();
    this.alpha = result.statistics?.alpha ?? null;
    this.memberStart = new Int32Array(n + 1);
    let memberTotal = 0;
    for (let i = 0; i < n; i++) {
      memberTotal += rows[i].columns.length;
    }
    this.members = new Int32Array(memberTotal);
    this._candidates = EVIDENCE_COLUMNS.map(column => ({ key: column.key, values: new Float64Array(0), seen: false }));
    if (filled) {
      this._fill(n);
    }
  }

  /**
   * The store of `result`, its rows read in slices of about `sliceMs` milliseconds with
   * `pause()` awaited between them, so that a result of many multiplets never holds the page.
   */
  static async build(
    result: IAnalysisResult,
    pause: () => Promise<void>,
    options: { sliceMs?: number; now?: () => number } = {}
  ): Promise<MultipletStore> {
    const store = new MultipletStore(result, false);
    const sliceMs = options.sliceMs ?? 20;
    const now = options.now ?? (() => performance.now());
    const n = result.multiplets.length;
    for (;;) {
      const until = now() + sliceMs;
      do {
        store._fill(Math.min(n, store._next + Private.SLICE_ROWS));
      } while (store._next < n && now() < until);
      if (store._next >= n) {
        return store;
      }
      await pause();
    }
  }

  /** Read the rows from the last one read up to (not including) `end`; the last row completes the store. */
  private _fill(end: number): void {
    const rows = this.rows;
    const n = rows.length;
    let position = this.memberStart[this._next];
    for (let i = this._next; i < end; i++) {
      const row = rows[i];
      this.order[i] = row.order;
      this.co_information[i] = row.co_information;
      this.o_information[i] = row.o_information;
      this.total_correlation[i] = row.total_correlation;
      this.dual_total_correlation[i] = row.dual_total_correlation;
      this.memberStart[i] = position;
      for (const candidate of this._candidates) {
        const value = row[candidate.key];
        if (value !== undefined && !candidate.seen) {
          // a value not computed for a row (null) is NaN: it sorts last and shows as a dash
          candidate.seen = true;
          candidate.values = new Float64Array(n).fill(Number.NaN);
        }
        if (candidate.seen) {
          candidate.values[i] = value ?? Number.NaN;
        }
      }
      let cells = 1;
      for (const name of row.columns) {
        const column = this._indexOfName.get(name);
        if (column === undefined) {
          throw new Error(`Multiplet ${i + 1} names a column '${name}' that the result does not list.`);
        }
        this.members[position++] = column;
        cells *= this.bins[column];
      }
      // Adequacy: rows used per possible joint cell (DESIGN.md §3).
      this.adequacy[i] = this._rowsUsed / cells;
    }
    this.memberStart[end] = position;
    this._next = end;
    if (end >= n) {
      const evidence = this.evidence as Map<EvidenceColumnKey, Float64Array>;
      for (const candidate of this._candidates) {
        if (candidate.seen) {
          evidence.set(candidate.key, candidate.values);
        }
      }
      this._candidates = [];
    }
  }

  private readonly _rowsUsed: number;
  private readonly _indexOfName = new Map<string, number>();
  private _candidates: { key: EvidenceColumnKey; values: Float64Array; seen: boolean }[];
  private _next = 0;

  /** The rows, as the result lists them. */
  readonly rows: readonly IMultipletRow[];
  /** Names of the analysed columns; members index into this. */
  readonly columnNames: readonly string[];
  /** Number of codes of each analysed column. */
  readonly bins: readonly number[];
  /** Order of each row. */
  readonly order: Uint8Array;
  /** Co-information of each row, in the result's units. */
  readonly co_information: Float64Array;
  /** O-information of each row. */
  readonly o_information: Float64Array;
  /** Total correlation of each row. */
  readonly total_correlation: Float64Array;
  /** Dual total correlation of each row. */
  readonly dual_total_correlation: Float64Array;
  /** Rows used per possible joint cell (product of the members' bin counts). */
  readonly adequacy: Float64Array;
  /** The evidence columns the result carries (NaN where a row has none). */
  readonly evidence: ReadonlyMap<EvidenceColumnKey, Float64Array>;
  /** The level of the run's statistics, or null without statistics. */
  readonly alpha: number | null;
  /** Row i's members are members[memberStart[i] … memberStart[i + 1] − 1]. */
  readonly memberStart: Int32Array;
  /** Column indices of every row's members, row after row. */
  readonly members: Int32Array;

  /** Number of rows. */
  get size(): number {
    return this.rows.length;
  }

  /** The numeric array behind a sortable column (the multiplet column has none). */
  numeric(key: Exclude<ResultsColumnKey, 'columns'>): Uint8Array | Float64Array {
    switch (key) {
      case 'order':
      case 'co_information':
      case 'o_information':
      case 'total_correlation':
      case 'dual_total_correlation':
      case 'adequacy':
        return this[key];
      default:
        return this.evidence.get(key) ?? new Float64Array(this.size).fill(Number.NaN);
    }
  }

  /** The table columns of this result: the measures, then the evidence it carries. */
  get columns(): readonly { key: ResultsColumnKey; label: string; title?: string }[] {
    return [...RESULTS_COLUMNS, ...EVIDENCE_COLUMNS.filter(column => this.evidence.has(column.key))];
  }

  /** The member column names of row `index`, in the result's order. */
  namesOf(index: number): string[] {
    return this.rows[index].columns;
  }
}

namespace Private {
  /** Rows read between two looks at the clock. */
  export const SLICE_ROWS = 2048;
}
