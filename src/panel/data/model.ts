/**
 * The Dataframe section's state: the bridge of the followed notebook, its listing of dataframes,
 * the picked frame, its columns with their checklist facts, and which columns are selected.
 * Picking a frame fetches its columns once (capped at the settings' row cap) for the facts
 * and the binning previews; a run fetches the selected columns again, so it reads the frame
 * as it is when Run is pressed, and hands them back ({@link DataModel.adopt}): the loaded frame
 * is always the newest the panel has read. A listing that shows the picked frame with other
 * rows or columns reads it again.
 */
import { ISignal, Signal } from '@lumino/signaling';

import type { IBridgeStatus, IListing, KernelBridge } from '../../bridge/connector';
import type { IFetchedFrame, IFetchProgress } from '../../bridge/decode';
import { ColumnKind, IFrameInfo, isScannedKind, SCAN_PREVIEW_ROWS } from '../../bridge/protocol';
import { sameColumnData } from '../../engine/table';
import type { ColumnView } from '../../engine/types';
import { columnStats, IColumnStats } from './stats';
import { asPolyadicError, type PolyadicError } from '../../engine/errors';

/** One row of the column checklist. */
export interface IColumnEntry {
  name: string;
  /** The source library's type name. */
  dtype: string;
  kind: ColumnKind;
  /** Facts from the fetched rows; null until fetched, or for a column that cannot be fetched. */
  stats: IColumnStats | null;
  /** The fetched rows of the column, for previews. */
  view: ColumnView | null;
}

/** Where loading the picked frame stands. */
export interface ILoadState {
  state: 'idle' | 'loading' | 'loaded' | 'error';
  /**
   * How far loading has come, 0 … 1: the bytes received, then the columns read and counted
   * (see {@link DataModel.FETCH_SHARE}); 1 only once the columns are ready.
   */
  fraction: number;
  /** What went wrong (its `detail.column` names the column at fault, if one is). */
  error: PolyadicError | null;
}

/** State of the Dataframe section. */
export class DataModel {
  /** Create the model; `rowCap` gives the largest number of rows to fetch. */
  constructor(options: DataModel.IOptions) {
    this._rowCap = options.rowCap;
  }

  /** Fires on any change of the bridge status, listing, frame, columns or selection. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** Fires when another frame is picked (or the picked frame is gone). */
  get frameChanged(): ISignal<this, string | null> {
    return this._frameChanged;
  }

  /** The bridge of the followed notebook, or null without a notebook. */
  get bridge(): KernelBridge | null {
    return this._bridge;
  }
  set bridge(bridge: KernelBridge | null) {
    if (bridge === this._bridge) {
      return;
    }
    if (this._bridge !== null && !this._bridge.isDisposed) {
      this._bridge.statusChanged.disconnect(this._onStatus, this);
      this._bridge.framesChanged.disconnect(this._onFrames, this);
    }
    this._bridge = bridge;
    if (bridge !== null) {
      bridge.statusChanged.connect(this._onStatus, this);
      bridge.framesChanged.connect(this._onFrames, this);
    }
    this._pick(null);
    this._changed.emit();
  }

  /** The bridge's status, or null without a notebook. */
  get status(): IBridgeStatus | null {
    return this._bridge?.status ?? null;
  }

  /** The frames of the latest listing. */
  get frames(): readonly IFrameInfo[] {
    return this._bridge?.listing?.frames ?? [];
  }

  /** True while the notebook's kernel connects (or starts) and its first listing has not arrived. */
  get listingPending(): boolean {
    const bridge = this._bridge;
    return bridge !== null && bridge.listing === null && ['no-kernel', 'starting', 'ready'].includes(bridge.status.state);
  }

  /** The picked frame's name, or null. */
  get frame(): string | null {
    return this._frame;
  }

  /** The picked frame's listing entry, or null. */
  get frameInfo(): IFrameInfo | null {
    return this.frames.find(frame => frame.name === this._frame) ?? null;
  }

  /**
   * Whether the picked frame is a scanned frame (DuckDB, Spark): its preview is a seeded sample
   * and Run scans every row in its engine.
   */
  get isScanned(): boolean {
    const info = this.frameInfo;
    return info !== null && isScannedKind(info.kind);
  }

  /** The picked frame's columns, in frame order. */
  get columns(): readonly IColumnEntry[] {
    return this._columns;
  }

  /** The loaded rows of the picked frame (the checklist's fetch). */
  get fetched(): IFetchedFrame | null {
    return this._fetched;
  }

