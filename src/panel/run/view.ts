/**
 * The Run section: Run and Cancel, a progress bar with the fraction done and the time left,
 * and one line on how the last run ended.
 */
import { Widget } from '@lumino/widgets';

import { formatCount, formatFixed } from '../../engine/text';
import { scanEngineName } from '../../bridge/protocol';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { AnalysisModel } from '../analysis/model';
import { textElement } from '../dom';

/** Shows the run state of an {@link AnalysisModel}. */
export class RunView extends Widget {
  /** Create the section for `options.model`. */
  constructor(options: RunView.IOptions) {
    super();
    this.addClass('pd-Run');
    const trans = (this._trans = translationBundle(options.translator));
    this.title.label = trans.__('Run');
    this._model = options.model;
    this._run = textElement('button', 'pd-Run-start jp-mod-styled jp-mod-accept', trans.__('Run'));
    this._run.type = 'button';
    this._run.addEventListener('click', () => void this._model.start());
    this._cancel = textElement('button', 'pd-Run-cancel jp-mod-styled jp-mod-reject', trans.__('Cancel'));
    this._cancel.type = 'button';
    this._cancel.addEventListener('click', () => this._model.cancel());
    const buttons = textElement('div', 'pd-Run-buttons');
    buttons.append(this._run, this._cancel);
    this._bar = document.createElement('progress');
    this._bar.className = 'pd-Run-progress';
    this._bar.max = 1;
    this._bar.setAttribute('aria-label', trans.__('Analysis progress'));
    this._progressText = textElement('p', 'pd-Run-progressText');
    this._line = textElement('p', 'pd-Run-status');
    this._line.setAttribute('role', 'status');
    this._hint = textElement('p', 'pd-Run-hint');
    this._show = textElement('button', 'pd-Run-show jp-mod-styled', trans.__('Show results'));
    this._show.type = 'button';
    this._show.title = trans.__('Bring the results view of the latest run beside the notebook');
    const onShow = options.onShowResults;
    this._show.addEventListener('click', () => onShow?.());
    this._canShow = onShow !== undefined;
    this.node.append(buttons, this._bar, this._progressText, this._line, this._show, this._hint);
    this._model.runChanged.connect(this._render, this);
    this._model.changed.connect(this._render, this);
    this._render();
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.runChanged.disconnect(this._render, this);
    this._model.changed.disconnect(this._render, this);
    super.dispose();
  }

  private _render(): void {
    const model = this._model;
    const trans = this._trans;
    const run = model.run;
    const running = model.isRunning;
    const blocker = model.blocker;
    this._run.disabled = running || blocker !== null;
    this._cancel.disabled = !running;
    this.node.dataset.state = run.state;
    this._bar.hidden = !running;
    this._progressText.hidden = !running;
    if (run.state === 'fetching' && run.stage !== undefined) {
      // a scan reports stages, not bytes
      this._bar.removeAttribute('value');
      this._progressText.textContent = run.stage;
    } else if (run.state === 'fetching') {
      this._bar.value = model.fetchFraction;
      this._progressText.textContent = trans.__('Fetching the columns from the kernel… %1%', Math.round(model.fetchFraction * 100));
    } else if (run.state === 'running') {
      const progress = run.progress;
      const fraction = progress?.fraction ?? 0;
      this._bar.value = fraction;
      const left = progress?.remainingMs ?? null;
      const done = Math.floor(fraction * 100);
      this._progressText.textContent =
        left === null
          ? trans.__('%1% done, estimating the time left…', done)
          : trans.__('%1% done, about %2 left', done, Private.duration(left, trans));
    }
    const latest = model.latest;
    if (run.state === 'done' && latest !== null) {
      const count = latest.result.multiplet_count;
      const { frame } = latest;
      const multiplets = trans._n('%2 multiplet', '%2 multiplets', count, formatCount(count));
      const rows = trans._n('%2 row', '%2 rows', frame.rows, formatCount(frame.rows));
      const took = Private.duration(latest.elapsedMs, trans);
      this._line.textContent = frame.scan
        ? trans.__(
            '%1 computed from every one of %2 of %3 in %4, scanned in %5 %6 into %7.',
            multiplets,
            rows,
            frame.name,
            took,
            scanEngineName(frame.scan.engine),
            frame.scan.version,
            trans._n('%2 distinct binned row', '%2 distinct binned rows', frame.scan.distinctRows, formatCount(frame.scan.distinctRows))
          )
        : frame.sampled
        ? trans.__(
            '%1 computed from %2 of %3 in %4 (a seeded sample of %5, seed %6).',
            multiplets,
            rows,
            frame.name,
            took,
            trans._n('%2 row', '%2 rows', frame.originalRows, formatCount(frame.originalRows)),
            frame.seed
          )
        : trans.__('%1 computed from %2 of %3 in %4.', multiplets, rows, frame.name, took);
    } else if (run.state === 'cancelled') {
      this._line.textContent = trans.__('Cancelled. Nothing was computed; press Run to start again.');
    } else if (run.state === 'error') {
      this._line.textContent = run.error?.message ?? trans.__('The analysis failed.');
    } else if (running) {
      this._line.textContent = trans.__('Running. The notebook stays usable meanwhile.');
    } else {
      this._line.textContent = '';
    }
    this._line.classList.toggle('pd-mod-error', run.state === 'error');
    this._show.hidden = !this._canShow || latest === null;
    this._hint.textContent = !running && blocker !== null ? blocker : (model.kernelMessage ?? '');
    this._hint.hidden = this._hint.textContent === '';
  }

  private _model: AnalysisModel;
  private readonly _trans: TranslationBundle;
  private _run: HTMLButtonElement;
  private _cancel: HTMLButtonElement;
  private _bar: HTMLProgressElement;
  private _progressText: HTMLElement;
  private _line: HTMLElement;
  private _hint: HTMLElement;
  private _show: HTMLButtonElement;
  private _canShow: boolean;
}

/** The statics of {@link RunView}. */
export namespace RunView {
  /** Options of a {@link RunView}. */
  export interface IOptions {
    /** The analysis to run. */
    model: AnalysisModel;
    /** Brings the latest run's results view to the front; without it, no Show results button. */
    onShowResults?: () => void;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /** A duration for people: "0.4 s", "12 s", "3 min 5 s". */
  export function duration(ms: number, trans: TranslationBundle): string {
    const seconds = ms / 1000;
    if (seconds < 10) {
      return trans.__('%1 s', formatFixed(seconds, 1));
    }
    if (seconds < 60) {
      return trans.__('%1 s', Math.round(seconds));
    }
    return trans.__('%1 min %2 s', Math.floor(seconds / 60), Math.round(seconds % 60));
  }
}
