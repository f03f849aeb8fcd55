/**
 * The renderer of a analysis cell's output (`application/vnd.polyadic.analysis+json`):
 * the recorded analysis' order histograms of co-information and its synergy and redundancy
 * tables, drawn from the notebook's record. The kernel only names the record id (it does not
 * see the metadata), so the renderer is given the notebook's metadata by the plugin that
 * creates it, and draws again when the metadata changes (a rename, a delete, a new run).
 * Every label, frame and column name goes in through `textContent`.
 */
import type { IRenderMime } from '@jupyterlab/rendermime-interfaces';
import type { ISignal } from '@lumino/signaling';
import { Widget } from '@lumino/widgets';

import { formatCount, plural } from '../engine/text';
import { formatValue } from '../record/markdown';
import type { IMetadataAccess } from '../record/store';
import { ANALYSIS_MIME_TYPE, type IAnalysisRecord, type IMultipletSummary, type IOrderHistogram } from '../record/types';
import { textElement } from '../panel/dom';
import { lookupAnalysisCell } from './lookup';

/** Multiplets per table in a analysis cell. */
export const CELL_TABLE_SIZE = 10;

/** The notebook a renderer reads records from. */
export interface IRecordNotebook {
  /** The notebook's metadata. */
  metadata: IMetadataAccess;
  /** Fires when the metadata changes. */
  metadataChanged: ISignal<unknown, unknown>;
}

/** Draws one analysis cell output. */
export class AnalysisCellRenderer extends Widget implements IRenderMime.IRenderer {
  /** Create a renderer reading records from the notebook `resolve()` returns. */
  constructor(resolve: () => IRecordNotebook | null) {
    super();
    this.addClass('pd-AnalysisCell');
    this._resolve = resolve;
  }

  /** Draw the output of `model`. */
  renderModel(model: IRenderMime.IMimeModel): Promise<void> {
    this._payload = model.data[ANALYSIS_MIME_TYPE];
    const notebook = this._resolve();
    if (notebook !== this._notebook) {
      this._notebook?.metadataChanged.disconnect(this._draw, this);
      this._notebook = notebook;
      notebook?.metadataChanged.connect(this._draw, this);
    }
    this._draw();
    return Promise.resolve();
  }

  /** Stop following the notebook's metadata. */
  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._notebook?.metadataChanged.disconnect(this._draw, this);
    this._notebook = null;
    super.dispose();
  }

  private _draw(): void {
    const found = lookupAnalysisCell(this._payload, this._notebook?.metadata ?? null);
    if (found.kind === 'message') {
      const message = textElement('p', `pd-AnalysisCell-message jp-mod-${found.level}`, found.text);
      message.setAttribute('role', found.level === 'error' ? 'alert' : 'status');
      this.node.replaceChildren(message);
      return;
    }
    this.node.replaceChildren(...Private.analysis(found.analysis));
  }

  private readonly _resolve: () => IRecordNotebook | null;
  private _notebook: IRecordNotebook | null = null;
  private _payload: unknown = undefined;
}

/** A renderer factory whose renderers read records from the notebook `resolve()` returns. */
export function createAnalysisRendererFactory(resolve: () => IRecordNotebook | null): IRenderMime.IRendererFactory {
  return {
    // the payload is a record id and everything drawn is text: nothing can run
    safe: true,
    mimeTypes: [ANALYSIS_MIME_TYPE],
    defaultRank: 50,
    createRenderer: () => new AnalysisCellRenderer(resolve)
  };
}

namespace Private {
  const SVG = 'http://www.w3.org/2000/svg';

  /** The parts of a drawn analysis. */
  export function analysis(record: IAnalysisRecord): HTMLElement[] {
    const head = textElement('div', 'pd-AnalysisCell-head');
    head.append(
      textElement('h3', 'pd-AnalysisCell-title', record.label),
      textElement(
        'p',
        'pd-AnalysisCell-meta',
        `${record.source.frame} · ${formatCount(record.summary.rows_used)} of ${plural(record.source.rows, 'row')} · ` +
          `${plural(record.columns.length, 'column')} · ${plural(record.summary.multiplet_count, 'multiplet')} up to order ` +
          `${record.max_order} · ${record.estimator} · ${record.units} · ${record.id}`
      ),
      textElement(
        'p',
        'pd-AnalysisCell-sign',
        'Co-information sign (Bell 2003): negative means synergy dominates, positive means redundancy dominates.'
      )
    );
    const parts: HTMLElement[] = [head];
    const histograms = record.summary.histograms ?? [];
    if (histograms.length > 0) {
      const row = textElement('div', 'pd-AnalysisCell-histograms');
      row.setAttribute('role', 'group');
      row.setAttribute('aria-label', 'Order histograms of co-information');
      for (const histogram of histograms) {
        row.append(orderHistogram(histogram, record.units));
      }
      parts.push(row);
    } else {
      parts.push(
        textElement('p', 'pd-AnalysisCell-note', 'The record holds no order histograms (the run kept only its top multiplets).')
      );
    }
    parts.push(
      table('Synergy (most negative co-information)', record.summary.synergy.slice(0, CELL_TABLE_SIZE), record.units),
      table('Redundancy (most positive co-information)', record.summary.redundancy.slice(0, CELL_TABLE_SIZE), record.units)
    );
    return parts;
  }