  /** Loading state of the picked frame. */
  get load(): ILoadState {
    return this._load;
  }

  /**
   * The error of a column of this frame: the load's, else the last run's unless it concerns the
   * column's binning (the Binning section marks those). Null when no column is at fault.
   */
  get fault(): PolyadicError | null {
    for (const error of [this._load.error, this._runFault]) {
      const column = error?.detail.column;
      if (error && typeof column === 'string' && this._columns.some(entry => entry.name === column)) {
        return error;
      }
    }
    return null;
  }

  /** The error of the last run (null: it did not fail, or a run started); see {@link fault}. */
  setRunFault(error: PolyadicError | null): void {
    const fault = error !== null && error.detail.option !== 'bins' ? error : null;
    if (fault !== this._runFault) {
      this._runFault = fault;
      this._changed.emit();
    }
  }

  /** Selected column names, in frame order. */
  get selected(): string[] {
    return this._columns.filter(column => this._selected.has(column.name)).map(column => column.name);
  }

  /** Whether a column is selected. */
  isSelected(name: string): boolean {
    return this._selected.has(name);
  }

  /** Select or deselect a column. */
  setSelected(name: string, selected: boolean): void {
    const column = this._columns.find(entry => entry.name === name);
    if (column === undefined || column.view === null || this._selected.has(name) === selected) {
      return;
    }
    if (selected) {
      this._selected.add(name);
    } else {
      this._selected.delete(name);
    }
    this._changed.emit();
  }

  /** Largest number of rows to fetch. */
  get rowCap(): number | undefined {
    return this._rowCap;
  }
  set rowCap(value: number | undefined) {
    this._rowCap = value;
  }

  /** Pick a frame (null: none) and load its columns. */
  pick(name: string | null): Promise<void> {
    return this._pick(name);
  }

  /**
   * Take the columns a run has just fetched of the picked frame, when they are newer than the
   * loaded ones: columns whose data changed in the kernel replace theirs (with new facts), so the
   * loaded frame, and every check against it, follows the kernel. When the rows themselves
   * changed (another count, another sample), the whole frame is read again. The selection and
   * the other columns stay as they are.
   */
  adopt(fresh: IFetchedFrame): void {
    const loaded = this._fetched;
    if (loaded === null || fresh.name !== this._frame || this._load.state !== 'loaded') {
      return;
    }
    if (
      fresh.rows !== loaded.rows ||
      fresh.originalRows !== loaded.originalRows ||
      fresh.sampled !== loaded.sampled ||
      (fresh.sampled && fresh.seed !== loaded.seed)
    ) {
      void this._pick(this._frame);
      return;
    }
    const newer = new Map<string, ColumnView>();
    for (const column of fresh.columns) {
      const old = loaded.columns.find(view => view.name === column.name);
      if (old !== undefined && !sameColumnData(old, column)) {
        newer.set(column.name, column);
      }
    }
    if (newer.size === 0) {
      return;
    }
    this._fetched = { ...loaded, columns: loaded.columns.map(view => newer.get(view.name) ?? view) };
    for (const entry of this._columns) {
      const view = newer.get(entry.name);
      if (view !== undefined) {
        entry.view = view;
        entry.stats = columnStats(view);
      }
    }
    this._changed.emit();
  }

