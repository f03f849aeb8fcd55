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
  constructor(result: IAnalysisResult) {
    const rows = result.multiplets;
    const n = rows.length;
    this.rows = rows;
    this.columnNames = result.columns.map(column => column.name);
    this.bins = result.columns.map(column => column.bins);
    const indexOfName = new Map<string, number>();
    this.columnNames.forEach((name, i) => indexOfName.set(name, i));

    this.order = new Uint8Array(n);
    this.co_information = new Float64Array(n);
    this.o_information = new Float64Array(n);
    this.total_correlation = new Float64Array(n);
    this.dual_total_correlation = new Float64Array(n);
    this.adequacy = new Float64Array(n);
    const evidence = new Map<EvidenceColumnKey, Float64Array>();
    for (const column of EVIDENCE_COLUMNS) {
      if (rows.some(row => row[column.key] !== undefined)) {
        // a value not computed for a row (null) is NaN: it sorts last and shows as a dash
        evidence.set(column.key, Float64Array.from(rows, row => row[column.key] ?? Number.NaN));
      }
    }
    this.evidence = evidence;
    this.alpha = result.statistics?.alpha ?? null;
    this.memberStart = new Int32Array(n + 1);
    let memberTotal = 0;
    for (let i = 0; i < n; i++) {
      memberTotal += rows[i].columns.length;
    }
    this.members = new Int32Array(memberTotal);
    let position = 0;
    for (let i = 0; i < n; i++) {
      const row = rows[i];
      this.order[i] = row.order;
      this.co_information[i] = row.co_information;
      this.o_information[i] = row.o_information;
      this.total_correlation[i] = row.total_correlation;
      this.dual_total_correlation[i] = row.dual_total_correlation;
      this.memberStart[i] = position;
      let cells = 1;
      for (const name of row.columns) {
        const column = indexOfName.get(name);
        if (column === undefined) {
          throw new Error(`Multiplet ${i + 1} names a column '${name}' that the result does not list.`);
        }
        this.members[position++] = column;
        cells *= this.bins[column];
      }
      // Adequacy: rows used per possible joint cell (DESIGN.md §3).
      this.adequacy[i] = result.rows_used / cells;
    }
    this.memberStart[n] = position;
  }

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
