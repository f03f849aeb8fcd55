/**
 * Model of the multiplet detail: it follows the selected row of a {@link ResultsModel} and
 * holds everything the detail view shows of it — every measure of the row with its units, the
 * evidence columns when statistics ran, and what makes it synergistic or redundant: the joint
 * contingency table of a pair, the pair's tables within each level of the third column for a
 * triplet, or the co-information of every sub-multiplet by order for a larger multiplet.
 * Counting is the engine's (src/engine/contingency.ts); the binned codes are rebuilt from the
 * run's own columns and options, so they are the codes the run measured. Views read from here.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { prepareColumns } from '../../engine/analyze';
import type { IPreparedCodes } from '../../engine/binning';
import {
  binLabels,
  conditionalTables,
  contingencyTable,
  type IContingencyTable,
  overRepresentedCell,
  tableMutualInformation
} from '../../engine/contingency';
import { errorMessage } from '../../engine/errors';
import { fromNats } from '../../engine/estimators';
import { coinformationOf, type IEntropySource } from '../../engine/measures';
import { plural } from '../../engine/text';
import type { IAnalysisResult, IMultipletRow, Units } from '../../engine/types';
import type { ResultsModel } from './model';

/** One measure of the selected multiplet, labelled, with its unit ('' for a pure number). */
export interface IDetailMeasure {
  /** The row's field (the CLI's JSON name). */
  key: keyof IMultipletRow;
  label: string;
  /** What it is, one sentence. */
  title: string;
  /** The value, or null when the run did not compute it for this row. */
  value: number | null;
  /** For an interval: its upper end (value is the lower end). */
  high?: number | null;
  unit: string;
}

/** A contingency table ready to show: counts with the bin labels of both columns. */
export interface IDetailTable {
  /** Column down the rows (X) and across (Y). */
  rowColumn: string;
  columnColumn: string;
  rowLabels: string[];
  columnLabels: string[];
  /** counts[i][j]: rows with X in bin i and Y in bin j. */
  counts: number[][];
  total: number;
  /** Rows per cell of the table (below 5, the patterns may be noise: Cochran's rule of thumb). */
  rowsPerCell: number;
  /** The level of the conditioning column these rows share, for a conditional table. */
  level?: { column: string; label: string };
  /** Mutual information of X and Y within this table, in the result's units. */
  mutualInformation: number;
  /** The cell most above independence of the table's margins, or null for an empty table. */
  overRepresented: { rowLabel: string; columnLabel: string; count: number; ratio: number } | null;
}

/** A conditioning column a triplet's tables may be split by. */
export interface IConditioningChoice {
  column: string;
  /** Levels (bins) of this column: how many conditional tables it makes. */
  levels: number;
  /** Mutual information of the two other columns pooled over it, in the result's units. */
  pooledMutualInformation: number;
}

/** The joint table of a pair. */
export interface IPairTables {
  kind: 'pair';
  table: IDetailTable;
}

/** A triplet's pair, pooled and within each level of the conditioning column. */
export interface ITripletTables {
  kind: 'triplet';
  /** The conditioning column on show. */
  conditioning: string;
  /** Whether it is the default (least pooled mutual information) or the user's pick. */
  chosenBy: 'default' | 'user';
  /** The default conditioning column: the other two share the least mutual information pooled over it. */
  defaultConditioning: string;
  /** The three choices, in the multiplet's order. */
  choices: IConditioningChoice[];
  /** The pair pooled over every level. */
  pooled: IDetailTable;
  /** One table per level of the conditioning column, in code order. */
  levels: IDetailTable[];
  /** Mutual information of the pair within the levels, averaged with the levels' shares of rows: I(X;Y|Z). */
  conditionalMutualInformation: number;
  /**
   * Whether the tables flip, the mark of XOR-like synergy: the over-represented cell moves between
   * the occupied levels, and the pair shares more within the levels than pooled by more than
   * chance alone gives in tables this size (see {@link DetailModel.flipThreshold}).
   */
  flips: boolean;
}

