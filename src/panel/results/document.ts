/**
 * The results view in the main area: one widget per analysis, split beside the notebook when a
 * run completes, refreshed by every later run of the same analysis, tracked by a WidgetTracker and
 * restored on reload through the layout restorer (from the notebook's record, until the analysis
 * runs again).
 */
import { MainAreaWidget, WidgetTracker } from '@jupyterlab/apputils';
import type { ILabShell, JupyterFrontEnd } from '@jupyterlab/application';
import { IDisposable } from '@lumino/disposable';
import type { Widget } from '@lumino/widgets';

import { polyadicIcon } from '../../icons';
import { findAnalysis } from '../../record/store';
import type { IAnalysisRecord } from '../../record/types';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { IAnalysisState, IRunCompleted } from '../analysis/types';
import type { RecordsModel } from '../records/model';
import { resultFromRecord } from './from-record';
import { ResultsModel } from './model';
import { ResultsView } from './view';

/** The main-area widget of one analysis' results. */
export class ResultsDocument extends MainAreaWidget<ResultsView> {
  /** Create the view of analysis `options.analysisId`. */
  constructor(options: ResultsDocument.IOptions) {
    const model = new ResultsModel();
    const content = new ResultsView({ model, extras: options.extras?.(model), translator: options.translator });
    super({ content });
    this._trans = translationBundle(options.translator);
    this.analysisId = options.analysisId;
    this.model = model;
    // record ids are `pd-` and [0-9a-z] (src/record/ids.ts), safe in a DOM id
    this.id = `pd-results-${options.analysisId.replace(/[^0-9a-z-]/gi, '')}`;
    this.addClass('pd-ResultsDocument');
    this.title.icon = polyadicIcon;
    this.title.closable = true;
    this.setTitle(null, null);
  }

  /** Id of the analysis shown (the record id). */
  readonly analysisId: string;

  /** The state the view shows. */
  readonly model: ResultsModel;

  /** Title the tab with the frame and the analysis label (either may be unknown yet). */
  setTitle(frame: string | null, label: string | null): void {
    const parts = [frame, label].filter((part): part is string => part !== null && part !== '');
    const trans = this._trans;
    this.title.label = parts.length > 0 ? trans.__('Results: %1', parts.join(' · ')) : trans.__('Polyadic results');
    this.title.caption =
      parts.length > 0
        ? trans.__('Polyadic results of analysis %1 (%2)', this.analysisId, parts.join(', '))
        : trans.__('Polyadic results of analysis %1', this.analysisId);
  }

  private readonly _trans: TranslationBundle;

  /** Show a completed run. */
  showRun(run: IRunCompleted): void {
    const sample = run.frame.sampled ? { rows: run.frame.rows, originalRows: run.frame.originalRows, seed: run.frame.seed } : undefined;
    // Built in slices: a full lattice's store, histograms and sorts would hold the page for seconds.
    const shown = this.model.setResultInSlices(
      run.result,
      {
        frame: run.frame.name,
        recordId: run.analysisId,
        missing: run.options.missing,
        sample,
        ...(run.frame.columns ? { data: { columns: run.frame.columns, options: run.options } } : {})
      },
      Private.pause
    );
    shown.catch(error => {
      // a result the engine made always lists its columns; say so loudly if one does not
      this.model.clear();
      console.error('Polyadic: the results view could not show the run.', error);
    });
  }

  /** Show what the record keeps of the analysis (a restored view). */
  showRecord(record: IAnalysisRecord): void {
    const sample = record.source.sample
      ? { rows: record.source.rows, originalRows: record.source.sample.original_rows, seed: record.source.sample.seed }
      : undefined;
    this.model.setResult(resultFromRecord(record), {
      frame: record.source.frame,
      recordId: record.id,
      missing: record.missing,
      sample,
      ...(record.summary.histograms ? { histograms: record.summary.histograms } : {}),
      restored: true
    });
  }

  /** Whether the view shows a live run (not only the record). */
  get live(): boolean {
    return this.model.pending || (this.model.result !== null && !this.model.context.restored);
  }

  /** Dispose the view and its model. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    super.dispose();
    this.model.dispose();
  }
}

/** The statics of {@link ResultsDocument}. */
export namespace ResultsDocument {
  /** Options of a {@link ResultsDocument}. */
  export interface IOptions {
    analysisId: string;
    /** Widgets to add below the view's own (given the view's model). */
    extras?: (model: ResultsModel) => Widget[];
    /** Translates the view's strings. */
    translator?: ITranslator;
  }
}

/**
 * Opens, refreshes and restores the results documents: each completed run goes to the
 * document of its analysis (created split beside the current notebook when there is none),
 * and tab titles follow the records' labels.
 */
export class ResultsDocuments implements IDisposable {
  /** Follow `options.analysis` and `options.records` until disposed. */
  constructor(options: ResultsDocuments.IOptions) {
    this._options = options;
    this.tracker = new WidgetTracker<ResultsDocument>({ namespace: ResultsDocuments.NAMESPACE });
    options.analysis.runCompleted.connect(this._onRun, this);
    options.records.changed.connect(this._onRecords, this);
  }

  /** The open results documents. */
  readonly tracker: WidgetTracker<ResultsDocument>;

  /** The document of an analysis, if open. */
  find(analysisId: string): ResultsDocument | undefined {
    return this.tracker.find(doc => doc.analysisId === analysisId);
  }

