/**
 * The state of the robustness section of a results view: the run it checks, the editable list of
 * variants (the engine's defaults for that run prefilled), N, the robustness run in the engine's
 * worker, its table and figure data, its CSV, and whether it was recorded. No DOM here.
 */
import type { IDisposable } from '@lumino/disposable';
import { ISignal, Signal } from '@lumino/signaling';
import Papa from 'papaparse';

import { errorMessage, isCancellation, isPolyadicError, PolyadicError } from '../../engine/errors';
import {
  BASE_LABEL,
  DEFAULT_ROBUSTNESS_TOP,
  defaultVariants,
  IRobustnessAgreement,
  IRobustnessResult,
  IRobustnessVariant,
  parseVariantList,
  ROBUST_TOP_SHARE,
  RobustnessTable
} from '../../engine/robustness';
import type { ColumnView, IAnalyzeOptions } from '../../engine/types';
import { COLUMN_SEPARATOR } from '../../results-format';
import type { IRunCompleted } from '../analysis/types';
import { formatCount } from '../../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { IAnalysisRecord } from '../../record/types';
import { exportFileName, type IExportSource, provenanceEntries, provenanceLines, type ProvenanceEntry } from '../results/export';
import { resultFromRecord } from '../results/from-record';

/** What the section needs of the engine pool. */
export interface IRobustnessEngine {
  robustness(columns: ColumnView[], base: IAnalyzeOptions, variants: IRobustnessVariant[], top?: number): Promise<IRobustnessResult>;
  cancelRobustness(): boolean;
}

/** Where the section stands. */
export type RobustnessState = 'unavailable' | 'idle' | 'running' | 'done' | 'error';

/** One row of the robustness table: a followed multiplet (of a top N under the base or a variant), across the variants. */
export interface IRobustnessTableRow {
  /** The multiplet's columns, joined by ', ' for reading (the CSV joins them as the CLI does). */
  multiplet: string;
  columns: string[];
  table: RobustnessTable;
  /** Co-information under the base. */
  baseValue: number;
  /** Rank under each variant, the base first (1 = most negative). */
  ranks: number[];
  /** Share of the variants with its table's sign. */
  sameSign: number;
  /** Among the base's top N of its table (false: a variant's top N brought it in). */
  inBaseTop: boolean;
  robust: boolean;
  verdict: string;
}

/** One line of the figure: a followed multiplet's rank across the variants. */
export interface IRobustnessLine {
  multiplet: string;
  table: RobustnessTable;
  robust: boolean;
  /** Among the base's top N (drawn in front; the others a variant brought in, faint behind). */
  inBaseTop: boolean;
  /** Rank per variant, the base first. */
  ranks: number[];
}

/** The section's model. */
export class RobustnessModel implements IDisposable {
  /** Create the model; it has no run until {@link setRun}. */
  constructor(options: RobustnessModel.IOptions) {
    this._engine = options.engine;
    this._record = options.record ?? null;
    this._trans = translationBundle(options.translator);
    this._unavailable = this._trans.__('No run to check yet.');
  }

  /** Fires on every change of state, text, N, result or record note. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The run checked, or null (a view restored from the record has none). */
  get run(): IRunCompleted | null {
    return this._run;
  }

  get state(): RobustnessState {
    return this._state;
  }

  /** Why the check cannot run now (no run of this session, no columns), or null. */
  get unavailableReason(): string | null {
    return this._unavailable;
  }

  /** The variant list as edited: one variant per line. */
  get variantsText(): string {
    return this._text;
  }

  /** The defaults for the run, one per line (what "Reset to defaults" puts back). */
  get defaultsText(): string {
    return this._defaults;
  }

  /** N: the top N of each table, under the base or any variant, are followed. */
  get top(): number {
    return this._top;
  }

  /** The last completed run, or null. */
  get result(): IRobustnessResult | null {
    return this._result;
  }

  /** The error of the last attempt (a bad variant names its line), or null. */
  get error(): PolyadicError | null {
    return this._error;
  }

  /** Whether (or why not) the last result was written to the notebook's record. */
  get recordNote(): string | null {
    return this._recordNote;
  }

  /** The verdict rule, in the words the section shows. */
  get ruleText(): string {
    const top = this._shown?.top ?? this._top;
    return this._trans.__(
      'Followed: the top %1 of each table under the base or any variant. A multiplet holds under a variant ' +
        "when it has its table's sign and stays in that variant's top %1. Robust: that sign under the base and " +
        'every variant, and in the top %1 under at least %2 % of the variants.',
      top,
      Math.round(ROBUST_TOP_SHARE * 100)
    );
  }