/** One sub-multiplet of a larger multiplet. */
export interface ISubMultiplet {
  columns: string[];
  /** Co-information in the result's units. */
  value: number;
}

/** The co-information of a larger multiplet's sub-multiplets, order by order (2 … k). */
export interface ISubMultiplets {
  orders: { order: number; members: ISubMultiplet[] }[];
  /** Where the values come from: the result's own rows, or the run's binned codes. */
  source: 'result' | 'data';
  /** Sub-multiplets the result does not keep and no data could fill in. */
  missing: number;
}

/** Everything the detail view shows of the selected multiplet. */
export interface IMultipletDetail {
  /** Store index of the row. */
  index: number;
  columns: string[];
  order: number;
  units: Units;
  /** Every measure of the row. */
  measures: IDetailMeasure[];
  /** The evidence columns the row carries (empty without statistics). */
  evidence: IDetailMeasure[];
  /** Contingency tables (pairs and triplets), or null with a note saying why not. */
  tables: IPairTables | ITripletTables | null;
  /** Why there are no tables (no data, another estimator, an error), or null. */
  tablesNote: string | null;
  /** Sub-multiplets (order ≥ 4), or null. */
  subMultiplets: ISubMultiplets | null;
  /** Why there are no (or not all) sub-multiplet values, or null. */
  subMultipletsNote: string | null;
}

/** State of the multiplet detail view. */
export class DetailModel {
  /** Follow the selection of `options.results`. */
  constructor(options: DetailModel.IOptions) {
    this._results = options.results;
    this._results.changed.connect(this._onResults, this);
    this._onResults();
  }

  /** Emitted when the detail changes (another row, another conditioning column, another result). */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The detail of the selected multiplet, or null when none is selected. */
  get detail(): IMultipletDetail | null {
    return this._detail;
  }

  /**
   * Split the triplet's tables by column `name` (one of its members); null goes back to the
   * default. Ignored for anything but a triplet.
   */
  setConditioning(name: string | null): void {
    const detail = this._detail;
    if (!detail || detail.order !== 3 || (name !== null && !detail.columns.includes(name))) {
      return;
    }
    this._conditioning = name;
    this._rebuild();
  }

