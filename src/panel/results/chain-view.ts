/**
 * The conditioning chain of a selected multiplet, drawn as a waterfall: the first bar is the
 * co-information of the chain's first pair; each following bar is the term the next column adds
 * (minus the co-information of the columns before it, conditioned on the new one), labelled with
 * that column, with the running value beside it. The same numbers are listed as text. Buttons
 * grow a chain greedily from the most synergistic triplet or the most redundant pair.
 */
import { Panel, Widget } from '@lumino/widgets';

import { ChartView, plotlyText } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/chart';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
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
    const trans = (this._trans = translationBundle(options.translator));
    this._model = options.model;
    const top = new Widget({ node: textElement('div', 'pd-Chain-header') });
    top.node.append(
      textElement('h3', 'pd-Chain-title', trans.__('Conditioning chain')),
      textElement(
        'p',
        'pd-Chain-note',
        trans.__(
          'The chain rule along an ordering: start at the co-information of the first two columns; each ' +
            'further column adds minus the co-information of the columns before it conditioned on the ' +
            'new one, and the running value after the last column is the multiplet\u2019s co-information. ' +
            'Bars below zero (synergy colour) pull towards synergy, bars above (redundancy colour) towards ' +
            'redundancy. Pick a table row, or:'
        )
      )
    );
    const actions = textElement('div', 'pd-Chain-actions');
    const synergy = textElement('button', 'pd-Chain-action jp-mod-styled', trans.__('Grow from the most synergistic triplet'));
    synergy.type = 'button';
    synergy.title = trans.__(
      'Start at the triplet of most negative co-information, then add the column that makes the value most negative, up to the run\u2019s highest order'
    );
    synergy.addEventListener('click', () => this._model.showExtremalChain('synergy'));
    const redundancy = textElement('button', 'pd-Chain-action jp-mod-styled', trans.__('Grow from the most redundant pair'));
    redundancy.type = 'button';
    redundancy.title = trans.__(
      'Start at the pair of most mutual information, then add the column that makes the value most positive, up to the run\u2019s highest order'
    );
    redundancy.addEventListener('click', () => this._model.showExtremalChain('redundancy'));
    this._rotate = textElement('button', 'pd-Chain-action jp-mod-styled', trans.__('Start from the next column'));
    this._rotate.type = 'button';
    this._rotate.title = trans.__('The same columns in another order: the first column moves to the end');
    this._rotate.addEventListener('click', () => this._model.rotateChain());
    actions.append(synergy, redundancy, this._rotate);
    top.node.append(actions);
    this._message = textElement('p', 'pd-Chain-message');
    this._message.setAttribute('aria-live', 'polite');
    top.node.append(this._message);
    this._chart = new ChartView({
      label: trans.__('Conditioning chain waterfall'),
      translator: options.translator,
      filename: 'polyadic-conditioning-chain',
      height: 220,
      exportAs: () => {
        const source = this._model.exportSource;
        const chain = this._model.chain;
        return {
          title: chain === null ? trans.__('Conditioning chain') : trans.__('Conditioning chain of %1', chain.columns.join(', ')),
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: trans.__('the first pair, then each column as it joins the chain'),
          yTitle: trans.__('co-information (%1)', source?.result.units ?? ''),
          filename: exportFileName(source ?? {}, 'conditioning-chain')
        };
      }
    });
    this._list = new Widget({ node: textElement('ol', 'pd-Chain-list') });
    this._list.node.setAttribute('aria-label', trans.__('Conditioning chain, step by step'));
    this.addWidget(top);
    this.addWidget(this._chart);
    this.addWidget(this._list);
    // Widget.dispose clears the signal connections this view receives
    this._model.changed.connect(this._update, this);
    this._update();
  }


  private _update(): void {
    const trans = this._trans;
    const chain = this._model.chain;
    const error = this._model.chainError;
    this._rotate.disabled = !chain || chain.kind !== 'multiplet' || chain.columns.length < 3;
    if (chain === this._shown && error === this._shownError) {
      return;
    }
    this._shown = chain;
    this._shownError = error;
    if (error) {
      this._message.textContent = error;
    } else if (!chain) {
      this._message.textContent = trans.__('No chain selected.');
    } else {
      const what =
        chain.kind === 'multiplet'
          ? trans.__('Chain of %1', chain.columns.join(', '))
          : chain.kind === 'synergy'
            ? trans.__('Grown from the most synergistic triplet (greedy: each added column makes the value most negative)')
            : trans.__('Grown from the most redundant pair (greedy: each added column makes the value most positive)');
      this._message.textContent = trans.__('%1, in %2:', what, this._model.result?.units ?? '');
    }
    this._chart.setHidden(!chain);
    this._list.setHidden(!chain);
    if (chain) {
      const units = this._model.result?.units ?? '';
      this._chart.setFigure(colors => Private.figure(chain, units, colors, trans));
      const items: HTMLElement[] = [];
      chain.values.forEach((value, i) => {
        const item = textElement('li', 'pd-Chain-item');
        // full precision for readers that check the chain rule (the figure rounds)
        item.dataset.value = String(value);
        if (i === 0) {
          item.append(
            textElement('span', 'pd-Chain-name', `${chain.columns[0]}, ${chain.columns[1]}`),
            textElement('span', 'pd-Chain-value', trans.__(': co-information %1', formatValue(value)))
          );
        } else {
          const step = chain.steps[i - 1];
          item.dataset.step = String(step);
          item.append(
            textElement('span', 'pd-Chain-name', `+ ${chain.columns[i + 1]}`),
            textElement('span', 'pd-Chain-value', trans.__(': step %1, running value %2', formatValue(step), formatValue(value)))
          );
        }
        items.push(item);
      });
      this._list.node.replaceChildren(...items);
    }
  }

  private readonly _trans: TranslationBundle;
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
    /** Translates the view's strings. */
    translator?: ITranslator;
  }
}