  /** Show `run` (or none): the defaults are rebuilt for it and any earlier result is dropped. */
  setRun(run: IRunCompleted | null): void {
    if (run === this._run) {
      return;
    }
    this._engine.cancelRobustness();
    this._ticket++;
    this._run = run;
    this._result = null;
    this._shown = null;
    this._error = null;
    this._recordNote = null;
    const columns = run === null ? null : Private.selectedColumns(run);
    if (run === null || columns === null) {
      this._unavailable =
        run === null
          ? this._trans.__('Run the analysis in this session to check its robustness (a view restored from the record has no data).')
          : this._trans.__('The run did not keep the columns it read, so its robustness cannot be checked.');
      this._state = 'unavailable';
      this._defaults = '';
      this._text = '';
    } else {
      this._unavailable = null;
      this._state = 'idle';
      try {
        // the run's own binnings: the columns are not binned again on the main thread
        this._defaults = defaultVariants(columns, Private.baseOf(run), run.result.columns).join('\n');
      } catch (error) {
        this._defaults = '';
        this._error = Private.asError(error);
      }
      this._text = this._defaults;
    }
    this._changed.emit();
  }

  /** Edit the variant list. */
  setVariantsText(text: string): void {
    if (text !== this._text) {
      this._text = text;
      this._changed.emit();
    }
  }

  /** Put the defaults back. */
  resetVariants(): void {
    this.setVariantsText(this._defaults);
  }

  /** Set N (a whole number from 1 to 1000; anything else is an error naming it). */
  setTop(top: number): void {
    if (!(Number.isInteger(top) && top >= 1 && top <= 1000)) {
      this._error = new PolyadicError('usage', this._trans.__('N must be a whole number from 1 to 1000, not %1.', String(top)), { option: 'top' });
      this._changed.emit();
      return;
    }
    if (top !== this._top) {
      this._top = top;
      this._error = null;
      this._changed.emit();
    }
  }

  /**
   * Run the robustness check in the engine's worker: parse the list (an unknown rule or
   * estimator is an error naming its line), run, then record the result. Resolves when done.
   */
  async check(): Promise<void> {
    const run = this._run;
    const columns = run === null ? null : Private.selectedColumns(run);
    if (run === null || columns === null) {
      return;
    }
    let variants: IRobustnessVariant[];
    try {
      variants = parseVariantList(this._text);
      if (variants.length === 0) {
        throw new PolyadicError('usage', this._trans.__('The variant list is empty; give at least one variant, one per line.'), {
          option: 'variants'
        });
      }
    } catch (error) {
      this._fail(error);
      return;
    }
    const ticket = ++this._ticket;
    this._state = 'running';
    this._error = null;
    this._recordNote = null;
    this._changed.emit();
    let result: IRobustnessResult;
    try {
      result = await this._engine.robustness(columns, Private.baseOf(run), variants, this._top);
    } catch (error) {
      if (ticket === this._ticket) {
        if (isCancellation(error)) {
          this._state = 'idle';
          this._changed.emit();
        } else {
          this._fail(error);
        }
      }
      return;
    }
    if (ticket !== this._ticket || this._isDisposed) {
      return;
    }
    this._result = result;
    this._shown = Private.shownOfRun(run, result);
    this._state = 'done';
    this._changed.emit();
    if (this._record) {
      const why = await this._record(run, result);
      if (ticket === this._ticket && !this._isDisposed) {
        this._recordNote = why === null ? this._trans.__('Recorded in the notebook: polyadic verify re-derives these verdicts.') : why;
        this._changed.emit();
      }
    }
  }

  /** Stop the run in progress. */
  cancel(): void {
    if (this._state === 'running') {
      this._engine.cancelRobustness();
    }
  }

  /**
   * Show the robustness block a recorded analysis holds (a view restored from the record has no
   * live run); ignored while a run of this session is shown. Null or a record without a block
   * shows nothing.
   */
  setRecorded(analysis: IAnalysisRecord | null): void {
    if (this._run !== null) {
      return;
    }
    const shown = analysis?.robustness ? Private.shownOfRecord(analysis) : null;
    if (shown?.recordId !== this._shown?.recordId || (shown === null) !== (this._shown === null)) {
      this._shown = shown;
      this._changed.emit();
    }
  }