  /** Stop following and drop the data. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this._results.changed.disconnect(this._onResults, this);
    this._prepared.clear();
    Signal.clearData(this);
  }

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  private _onResults(): void {
    const result = this._results.result;
    const index = this._results.selected;
    if (result !== this._result) {
      this._result = result;
      this._prepared.clear();
      this._whole = null;
      this._byMembers = null;
    } else if (index === this._index) {
      return;
    }
    this._index = index;
    this._conditioning = null;
    this._rebuild();
  }

  private _rebuild(): void {
    const store = this._results.store;
    const result = this._result;
    const index = this._index;
    if (!store || !result || index < 0 || index >= store.size) {
      this._detail = null;
      this._changed.emit();
      return;
    }
    const row = store.rows[index];
    const units = result.units;
    const detail: IMultipletDetail = {
      index,
      columns: row.columns,
      order: row.order,
      units,
      measures: Private.measures(row, store.adequacy[index], units),
      evidence: Private.evidence(row, units),
      tables: null,
      tablesNote: null,
      subMultiplets: null,
      subMultipletsNote: null
    };
    if (row.order === 2 || row.order === 3) {
      const codes = this._codesOf(row.columns);
      if (typeof codes === 'string') {
        detail.tablesNote = codes;
      } else {
        try {
          detail.tables = row.order === 2 ? this._pair(codes) : this._triplet(row.columns, codes);
        } catch (error) {
          detail.tablesNote = `The contingency tables could not be counted: ${errorMessage(error)}`;
        }
      }
    } else if (row.order >= 4) {
      this._subMultiplets(row.columns, detail);
    }
    this._detail = detail;
    this._changed.emit();
  }

  private _pair(codes: IPreparedCodes): IPairTables {
    const [x, y] = [0, 1];
    const table = contingencyTable(codes.codes[x], codes.bins[x], codes.codes[y], codes.bins[y]);
    return { kind: 'pair', table: this._detailTable(table, codes, x, y) };
  }

  private _triplet(names: string[], codes: IPreparedCodes): ITripletTables {
    const estimator = this._result!.estimator;
    const units = this._result!.units;
    const choices: IConditioningChoice[] = names.map((column, z) => {
      const [x, y] = [0, 1, 2].filter(c => c !== z);
      const pooled = contingencyTable(codes.codes[x], codes.bins[x], codes.codes[y], codes.bins[y]);
      return { column, levels: codes.bins[z], pooledMutualInformation: fromNats(tableMutualInformation(pooled, estimator), units) };
    });
    // Default: the column over which the other two look the most independent pooled, so that
    // what their tables show within its levels is the interaction; near-ties go to the later column.
    let best = 0;
    for (let z = 1; z < choices.length; z++) {
      if (choices[z].pooledMutualInformation <= choices[best].pooledMutualInformation + 1e-12) {
        best = z;
      }
    }
    const z = this._conditioning === null ? best : names.indexOf(this._conditioning);
    const [x, y] = [0, 1, 2].filter(c => c !== z);
    const pooled = contingencyTable(codes.codes[x], codes.bins[x], codes.codes[y], codes.bins[y]);
    const zLabels = binLabels(codes.binnings[z]);
    const raw = conditionalTables(codes.codes[x], codes.bins[x], codes.codes[y], codes.bins[y], codes.codes[z], codes.bins[z]);
    const levels = raw.map((table, level) => this._detailTable(table, codes, x, y, { column: names[z], label: zLabels[level] }));
    const cells = new Set(
      levels.filter(level => level.overRepresented !== null).map(level => `${level.overRepresented!.rowLabel}\u0000${level.overRepresented!.columnLabel}`)
    );
    // the flip's size from plug-in values, whatever the run's estimator: the rule of thumb is for them
    const pooledPlugin = tableMutualInformation(pooled, 'plugin');
    const conditionalPlugin = raw.reduce((sum, table) => sum + (table.total / pooled.total) * tableMutualInformation(table, 'plugin'), 0);
    const conditional = levels.reduce((sum, level) => sum + (level.total / pooled.total) * level.mutualInformation, 0);
    const gap = 2 * pooled.total * (conditionalPlugin - pooledPlugin);
    return {
      kind: 'triplet',
      conditioning: names[z],
      chosenBy: this._conditioning === null ? 'default' : 'user',
      defaultConditioning: names[best],
      choices,
      pooled: this._detailTable(pooled, codes, x, y),
      levels,
      conditionalMutualInformation: conditional,
      flips: cells.size > 1 && gap > DetailModel.flipThreshold(codes.bins[x], codes.bins[y], codes.bins[z])
    };
  }

  private _detailTable(
    table: IContingencyTable,
    codes: IPreparedCodes,
    x: number,
    y: number,
    level?: { column: string; label: string }
  ): IDetailTable {
    const rowLabels = binLabels(codes.binnings[x]);
    const columnLabels = binLabels(codes.binnings[y]);
    const cell = overRepresentedCell(table);
    const result = this._result!;
    return {
      rowColumn: codes.names[x],
      columnColumn: codes.names[y],
      rowLabels,
      columnLabels,
      counts: Array.from({ length: table.rowLevels }, (_r, i) =>
        Array.from(table.counts.subarray(i * table.columnLevels, (i + 1) * table.columnLevels))
      ),
      total: table.total,
      rowsPerCell: table.total / (table.rowLevels * table.columnLevels),
      ...(level ? { level } : {}),
      mutualInformation: fromNats(tableMutualInformation(table, result.estimator), result.units),
      overRepresented:
        cell === null ? null : { rowLabel: rowLabels[cell.row], columnLabel: columnLabels[cell.column], count: cell.count, ratio: cell.ratio }
    };
  }

  private _subMultiplets(names: string[], detail: IMultipletDetail): void {
    const k = names.length;
    if (k > DetailModel.MAX_SUB_ORDER) {
      detail.subMultipletsNote =
        `A multiplet of ${k} columns has ${plural(2 ** k - k - 1, 'sub-multiplet')} of order 2 or more; ` +
        `they are listed up to order ${DetailModel.MAX_SUB_ORDER} only.`;
      return;
    }
    const store = this._results.store!;
    const result = this._result!;
    const lookup = this._memberLookup();
    const indexOf = new Map(store.columnNames.map((name, i) => [name, i]));
    const members = names.map(name => indexOf.get(name)!);
    const subsets: number[][] = [];
    for (let pick = 1; pick < 1 << k; pick++) {
      const subset: number[] = [];
      for (let i = 0; i < k; i++) {
        if (pick & (1 << i)) {
          subset.push(i);
        }
      }
      if (subset.length >= 2) {
        subsets.push(subset);
      }
    }
    const values = subsets.map(subset => {
      const key = subset.map(i => members[i]).sort((a, b) => a - b).join(',');
      const at = lookup.get(key);
      return at === undefined ? null : store.co_information[at];
    });
    let source: ISubMultiplets['source'] = 'result';
    let missing = values.filter(value => value === null).length;
    if (missing > 0) {
      const codes = this._codesOf(names);
      if (typeof codes === 'string') {
        detail.subMultipletsNote =
          `The result keeps ${plural(values.length - missing, 'sub-multiplet')} of ${values.length} (the strongest multiplets only). ${codes}`;
      } else {
        const entropy: IEntropySource = { codes: codes.codes, bins: codes.bins, estimator: result.estimator };
        subsets.forEach((subset, s) => {
          values[s] = fromNats(coinformationOf(entropy, subset), result.units);
        });
        source = 'data';
        missing = 0;
      }
    }
    const byOrder = new Map<number, ISubMultiplet[]>();
    subsets.forEach((subset, s) => {
      const value = values[s];
      if (value === null) {
        return;
      }
      let list = byOrder.get(subset.length);
      if (!list) {
        list = [];
        byOrder.set(subset.length, list);
      }
      list.push({ columns: subset.map(i => names[i]), value });
    });
    detail.subMultiplets = {
      orders: [...byOrder.keys()].sort((a, b) => a - b).map(order => ({ order, members: byOrder.get(order)! })),
      source,
      missing
    };
  }

  /** Store rows by their sorted member indices (built once per result, on the first larger multiplet). */
  private _memberLookup(): Map<string, number> {
    if (this._byMembers === null) {
      const store = this._results.store!;
      const lookup = new Map<string, number>();
      for (let i = 0; i < store.size; i++) {
        lookup.set(Array.from(store.members.subarray(store.memberStart[i], store.memberStart[i + 1])).sort((a, b) => a - b).join(','), i);
      }
      this._byMembers = lookup;
    }
    return this._byMembers;
  }

