/**
 * Model of one results table (synergy or redundancy): which rows of the store it holds, their
 * sort, the filters, and the page on show. Rows stay in the store; the table keeps index arrays
 * (one sorted permutation, one filtered subsequence), so a million rows cost two Uint32Arrays.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { multipletsCsv } from '../../results-format';
import { argsortByValue } from './argsort';
import type { ResultsColumnKey } from './store';
import { MultipletStore } from './store';

/** Which side of zero a table shows. */
export type TableSide = 'synergy' | 'redundancy';

/** The filters of a table. */
export interface ITableFilter {
  /** Keep rows with a member whose name contains this text (case-insensitive); '' keeps all. */
  column: string;
  /** Keep rows of this order only; null keeps all orders. */
  order: number | null;
  /** Keep rows whose store index is marked here (a histogram bar); null keeps all. */
  mask: Uint8Array | null;
  /** Keep rows whose q-value is at most this (the run's α); null keeps all. */
  qAtMost: number | null;
}

/** The sort of a table. */
export interface ITableSort {
  key: ResultsColumnKey;
  descending: boolean;
}

/** State of one results table. */
export class MultipletTable {
  /** Create an empty table for one side. */
  constructor(options: MultipletTable.IOptions) {
    this.side = options.side;
    this._pageSize = options.pageSize ?? MultipletTable.DEFAULT_PAGE_SIZE;
    this._sort = MultipletTable.defaultSort(this.side);
  }

  /** Synergy (co-information < 0) or redundancy (> 0). */
  readonly side: TableSide;

  /** Emitted when rows, sort, filter or page change. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The store the rows come from, or null before a result. */
  get store(): MultipletStore | null {
    return this._store;
  }

  /** The current sort. */
  get sort(): ITableSort {
    return this._sort;
  }

  /** The current filters. */
  get filter(): ITableFilter {
    return this._filter;
  }

  /** Rows of this side before filtering. */
  get totalCount(): number {
    return this._side.length;
  }

  /** Rows left after filtering. */
  get rowCount(): number {
    return this._visible.length;
  }

  /** Rows per page. */
  get pageSize(): number {
    return this._pageSize;
  }

  /** Zero-based page on show. */
  get page(): number {
    return this._page;
  }

  /** Number of pages (at least 1). */
  get pageCount(): number {
    return Math.max(1, Math.ceil(this._visible.length / this._pageSize));
  }

  /** Store indices of the filtered rows in sort order. */
  get visible(): Uint32Array {
    return this._visible;
  }

  /** Store indices of the rows on the current page. */
  pageRows(): Uint32Array {
    const start = this._page * this._pageSize;
    return this._visible.subarray(start, Math.min(start + this._pageSize, this._visible.length));
  }

  /**
   * Show the rows of `store` on this side (order ≥ 2 and the side's sign), default sort, page 0;
   * `prepared` is what {@link MultipletTable.prepare} computed for this side of the same store.
   */
  setStore(store: MultipletStore | null, prepared?: MultipletTable.IPrepared): void {
    this._store = store;
    this._sort = MultipletTable.defaultSort(this.side);
    this._filter = { column: '', order: null, mask: null, qAtMost: null };
    if (store !== null && prepared !== undefined) {
      this._side = prepared.side;
      this._sorted = prepared.sorted;
      this._refilter();
      return;
    }
    this._side = store === null ? new Uint32Array(0) : MultipletTable.sideOf(this.side, store);
    this._resort();
  }

  /** Sort by `key`; without `descending`, a repeated key flips the direction. */
  setSort(key: ResultsColumnKey, descending?: boolean): void {
    const next =
      descending ?? (key === this._sort.key ? !this._sort.descending : MultipletTable.defaultDescending(key, this.side));
    this._sort = { key, descending: next };
    this._resort();
  }

  /** Change some filters; the page returns to the first. */
  setFilter(filter: Partial<ITableFilter>): void {
    this._filter = { ...this._filter, ...filter };
    this._refilter();
  }

  /** Show page `page` (clamped to the pages there are). */
  setPage(page: number): void {
    const clamped = Math.max(0, Math.min(this.pageCount - 1, Math.floor(page)));
    if (clamped !== this._page) {
      this._page = clamped;
      this._changed.emit();
    }
  }

  /** The filtered rows in sort order as CSV, with the CLI's header and escaping. */
  csv(): string {
    const store = this._store;
    const visible = this._visible;
    if (!store) {
      return multipletsCsv([]);
    }
    return multipletsCsv(
      (function* () {
        for (let i = 0; i < visible.length; i++) {
          yield store.rows[visible[i]];
        }
      })()
    );
  }

  /** Disconnect every listener. */
  dispose(): void {
    Signal.clearData(this);
  }