namespace Private {
  /**
   * The waterfall: the pair's co-information as the first bar from zero, then one floating bar
   * per added column from the running value before it to the one after, coloured by the sign of
   * what it adds; the running value is written beside each bar.
   */
  export function figure(chain: IChainView, units: string, colors: IChartColors, trans: TranslationBundle): IFigure {
    const labels = chain.values.map((_v, i) =>
      i === 0 ? `${plotlyText(short(chain.columns[0]))}, ${plotlyText(short(chain.columns[1]))}` : `+ ${plotlyText(short(chain.columns[i + 1]))}`
    );
    const x = labels.map((_l, i) => i);
    const bases = chain.values.map((_v, i) => (i === 0 ? 0 : chain.values[i - 1]));
    const heights = chain.values.map((v, i) => (i === 0 ? v : chain.steps[i - 1]));
    const color = (h: number): string => (h < 0 ? colors.synergy : colors.redundancy);
    const connectors = chain.values.slice(0, -1).map((v, i) => ({
      type: 'line',
      xref: 'x',
      yref: 'y',
      x0: i + 0.4,
      x1: i + 0.6,
      y0: v,
      y1: v,
      line: { color: colors.muted, width: 1, dash: 'dot' }
    }));
    return {
      data: [
        {
          type: 'bar',
          x,
          y: heights,
          base: bases,
          width: 0.8,
          marker: { color: heights.map(color), line: { color: colors.background, width: 0.5 } },
          text: chain.values.map(v => formatValue(v)),
          textposition: 'outside',
          cliponaxis: false,
          textfont: { color: colors.text },
          customdata: chain.values.map((v, i) => [formatValue(heights[i]), formatValue(v)]),
          hovertemplate: `${trans.__('%{customdata[0]} added, running value %{customdata[1]}')}<extra></extra>`
        }
      ],
      layout: {
        shapes: [
          ...connectors,
          { type: 'line', xref: 'paper', yref: 'y', x0: 0, x1: 1, y0: 0, y1: 0, line: { color: colors.muted, width: 1 } }
        ],
        xaxis: {
          tickmode: 'array',
          tickvals: x,
          ticktext: labels,
          gridcolor: colors.grid,
          color: colors.muted,
          automargin: true
        },
        yaxis: {
          title: { text: plotlyText(units) },
          gridcolor: colors.grid,
          zerolinecolor: colors.muted,
          color: colors.muted,
          automargin: true
        },
        margin: { l: 48, r: 8, t: 18, b: 48 },
        bargap: 0.2
      }
    };
  }

  /** A name shortened for a tick label (the list under the chart has it whole). */
  export function short(name: string): string {
    return name.length > 14 ? name.slice(0, 13) + '\u2026' : name;
  }
}