  /**
   * The binned codes of some columns, as the run measured them (its columns, specs and
   * missing-value policy), or a sentence saying why they cannot be had.
   */
  private _codesOf(names: string[]): IPreparedCodes | string {
    const result = this._result!;
    const context = this._results.context;
    const data = context.data;
    if (!data) {
      return context.restored
        ? 'The contingency tables need the data and the run: this view was restored from the notebook\u2019s record, ' +
            'which keeps no data. Run the analysis again (Run in the Polyadic panel) to see them.'
        : 'The contingency tables need the data of the run, which this view was not given.';
    }
    if (result.estimator === 'gaussian-copula') {
      return (
        'The Gaussian-copula estimator reads ranks, not bins, so this run has no binned codes to count. ' +
        'Run with a counting estimator (plug-in, Miller–Madow, Chao–Shen or shrinkage) to see contingency tables.'
      );
    }
    try {
      const options = { ...data.options, statistics: undefined };
      let prepared: IPreparedCodes;
      if (result.rows_used !== result.rows) {
        // rows were left out for a missing value in any selected column: bin them all, as the run did
        this._whole ??= prepareColumns([...data.columns], options);
        const whole = this._whole;
        const at = names.map(name => whole.names.indexOf(name));
        prepared = {
          ...whole,
          names,
          codes: at.map(i => whole.codes[i]),
          bins: at.map(i => whole.bins[i]),
          binnings: at.map(i => whole.binnings[i])
        };
      } else {
        const each = names.map(name => {
          let column = this._prepared.get(name);
          if (!column) {
            column = prepareColumns([...data.columns], { ...options, columns: [name] });
            this._prepared.set(name, column);
          }
          return column;
        });
        prepared = {
          ...each[0],
          names,
          codes: each.map(column => column.codes[0]),
          bins: each.map(column => column.bins[0]),
          binnings: each.map(column => column.binnings[0])
        };
      }
      const mismatch = Private.mismatch(result, prepared);
      return mismatch ?? prepared;
    } catch (error) {
      return `The binned codes of the run could not be rebuilt: ${errorMessage(error)}`;
    }
  }