  /**
   * Open the document of `analysisId` and bring it to the front: the latest run of it when this
   * session has one, else what the followed notebook's record keeps (and, when the record is not
   * read yet, as soon as it is). Resolves to the document.
   */
  async open(analysisId: string, options: { activate?: boolean } = {}): Promise<ResultsDocument> {
    let doc = this.find(analysisId);
    if (!doc) {
      doc = this._create(analysisId);
      const run = this._runs.get(analysisId);
      if (run) {
        doc.showRun(run);
      } else {
        this._fromRecord(doc);
      }
    }
    this._place(doc);
    if (options.activate ?? true) {
      this._options.shell.activateById(doc.id);
    }
    return doc;
  }

  /** This session's latest completed run of an analysis (one of the last few kept), or null. */
  runOf(analysisId: string): IRunCompleted | null {
    return this._runs.get(analysisId) ?? null;
  }

  /** Bring the view of the latest run to the front; false when there has been none. */
  showLatest(): boolean {
    const latest = this._options.analysis.latest;
    if (!latest) {
      return false;
    }
    void this.open(latest.analysisId);
    return true;
  }

  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Stop following; the documents stay open. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this._options.analysis.runCompleted.disconnect(this._onRun, this);
    this._options.records.changed.disconnect(this._onRecords, this);
    this.tracker.dispose();
  }

  private _onRun(_: IAnalysisState, run: IRunCompleted): void {
    this._runs.set(run.analysisId, run);
    // keep the latest few runs for views that are reopened; their documents hold their own
    while (this._runs.size > ResultsDocuments.KEPT_RUNS) {
      this._runs.delete(this._runs.keys().next().value as string);
    }
    let doc = this.find(run.analysisId);
    const created = !doc;
    if (!doc) {
      doc = this._create(run.analysisId);
    }
    doc.showRun(run);
    doc.setTitle(run.frame.name, this._labelOf(run.analysisId));
    this._place(doc);
    if (!created) {
      this._reveal(doc);
    }
  }

  /**
   * Bring `doc` to the front of its tab area without taking the focus: the notebook the run
   * came from stays the current document, so saving, running cells and the side panel keep
   * acting on it. (A new document is split beside the notebook, visible already.)
   */
  private _reveal(doc: ResultsDocument): void {
    if (doc.isVisible) {
      return;
    }
    const shell = this._options.shell as unknown as Partial<ILabShell>;
    const previous = shell.currentWidget ?? null;
    this._options.shell.activateById(doc.id);
    if (previous && previous !== doc && !previous.isDisposed) {
      this._options.shell.activateById(previous.id);
    }
  }

  private _onRecords(): void {
    const state = this._options.records.state;
    this.tracker.forEach(doc => {
      const record = state ? findAnalysis(state, doc.analysisId) : undefined;
      if (record) {
        doc.setTitle(record.source.frame, record.label);
        // a live run still being prepared for the view is not replaced by its record
        if (doc.model.result === null && !doc.model.pending) {
          doc.showRecord(record);
        }
      }
    });
  }

  private _fromRecord(doc: ResultsDocument): void {
    const state = this._options.records.state;
    const record = state ? findAnalysis(state, doc.analysisId) : undefined;
    if (record) {
      doc.showRecord(record);
      doc.setTitle(record.source.frame, record.label);
    }
  }

  private _labelOf(analysisId: string): string | null {
    const state = this._options.records.state;
    return (state ? findAnalysis(state, analysisId)?.label : undefined) ?? null;
  }

  private _create(analysisId: string): ResultsDocument {
    const doc = new ResultsDocument({ analysisId, extras: this._options.extras, translator: this._options.translator });
    void this.tracker.add(doc);
    doc.model.changed.connect(() => void this.tracker.save(doc));
    return doc;
  }

  /** Put `doc` in the main area, split right of the current notebook, unless it is there. */
  private _place(doc: ResultsDocument): void {
    if (doc.isAttached) {
      return;
    }
    // beside the other results views when there are some (as tabs), else split beside the notebook
    const sibling = this.tracker.find(other => other !== doc && other.isAttached && !other.isDisposed);
    if (sibling) {
      this._options.shell.add(doc, 'main', { mode: 'tab-after', ref: sibling.id, activate: false });
      return;
    }
    const ref = this._options.currentNotebook?.() ?? null;
    // not activated: the notebook stays the current document (see `_reveal`)
    this._options.shell.add(doc, 'main', { mode: 'split-right', ref: ref?.id ?? null, activate: false });
    // two documents side by side need the width: fold the left sidebar (its icons stay, one
    // click brings it back) when the main area is narrower than both at a readable width
    const shell = this._options.shell as unknown as Partial<ILabShell>;
    if (typeof shell.collapseLeft === 'function' && window.innerWidth < ResultsDocuments.ROOMY_WIDTH) {
      shell.collapseLeft();
    }
  }

  private readonly _options: ResultsDocuments.IOptions;
  private readonly _runs = new Map<string, IRunCompleted>();
  private _isDisposed = false;
}

/** The statics of {@link ResultsDocuments}. */
export namespace ResultsDocuments {
  /** Namespace of the tracker (and of the layout restorer's entries). */
  export const NAMESPACE = 'polyadic-results';

  /** Window width (px) below which opening a results view folds the left sidebar. */
  export const ROOMY_WIDTH = 1800;

  /** Completed runs kept for reopening a closed view in this session. */
  export const KEPT_RUNS = 4;

  /** Options of {@link ResultsDocuments}. */
  export interface IOptions {
    shell: JupyterFrontEnd.IShell;
    analysis: IAnalysisState;
    records: RecordsModel;
    /** The notebook a new view opens beside. */
    currentNotebook?: () => Widget | null;
    /** Widgets each view adds below its own. */
    extras?: (model: ResultsModel) => Widget[];
    /** Translates the views' strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** Let the page handle input and paint before the next slice of work. */
  export function pause(): Promise<void> {
    return new Promise(resolve => setTimeout(resolve, 0));
  }
}
