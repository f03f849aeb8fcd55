/**
 * The model of the whole Polyadic panel: one sub-model per section. Results live in their
 * main-area documents (src/panel/results/document.ts), one model each.
 */
import { AnalysisModel, IEngineRunner } from './analysis/model';
import { DefaultsModel } from './defaults/model';
import { RecordsModel } from './records/model';
import { SourceModel } from './source/model';
import type { IPolyadicPanel } from '../tokens';
import type { ITranslator } from '../translation';

/** State of the Polyadic side panel. */
export class PanelModel implements IPolyadicPanel.IModel {
  /** Create the model; `options.engine` runs the analyses and previews. */
  constructor(options: PanelModel.IOptions) {
    this.records = new RecordsModel({ translator: options.translator });
    this.analysis = new AnalysisModel({
      engine: options.engine,
      recordIdFor: run => this.records.rerunOf(run),
      translator: options.translator
    });
  }

  /** The analysis being set up and run (dataframe, binning, estimator and run sections). */
  readonly analysis: AnalysisModel;

  /** The notebook the panel follows (data section). */
  readonly source = new SourceModel();

  /** The user settings new analyses start from (defaults section). */
  readonly defaults = new DefaultsModel();

  /** The analyses recorded in the followed notebook (records section). */
  readonly records: RecordsModel;

  /** Whether the model has been disposed. */
  get isDisposed(): boolean {
    return this._isDisposed;
  }

  /** Dispose the section models. */
  dispose(): void {
    if (this._isDisposed) {
      return;
    }
    this._isDisposed = true;
    this.source.dispose();
    this.defaults.dispose();
    this.records.dispose();
    this.analysis.dispose();
  }

  private _isDisposed = false;
}

/** The statics of {@link PanelModel}. */
export namespace PanelModel {
  /** Options of a {@link PanelModel}. */
  export interface IOptions {
    /** Runs analyses and binning previews off the main thread (the engine pool). */
    engine: IEngineRunner;
    /** Translates the models' messages. */
    translator?: ITranslator;
  }
}