  private readonly _results: ResultsModel;
  private _result: IAnalysisResult | null = null;
  private _index = -1;
  private _conditioning: string | null = null;
  private _detail: IMultipletDetail | null = null;
  private readonly _prepared = new Map<string, IPreparedCodes>();
  private _whole: IPreparedCodes | null = null;
  private _byMembers: Map<string, number> | null = null;
  private _isDisposed = false;
  private readonly _changed = new Signal<this, void>(this);
}

/** The statics of {@link DetailModel}. */
export namespace DetailModel {
  /** Options of a {@link DetailModel}. */
  export interface IOptions {
    results: ResultsModel;
  }

  /** Largest multiplet whose sub-multiplets are listed (2^k − k − 1 of them). */
  export const MAX_SUB_ORDER = 12;

  /**
   * The least 2N·(I(X;Y|Z) − I(X;Y)), plug-in and in nats, that counts as a flip. 2N times a
   * plug-in mutual information is the G statistic, close to chi-square with (r−1)(c−1) degrees
   * of freedom under independence (Wilks 1938); the gain from conditioning on a column of l
   * levels that changes nothing then has about (r−1)(c−1)(l−1) degrees of freedom. A rule of
   * thumb, not a test: that mean plus three of its standard deviations, √(2·df).
   */
  export function flipThreshold(rows: number, columns: number, levels: number): number {
    const df = (rows - 1) * (columns - 1) * (levels - 1);
    return df + 3 * Math.sqrt(2 * df);
  }
}

namespace Private {
  /** The measures of every row, in the tables' order, then the rest. */
  export function measures(row: IMultipletRow, adequacy: number, units: Units): IDetailMeasure[] {
    return [
      { key: 'co_information', label: 'Co-information', title: 'Negative: synergy-dominated; positive: redundancy-dominated (Bell 2003)', value: row.co_information, unit: units },
      { key: 'o_information', label: 'O-information', title: 'Total minus dual total correlation: negative synergy-dominated, positive redundancy-dominated', value: row.o_information, unit: units },
      { key: 'total_correlation', label: 'Total correlation', title: 'Sum of the members\u2019 entropies minus their joint entropy', value: row.total_correlation, unit: units },
      { key: 'dual_total_correlation', label: 'Dual total correlation', title: 'What the members share beyond what each holds alone', value: row.dual_total_correlation, unit: units },
      { key: 's_information', label: 'S-information', title: 'Total plus dual total correlation', value: row.s_information, unit: units },
      { key: 'entropy', label: 'Joint entropy', title: 'Entropy of the members\u2019 joint bins', value: row.entropy, unit: units },
      { key: 'adequacy', label: 'Adequacy', title: 'Rows used per possible joint cell; below 1 the entropies are biased', value: adequacy, unit: 'rows per cell' }
    ];
  }

