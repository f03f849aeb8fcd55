/**
 * The Statistics section: how many independence surrogates and bootstrap resamples a run
 * computes, the seed, the tail of the test and the level, and how many multiplets per table
 * get the pairwise-preserving null; the field at fault is marked with the engine's own
 * message, and a rough time estimate shows before the run starts.
 */
import { Widget } from '@lumino/widgets';

import { formatCount } from '../../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { AnalysisModel } from '../analysis/model';
import { labelledSelect, textElement, uniqueId } from '../dom';
import { ROWS_ONLY_FIELDS, type StatisticsField } from './model';

/** Shows the {@link StatisticsModel} of an {@link AnalysisModel}. */
export class StatisticsView extends Widget {
  /** Create the section for `options.model`. */
  constructor(options: StatisticsView.IOptions) {
    super();
    this.addClass('pd-Statistics');
    const trans = (this._trans = translationBundle(options.translator));
    this.title.label = trans.__('Statistics');
    this._model = options.model;
    this._workers = options.workers ?? (() => 1);
    const intro = textElement(
      'p',
      'pd-Statistics-intro',
      trans.__(
        'Evidence against chance for every multiplet: surrogates shuffle each column on its own ' +
          '(every dependence gone, every marginal kept) and walk the lattice again; p counts the ' +
          'surrogates at least as extreme, q corrects for the number of multiplets tested ' +
          '(Benjamini–Hochberg). 0 turns a part off.'
      )
    );
    const fields: [StatisticsField, string, string][] = [
      ['surrogates', trans.__('Surrogates'), trans.__('Independence surrogates N; the smallest p is 1/(N + 1) one-sided, 2/(N + 1) two-sided.')],
      ['seed', trans.__('Seed'), trans.__('Seed of every random draw: the same seed gives the same p-values, whatever the number of workers.')],
      ['alpha', trans.__('Level α'), trans.__('Level of the "q ≤ α" filter; bootstrap intervals cover 1 − α.')],
      ['bootstrap', trans.__('Bootstrap resamples'), trans.__('Row resamples B for percentile intervals of every measure; 0 = off.')],
      ['beyondPairs', trans.__('Pairwise-preserving null (per table)'), trans.__('Top multiplets of order ≥ 3 per table fitted by maximum entropy to their lower-order marginals (slow: keep it small).')],
      ['sharpen', trans.__('Sharpening surrogates'), trans.__('Fresh surrogates for each multiplet whose p sits at its floor, on that multiplet alone (at most 64 multiplets; slow).')]
    ];
    const rows: HTMLElement[] = [];
    for (const [field, label, hint] of fields) {
      const id = uniqueId(`pd-statistics-${field}`);
      const row = textElement('div', 'pd-Field');
      const labelNode = textElement('label', 'pd-Field-label', label);
      labelNode.htmlFor = id;
      const input = document.createElement('input');
      input.id = id;
      input.type = 'text';
      input.inputMode = field === 'alpha' ? 'decimal' : 'numeric';
      input.className = 'pd-Statistics-input jp-mod-styled';
      input.title = hint;
      input.setAttribute('aria-describedby', `${id}-hint`);
      input.addEventListener('input', () => this._model.statistics.set(field, input.value));
      const hintNode = textElement('span', 'pd-Statistics-hint', hint);
      hintNode.id = `${id}-hint`;
      row.append(labelNode, input, hintNode);
      rows.push(row);
      this._inputs.set(field, input);
    }
    const tail = labelledSelect(
      trans.__('Tail'),
      [
        ['two', trans.__('two-sided (synergy or redundancy)')],
        ['synergy', trans.__('synergy only (co-information below the null)')],
        ['redundancy', trans.__('redundancy only (co-information above the null)')]
      ],
      value => this._model.statistics.set('tail', value)
    );
    this._tail = tail.select;
    const tailRow = tail.row;
    rows.splice(3, 0, tailRow);
    this._problem = textElement('p', 'pd-Statistics-problem pd-mod-warning');
    this._problem.setAttribute('role', 'alert');
    this._problem.hidden = true;
    this._estimate = textElement('p', 'pd-Statistics-estimate');
    this._estimate.setAttribute('aria-live', 'polite');
    this._scanNote = textElement('p', 'pd-Statistics-scanned pd-mod-warning');
    this._scanNote.textContent = trans.__(
      'A scanned frame keeps its rows in DuckDB or Spark, which hand over the distinct binned rows with their counts. ' +
        'Bootstrap intervals resample those counts (multinomial resampling, the same law as resampling every row) and ' +
        'the pairwise-preserving null fits them, so both are available. Surrogates and sharpening are off: they shuffle ' +
        "each column's rows on its own, and a scanned frame does not send its rows, so runs on it give no p or q. " +
        'The Gaussian copula needs the ranks of every row and is refused.'
    );
    this._scanNote.hidden = true;
    this.node.append(intro, this._scanNote, ...rows, this._problem, this._estimate);
    this._model.changed.connect(this._render, this);
    this._model.statistics.changed.connect(this._render, this);
    this._render();
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._render, this);
    this._model.statistics.changed.disconnect(this._render, this);
    super.dispose();
  }

  private _render(): void {
    const trans = this._trans;
    const statistics = this._model.statistics;
    const scanned = this._model.data.isScanned;
    const scope = this._model.statisticsScope;
    this._scanNote.hidden = !scanned;
    // the tail and the level serve only the p and q of surrogates
    const off = new Set<string>(scope === 'weighted' ? [...ROWS_ONLY_FIELDS, 'tail'] : []);
    for (const [field, input] of [...this._inputs, ['tail', this._tail] as const]) {
      input.disabled = off.has(field);
      input.closest('.pd-Field')?.classList.toggle('jp-mod-disabled', input.disabled);
    }
    const values = statistics.values;
    for (const [field, input] of this._inputs) {
      if (document.activeElement !== input && input.value !== values[field]) {
        input.value = values[field];
      }
    }
    this._tail.value = values.tail;
    const problem = statistics.problemOf(scope);
    const fault = problem === null ? null : String(problem.detail.option ?? '');
    for (const [field, input] of this._inputs) {
      const bad = field === fault;
      input.classList.toggle('pd-mod-invalid', bad);
      input.setAttribute('aria-invalid', String(bad));
    }
    this._tail.classList.toggle('pd-mod-invalid', fault === 'tail');
    this._problem.hidden = problem === null;
    this._problem.textContent = problem === null ? '' : problem.message;
    const fetched = this._model.data.fetched;
    const multiplets = Number(this._model.multipletCount);
    const rows = fetched?.rows ?? 0;
    const workers = this._workers();
    // a scanned frame's walk takes its distinct binned rows, unknown before the scan
    const estimate = problem === null && rows > 0 && !scanned ? statistics.estimateMs(multiplets, rows, workers) : null;
    let options: ReturnType<typeof statistics.options> | undefined;
    try {
      options = statistics.options(scope);
    } catch {
      options = undefined;
    }
    if (problem !== null) {
      this._estimate.textContent = '';
    } else if (options === undefined) {
      this._estimate.textContent = trans.__('No evidence is computed: the tables rank raw estimates.');
    } else if (scanned) {
      this._estimate.textContent = trans.__(
        'The time depends on the distinct binned rows the scan gives, so it is not estimated before the run.'
      );
    } else if (estimate === null) {
      this._estimate.textContent = trans.__('The estimated time shows once the dataframe has loaded.');
    } else {
      const replicates = (options.surrogates ?? 0) + (options.bootstrap ?? 0);
      const extra =
        (options.sharpen ?? 0) > 0 || (options.beyondPairs ?? 0) > 0
          ? trans.__(', plus the sharpening and the pairwise-preserving null, which can take much longer')
          : '';
      this._estimate.textContent = trans.__(
        'About %1 for %2 of %3 multiplets × %4 rows on %5%6 (a rough estimate).',
        Private.duration(estimate, trans),
        trans._n('%2 replicate', '%2 replicates', replicates, formatCount(replicates)),
        formatCount(multiplets),
        formatCount(rows),
        trans._n('%2 worker', '%2 workers', workers, formatCount(workers)),
        extra
      );
    }
  }

  private _scanNote: HTMLElement;
  private _model: AnalysisModel;
  private readonly _trans: TranslationBundle;
  private _workers: () => number;
  private _inputs = new Map<StatisticsField, HTMLInputElement>();
  private _tail: HTMLSelectElement;
  private _problem: HTMLElement;
  private _estimate: HTMLElement;
}

/** The statics of {@link StatisticsView}. */
export namespace StatisticsView {
  /** Options of a {@link StatisticsView}. */
  export interface IOptions {
    /** The analysis whose statistics the section sets. */
    model: AnalysisModel;
    /** How many workers a run uses (for the time estimate); default 1. */
    workers?: () => number;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** A duration in words: "under a second", "12 s", "3 min". */
  export function duration(ms: number, trans: TranslationBundle): string {
    if (ms < 1000) {
      return trans.__('under a second');
    }
    if (ms < 90_000) {
      return trans.__('%1 s', Math.round(ms / 1000));
    }
    return trans.__('%1 min', Math.round(ms / 60_000));
  }
}
