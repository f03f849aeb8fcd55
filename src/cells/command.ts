/**
 * Analysis cells in notebooks: the command that inserts `polyadic.show("<record id>")`
 * below the active cell (palette and notebook toolbar), and the per-notebook renderer of its
 * output. The renderer is added to each notebook's own rendermime registry, bound to that
 * notebook's metadata, so an output always reads the record of the notebook it is in.
 */
import { CommandToolbarButton, Notification } from '@jupyterlab/apputils';
import { INotebookTracker, NotebookActions, NotebookPanel } from '@jupyterlab/notebook';
import type { CommandRegistry } from '@lumino/commands';
import { IDisposable } from '@lumino/disposable';

import { errorMessage } from '../engine/errors';
import { showCellSource } from '../record/ids';
import { translationBundle, type ITranslator } from '../translation';
import { createAnalysisRendererFactory, type IRecordNotebook } from './renderer';

/** Id of the insert command. */
export const INSERT_ANALYSIS_CELL = 'polyadic:insert-analysis-cell';

/** Name of the notebook toolbar button. */
export const TOOLBAR_ITEM = 'polyadic-insert-analysis-cell';

/** Arguments of the insert command. */
export interface IInsertCellArgs {
  /** Record id of the analysis; default the one chosen in the panel. */
  id?: string;
}

/**
 * Insert a code cell showing analysis `id` below the active cell of `panel`, select it and give
 * the notebook the keyboard in command mode, so Shift+Enter runs the new cell next (wherever the
 * command came from: the toolbar, the palette or the panel). Throws a PolyadicError for anything
 * but a valid record id: no metadata text reaches code.
 */
export function insertAnalysisCell(panel: NotebookPanel, id: string): void {
  const source = showCellSource(id);
  const notebook = panel.content;
  NotebookActions.insertBelow(notebook);
  const cell = notebook.activeCell;
  if (cell === null) {
    return;
  }
  if (cell.model.type !== 'code') {
    NotebookActions.changeCellType(notebook, 'code');
  }
  notebook.activeCell?.model.sharedModel.setSource(source);
  notebook.mode = 'command';
  notebook.activate();
}

/** What {@link setupAnalysisCells} needs. */
export interface IAnalysisCellsOptions {
  commands: CommandRegistry;
  notebooks: INotebookTracker;
  /** The analysis chosen in the panel, used when the command gets no id. */
  chosenId: () => string | null;
  /** Translates the command's and the cells' strings; they stay as written without one. */
  translator?: ITranslator;
}

/**
 * Register the insert command, put its button in every notebook toolbar and give every
 * notebook the renderer of analysis cell outputs. Returns a handle that undoes it.
 */
export function setupAnalysisCells(options: IAnalysisCellsOptions): IDisposable {
  const { commands, notebooks, chosenId } = options;
  const trans = translationBundle(options.translator);
  const idOf = (args: IInsertCellArgs): string | null => (typeof args.id === 'string' ? args.id : chosenId());
  const command = commands.addCommand(INSERT_ANALYSIS_CELL, {
    label: trans.__('Insert Polyadic analysis cell'),
    caption: trans.__('Insert a code cell below that shows the analysis chosen in the Polyadic panel'),
    isEnabled: args => notebooks.currentWidget !== null && idOf(args as IInsertCellArgs) !== null,
    execute: args => {
      const panel = notebooks.currentWidget;
      const id = idOf(args as IInsertCellArgs);
      if (panel === null || id === null) {
        Notification.warning(trans.__('Choose an analysis in the Polyadic panel’s Records section first, with a notebook open.'));
        return;
      }
      try {
        insertAnalysisCell(panel, id);
      } catch (error) {
        Notification.error(errorMessage(error));
      }
    }
  });

  const onNotebook = (_: unknown, panel: NotebookPanel): void => {
    const resolve = (): IRecordNotebook | null => {
      const model = panel.content.model;
      if (model === null || panel.isDisposed) {
        return null;
      }
      return {
        metadata: { get: key => model.getMetadata(key), set: (key, value) => model.setMetadata(key, value) },
        metadataChanged: model.metadataChanged
      };
    };
    panel.content.rendermime.addFactory(createAnalysisRendererFactory(resolve, options.translator));
    // As JupyterLab's own notebook toolbar buttons: a click does not take the focus from the
    // notebook, so the keys that follow (Shift+Enter) go to the notebook, not to the button.
    const button = new CommandToolbarButton({ commands, id: INSERT_ANALYSIS_CELL, label: trans.__('Polyadic cell'), noFocusOnClick: true });
    // the spacer comes from the toolbar settings and may not be there yet
    if (!panel.toolbar.insertBefore('spacer', TOOLBAR_ITEM, button)) {
      panel.toolbar.addItem(TOOLBAR_ITEM, button);
    }
  };
  notebooks.forEach(panel => onNotebook(notebooks, panel));
  notebooks.widgetAdded.connect(onNotebook);
  // the button's enabled state follows the panel's choice and the current notebook
  const refresh = (): void => commands.notifyCommandChanged(INSERT_ANALYSIS_CELL);
  notebooks.currentChanged.connect(refresh);

  return {
    get isDisposed() {
      return command.isDisposed;
    },
    dispose: () => {
      notebooks.widgetAdded.disconnect(onNotebook);
      notebooks.currentChanged.disconnect(refresh);
      command.dispose();
    }
  };
}