  /** The evidence fields the row carries, each once (intervals as one entry). */
  export function evidence(row: IMultipletRow, units: Units): IDetailMeasure[] {
    const out: IDetailMeasure[] = [];
    const single = (key: keyof IMultipletRow, label: string, title: string, unit: string): void => {
      if (row[key] !== undefined) {
        out.push({ key, label, title, value: (row[key] as number | null) ?? null, unit });
      }
    };
    const interval = (low: keyof IMultipletRow, high: keyof IMultipletRow, label: string, title: string): void => {
      if (row[low] !== undefined || row[high] !== undefined) {
        out.push({ key: low, label, title, value: (row[low] as number | null) ?? null, high: (row[high] as number | null) ?? null, unit: units });
      }
    };
    single('q_value', 'q-value', 'Benjamini–Hochberg q-value of co-information over every multiplet tested', '');
    single('p_value', 'p-value', 'Surrogate p-value of co-information', '');
    single('p_surrogates', 'Surrogates behind p', 'Independence surrogates the p-value counts', 'surrogates');
    single('null_mean', 'Null mean', 'Mean co-information of the independence surrogates', units);
    single('null_sd', 'Null standard deviation', 'Standard deviation of co-information over the surrogates', units);
    single('co_information_corrected', 'Co-information minus null mean', 'Observed co-information minus the surrogate mean', units);
    interval('ci_low', 'ci_high', 'Co-information interval', 'Bootstrap percentile interval of co-information');
    single('same_sign', 'Same sign', 'Share of bootstrap resamples with the sign of the estimate', 'share');
    single('o_information_q_value', 'O-information q-value', 'Benjamini–Hochberg q-value of O-information', '');
    single('o_information_p_value', 'O-information p-value', 'Surrogate p-value of O-information', '');
    single('o_information_null_mean', 'O-information null mean', 'Mean O-information of the surrogates', units);
    single('o_information_null_sd', 'O-information null standard deviation', 'Standard deviation of O-information over the surrogates', units);
    interval('o_information_ci_low', 'o_information_ci_high', 'O-information interval', 'Bootstrap percentile interval of O-information');
    interval('entropy_ci_low', 'entropy_ci_high', 'Joint entropy interval', 'Bootstrap percentile interval of the joint entropy');
    interval('total_correlation_ci_low', 'total_correlation_ci_high', 'Total correlation interval', 'Bootstrap percentile interval of total correlation');
    interval('dual_total_correlation_ci_low', 'dual_total_correlation_ci_high', 'Dual total correlation interval', 'Bootstrap percentile interval of dual total correlation');
    interval('s_information_ci_low', 's_information_ci_high', 'S-information interval', 'Bootstrap percentile interval of S-information');
    single('connected_information', 'Connected information', 'What the multiplet holds beyond its lower-order marginals (pairwise-preserving null)', units);
    single('connected_p_value', 'Connected information p-value', 'Parametric-bootstrap p-value of the connected information', '');
    return out;
  }

  /** A sentence when the rebuilt codes are not the run's (other bins or rows), else null. */
  export function mismatch(result: IAnalysisResult, prepared: IPreparedCodes): string | null {
    const bins = new Map(result.columns.map(column => [column.name, column.bins]));
    for (let c = 0; c < prepared.names.length; c++) {
      if (bins.get(prepared.names[c]) !== prepared.bins[c]) {
        return `The column '${prepared.names[c]}' bins differently now than in the run; run the analysis again to see its tables.`;
      }
    }
    if (prepared.rowsUsed !== result.rows_used) {
      return `The rebuilt codes have ${plural(prepared.rowsUsed, 'row')}, the run used ${plural(result.rows_used, 'row')}; run the analysis again to see the tables.`;
    }
    return null;
  }
}
