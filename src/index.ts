/**
 * The JupyterLab plugins of Polyadic. Wiring only: the logic lives in the modules imported
 * here.
 */
import {
  ILayoutRestorer,
  JupyterFrontEnd,
  JupyterFrontEndPlugin
} from '@jupyterlab/application';
import { ICommandPalette } from '@jupyterlab/apputils';
import { INotebookTracker } from '@jupyterlab/notebook';
import { ISettingRegistry } from '@jupyterlab/settingregistry';
import { ITranslator } from '@jupyterlab/translation';

import { INSERT_ANALYSIS_CELL, setupAnalysisCells } from './cells/command';
import { polyadicIcon } from './icons';
import { followNotebooks, followSettings, PanelModel, PolyadicPanel } from './panel';
import { createFetchTransport } from './bridge/browser';
import { followAnalysis } from './panel/analysis/tracker';
import { ResultsDocuments } from './panel/results/document';
import { robustnessExtras } from './panel/robustness';
import { isRecordId } from './record/ids';
import { findAnalysis } from './record/store';
import { recordCompletedRuns } from './panel/records/connect';
import { followRestores } from './panel/records/restore';
import { followRecords } from './panel/records/tracker';
import { CommandIDs, EXTENSION_ID, IPolyadicPanel, PALETTE_CATEGORY, PLUGIN_ID } from './tokens';
import { translationBundle } from './translation';
import { createEngineWorker } from './worker/browser';
import { EnginePool } from './worker/pool';

/** Commands of other JupyterLab plugins that the panel offers as buttons. */
namespace ExternalCommands {
  export const newNotebook = 'notebook:create-new';
  export const openSettings = 'settingeditor:open';
}

/** The side panel, its open command and the settings it shows. */
const panelPlugin: JupyterFrontEndPlugin<IPolyadicPanel> = {
  id: PLUGIN_ID,
  description: 'The Polyadic side panel: higher-order structure of a dataframe.',
  autoStart: true,
  provides: IPolyadicPanel,
  optional: [ICommandPalette, INotebookTracker, ISettingRegistry, ILayoutRestorer, ITranslator],
  activate: (
    app: JupyterFrontEnd,
    palette: ICommandPalette | null,
    notebooks: INotebookTracker | null,
    settingRegistry: ISettingRegistry | null,
    restorer: ILayoutRestorer | null,
    translator: ITranslator | null
  ): IPolyadicPanel => {
    const { commands, shell } = app;
    const trans = translationBundle(translator);
    const engine = new EnginePool({ createWorker: createEngineWorker });
    const model = new PanelModel({ engine, translator: translator ?? undefined });
    const documents: ResultsDocuments = new ResultsDocuments({
      shell,
      analysis: model.analysis,
      records: model.records,
      currentNotebook: () => notebooks?.currentWidget ?? null,
      translator: translator ?? undefined,
      extras: robustnessExtras({
        engine,
        runOf: id => documents.runOf(id),
        recordOf: id => (model.records.state ? (findAnalysis(model.records.state, id) ?? null) : null),
        record: (run, result) => model.records.recordRobustness(run, result),
        translator: translator ?? undefined
      })
    });
    const panel = new PolyadicPanel({
      model,
      onShowResults: () => void commands.execute(CommandIDs.showLatestResults),
      workers: () => engine.size,
      // The notebook tracker and the create-new command come from the same JupyterLab
      // plugin family; without a tracker the button would lead nowhere.
      onNewNotebook:
        notebooks !== null
          ? () => void commands.execute(ExternalCommands.newNotebook)
          : undefined,
      onOpenSettings: () => void commands.execute(ExternalCommands.openSettings, { query: 'Polyadic' }),
      onInsertAnalysisCell: id => void commands.execute(INSERT_ANALYSIS_CELL, { id }),
      translator: translator ?? undefined
    });
    panel.disposed.connect(() => {
      documents.dispose();
      model.dispose();
      engine.dispose();
    });

    shell.add(panel, 'right', { rank: 900 });
    restorer?.add(panel, PolyadicPanel.ID);

    commands.addCommand(CommandIDs.openPanel, {
      label: trans.__('Open Polyadic panel'),
      caption: trans.__('Show the Polyadic panel in the right sidebar'),
      icon: polyadicIcon,
      execute: () => shell.activateById(panel.id)
    });
    palette?.addItem({ command: CommandIDs.openPanel, category: PALETTE_CATEGORY });

    commands.addCommand(CommandIDs.openResults, {
      label: trans.__('Open Polyadic results'),
      caption: trans.__('Open the results view of a recorded analysis beside the notebook'),
      icon: polyadicIcon,
      execute: args => {
        const id = args['id'];
        if (!isRecordId(id)) {
          throw new Error(trans.__('Polyadic results: not an analysis id: %1', JSON.stringify(id)));
        }
        return documents.open(id);
      }
    });
    commands.addCommand(CommandIDs.showLatestResults, {
      label: trans.__('Show Polyadic results of the latest run'),
      caption: trans.__('Bring the results view of the latest run beside the notebook'),
      icon: polyadicIcon,
      isEnabled: () => model.analysis.latest !== null,
      execute: () => documents.showLatest()
    });
    model.analysis.resultChanged.connect(() => commands.notifyCommandChanged(CommandIDs.showLatestResults));
    palette?.addItem({ command: CommandIDs.showLatestResults, category: PALETTE_CATEGORY });
    void restorer?.restore(documents.tracker, {
      command: CommandIDs.openResults,
      args: doc => ({ id: doc.analysisId }),
      name: doc => doc.analysisId
    });

    if (notebooks !== null) {
      const follower = followNotebooks(notebooks, model.source);
      panel.disposed.connect(() => follower.dispose());
    }
    if (settingRegistry !== null) {
      void followSettings(settingRegistry, PLUGIN_ID, model.defaults);
    } else {
      model.defaults.fail(trans.__('This JupyterLab has no settings registry, so no settings can be shown.'));
    }
    const analysisFollower = followAnalysis({
      panel,
      notebooks,
      defaults: model.defaults,
      analysis: model.analysis,
      transport: createFetchTransport(),
      translator: translator ?? undefined
    });
    panel.disposed.connect(() => analysisFollower.dispose());

    return { widget: panel, model };
  }
};

/** The notebook's record in the panel's records section, and analysis cells. */
const recordsPlugin: JupyterFrontEndPlugin<void> = {
  id: `${EXTENSION_ID}:records`,
  description: 'Records of analyses in notebook metadata, and cells that show a recorded analysis.',
  autoStart: true,
  requires: [IPolyadicPanel, INotebookTracker],
  optional: [ICommandPalette, ITranslator],
  activate: (
    app: JupyterFrontEnd,
    panel: IPolyadicPanel,
    notebooks: INotebookTracker,
    palette: ICommandPalette | null,
    translator: ITranslator | null
  ): void => {
    const { analysis, records } = panel.model;
    const follower = followRecords(notebooks, records);
    const recorder = recordCompletedRuns(analysis, records);
    const restores = followRestores(analysis, records, translator ?? undefined);
    const cells = setupAnalysisCells({ commands: app.commands, notebooks, chosenId: () => records.selectedId,
      translator: translator ?? undefined
    });
    records.changed.connect(() => app.commands.notifyCommandChanged(INSERT_ANALYSIS_CELL));
    palette?.addItem({ command: INSERT_ANALYSIS_CELL, category: PALETTE_CATEGORY });
    panel.widget.disposed.connect(() => {
      follower.dispose();
      recorder.dispose();
      restores.dispose();
      cells.dispose();
    });
  }
};

export default [panelPlugin, recordsPlugin];
