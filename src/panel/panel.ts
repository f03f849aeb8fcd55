/**
 * The Polyadic side panel: a header with the product name and one accordion section per
 * part of an analysis.
 */
import { SidePanel } from '@jupyterlab/ui-components';
import type { Message } from '@lumino/messaging';
import { AccordionPanel, Widget } from '@lumino/widgets';

import { polyadicIcon } from '../icons';
import { BinningView } from './binning/view';
import { DataView } from './data/view';
import { EstimatorView } from './estimator/view';
import { RunView } from './run/view';
import { DefaultsView } from './defaults/view';
import { textElement } from './dom';
import { PanelModel } from './model';
import { RecordsView } from './records/view';
import { ResultsView } from './results/view';
import { SourceView } from './source/view';
import { StatisticsView } from './statistics/view';

/** The right-sidebar panel of Polyadic. */
export class PolyadicPanel extends SidePanel {
  /** Create the panel and its sections for `options.model`. */
  constructor(options: PolyadicPanel.IOptions) {
    super();
    this.id = PolyadicPanel.ID;
    this.addClass('pd-Panel');
    this.title.icon = polyadicIcon;
    this.title.caption = 'Polyadic';
    this.node.setAttribute('role', 'region');
    this.node.setAttribute('aria-label', 'Polyadic');
    this.model = options.model;

    const heading = new Widget({ node: textElement('h2', 'pd-Panel-title', 'Polyadic') });
    heading.addClass('jp-text-truncated');
    this.header.addWidget(heading);

    this.addWidget(
      new SourceView({ model: this.model.source, onNewNotebook: options.onNewNotebook })
    );
    const analysis = this.model.analysis;
    this.addWidget(new DataView({ model: analysis.data }));
    this.addWidget(new BinningView({ model: analysis.binning }));
    this.addWidget(new EstimatorView({ model: analysis }));
    this.addWidget(new StatisticsView({ model: analysis, workers: options.workers }));
    this.addWidget(new RunView({ model: analysis }));
    this.addWidget(new ResultsView({ model: this.model.results }));
    this.addWidget(
      new DefaultsView({ model: this.model.defaults, onOpenSettings: options.onOpenSettings })
    );
    this.addWidget(
      new RecordsView({ model: this.model.records, onInsertCell: options.onInsertAnalysisCell })
    );
  }

  /** The state the panel shows. */
  readonly model: PanelModel;

  /**
   * On the first show, expand every section if all of them are collapsed. JupyterLab 4.5
   * saves a sidebar accordion's sections as collapsed when the panel was not on screen at
   * save time (it records each section's visibility), so a panel the user never opened
   * would otherwise come back after a reload with every section shut.
   */
  protected onAfterShow(msg: Message): void {
    super.onAfterShow(msg);
    if (this._shownOnce) {
      return;
    }
    this._shownOnce = true;
    const content = this.content;
    if (content instanceof AccordionPanel && content.widgets.every(section => section.isHidden)) {
      content.widgets.forEach((_, index) => content.expand(index));
    }
  }

  private _shownOnce = false;
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
    /** Inserts a analysis cell for a recorded analysis (records section). */
    onInsertAnalysisCell?: (id: string) => void;
  }
}