  /** Whether a table is shown: a completed check of this session, or one the record keeps. */
  get hasTable(): boolean {
    return this._shown !== null;
  }

  /** Whether the table shown comes from the record (not from a check of this session). */
  get fromRecord(): boolean {
    return this._shown?.recorded ?? false;
  }

  /** Units of the values shown. */
  get units(): string {
    return this._shown?.units ?? '';
  }

  /** Labels of the variants shown, the base first. */
  get variantLabels(): string[] {
    return this._shown?.labels ?? [];
  }

  /** The table: the followed multiplets (the base's top N of each table first), in the engine's order. */
  get rows(): IRobustnessTableRow[] {
    return this._shown?.rows ?? [];
  }

  /** The figure's lines: one per followed multiplet, its rank under each variant. */
  get lines(): IRobustnessLine[] {
    return this.rows.map(row => ({ multiplet: row.multiplet, table: row.table, robust: row.robust, inBaseTop: row.inBaseTop, ranks: row.ranks }));
  }

  /** Rank agreement between every two variants shown. */
  get agreement(): IRobustnessAgreement[] {
    return this._shown?.agreement ?? [];
  }

  /** How many followed multiplets are robust, of how many, in words; null without a table. */
  get summaryText(): string | null {
    const shown = this._shown;
    if (shown === null) {
      return null;
    }
    const trans = this._trans;
    const robust = shown.rows.filter(row => row.robust).length;
    const variants = shown.labels.length - 1;
    const across = trans._n(
      '%2 of %3 followed multiplets robust across %1 variant',
      '%2 of %3 followed multiplets robust across %1 variants',
      variants,
      robust,
      shown.rows.length
    );
    const compared = shown.compared === null ? '' : trans.__(' (%1 multiplets compared)', formatCount(shown.compared));
    return shown.recorded ? trans.__('As recorded: %1%2.', across, compared) : trans.__('%1%2.', across, compared);
  }

  /**
   * The table as CSV: comment lines naming the run and the rule, then one row per followed
   * multiplet (columns, table, base co-information, rank per variant, same-sign share, verdict).
   */
  csv(exported: Date = new Date()): string | null {
    const shown = this._shown;
    if (shown === null) {
      return null;
    }
    const labels = shown.labels;
    const entries: ProvenanceEntry[] = [
      ...provenanceEntries(shown.source, exported),
      ['table', `robustness${shown.recorded ? ' (as recorded)' : ''}: the top ${shown.top} of each table under the base or any variant, across ${labels.length - 1} variants`],
      ['rule', Private.ruleText(shown.top)],
      ...labels.slice(1).map((label, i): ProvenanceEntry => [`variant ${i + 1}`, label])
    ];
    const fields = ['columns', 'table', `co_information[base]`, ...labels.map(label => `rank[${label}]`), 'same_sign', 'robust', 'verdict'];
    const data = shown.rows.map(row => [
      row.columns.join(COLUMN_SEPARATOR),
      row.table,
      // numbers go in as numbers: papaparse's formula escaping would mark a negative one as text
      row.baseValue,
      ...row.ranks,
      row.sameSign,
      String(row.robust),
      row.verdict
    ]);
    const body = Papa.unparse({ fields, data }, { quotes: false, escapeFormulae: true, newline: '\n', header: true });
    return provenanceLines(entries) + body + '\n';
  }

  /** File name (no extension) of the exports. */
  get fileName(): string {
    const source = this._shown?.source ?? { frame: this._run?.frame.name, recordId: this._run?.analysisId };
    return exportFileName(source, 'robustness');
  }

  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Stop a run in progress and disconnect every listener. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    if (this._state === 'running') {
      this._engine.cancelRobustness();
    }
    Signal.clearData(this);
  }

  private _fail(error: unknown): void {
    this._error = Private.asError(error);
    this._state = 'error';
    this._changed.emit();
  }

  private readonly _engine: IRobustnessEngine;
  private readonly _record: RobustnessModel.Recorder | null;
  private readonly _changed = new Signal<this, void>(this);
  private _run: IRunCompleted | null = null;
  private _state: RobustnessState = 'unavailable';
  private readonly _trans: TranslationBundle;
  private _unavailable: string | null;
  private _defaults = '';
  private _text = '';
  private _top = DEFAULT_ROBUSTNESS_TOP;
  private _result: IRobustnessResult | null = null;
  private _shown: Private.IShown | null = null;
  private _error: PolyadicError | null = null;
  private _recordNote: string | null = null;
  private _ticket = 0;
  private _isDisposed = false;
}

