/**
 * Keeps a {@link SourceModel} in step with the notebook the user last focused: its path,
 * its kernel and the kernel's status.
 */
import { PathExt } from '@jupyterlab/coreutils';
import { INotebookTracker, NotebookPanel } from '@jupyterlab/notebook';
import { IDisposable } from '@lumino/disposable';

import { INotebookSummary, SourceModel } from './model';

/**
 * Follow the tracker's current notebook until the returned handle is disposed.
 * The tracker's current notebook stays current while another kind of widget has focus,
 * which is what a side panel working on "the notebook" wants.
 */
export function followNotebooks(
  tracker: INotebookTracker,
  model: SourceModel
): IDisposable {
  return new Private.NotebookFollower(tracker, model);
}

namespace Private {
  /** The listener behind {@link followNotebooks}. */
  export class NotebookFollower implements IDisposable {
    constructor(
      private readonly _tracker: INotebookTracker,
      private readonly _model: SourceModel
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
      this._watch(this._tracker.currentWidget);
      this._refresh();
    }

    /** Move the per-notebook listeners to `panel`. */
    private _watch(panel: NotebookPanel | null): void {
      const old = this._panel;
      if (old !== null) {
        old.sessionContext.kernelChanged.disconnect(this._refresh, this);
        old.sessionContext.statusChanged.disconnect(this._refresh, this);
        old.context.pathChanged.disconnect(this._refresh, this);
      }
      this._panel = panel;
      if (panel !== null) {
        panel.sessionContext.kernelChanged.connect(this._refresh, this);
        panel.sessionContext.statusChanged.connect(this._refresh, this);
        panel.context.pathChanged.connect(this._refresh, this);
      }
    }

    private _refresh(): void {
      this._model.notebook = this._panel === null ? null : summarize(this._panel);
    }

    private _panel: NotebookPanel | null = null;
    private _isDisposed = false;
  }

  /** What the data section shows about one notebook. */
  function summarize(panel: NotebookPanel): INotebookSummary {
    const session = panel.sessionContext;
    const path = panel.context.path;
    return {
      path,
      name: PathExt.basename(path),
      kernel: session.session?.kernel
        ? { displayName: session.kernelDisplayName, status: session.kernelDisplayStatus }
        : null
    };
  }
}
