/**
 * The conditioning chain of a selected multiplet: I(X1), I(X1;X2), … step by step as a chart,
 * the same values as a list, and buttons for the strongest synergy and redundancy chains.
 */
import { Panel, Widget } from '@lumino/widgets';

import { ChartView, plotlyText } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/chart';
import { textElement } from '../dom';
import { exportFileName, provenanceLine } from './export';
import { formatValue } from './format';
import type { IChainView } from './model';
import { ResultsModel } from './model';

/** Shows the chain of a {@link ResultsModel}. */
export class ChainView extends Panel {
  /** Create the view of `options.model`. */
  constructor(options: ChainView.IOptions) {
    super();
    this.addClass('pd-Chain');
    this._model = options.model;
    const top = new Widget({ node: textElement('div', 'pd-Chain-header') });
    top.node.append(
      textElement('h3', 'pd-Chain-title', 'Conditioning chain'),
      textElement(
        'p',
        'pd-Chain-note',
        'Co-information of the first column, the first two, the first three, …: each step adds ' +
          'minus the co-information conditioned on the new column. Pick a table row, or:'
      )
    );
    const actions = textElement('div', 'pd-Chain-actions');
    const synergy = textElement('button', 'pd-Chain-action jp-mod-styled', 'Strongest synergy chain');
    synergy.type = 'button';
    synergy.addEventListener('click', () => this._model.showExtremalChain('synergy'));
    const redundancy = textElement('button', 'pd-Chain-action jp-mod-styled', 'Strongest redundancy chain');
    redundancy.type = 'button';
    redundancy.addEventListener('click', () => this._model.showExtremalChain('redundancy'));
    this._rotate = textElement('button', 'pd-Chain-action jp-mod-styled', 'Start from the next column');
    this._rotate.type = 'button';
    this._rotate.addEventListener('click', () => this._model.rotateChain());
    actions.append(synergy, redundancy, this._rotate);
    top.node.append(actions);
    this._message = textElement('p', 'pd-Chain-message');
    this._message.setAttribute('aria-live', 'polite');
    top.node.append(this._message);
    this._chart = new ChartView({
      label: 'Conditioning chain',
      filename: 'polyadic-conditioning-chain',
      height: 180,
      exportAs: () => {
        const source = this._model.exportSource;
        const chain = this._model.chain;
        return {
          title: chain === null ? 'Conditioning chain' : `Conditioning chain of ${chain.columns.join(', ')}`,
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: 'columns, in the order they join the chain',
          yTitle: `co-information (${source?.result.units ?? ''})`,
          filename: exportFileName(source ?? {}, 'conditioning-chain')
        };
      }
    });
    this._list = new Widget({ node: textElement('ol', 'pd-Chain-list') });
    this.addWidget(top);
    this.addWidget(this._chart);
    this.addWidget(this._list);
    this._model.changed.connect(this._update, this);
    this._update();
  }

  /** Disconnect from the model and dispose the widget. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._model.changed.disconnect(this._update, this);
    super.dispose();
  }

  private _update(): void {
    const chain = this._model.chain;
    const error = this._model.chainError;
    this._rotate.disabled = !chain || chain.kind !== 'multiplet' || chain.columns.length < 2;
    if (chain === this._shown && error === this._shownError) {
      return;
    }
    this._shown = chain;
    this._shownError = error;
    if (error) {
      this._message.textContent = error;
    } else if (!chain) {
      this._message.textContent = 'No chain selected.';
    } else {
      const what =
        chain.kind === 'multiplet'
          ? 'Chain of the selected multiplet'
          : chain.kind === 'synergy'
            ? 'Strongest synergy chain (greedy, most negative next value)'
            : 'Strongest redundancy chain (greedy, most positive next value)';
      this._message.textContent = `${what}, in ${this._model.result?.units ?? ''}:`;
    }
    this._chart.setHidden(!chain);
    this._list.setHidden(!chain);
    if (chain) {
      const units = this._model.result?.units ?? '';
      this._chart.setFigure(colors => Private.figure(chain, units, colors));
      const items = chain.columns.map((name, i) => {
        const item = textElement('li', 'pd-Chain-item');
        item.append(
          textElement('span', 'pd-Chain-name', name),
          textElement(
            'span',
            'pd-Chain-value',
            `: ${formatValue(chain.values[i])}` + (i > 0 ? ` (step ${formatValue(chain.steps[i - 1])})` : '')
          )
        );
        return item;
      });
      this._list.node.replaceChildren(...items);
    }
  }

  private readonly _model: ResultsModel;
  private readonly _chart: ChartView;
  private readonly _list: Widget;
  private readonly _message: HTMLParagraphElement;
  private readonly _rotate: HTMLButtonElement;
  private _shown: IChainView | null = null;
  private _shownError: string | null = null;
}

/** The statics of {@link ChainView}. */
export namespace ChainView {
  /** Options of a {@link ChainView}. */
  export interface IOptions {
    model: ResultsModel;
  }
}

namespace Private {
  /** Values step by step, points coloured by sign; column names escaped for plotly. */
  export function figure(chain: IChainView, units: string, colors: IChartColors): IFigure {
    const steps = chain.columns.map((_c, i) => i + 1);
    const labels = chain.columns.map((name, i) => (i === 0 ? '' : '+ ') + plotlyText(Private.short(name)));
    return {
      data: [
        {
          type: 'scatter',
          mode: 'lines+markers',
          x: steps,
          y: chain.values,
          customdata: chain.values.map(formatValue),
          hovertemplate: '%{customdata}<extra></extra>',
          line: { color: colors.muted, width: 1 },
          marker: {
            size: 8,
            color: chain.values.map((v, i) => (i > 0 && v < 0 ? colors.synergy : colors.redundancy))
          }
        }
      ],
      layout: {
        xaxis: {
          tickmode: 'array',
          tickvals: steps,
          ticktext: labels,
          gridcolor: colors.grid,
          color: colors.muted,
          automargin: true
        },
        yaxis: {
          title: { text: plotlyText(units) },
          gridcolor: colors.grid,
          zerolinecolor: colors.muted,
          color: colors.muted
        },
        margin: { l: 44, r: 8, t: 6, b: 48 }
      }
    };
  }

  /** A name shortened for a tick label (the list beside the chart has it whole). */
  export function short(name: string): string {
    return name.length > 14 ? name.slice(0, 13) + '\u2026' : name;
  }
}