/** The statics of {@link RobustnessModel}. */
export namespace RobustnessModel {
  /** Records a completed check; resolves to null when recorded, else why not (plain text). */
  export type Recorder = (run: IRunCompleted, result: IRobustnessResult) => Promise<string | null>;

  /** Options of a {@link RobustnessModel}. */
  export interface IOptions {
    engine: IRobustnessEngine;
    record?: Recorder;
    /** Translates the section's messages (the CSV stays in the words the CLI writes). */
    translator?: ITranslator;
  }
}

namespace Private {
  /** What the table, the figure and the CSV show: a check of this session or a recorded one. */
  export interface IShown {
    labels: string[];
    rows: IRobustnessTableRow[];
    agreement: IRobustnessAgreement[];
    top: number;
    units: string;
    /** Multiplets compared in a live check; null for a recorded one. */
    compared: number | null;
    recorded: boolean;
    recordId: string;
    source: IExportSource;
  }

  /** The verdict rule in the section's words, for N. */
  export function ruleText(top: number): string {
    return (
      `Followed: the top ${top} of each table under the base or any variant. A multiplet holds under a variant ` +
      `when it has its table's sign and stays in that variant's top ${top}. Robust: that sign under the base and ` +
      `every variant, and in the top ${top} under at least ${Math.round(ROBUST_TOP_SHARE * 100)} % of the variants.`
    );
  }

  /** A table row of a verdict (live or recorded; a recorded null value is NaN). */
  function rowOf(verdict: {
    columns: string[];
    table: RobustnessTable;
    values: (number | null)[];
    ranks: number[];
    same_sign: number;
    in_base_top: boolean;
    robust: boolean;
    verdict: string;
  }): IRobustnessTableRow {
    return {
      multiplet: verdict.columns.join(', '),
      columns: verdict.columns,
      table: verdict.table,
      baseValue: verdict.values[0] ?? NaN,
      ranks: verdict.ranks,
      sameSign: verdict.same_sign,
      inBaseTop: verdict.in_base_top,
      robust: verdict.robust,
      verdict: verdict.verdict
    };
  }

  /** What a completed check of this session shows. */
  export function shownOfRun(run: IRunCompleted, result: IRobustnessResult): IShown {
    return {
      labels: result.variants.map(variant => variant.label),
      rows: result.verdicts.map(rowOf),
      agreement: result.agreement,
      top: result.top,
      units: result.units,
      compared: result.multiplet_count,
      recorded: false,
      recordId: run.analysisId,
      source: { result: run.result, frame: run.frame.name, recordId: run.analysisId, missing: run.options.missing }
    };
  }

  /** What the robustness block of a recorded analysis shows. */
  export function shownOfRecord(analysis: IAnalysisRecord): IShown | null {
    const block = analysis.robustness;
    if (!block) {
      return null;
    }
    return {
      labels: [BASE_LABEL, ...block.settings.variants],
      rows: block.results.verdicts.map(rowOf),
      agreement: block.results.agreement.map(pair => ({ ...pair, kendall_tau: pair.kendall_tau ?? NaN })),
      top: block.settings.top,
      units: analysis.units,
      compared: null,
      recorded: true,
      recordId: analysis.id,
      source: { result: resultFromRecord(analysis), frame: analysis.source.frame, recordId: analysis.id, missing: analysis.missing }
    };
  }

  /** The selected columns the run read, in order, or null when it did not keep them. */
  export function selectedColumns(run: IRunCompleted): ColumnView[] | null {
    const fetched = run.frame.columns;
    if (fetched === undefined) {
      return null;
    }
    const byName = new Map(fetched.map(column => [column.name, column]));
    const columns = run.result.columns.map(column => byName.get(column.name));
    return columns.every((column): column is ColumnView => column !== undefined) ? columns : null;
  }

  /** The run's options as the base: the same analysis without its statistics or table cut. */
  export function baseOf(run: IRunCompleted): IAnalyzeOptions {
    return { ...run.options, columns: run.result.columns.map(column => column.name), statistics: undefined, top: undefined };
  }

  /** Any failure as a PolyadicError (an unexpected one as internal). */
  export function asError(error: unknown): PolyadicError {
    if (isPolyadicError(error)) {
      return error;
    }
    return new PolyadicError('internal', errorMessage(error));
  }
}
