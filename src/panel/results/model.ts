/**
 * Model of the Results section: the multiplet store of the latest analysis, the order
 * histograms of co-information, the synergy and redundancy tables, the histogram bar that
 * filters them, and the conditioning chain of a selected multiplet. Views read numbers from
 * here and never derive them.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { binIndexByEdges } from '../../engine/binning';
import { chainFromNats, latticeOfResult, latticeSource } from '../../engine/chains';
import { chainAlong, extremalChains } from '../../engine/measures';
import type { IEntropySource } from '../../engine/measures';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions, MissingPolicy } from '../../engine/types';
import type { IAnalysisState, IRunCompleted } from '../analysis/types';
import { orderHistogram } from '../../engine/histogram';
import type { IOrderHistogram } from '../../record/types';
import type { IExportSource } from './export';
import { MultipletStore } from './store';
import { MultipletTable } from './table';

/** Where a result came from, as far as the Results section shows it. */
export interface IResultsContext {
  /** Name of the data frame analysed. */
  frame?: string;
  /** Id of the run's record (`pd-…`), named by every export. */
  recordId?: string;
  /** Missing-value policy of the run. */
  missing?: MissingPolicy;
  /** The row-cap sample the run read, when it read one. */
  sample?: { rows: number; originalRows: number; seed: number };
  /**
   * Entropies from the binned codes, when the caller still has them; without it, chains are
   * computed from the result's own joint entropies, which needs the full result (no top-N cut).
   */
  source?: IEntropySource;
  /**
   * Order histograms over every multiplet, when the result itself keeps only some (a view
   * restored from a record): shown instead of histograms of the kept rows.
   */
  histograms?: IOrderHistogram[];
  /** Set for a view restored from the notebook's record: what it shows and what it cannot. */
  restored?: boolean;
  /**
   * The columns the run read and the options it ran with, when the page has them (a live run):
   * the multiplet detail rebuilds the binned codes from them for its contingency tables.
   */
  data?: IResultsData;
}

/** The data of a live run, as the multiplet detail needs it. */
export interface IResultsData {
  /** The fetched columns (at least the selected ones). */
  columns: readonly ColumnView[];
  /** The engine options of the run (columns, binning specs, estimator, missing-value policy). */
  options: IAnalyzeOptions;
}

/** One order histogram of co-information, with which rows fall in which bar. */
export interface IResultsHistogram {
  order: number;
  /** Bar edges (numpy.histogram's rule; see orderHistogram). */
  edges: number[];
  /** Multiplets per bar. */
  counts: number[];
  /** Number of multiplets of this order. */
  total: number;
  /** The surrogate 2.5–97.5 % range of co-information of this order (the null band), when tested. */
  band?: { low: number; high: number; mean: number };
  /**
   * Store rows of the most extreme multiplets of this order (the most negative first, then the
   * most positive; at most {@link ResultsModel.EXTREMES} each), drawn as a strip under the bars
   * so that a single outlier stays visible however many multiplets share the other bars.
   */
  extremes: number[];
}

/** The histogram bar that filters the tables. */
export interface IBarSelection {
  order: number;
  bar: number;
  /** Lower and upper edge of the bar. */
  low: number;
  high: number;
  count: number;
}

/**
 * A conditioning chain on show, in the result's units. It starts at the pair of its first two
 * columns; each later column adds a step, minus the co-information of the columns before it
 * conditioned on the new one (the chain rule: I(X1;…;Xk) = I(X1;…;Xk−1) − I(X1;…;Xk−1 | Xk)).
 */
export interface IChainView {
  /** What the chain follows: a table row, or a greedy chain over all columns. */
  kind: 'multiplet' | 'synergy' | 'redundancy';
  /** Column names in chain order (at least two). */
  columns: string[];
  /** Co-information of each prefix from the pair on: I(X1;X2), I(X1;X2;X3), … */
  values: number[];
  /** What each column after the pair adds: values[i + 1] − values[i]. */
  steps: number[];
}

/** State of the Results section. */
export class ResultsModel {
  /** Create an empty model. */
  constructor(options: ResultsModel.IOptions = {}) {
    this.synergy = new MultipletTable({ side: 'synergy', pageSize: options.pageSize });
    this.redundancy = new MultipletTable({ side: 'redundancy', pageSize: options.pageSize });
  }

  /** The synergy table (most negative co-information first). */
  readonly synergy: MultipletTable;

  /** The redundancy table (most positive co-information first). */
  readonly redundancy: MultipletTable;

  /** Emitted when the result, the bar selection or the chain changes (tables have their own signals). */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The result on show, or null. */
  get result(): IAnalysisResult | null {
    return this._result;
  }

  /** The context the result came with. */
  get context(): IResultsContext {
    return this._context;
  }

