/**
 * Keeps an {@link AnalysisModel} connected to the kernel bridge of the current notebook and
 * to the user settings. Bridges start on the panel's first show, so a user who never opens
 * the panel never has `polyadic` imported into a kernel.
 */
import type { INotebookTracker } from '@jupyterlab/notebook';
import type { IDisposable } from '@lumino/disposable';
import { IMessageHandler, Message, MessageLoop } from '@lumino/messaging';
import type { Widget } from '@lumino/widgets';

import { BridgeRegistry } from '../../bridge/registry';
import type { IFetchTransport } from '../../bridge/transport';
import type { ITranslator } from '../../translation';
import type { DefaultsModel } from '../defaults/model';
import type { AnalysisModel } from './model';

/** Follow the current notebook's bridge and the settings until the handle is disposed. */
export function followAnalysis(options: {
  panel: Widget;
  notebooks: INotebookTracker | null;
  defaults: DefaultsModel;
  analysis: AnalysisModel;
  /** How the bridges move bytes (the page's frame worker and server route); default in process. */
  transport?: IFetchTransport;
  /** Translates what the bridges tell the user (default: as written). */
  translator?: ITranslator;
}): IDisposable {
  return new Private.AnalysisFollower(options.panel, options.notebooks, options.defaults, options.analysis, options.transport, options.translator);
}

namespace Private {
  /** The listener behind {@link followAnalysis}. */
  export class AnalysisFollower implements IDisposable {
    constructor(
      private readonly _panel: Widget,
      private readonly _notebooks: INotebookTracker | null,
      private readonly _defaults: DefaultsModel,
      private readonly _analysis: AnalysisModel,
      private readonly _transport?: IFetchTransport,
      translator?: ITranslator
    ) {
      this._bridges = new BridgeRegistry({ transport: _transport, translator });
      _defaults.changed.connect(this._onSettings, this);
      this._onSettings();
      if (_panel.isVisible) {
        this._start();
      } else {
        MessageLoop.installMessageHook(_panel, this._hook);
      }
    }

    get isDisposed(): boolean {
      return this._isDisposed;
    }

    dispose(): void {
      if (this._isDisposed) {
        return;
      }
      this._isDisposed = true;
      MessageLoop.removeMessageHook(this._panel, this._hook);
      this._defaults.changed.disconnect(this._onSettings, this);
      this._notebooks?.currentChanged.disconnect(this._follow, this);
      this._analysis.data.bridge = null;
      this._bridges.dispose();
      this._transport?.codec.dispose();
    }

    private _hook = (_: IMessageHandler, msg: Message): boolean => {
      if (msg.type === 'after-show' && !this._started) {
        // A hook may not remove itself while the loop runs it; starting twice is guarded.
        setTimeout(() => MessageLoop.removeMessageHook(this._panel, this._hook), 0);
        this._start();
      }
      return true;
    };

    private _start(): void {
      if (this._started || this._isDisposed) {
        return;
      }
      this._started = true;
      this._notebooks?.currentChanged.connect(this._follow, this);
      this._follow();
    }

    private _follow(): void {
      const current = this._notebooks?.currentWidget ?? null;
      // the choices of the notebook left stay with it; the next one gets its own
      this._analysis.setNotebook(current?.id ?? null);
      this._analysis.data.bridge = current === null ? null : this._bridges.bridgeFor(current.sessionContext);
    }

    private _onSettings(): void {
      const settings = this._defaults.settings;
      if (settings !== null) {
        this._analysis.applySettings(settings);
      }
    }

    private _bridges: BridgeRegistry;
    private _started = false;
    private _isDisposed = false;
  }
}