  /** Ask the bridge to connect again (the "Try again" button). */
  reconnect(): void {
    void this._bridge?.reconnect();
  }

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Stop listening to the bridge. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this.bridge = null;
    Signal.clearData(this);
  }

  private async _pick(name: string | null): Promise<void> {
    const ticket = ++this._ticket;
    const changedFrame = name !== this._frame;
    // The person's own selection is kept only across a reload of a frame that had finished
    // loading; a pick that interrupts a load (say, the automatic pick of a lone frame) starts
    // from the defaults, or the selection would stay empty.
    const keepSelection = !changedFrame && this._load.state === 'loaded';
    this._frame = name;
    this._fetched = null;
    const info = this.frameInfo;
    this._loadedShape = Private.shapeOf(info);
    const previous = new Set(this._selected);
    this._selected.clear();
    this._columns = (info?.columns ?? []).map(column => ({ ...column, stats: null, view: null }));
    this._load = { state: name === null ? 'idle' : 'loading', fraction: 0, error: null };
    this._runFault = null;
    if (changedFrame) {
      this._frameChanged.emit(name);
    }
    this._changed.emit();
    const bridge = this._bridge;
    if (name === null || info === null || bridge === null) {
      return;
    }
    const fetchable = info.columns.filter(column => column.kind !== 'other').map(column => column.name);
    try {
      // A scanned frame's preview is always a seeded sample (Run never uses it).
      const scanned = isScannedKind(info.kind);
      const fetched = await bridge.fetch(name, fetchable, {
        rowCap: scanned ? SCAN_PREVIEW_ROWS : this._rowCap,
        ...(scanned ? { seed: DataModel.PREVIEW_SEED } : {}),
        onProgress: progress => {
          if (ticket === this._ticket) {
            this._load = { ...this._load, fraction: DataModel.FETCH_SHARE * Private.fraction(progress) };
            this._changed.emit();
          }
        }
      });
      if (ticket !== this._ticket) {
        return;
      }
      this._fetched = fetched;
      const views = new Map(fetched.columns.map(view => [view.name, view]));
      let done = 0;
      for (const column of this._columns) {
        column.view = views.get(column.name) ?? null;
        // One column at a time, yielding between them, so a wide frame keeps the page responsive.
        column.stats = column.view === null ? null : columnStats(column.view);
        done++;
        if (done < this._columns.length) {
          const share = DataModel.FETCH_SHARE;
          this._load = { ...this._load, fraction: share + ((1 - share) * done) / this._columns.length };
          this._changed.emit();
        }
        await Private.yieldToPage();
        if (ticket !== this._ticket) {
          return;
        }
      }
      for (const column of this._columns) {
        const keep = keepSelection
          ? previous.has(column.name)
          : column.stats !== null && column.stats.warnings.length === 0;
        if (keep && column.view !== null) {
          this._selected.add(column.name);
        }
      }
      this._load = { state: 'loaded', fraction: 1, error: null };
    } catch (error) {
      if (ticket !== this._ticket) {
        return;
      }
      this._load = { state: 'error', fraction: 0, error: asPolyadicError(error) };
    }
    this._changed.emit();
  }

  private _onStatus(): void {
    this._changed.emit();
  }

  private _onFrames(_: unknown, listing: IListing | null): void {
    const frames = listing?.frames ?? [];
    const picked = frames.find(frame => frame.name === this._frame);
    if (this._frame !== null && picked === undefined) {
      void this._pick(null);
    } else if (picked !== undefined && this._load.state === 'loaded' && Private.shapeOf(picked) !== this._loadedShape) {
      // the kernel's frame has other rows or columns now: what the panel loaded is out of date
      void this._pick(this._frame);
      return;
    } else if (this._frame === null && frames.length === 1) {
      // One frame only: there is nothing to choose, so take it.
      void this._pick(frames[0].name);
      return;
    }
    this._changed.emit();
  }

  private _bridge: KernelBridge | null = null;
  private _frame: string | null = null;
  private _columns: IColumnEntry[] = [];
  private _selected = new Set<string>();
  private _fetched: IFetchedFrame | null = null;
  private _runFault: PolyadicError | null = null;
  private _load: ILoadState = { state: 'idle', fraction: 0, error: null };
  private _rowCap: number | undefined;
  private _loadedShape = '';
  private _ticket = 0;
  private _isDisposed = false;
  private _changed = new Signal<this, void>(this);
  private _frameChanged = new Signal<this, string | null>(this);
}

/** The statics of {@link DataModel}. */
export namespace DataModel {
  /**
   * Share of the load bar for the bytes of the fetch; the rest fills as the columns are decoded
   * and counted, so the bar is full only when the columns are ready.
   */
  export const FETCH_SHARE = 0.9;

  /** Seed of a scanned frame's preview sample (our choice: the same rows every time). */
  export const PREVIEW_SEED = 0;

  /** Options of a {@link DataModel}. */
  export interface IOptions {
    /** Largest number of rows to fetch; default the kernel's. */
    rowCap?: number;
  }
}

namespace Private {
  /** The rows and columns of a listed frame, as one comparable text. */
  export function shapeOf(info: IFrameInfo | null | undefined): string {
    return info ? JSON.stringify([info.rows, info.columns.map(column => [column.name, column.dtype, column.kind])]) : '';
  }

  /** Fraction of a fetch received. */
  export function fraction(progress: IFetchProgress): number {
    return progress.bytesTotal > 0 ? Math.min(1, progress.bytesReceived / progress.bytesTotal) : 0;
  }

  /** Let the page handle input before the next piece of work. */
  export function yieldToPage(): Promise<void> {
    return new Promise(resolve => setTimeout(resolve, 0));
  }
}