  /** What exports of the result name and carry (frame, record, settings), or null without a result. */
  get exportSource(): IExportSource | null {
    const result = this._result;
    if (result === null) {
      return null;
    }
    const { frame, recordId, missing, sample } = this._context;
    return { result, frame, recordId, missing, sample };
  }

  /** The multiplet store, or null. */
  get store(): MultipletStore | null {
    return this._store;
  }

  /** Order histograms for orders 2 … max order. */
  get histograms(): readonly IResultsHistogram[] {
    return this._histograms;
  }

  /** Whether the result holds every multiplet (false when it was cut to its top multiplets). */
  get complete(): boolean {
    return this._result !== null && this._result.multiplets.length === this._result.multiplet_count;
  }

  /** Multiplets of order ≥ 2 whose adequacy is below 1. */
  get inadequateCount(): number {
    return this._inadequate;
  }

  /** Number of multiplets of order ≥ 2 listed. */
  get multipletCount(): number {
    return this._higher;
  }

  /** The bar filtering the tables, or null. */
  get bar(): IBarSelection | null {
    return this._bar;
  }

  /** The chain on show, or null. */
  get chain(): IChainView | null {
    return this._chain;
  }

  /** Why no chain could be computed, or null. */
  get chainError(): string | null {
    return this._chainError;
  }

  /** The histogram bar of the selected multiplet (a table row highlights its bar), or null. */
  get selectedBar(): { order: number; bar: number } | null {
    const store = this._store;
    const index = this._selected;
    if (!store || index < 0 || index >= store.size || this._barOf[index] < 0) {
      return null;
    }
    return { order: store.order[index], bar: this._barOf[index] };
  }

  /** Store index of the multiplet whose chain is on show, or -1. */
  get selected(): number {
    return this._selected;
  }

  /** Show a new result; filters, bar and chain start afresh. */
  setResult(result: IAnalysisResult, context: IResultsContext = {}): void {
    this._ticket++;
    const store = new MultipletStore(result);
    const parts = new Private.HistogramParts(store, result, context);
    while (parts.step()) {
      // every order at once
    }
    this._apply(result, context, store, parts.value(), null);
  }

  /**
   * Show a new result as {@link setResult} does, its store, histograms and table sorts computed
   * a slice at a time with `pause()` awaited between slices, so that a result of many
   * multiplets never holds the page in one long task. The model changes once, when everything
   * is ready; resolves to false when another result or a clear came first (nothing changes).
   */
  async setResultInSlices(result: IAnalysisResult, context: IResultsContext, pause: () => Promise<void>): Promise<boolean> {
    const ticket = ++this._ticket;
    this._pending = ticket;
    try {
      return await this._setInSlices(ticket, result, context, pause);
    } finally {
      if (this._pending === ticket) {
        this._pending = 0;
      }
    }
  }

  /** Whether a result given to {@link setResultInSlices} is still being prepared. */
  get pending(): boolean {
    return this._pending !== 0 && this._pending === this._ticket;
  }

  private async _setInSlices(
    ticket: number,
    result: IAnalysisResult,
    context: IResultsContext,
    pause: () => Promise<void>
  ): Promise<boolean> {
    const store = await MultipletStore.build(result, pause);
    if (ticket !== this._ticket) {
      return false;
    }
    const parts = new Private.HistogramParts(store, result, context);
    while (parts.step()) {
      await pause();
      if (ticket !== this._ticket) {
        return false;
      }
    }
    await pause();
    const synergy = MultipletTable.prepare('synergy', store);
    await pause();
    const redundancy = MultipletTable.prepare('redundancy', store);
    if (ticket !== this._ticket) {
      return false;
    }
    this._apply(result, context, store, parts.value(), { synergy, redundancy });
    return true;
  }

  private _apply(
    result: IAnalysisResult,
    context: IResultsContext,
    store: MultipletStore,
    parts: Private.IHistogramParts,
    tables: { synergy: MultipletTable.IPrepared; redundancy: MultipletTable.IPrepared } | null
  ): void {
    this._result = result;
    this._context = context;
    this._store = store;
    this._source = context.source ?? null;
    this._histograms = parts.histograms;
    this._barOf = parts.barOf;
    this._inadequate = parts.inadequate;
    this._higher = parts.higher;
    this._bar = null;
    this._chain = null;
    this._chainError = null;
    this._selected = -1;
    this.synergy.setStore(store, tables?.synergy);
    this.redundancy.setStore(store, tables?.redundancy);
    this._changed.emit();
  }

  /** Forget the result. */
  clear(): void {
    this._ticket++;
    this._result = null;
    this._store = null;
    this._source = null;
    this._context = {};
    this._histograms = [];
    this._bar = null;
    this._chain = null;
    this._chainError = null;
    this._selected = -1;
    this.synergy.setStore(null);
    this.redundancy.setStore(null);
    this._changed.emit();
  }