  /** One order's histogram as bars over the recorded edges, with the range and the zero line. */
  function orderHistogram(histogram: IOrderHistogram, units: string): HTMLElement {
    const figure = textElement('figure', 'pd-AnalysisCell-histogram');
    const width = 220;
    const height = 80;
    const { edges, counts } = histogram;
    const low = edges[0];
    const high = edges[edges.length - 1];
    const span = high - low || 1;
    const most = Math.max(1, ...counts);
    const x = (value: number): number => ((value - low) / span) * width;
    const svg = document.createElementNS(SVG, 'svg');
    svg.setAttribute('viewBox', `0 0 ${width} ${height}`);
    svg.setAttribute('class', 'pd-AnalysisCell-plot');
    svg.setAttribute('role', 'img');
    const total = counts.reduce((sum, count) => sum + count, 0);
    svg.setAttribute('aria-label', `Order ${histogram.order}: ${plural(total, 'multiplet')}, co-information from ${formatValue(low)} to ${formatValue(high)} ${units}`);
    counts.forEach((count, i) => {
      if (count === 0) {
        return;
      }
      const bar = document.createElementNS(SVG, 'rect');
      const left = x(edges[i]);
      const barHeight = (count / most) * (height - 4);
      bar.setAttribute('x', String(left));
      bar.setAttribute('width', String(Math.max(1, x(edges[i + 1]) - left - 1)));
      bar.setAttribute('y', String(height - barHeight));
      bar.setAttribute('height', String(barHeight));
      bar.setAttribute('class', edges[i + 1] <= 0 ? 'pd-AnalysisCell-bar jp-mod-synergy' : 'pd-AnalysisCell-bar');
      const tip = document.createElementNS(SVG, 'title');
      tip.textContent = `${plural(count, 'multiplet')} in [${formatValue(edges[i])}, ${formatValue(edges[i + 1])}]`;
      bar.append(tip);
      svg.append(bar);
    });
    if (low < 0 && high > 0) {
      const zero = document.createElementNS(SVG, 'line');
      zero.setAttribute('x1', String(x(0)));
      zero.setAttribute('x2', String(x(0)));
      zero.setAttribute('y1', '0');
      zero.setAttribute('y2', String(height));
      zero.setAttribute('class', 'pd-AnalysisCell-zero');
      svg.append(zero);
    }
    const axis = textElement('div', 'pd-AnalysisCell-axis');
    axis.append(textElement('span', '', formatValue(low)), textElement('span', '', `${formatValue(high)} ${units}`));
    figure.append(
      svg,
      axis,
      textElement('figcaption', 'pd-AnalysisCell-caption', `Order ${histogram.order} · ${plural(total, 'multiplet')}`)
    );
    return figure;
  }

  /** A table of multiplets with their measures. */
  function table(title: string, rows: readonly IMultipletSummary[], units: string): HTMLElement {
    if (rows.length === 0) {
      return textElement('p', 'pd-AnalysisCell-note', `${title}: none.`);
    }
    const node = textElement('table', 'pd-AnalysisCell-table');
    node.append(textElement('caption', '', `${title}, ${units}`));
    const head = textElement('tr', '');
    for (const name of ['multiplet', 'order', 'co-information', 'O-information', 'total correlation', 'dual total correlation']) {
      const cell = textElement('th', '', name);
      cell.scope = 'col';
      head.append(cell);
    }
    const thead = textElement('thead', '');
    thead.append(head);
    const tbody = textElement('tbody', '');
    for (const row of rows) {
      const line = textElement('tr', '');
      line.append(
        textElement('td', 'pd-AnalysisCell-names', row.columns.join(' · ')),
        textElement('td', 'pd-AnalysisCell-number', String(row.order)),
        textElement('td', 'pd-AnalysisCell-number', formatValue(row.co_information)),
        textElement('td', 'pd-AnalysisCell-number', formatValue(row.o_information)),
        textElement('td', 'pd-AnalysisCell-number', formatValue(row.total_correlation)),
        textElement('td', 'pd-AnalysisCell-number', formatValue(row.dual_total_correlation))
      );
      tbody.append(line);
    }
    node.append(thead, tbody);
    return node;
  }
}
