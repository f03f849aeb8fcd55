/**
 * The robustness section of a results view: the variant list (text, one per line, the defaults
 * prefilled), N, the "Check robustness" button, the table of the followed multiplets (the top
 * N of each table under the base or any variant) across the variants with its CSV export, the agreement between variants, and a rank chart (one line
 * per followed multiplet across the variants). Every name and value goes in as text.
 */
import { Panel, Widget } from '@lumino/widgets';
import type * as PlotlyModule from 'plotly.js-dist-min';

import { ChartView, plotlyText } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/types';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import { textElement, uniqueId } from '../dom';
import { formatFixed, formatValue } from '../../engine/text';
import type { IRobustnessLine, RobustnessModel } from './model';

/** The section widget. */
export class RobustnessSection extends Panel {
  /** Create the section over `options.model` (the section disposes the model with itself). */
  constructor(options: RobustnessSection.IOptions) {
    super();
    const trans = (this._trans = translationBundle(options.translator));
    this._model = options.model;
    this.addClass('pd-Robustness');
    this.node.setAttribute('role', 'region');
    this.node.setAttribute('aria-label', trans.__('Robustness across variants'));

    const heading = textElement('h3', 'pd-Robustness-title', trans.__('Robustness across binnings and estimators'));
    this._intro = textElement('p', 'pd-Robustness-intro');
    const textId = uniqueId('pd-robustness-variants');
    const textLabel = textElement(
      'label',
      'pd-Field-label',
      trans.__('Variants, one per line (KEY=VALUE settings joined by ";": bins, bin.COLUMN, estimator, missing)')
    );
    textLabel.htmlFor = textId;
    this._text = document.createElement('textarea');
    this._text.id = textId;
    this._text.className = 'pd-Robustness-variants jp-mod-styled';
    this._text.rows = 6;
    this._text.spellcheck = false;
    this._text.addEventListener('input', () => this._model.setVariantsText(this._text.value));

    const controls = textElement('div', 'pd-Robustness-controls');
    const topId = uniqueId('pd-robustness-top');
    const topLabel = textElement('label', 'pd-Field-label', trans.__('Top N of each table'));
    topLabel.htmlFor = topId;
    this._top = document.createElement('input');
    this._top.id = topId;
    this._top.type = 'number';
    this._top.min = '1';
    this._top.max = '1000';
    this._top.step = '1';
    this._top.className = 'pd-Robustness-top jp-mod-styled';
    this._top.addEventListener('change', () => this._model.setTop(Number(this._top.value)));
    this._check = textElement('button', 'pd-Robustness-check jp-mod-styled jp-mod-accept', trans.__('Check robustness'));
    this._check.type = 'button';
    this._check.addEventListener('click', () => {
      if (this._model.state === 'running') {
        this._model.cancel();
      } else {
        void this._model.check();
      }
    });
    this._reset = textElement('button', 'pd-Robustness-reset jp-mod-styled', trans.__('Reset to defaults'));
    this._reset.type = 'button';
    this._reset.addEventListener('click', () => this._model.resetVariants());
    controls.append(topLabel, this._top, this._check, this._reset);

    this._status = textElement('p', 'pd-Robustness-status');
    this._status.setAttribute('role', 'status');
    this._caution = textElement(
      'p',
      'pd-Results-caution',
      trans.__(
        'The variants compare estimates only: a multiplet that holds everywhere is not thereby shown to differ from ' +
          'chance (use the statistics for that), and with few rows every binning is coarse guesswork.'
      )
    );
    this._tableHost = textElement('div', 'pd-Robustness-tableHost');
    this._export = textElement('button', 'pd-Robustness-export jp-mod-styled', trans.__('Export CSV'));
    this._export.type = 'button';
    this._export.setAttribute('aria-label', trans.__('Export the robustness table as CSV'));
    this._export.addEventListener('click', () => this._download());
    this._agreement = textElement('div', 'pd-Robustness-agreement');

    this._chart = new ChartView({
      label: trans.__('Ranks of the followed multiplets across the variants'),
      translator: options.translator,
      filename: 'polyadic-robustness-ranks',
      height: 280,
      exportAs: () => ({
        title: trans.__('Rank of each followed multiplet under each variant (1 = most negative co-information)'),
        subtitle: this._model.run ? trans.__('%1 · record %2', this._model.run.frame.name, this._model.run.analysisId) : '',
        xTitle: trans.__('variant'),
        yTitle: trans.__('rank among all multiplets'),
        filename: this._model.fileName
      })
    });

    const form = textElement('div', 'pd-Robustness-form');
    form.append(textLabel, this._text, controls);
    const body = new Widget();
    body.addClass('pd-Robustness-body');
    body.node.append(heading, this._intro, form, this._status, this._caution, this._tableHost, this._export, this._agreement);
    this.addWidget(body);
    this._chart.addClass('pd-Robustness-chart');
    this.addWidget(this._chart);
    this._model.changed.connect(this._render, this);
    this._render();
  }