  /** Filter both tables to the multiplets of one histogram bar; null clears it. */
  selectBar(order: number | null, bar = 0): void {
    const store = this._store;
    const histogram = this._histograms.find(h => h.order === order);
    if (!store || !histogram || order === null || bar < 0 || bar >= histogram.counts.length) {
      this._bar = null;
      this.synergy.setFilter({ mask: null });
      this.redundancy.setFilter({ mask: null });
      this._changed.emit();
      return;
    }
    const mask = new Uint8Array(store.size);
    for (let i = 0; i < store.size; i++) {
      mask[i] = store.order[i] === order && this._barOf[i] === bar ? 1 : 0;
    }
    this._bar = {
      order,
      bar,
      low: histogram.edges[bar],
      high: histogram.edges[bar + 1],
      count: histogram.counts[bar]
    };
    this.synergy.setFilter({ mask });
    this.redundancy.setFilter({ mask });
    this._changed.emit();
  }

  /** Filter both tables by column name text and order. */
  setFilter(filter: { column?: string; order?: number | null }): void {
    this.synergy.setFilter(filter);
    this.redundancy.setFilter(filter);
  }

  /**
   * Show the conditioning chain of store row `index`, along `ordering` (its column names in
   * the chain's order; default the multiplet's own order).
   */
  selectMultiplet(index: number, ordering?: string[]): void {
    const store = this._store;
    if (!store || index < 0 || index >= store.size) {
      this._selected = -1;
      this._chain = null;
      this._chainError = null;
      this._changed.emit();
      return;
    }
    const names = ordering ?? store.namesOf(index);
    this._selected = index;
    this._computeChain('multiplet', names);
  }

  /** Show the chain of the current multiplet with its first column moved to the end. */
  rotateChain(): void {
    const chain = this._chain;
    if (chain && chain.kind === 'multiplet' && chain.columns.length > 1) {
      this._computeChain('multiplet', [...chain.columns.slice(1), chain.columns[0]]);
    }
  }

  /** Show the greedy synergy or redundancy chain over all columns, up to the result's max order. */
  showExtremalChain(kind: 'synergy' | 'redundancy'): void {
    const result = this._result;
    if (!result) {
      return;
    }
    this._selected = -1;
    const source = this._entropySource();
    if (typeof source === 'string') {
      this._chain = null;
      this._chainError = source;
    } else {
      const chains = extremalChains(source, result.max_order);
      const chain = chains[kind];
      this._setChain(kind, chain.columns.map(c => result.columns[c].name), chain.values);
    }
    this._changed.emit();
  }

  /**
   * Show every completed run of `state` (and clear when its result is cleared), starting with
   * its latest; returns a function that stops following.
   */
  follow(state: IAnalysisState): () => void {
    const show = (_sender: IAnalysisState, run: IRunCompleted | null): void => {
      if (run) {
        const sample = run.frame.sampled ? { rows: run.frame.rows, originalRows: run.frame.originalRows, seed: run.frame.seed } : undefined;
        this.setResult(run.result, {
          frame: run.frame.name,
          recordId: run.analysisId,
          missing: run.options.missing,
          sample,
          ...(run.frame.columns ? { data: { columns: run.frame.columns, options: run.options } } : {})
        });
      } else {
        this.clear();
      }
    };
    state.resultChanged.connect(show);
    if (state.latest) {
      show(state, state.latest);
    }
    return () => {
      state.resultChanged.disconnect(show);
    };
  }

  /** Disconnect every listener and drop the data. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this.synergy.dispose();
    this.redundancy.dispose();
    Signal.clearData(this);
  }

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  private _computeChain(kind: IChainView['kind'], names: string[]): void {
    const result = this._result!;
    const source = names.length < 2 ? 'A single column has no conditioning chain: a chain starts at a pair.' : this._entropySource();
    if (typeof source === 'string') {
      this._chain = null;
      this._chainError = source;
    } else {
      const indexOf = new Map(result.columns.map((column, i) => [column.name, i]));
      const order = names.map(name => indexOf.get(name)!);
      const chain = chainAlong(source, order);
      this._setChain(kind, names, chain.values);
    }
    this._changed.emit();
  }

  private _setChain(kind: IChainView['kind'], columns: string[], nats: number[]): void {
    // the chain's first entry is a single column's entropy; the figure starts at the pair
    const { values, steps } = chainFromNats('ordering', columns, nats, this._result!.units);
    this._chain = { kind, columns, values, steps };
    this._chainError = null;
  }

  /**
   * The entropies chains are computed from: the caller's source, or a lattice rebuilt from the
   * result's joint entropies (every multiplet up to the max order is listed, so every prefix of
   * a chain of at most that order is there). A message when neither is possible.
   */
  private _entropySource(): IEntropySource | string {
    if (this._source) {
      return this._source;
    }
    const result = this._result!;
    const lattice = latticeOfResult(result);
    if (typeof lattice === 'string') {
      return lattice;
    }
    this._source = latticeSource(lattice, result.estimator);
    return this._source;
  }

