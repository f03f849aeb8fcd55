/**
 * The Polyadic side panel: a header with the product name and the set-up form, one foldable
 * section per part of an analysis. Results open in the main area (./results/document.ts).
 */
import { SidePanel } from '@jupyterlab/ui-components';
import { Widget } from '@lumino/widgets';

import { polyadicIcon } from '../icons';
import { translationBundle, type ITranslator } from '../translation';
import { BinningView } from './binning/view';
import { DataView } from './data/view';
import { EstimatorView } from './estimator/view';
import { RunView } from './run/view';
import { DefaultsView } from './defaults/view';
import { textElement } from './dom';
import { FoldForm } from './form';
import { PanelModel } from './model';
import { RecordsView } from './records/view';
import { SourceView } from './source/view';
import { StatisticsView } from './statistics/view';

/** The right-sidebar panel of Polyadic. */
export class PolyadicPanel extends SidePanel {
  /** Create the panel and its sections for `options.model`. */
  constructor(options: PolyadicPanel.IOptions) {
    const form = new FoldForm({ translator: options.translator });
    super({ content: form });
    this.form = form;
    this.id = PolyadicPanel.ID;
    this.addClass('pd-Panel');
    this.title.icon = polyadicIcon;
    const translator = options.translator;
    const trans = translationBundle(translator);
    this.title.caption = trans.__('Polyadic');
    this.node.setAttribute('role', 'region');
    this.node.setAttribute('aria-label', trans.__('Polyadic'));
    this.model = options.model;

    const heading = new Widget({ node: textElement('h2', 'pd-Panel-title', trans.__('Polyadic')) });
    heading.addClass('jp-text-truncated');
    this.header.addWidget(heading);

    form.addSection(new SourceView({ model: this.model.source, onNewNotebook: options.onNewNotebook, translator }));
    const analysis = this.model.analysis;
    form.addSection(new DataView({ model: analysis.data, translator }));
    form.addSection(new BinningView({ model: analysis.binning, translator }));
    form.addSection(new EstimatorView({ model: analysis, translator }));
    form.addSection(new StatisticsView({ model: analysis, workers: options.workers, translator }));
    form.addSection(new RunView({ model: analysis, onShowResults: options.onShowResults, translator }));
    form.addSection(new DefaultsView({ model: this.model.defaults, onOpenSettings: options.onOpenSettings, translator }));
    form.addSection(new RecordsView({ model: this.model.records, onInsertCell: options.onInsertAnalysisCell, translator }));
  }

  /** The set-up form: one foldable section per part of an analysis. */
  readonly form: FoldForm;

  /** The state the panel shows. */
  readonly model: PanelModel;

}

/** The statics of {@link PolyadicPanel}. */
export namespace PolyadicPanel {
  /** DOM id of the panel, also the id the layout restorer stores. */
  export const ID = 'pd-polyadic-panel';

  /** Options of a {@link PolyadicPanel}. */
  export interface IOptions {
    /** The panel's state. */
    model: PanelModel;
    /** Creates a notebook; offered by the empty state. */
    onNewNotebook?: () => void;
    /** How many workers a run uses (the Statistics section's time estimate). */
    workers?: () => number;
    /** Opens the Settings Editor on Polyadic's settings. */
    onOpenSettings?: () => void;
    /** Brings the latest run's results view to the front (the Run section's button). */
    onShowResults?: () => void;
    /** Inserts an analysis cell for a recorded analysis (records section). */
    onInsertAnalysisCell?: (id: string) => void;
    /** Translates the panel's strings; they stay as written without one. */
    translator?: ITranslator;
  }
}