  /** The model shown. */
  get model(): RobustnessModel {
    return this._model;
  }

  /** Dispose the section (the chart with it) and the model. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._render, this);
    this._model.dispose();
    super.dispose();
  }

  private _render(): void {
    const trans = this._trans;
    const model = this._model;
    const unavailable = model.state === 'unavailable';
    this._intro.textContent = unavailable
      ? (model.unavailableReason ?? '')
      : trans.__('Re-run this analysis under each variant and follow its top multiplets. %1', model.ruleText);
    if (this._text.value !== model.variantsText) {
      this._text.value = model.variantsText;
    }
    this._top.value = String(model.top);
    const running = model.state === 'running';
    this._text.disabled = unavailable || running;
    this._top.disabled = unavailable || running;
    this._reset.disabled = unavailable || running || model.variantsText === model.defaultsText;
    this._check.disabled = unavailable;
    this._check.textContent = running ? trans.__('Cancel') : trans.__('Check robustness');
    const error = model.error;
    this._text.classList.toggle('jp-mod-error', error !== null && error.detail.option === 'variants');
    this._text.setAttribute('aria-invalid', String(error !== null && error.detail.option === 'variants'));
    this._top.classList.toggle('jp-mod-error', error !== null && error.detail.option === 'top');
    this._status.classList.toggle('jp-mod-error', error !== null);
    this._status.textContent = error
      ? error.message
      : running
        ? trans.__('Running every variant in a worker…')
        : [model.summaryText, model.recordNote].filter(Boolean).join(' ');
    this._renderTable();
    this._renderAgreement();
    this._export.hidden = !model.hasTable;
    this._caution.hidden = !model.hasTable;
    this._chart.setHidden(!model.hasTable);
    if (model.hasTable) {
      const lines = model.lines;
      const labels = model.variantLabels;
      this._chart.setFigure(colors => Private.figure(lines, labels, colors, trans));
    }
  }

  private _renderTable(): void {
    const trans = this._trans;
    const model = this._model;
    this._tableHost.replaceChildren();
    if (!model.hasTable) {
      return;
    }
    const labels = model.variantLabels;
    const table = textElement('table', 'pd-Robustness-table');
    table.setAttribute('aria-label', trans.__('Robustness of the top multiplets'));
    const head = table.createTHead().insertRow();
    const headers = [
      trans.__('Multiplet'),
      trans.__('Table'),
      trans.__('Base value (%1)', model.units),
      ...labels.map((_, i) => (i === 0 ? trans.__('Rank: base') : trans.__('Rank: V%1', i))),
      trans.__('Same sign'),
      trans.__('Verdict')
    ];
    headers.forEach((text, i) => {
      const cell = textElement('th', 'pd-Robustness-head', text);
      cell.scope = 'col';
      const variant = i - 3;
      if (variant >= 1 && variant < labels.length) {
        cell.title = labels[variant];
      }
      head.append(cell);
    });
    const body = table.createTBody();
    for (const row of model.rows) {
      const tr = body.insertRow();
      tr.classList.toggle('jp-mod-robust', row.robust);
      const cells = [
        row.multiplet,
        row.table,
        formatValue(row.baseValue),
        ...row.ranks.map(rank => (Number.isInteger(rank) ? String(rank) : formatFixed(rank, 1))),
        `${Math.round(row.sameSign * 100)} %`,
        row.verdict
      ];
      cells.forEach((text, i) => {
        const cell = textElement(i === 0 ? 'th' : 'td', i === 0 ? 'pd-Robustness-multiplet' : 'pd-Robustness-cell', text);
        if (i === 0) {
          (cell as HTMLTableCellElement).scope = 'row';
        }
        tr.append(cell);
      });
    }
    const legend = textElement('p', 'pd-Robustness-legend', labels.slice(1).map((label, i) => trans.__('V%1: %2', i + 1, label)).join(' · '));
    this._tableHost.append(table, legend);
  }

  private _renderAgreement(): void {
    const trans = this._trans;
    const pairs = this._model.agreement;
    this._agreement.replaceChildren();
    if (pairs.length === 0 || !this._model.hasTable) {
      return;
    }
    const labels = this._model.variantLabels;
    const short = (label: string): string => {
      const i = labels.indexOf(label);
      return i <= 0 ? trans.__('base') : trans.__('V%1', i);
    };
    const title = textElement(
      'p',
      'pd-Robustness-agreementTitle',
      trans.__("Rank agreement: Kendall's tau-b over every multiplet; shared members of the 10 most negative and the 10 most positive")
    );
    const list = textElement('ul', 'pd-Robustness-pairs');
    for (const pair of pairs) {
      // a plain hyphen, as the CLI's note and CSV write it
      const tau = Number.isFinite(pair.kendall_tau) ? formatFixed(pair.kendall_tau, 3, '-') : trans.__('undefined');
      list.append(
        textElement(
          'li',
          'pd-Robustness-pair',
          trans.__(
            '%1 vs %2: tau %3; shared %4 of %5 most negative, %6 of %5 most positive',
            short(pair.a),
            short(pair.b),
            tau,
            pair.overlap_synergy,
            pair.overlap_of,
            pair.overlap_redundancy
          )
        )
      );
    }
    this._agreement.append(title, list);
  }

  private _download(): void {
    const text = this._model.csv();
    if (text === null) {
      return;
    }
    const blob = new Blob([text], { type: 'text/csv;charset=utf-8' });
    const url = URL.createObjectURL(blob);
    const link = document.createElement('a');
    link.href = url;
    link.download = `${this._model.fileName}.csv`;
    link.style.display = 'none';
    document.body.append(link);
    link.click();
    link.remove();
    setTimeout(() => URL.revokeObjectURL(url), 0);
  }

  private readonly _model: RobustnessModel;
  private readonly _trans: TranslationBundle;
  private readonly _intro: HTMLParagraphElement;
  private readonly _text: HTMLTextAreaElement;
  private readonly _top: HTMLInputElement;
  private readonly _check: HTMLButtonElement;
  private readonly _reset: HTMLButtonElement;
  private readonly _status: HTMLParagraphElement;
  private readonly _caution: HTMLParagraphElement;
  private readonly _tableHost: HTMLDivElement;
  private readonly _export: HTMLButtonElement;
  private readonly _agreement: HTMLDivElement;
  private readonly _chart: ChartView;
}

/** The statics of {@link RobustnessSection}. */
export namespace RobustnessSection {
  /** Options of a {@link RobustnessSection}. */
  export interface IOptions {
    model: RobustnessModel;
    /** Translates the section's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /**
   * The rank chart: variants along x (base first), rank down y (1, the most negative, at the
   * top), one line per followed multiplet in its table's colour; a robust one solid, one that
   * is not robust dashed; the base's top N in front, those only a variant ranks that high thin
   * and faint behind them. Names go to plotly escaped (plotlyText).
   */
  export function figure(lines: IRobustnessLine[], labels: string[], colors: IChartColors, trans: TranslationBundle): IFigure {
    const x = labels.map((_, i) => (i === 0 ? trans.__('base') : trans.__('V%1', i)));
    // plotly draws later traces on top: the variants' additions first
    const ordered = [...lines.filter(line => !line.inBaseTop), ...lines.filter(line => line.inBaseTop)];
    const data: PlotlyModule.Data[] = ordered.map(line => ({
      type: 'scatter',
      mode: 'lines+markers',
      x,
      y: line.ranks,
      name: plotlyText(line.multiplet),
      text: labels.map(label => plotlyText(`${line.multiplet} · ${label}`)),
      hovertemplate: `${trans.__('%{text}<br>rank %{y}')}<extra></extra>`,
      line: {
        color: line.table === 'synergy' ? colors.synergy : colors.redundancy,
        width: line.inBaseTop ? 2 : 1,
        dash: line.robust ? 'solid' : 'dash'
      },
      opacity: line.inBaseTop ? 1 : 0.3,
      marker: { size: line.inBaseTop ? 5 : 3 }
    }));
    return {
      data,
      layout: {
        xaxis: { type: 'category', gridcolor: colors.grid, color: colors.muted },
        yaxis: { autorange: 'reversed', gridcolor: colors.grid, color: colors.muted, title: { text: trans.__('rank') } },
        margin: { l: 48, r: 8, t: 8, b: 36 }
      } as PlotlyModule.Layout
    };
  }
}
