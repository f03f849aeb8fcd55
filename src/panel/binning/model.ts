/**
 * The Binning section's state: one spec per column, the column whose preview is shown, and
 * the previews computed by the engine's preview worker. A change is previewed after a short
 * debounce (previews are never superseded in the worker, so the model drops stale answers);
 * the bin count of every selected column is kept for the adequacy check.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { defaultBinSpec, formatBinSpec, parseBinSpec } from '../../engine/binning';
import type { BinMethod, ColumnView } from '../../engine/types';
import type { IColumnPreview } from '../../worker/protocol';
import { asPolyadicError, type PolyadicError } from '../../engine/errors';

/** What a column's current spec gave, as its row in the Binning section says. */
export interface IBinOutcome {
  /** The spec binned by (trimmed). */
  spec: string;
  /** Number of bins or categories; NaN when the engine refused the spec. */
  bins: number;
  /** The method applied (under `auto`, the one it chose); null when refused. */
  method: BinMethod | null;
  /** The engine's warnings about this column under the spec (merged values, a single value, …). */
  warnings: string[];
  /** Why the engine refused the spec on this column's data (null: it did not). */
  error: PolyadicError | null;
}

/** What the preview area shows. */
export interface IPreviewState {
  /** The previewed column, or null. */
  column: string | null;
  /** The spec previewed. */
  spec: string | null;
  /** The preview, once computed. */
  preview: IColumnPreview | null;
  /** Why there is no preview (bad spec, engine error). */
  error: PolyadicError | null;
  /** A preview is being computed. */
  pending: boolean;
}

/** Computes a preview off the main thread (the engine pool's `preview`). */
export type PreviewFunction = (column: ColumnView, spec: string) => Promise<IColumnPreview>;

/** State of the Binning section. */
export class BinningModel {
  /** Create the model. */
  constructor(options: BinningModel.IOptions) {
    this._preview = options.preview;
    this._debounceMs = options.debounceMs ?? BinningModel.DEBOUNCE_MS;
    this._numericDefault = options.numericDefault ?? null;
  }

  private _unusedBecause: string | null = null;

  /** Fires when a spec, the previewed column or a preview changes. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /**
   * Why the specs are not used by the next run (the chosen estimator does not bin), or null when
   * they are. The specs are kept for when a binned estimator is chosen again.
   */
  get unusedBecause(): string | null {
    return this._unusedBecause;
  }
  set unusedBecause(reason: string | null) {
    if (reason !== this._unusedBecause) {
      this._unusedBecause = reason;
      this._changed.emit();
    }
  }

  /** The spec new numeric columns get (the settings' numeric binning); null: the engine's default. */
  get numericDefault(): string | null {
    return this._numericDefault;
  }
  set numericDefault(spec: string | null) {
    this._numericDefault = spec;
  }

  /**
   * The columns whose specs are kept (the picked frame's fetched columns). With `keepSpecs`
   * (the same frame read again), a column that was there before keeps the spec it had.
   */
  setColumns(columns: readonly ColumnView[], options: { keepSpecs?: boolean } = {}): void {
    const previous = options.keepSpecs ? this._specs : new Map<string, string>();
    this._columns = new Map(columns.map(column => [column.name, column]));
    this._specs = new Map(columns.map(column => [column.name, previous.get(column.name) ?? this.defaultSpec(column)]));
    this._bins.clear();
    this._state = { column: null, spec: null, preview: null, error: null, pending: false };
    this._changed.emit();
    const first = columns.find(column => column.kind === 'numeric') ?? columns[0];
    if (first !== undefined) {
      this.focus(first.name);
    }
  }

  /** The spec a column starts with: categories for text and booleans, else the numeric default. */
  defaultSpec(column: ColumnView): string {
    const spec = defaultBinSpec(column);
    return spec.method === 'categorical' || this._numericDefault === null ? formatBinSpec(spec) : this._numericDefault;
  }

  /** Column names with specs, in frame order. */
  get names(): string[] {
    return [...this._specs.keys()];
  }