  private _result: IAnalysisResult | null = null;
  private _context: IResultsContext = {};
  private _store: MultipletStore | null = null;
  private _source: IEntropySource | null = null;
  private _histograms: IResultsHistogram[] = [];
  private _barOf: Int16Array = new Int16Array(0);
  private _ticket = 0;
  private _pending = 0;
  private _bar: IBarSelection | null = null;
  private _chain: IChainView | null = null;
  private _chainError: string | null = null;
  private _selected = -1;
  private _inadequate = 0;
  private _higher = 0;
  private _isDisposed = false;
  private readonly _changed = new Signal<this, void>(this);
}

/** The statics of {@link ResultsModel}. */
export namespace ResultsModel {
  /** Extreme multiplets per side drawn under each order histogram. */
  export const EXTREMES = 5;

  /** Options of a {@link ResultsModel}. */
  export interface IOptions {
    /** Rows per table page. */
    pageSize?: number;
  }
}

namespace Private {
  /** What the histograms of a result are made of, and which bar each multiplet falls in. */
  export interface IHistogramParts {
    histograms: IResultsHistogram[];
    barOf: Int16Array;
    inadequate: number;
    higher: number;
  }

  /** Computes the order histograms of a store one order per {@link step}. */
  export class HistogramParts {
    constructor(
      private readonly _store: MultipletStore,
      private readonly _result: IAnalysisResult,
      private readonly _context: IResultsContext
    ) {
      const store = _store;
      this._barOf = new Int16Array(store.size).fill(-1);
      const byOrder = new Map<number, number[]>();
      for (let i = 0; i < store.size; i++) {
        const k = store.order[i];
        if (k < 2) {
          continue;
        }
        this._higher++;
        if (store.adequacy[i] < 1) {
          this._inadequate++;
        }
        let list = byOrder.get(k);
        if (!list) {
          list = [];
          byOrder.set(k, list);
        }
        list.push(i);
      }
      this._orders = [...byOrder.keys()].sort((a, b) => a - b).map(k => [k, byOrder.get(k)!] as const);
    }

    /** Compute the next order's histogram; false once every order is done. */
    step(): boolean {
      const next = this._orders[this._histograms.length];
      if (next === undefined) {
        return false;
      }
      const [k, members] = next;
      const store = this._store;
      const values = Float64Array.from(members, i => store.co_information[i]);
      const recorded = this._context.histograms?.find(h => h.order === k);
      const histogram = recorded ?? orderHistogram(k, values);
      for (const i of members) {
        this._barOf[i] = binIndexByEdges(histogram.edges, store.co_information[i]);
      }
      const band = this._result.statistics?.null_bands.find(b => b.order === k);
      this._histograms.push({
        order: k,
        edges: histogram.edges,
        counts: histogram.counts,
        total: recorded ? recorded.counts.reduce((a, b) => a + b, 0) : members.length,
        ...(band && band.values > 0 ? { band: { low: band.low, high: band.high, mean: band.mean } } : {}),
        extremes: extremes(members, store.co_information, ResultsModel.EXTREMES)
      });
      return true;
    }

    /** The parts, once {@link step} has returned false. */
    value(): IHistogramParts {
      return { histograms: this._histograms, barOf: this._barOf, inadequate: this._inadequate, higher: this._higher };
    }

    private readonly _barOf: Int16Array;
    private readonly _orders: (readonly [number, number[]])[];
    private readonly _histograms: IResultsHistogram[] = [];
    private _inadequate = 0;
    private _higher = 0;
  }

  /**
   * The `count` members of least value (most negative first) and then the `count` of greatest
   * value (most positive first), each member once; one pass with two small sorted lists.
   */
  export function extremes(members: number[], values: Float64Array, count: number): number[] {
    const low: number[] = [];
    const high: number[] = [];
    const insert = (list: number[], index: number, before: (a: number, b: number) => boolean): void => {
      if (list.length === count && !before(values[index], values[list[count - 1]])) {
        return;
      }
      let at = list.length;
      while (at > 0 && before(values[index], values[list[at - 1]])) {
        at--;
      }
      list.splice(at, 0, index);
      if (list.length > count) {
        list.pop();
      }
    };
    for (const index of members) {
      insert(low, index, (a, b) => a < b);
      insert(high, index, (a, b) => a > b);
    }
    const taken = new Set(low);
    return [...low, ...high.filter(index => !taken.has(index))];
  }
}
