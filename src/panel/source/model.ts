/**
 * State of the panel's data section: which notebook the panel follows and its kernel.
 * No JupyterLab imports, so the model runs in unit tests without a DOM.
 */
import { ISignal, Signal } from '@lumino/signaling';
import { SignalOwner } from '../disposable';

/** The kernel of the followed notebook, as the user sees it in the notebook toolbar. */
export interface IKernelSummary {
  /** Display name of the kernel spec, e.g. "Python 3 (ipykernel)". */
  displayName: string;
  /** Kernel status as JupyterLab reports it: idle, busy, starting, dead, … */
  status: string;
}

/** The notebook the panel follows. */
export interface INotebookSummary {
  /** Path relative to the server root. */
  path: string;
  /** File name shown to the user. */
  name: string;
  /** The notebook's kernel; `null` while it has none. */
  kernel: IKernelSummary | null;
}

/** Holds the followed notebook and signals every change of it. */
export class SourceModel extends SignalOwner {
  /** Emitted after the followed notebook or its kernel changed. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The followed notebook; `null` when no notebook is open (the empty state). */
  get notebook(): INotebookSummary | null {
    return this._notebook;
  }

  set notebook(value: INotebookSummary | null) {
    if (Private.sameNotebook(this._notebook, value)) {
      return;
    }
    this._notebook = value === null ? null : Private.copy(value);
    this._changed.emit();
  }

  private _notebook: INotebookSummary | null = null;
  private _changed = new Signal<this, void>(this);
}

namespace Private {
  /** Field-by-field equality, so repeated identical reports do not redraw the view. */
  export function sameNotebook(
    a: INotebookSummary | null,
    b: INotebookSummary | null
  ): boolean {
    if (a === null || b === null) {
      return a === b;
    }
    return (
      a.path === b.path &&
      a.name === b.name &&
      a.kernel?.displayName === b.kernel?.displayName &&
      a.kernel?.status === b.kernel?.status
    );
  }

  /** A copy, so a caller mutating its object later cannot change the model behind its back. */
  export function copy(value: INotebookSummary): INotebookSummary {
    return {
      path: value.path,
      name: value.name,
      kernel: value.kernel === null ? null : { ...value.kernel }
    };
  }
}