  /** Whether a column is numeric (numeric specs apply). */
  isNumeric(name: string): boolean {
    const column = this._columns.get(name);
    return column !== undefined && column.kind === 'numeric' && column.dtype !== 'bool';
  }

  /** The spec of a column as typed. */
  specOf(name: string): string | undefined {
    return this._specs.get(name);
  }

  /** Why a column's spec is not valid as text, or null (a run waits until it is). */
  problemOf(name: string): PolyadicError | null {
    const spec = this._specs.get(name);
    if (spec === undefined) {
      return null;
    }
    try {
      parseBinSpec(spec);
      return null;
    } catch (error) {
      return asPolyadicError(error);
    }
  }

  /**
   * What is wrong with a column's binning, or null: its spec as text, else the engine's refusal of
   * the spec on the column's data (seen by a preview), else the last run's error when it names
   * this column's binning. The Binning row of the column is marked with it.
   */
  faultOf(name: string): PolyadicError | null {
    const problem = this.problemOf(name);
    if (problem !== null) {
      return problem;
    }
    const state = this._state;
    if (state.column === name && state.error !== null && state.spec === this._specs.get(name)?.trim()) {
      return state.error;
    }
    const refused = this.outcomeOf(name)?.error ?? null;
    if (refused !== null) {
      return refused;
    }
    const run = this._runFault;
    return run !== null && run.error.detail.column === name && run.spec === this._specs.get(name)?.trim() ? run.error : null;
  }

  /**
   * The error of the last run (null: it did not fail, or another run started). One that names
   * a column's binning (`detail.column` with `detail.option` 'bins') marks that column's row
   * until its spec changes.
   */
  setRunFault(error: PolyadicError | null): void {
    const column = error?.detail.column;
    const spec = typeof column === 'string' ? this._specs.get(column) : undefined;
    const fault = error !== null && error.detail.option === 'bins' && spec !== undefined ? { error, spec: spec.trim() } : null;
    if (fault?.error !== this._runFault?.error) {
      this._runFault = fault;
      this._changed.emit();
    }
  }

  /** Specs of the given columns (one per column), for a run. */
  specsFor(names: readonly string[]): Record<string, string> {
    const out: Record<string, string> = {};
    for (const name of names) {
      const spec = this._specs.get(name);
      if (spec !== undefined) {
        out[name] = spec.trim();
      }
    }
    return out;
  }

  /** Set a column's spec and preview it. */
  setSpec(name: string, spec: string): void {
    if (!this._specs.has(name) || this._specs.get(name) === spec) {
      return;
    }
    this._specs.set(name, spec);
    this._changed.emit();
    this.focus(name);
  }

  /** Give every numeric column the spec of `name` ("apply to all numeric columns"). */
  applyToAllNumeric(name: string): void {
    const spec = this._specs.get(name);
    if (spec === undefined) {
      return;
    }
    for (const other of this._specs.keys()) {
      if (this.isNumeric(other)) {
        this._specs.set(other, spec);
      }
    }
    this._changed.emit();
    this._schedule();
  }

  /** Show the preview of a column. */
  focus(name: string): void {
    if (!this._specs.has(name)) {
      return;
    }
    this._focus = name;
    this._schedule();
  }

  /** The previewed column. */
  get focused(): string | null {
    return this._focus;
  }

  /** The preview area's state. */
  get preview(): IPreviewState {
    return this._state;
  }

  /**
   * Bin counts of columns whose current spec has been previewed (missing values not
   * counted); the adequacy check uses them.
   */
  binCount(name: string): number | null {
    return this.outcomeOf(name)?.bins ?? null;
  }

  /** What the column's current spec gave once it has been binned in the background, else null. */
  outcomeOf(name: string): IBinOutcome | null {
    const spec = this._specs.get(name);
    const known = this._bins.get(name);
    return known !== undefined && spec !== undefined && known.spec === spec.trim() ? known : null;
  }

