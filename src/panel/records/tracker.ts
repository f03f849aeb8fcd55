/**
 * Keeps the records section's model on the current notebook's metadata: the record is read from
 * and written to `INotebookModel.getMetadata` / `setMetadata` (a write marks the notebook
 * dirty, as any edit does), and read again whenever the metadata changes (a load from disk,
 * an edit in the metadata editor, another view of the same notebook).
 */
import { INotebookModel, INotebookTracker, NotebookPanel } from '@jupyterlab/notebook';
import { IDisposable } from '@lumino/disposable';

import type { IPolyadicPanel } from '../../tokens';

/** Follow the tracker's current notebook until the returned handle is disposed. */
export function followRecords(tracker: INotebookTracker, model: IPolyadicPanel.IRecords): IDisposable {
  return new Private.RecordsFollower(tracker, model);
}

namespace Private {
  /** The listener behind {@link followRecords}. */
  export class RecordsFollower implements IDisposable {
    constructor(
      private readonly _tracker: INotebookTracker,
      private readonly _model: IPolyadicPanel.IRecords
    ) {
      _tracker.currentChanged.connect(this._onCurrentChanged, this);
      this._onCurrentChanged();
    }

    get isDisposed(): boolean {
      return this._isDisposed;
    }

    dispose(): void {
      if (this._isDisposed) {
        return;
      }
      this._isDisposed = true;
      this._tracker.currentChanged.disconnect(this._onCurrentChanged, this);
      this._watch(null);
    }

    private _onCurrentChanged(): void {
      const panel = this._tracker.currentWidget;
      this._watch(panel);
      if (panel === null) {
        return;
      }
      // the notebook model holds the file's metadata only once the context is ready
      void panel.context.ready.then(() => {
        if (this._panel === panel && !this._isDisposed) {
          this._attach(panel);
        }
      });
    }

    /** Move the per-notebook listeners to `panel`. */
    private _watch(panel: NotebookPanel | null): void {
      if (this._notebookModel !== null) {
        this._notebookModel.metadataChanged.disconnect(this._onMetadataChanged, this);
        this._notebookModel = null;
      }
      if (this._panel !== null) {
        this._panel.context.pathChanged.disconnect(this._onPathChanged, this);
      }
      this._panel = panel;
      if (panel !== null) {
        panel.context.pathChanged.connect(this._onPathChanged, this);
      }
      this._model.setNotebook(null);
    }

    private _attach(panel: NotebookPanel): void {
      const notebookModel = panel.content.model ?? panel.context.model;
      if (this._notebookModel !== null) {
        this._notebookModel.metadataChanged.disconnect(this._onMetadataChanged, this);
      }
      this._notebookModel = notebookModel;
      notebookModel.metadataChanged.connect(this._onMetadataChanged, this);
      this._model.setNotebook({
        path: panel.context.path,
        metadata: {
          get: key => notebookModel.getMetadata(key),
          set: (key, value) => notebookModel.setMetadata(key, value)
        }
      });
    }

    private _onPathChanged(): void {
      if (this._panel !== null && this._notebookModel !== null) {
        this._attach(this._panel);
      }
    }

    private _onMetadataChanged(): void {
      this._model.refresh();
    }

    private _panel: NotebookPanel | null = null;
    private _notebookModel: INotebookModel | null = null;
    private _isDisposed = false;
  }
}