  private _resort(): void {
    const store = this._store;
    let indices: Uint32Array = this._side.slice();
    if (store) {
      const { key, descending } = this._sort;
      const sign = descending ? -1 : 1;
      if (key === 'columns') {
        // Names compare by their rank among the column names, member by member: the order of
        // the joined names, without building a string per row.
        const names = store.columnNames;
        const byName = [...names.keys()].sort((a, b) => (names[a] < names[b] ? -1 : names[a] > names[b] ? 1 : 0));
        const rank = new Int32Array(names.length);
        byName.forEach((column, r) => (rank[column] = r));
        const { memberStart, members } = store;
        indices.sort((a, b) => {
          const aEnd = memberStart[a + 1];
          const bEnd = memberStart[b + 1];
          let i = memberStart[a];
          let j = memberStart[b];
          for (; i < aEnd && j < bEnd; i++, j++) {
            const d = rank[members[i]] - rank[members[j]];
            if (d !== 0) {
              return sign * d;
            }
          }
          return sign * ((aEnd - i) - (bEnd - j)) || a - b;
        });
      } else {
        indices = argsortByValue(indices, store.numeric(key), descending);
      }
    }
    this._sorted = indices;
    this._refilter();
  }

  private _refilter(): void {
    const store = this._store;
    const { column, order, mask, qAtMost } = this._filter;
    const needle = column.trim().toLowerCase();
    const q = qAtMost === null || !store ? null : store.numeric('q_value');
    if (!store || (needle === '' && order === null && mask === null && q === null)) {
      this._visible = this._sorted;
    } else {
      let wanted: Uint8Array | null = null;
      if (needle !== '') {
        wanted = new Uint8Array(store.columnNames.length);
        store.columnNames.forEach((name, i) => {
          wanted![i] = name.toLowerCase().includes(needle) ? 1 : 0;
        });
      }
      const out = new Uint32Array(this._sorted.length);
      let count = 0;
      for (let j = 0; j < this._sorted.length; j++) {
        const i = this._sorted[j];
        if (order !== null && store.order[i] !== order) {
          continue;
        }
        if (mask !== null && !mask[i]) {
          continue;
        }
        // NaN (not tested) is never at most α
        if (q !== null && !(q[i] <= qAtMost!)) {
          continue;
        }
        if (wanted !== null) {
          let hit = false;
          for (let m = store.memberStart[i]; m < store.memberStart[i + 1]; m++) {
            if (wanted[store.members[m]]) {
              hit = true;
              break;
            }
          }
          if (!hit) {
            continue;
          }
        }
        out[count++] = i;
      }
      this._visible = out.subarray(0, count);
    }
    this._page = 0;
    this._changed.emit();
  }

  private _store: MultipletStore | null = null;
  private _side: Uint32Array = new Uint32Array(0);
  private _sorted: Uint32Array = new Uint32Array(0);
  private _visible: Uint32Array = new Uint32Array(0);
  private _sort: ITableSort;
  private _filter: ITableFilter = { column: '', order: null, mask: null, qAtMost: null };
  private _page = 0;
  private readonly _pageSize: number;
  private readonly _changed = new Signal<this, void>(this);
}

/** The statics of {@link MultipletTable}. */
export namespace MultipletTable {
  /** Options of a {@link MultipletTable}. */
  export interface IOptions {
    side: TableSide;
    /** Rows per page; default {@link DEFAULT_PAGE_SIZE}. */
    pageSize?: number;
  }

  /** A side's rows of a store and their default sort, computed ahead of {@link MultipletTable.setStore}. */
  export interface IPrepared {
    /** Store indices of the side's rows, in store order. */
    side: Uint32Array;
    /** The same in the side's default sort. */
    sorted: Uint32Array;
  }

  /** Store indices of the rows of order ≥ 2 with the side's sign of co-information. */
  export function sideOf(side: TableSide, store: MultipletStore): Uint32Array {
    const sign = side === 'synergy' ? -1 : 1;
    const out = new Uint32Array(store.size);
    let count = 0;
    for (let i = 0; i < store.size; i++) {
      if (store.order[i] >= 2 && Math.sign(store.co_information[i]) === sign) {
        out[count++] = i;
      }
    }
    return out.slice(0, count);
  }

  /** The rows of `side` and their default sort (co-information, the side's strongest first). */
  export function prepare(side: TableSide, store: MultipletStore): IPrepared {
    const rows = sideOf(side, store);
    const { descending } = defaultSort(side);
    return { side: rows, sorted: argsortByValue(rows, store.co_information, descending) };
  }

  /** Rows per page unless told otherwise. */
  export const DEFAULT_PAGE_SIZE = 25;

  /** Most negative co-information first for synergy, most positive first for redundancy. */
  export function defaultSort(side: TableSide): ITableSort {
    return { key: 'co_information', descending: side === 'redundancy' };
  }

  /** The direction a first click on a column sorts in: the side's strongest first for measures. */
  export function defaultDescending(key: ResultsColumnKey, side: TableSide): boolean {
    if (key === 'columns' || key === 'order') {
      return false;
    }
    if (key === 'adequacy' || key === 'same_sign') {
      return true;
    }
    if (key === 'q_value' || key === 'p_value' || key === 'connected_p_value') {
      return false;
    }
    return side === 'redundancy';
  }
}