  /** Compute the bin counts of these columns in the background (for adequacy). */
  requestBinCounts(names: readonly string[]): void {
    this._wanted = names.filter(name => this._specs.has(name));
    void this._fillBins();
  }

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Stop pending previews. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    if (this._timer !== null) {
      clearTimeout(this._timer);
    }
    Signal.clearData(this);
  }

  private _schedule(): void {
    if (this._timer !== null) {
      clearTimeout(this._timer);
    }
    this._timer = setTimeout(() => {
      this._timer = null;
      void this._runPreview();
    }, this._debounceMs);
  }

  private async _runPreview(): Promise<void> {
    const name = this._focus;
    const column = name === null ? undefined : this._columns.get(name);
    if (name === null || column === undefined || this._isDisposed) {
      return;
    }
    const spec = (this._specs.get(name) ?? '').trim();
    const ticket = ++this._ticket;
    const problem = this.problemOf(name);
    if (problem !== null) {
      this._state = { column: name, spec, preview: null, error: problem, pending: false };
      this._changed.emit();
      return;
    }
    this._state = { ...this._state, column: name, spec, pending: true };
    this._changed.emit();
    try {
      const preview = await this._preview(column, spec);
      this._bins.set(name, Private.outcome(spec, preview));
      if (ticket !== this._ticket || this._isDisposed) {
        return;
      }
      this._state = { column: name, spec, preview, error: null, pending: false };
    } catch (error) {
      if (ticket !== this._ticket || this._isDisposed) {
        return;
      }
      this._state = { column: name, spec, preview: null, error: asPolyadicError(error), pending: false };
    }
    this._changed.emit();
    void this._fillBins();
  }

  /** One background preview at a time, so the focused column's preview never waits long. */
  private async _fillBins(): Promise<void> {
    if (this._filling) {
      return;
    }
    this._filling = true;
    try {
      let name: string | undefined;
      while (!this._isDisposed && (name = this._wanted.find(n => this.binCount(n) === null && this.problemOf(n) === null)) !== undefined) {
        const column = this._columns.get(name)!;
        const spec = this._specs.get(name)!.trim();
        try {
          const preview = await this._preview(column, spec);
          this._bins.set(name, Private.outcome(spec, preview));
        } catch (error) {
          // the engine refused this spec on the column's data: its row is marked (faultOf)
          this._bins.set(name, { spec, bins: Number.NaN, method: null, warnings: [], error: asPolyadicError(error) });
        }
        this._changed.emit();
      }
    } finally {
      this._filling = false;
    }
  }

  private _preview: PreviewFunction;
  private _runFault: { error: PolyadicError; spec: string } | null = null;
  private _debounceMs: number;
  private _numericDefault: string | null;
  private _columns = new Map<string, ColumnView>();
  private _specs = new Map<string, string>();
  private _bins = new Map<string, IBinOutcome>();
  private _wanted: string[] = [];
  private _filling = false;
  private _focus: string | null = null;
  private _state: IPreviewState = { column: null, spec: null, preview: null, error: null, pending: false };
  private _timer: ReturnType<typeof setTimeout> | null = null;
  private _ticket = 0;
  private _isDisposed = false;
  private _changed = new Signal<this, void>(this);
}

/** The statics of {@link BinningModel}. */
export namespace BinningModel {
  /**
   * Wait after the last keystroke before previewing: short enough that the preview shows
   * within a quarter of a second of a change, long enough to skip the keystrokes between.
   */
  export const DEBOUNCE_MS = 60;

  /** Options of a {@link BinningModel}. */
  export interface IOptions {
    /** Computes a preview (off the main thread in the panel). */
    preview: PreviewFunction;
    /** Debounce of previews in ms; default {@link DEBOUNCE_MS}. */
    debounceMs?: number;
    /** Spec for numeric columns; default the engine's (`auto`). */
    numericDefault?: string;
  }
}

namespace Private {
  /** The outcome of a spec from its preview. */
  export function outcome(spec: string, preview: IColumnPreview): IBinOutcome {
    return { spec, bins: preview.binCounts.length, method: preview.binning.binning.method, warnings: [...preview.warnings], error: null };
  }
}
