/**
 * The renderer of a analysis cell's output (`application/vnd.polyadic.analysis+json`):
 * the recorded analysis' order histograms of co-information and its synergy and redundancy
 * tables, drawn from the notebook's record. The kernel only names the record id (it does not
 * see the metadata), so the renderer is given the notebook's metadata by the plugin that
 * creates it, and draws again when the metadata changes (a rename, a delete, a new run).
 * With evidence recorded, the tables show q and p beside co-information, lines say how p was
 * drawn and what q was computed over, each histogram shows its order's null band, and
 * multiplets with adequacy below 1 are marked.
 * Every label, frame, column name and value goes in through `textContent`.
 */
import type { IRenderMime } from '@jupyterlab/rendermime-interfaces';
import type { ISignal } from '@lumino/signaling';
import { Widget } from '@lumino/widgets';

import { formatCount, plural } from '../engine/text';
import {
  formatProbability,
  formatValue,
  INADEQUATE_MARK,
  inadequateLine,
  isInadequate,
  nullBandLine,
  nullBandText,
  surrogateSentence,
  testedLine
} from '../record/markdown';
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
    const { summary } = record;
    if (record.statistics && record.statistics.surrogates > 0) {
      head.append(textElement('p', 'pd-AnalysisCell-evidence', surrogateSentence(record.statistics)));
    }
    const tested = testedLine(summary);
    if (tested) {
      head.append(textElement('p', 'pd-AnalysisCell-evidence', tested));
    }
    const inadequate = inadequateLine(summary);
    if (inadequate) {
      head.append(textElement('p', 'pd-AnalysisCell-evidence jp-mod-warning', inadequate));
    }
    const parts: HTMLElement[] = [head];
    const histograms = summary.histograms ?? [];
    const bands = new Map((summary.evidence?.null_bands ?? []).map(band => [band.order, band]));
    if (histograms.length > 0) {
      const row = textElement('div', 'pd-AnalysisCell-histograms');
      row.setAttribute('role', 'group');
      row.setAttribute('aria-label', 'Order histograms of co-information');
      for (const histogram of histograms) {
        row.append(orderHistogram(histogram, record.units, bands.get(histogram.order)));
      }
      parts.push(row);
    } else {
      parts.push(
        textElement('p', 'pd-AnalysisCell-note', 'The record holds no order histograms (the run kept only its top multiplets).')
      );
      const bandLine = nullBandLine(summary);
      if (bandLine) {
        parts.push(textElement('p', 'pd-AnalysisCell-evidence', bandLine));
      }
    }
    const withQ = Boolean(summary.evidence?.families.co_information);
    parts.push(
      table('Synergy (most negative co-information)', summary.synergy.slice(0, CELL_TABLE_SIZE), record.units, withQ),
      table('Redundancy (most positive co-information)', summary.redundancy.slice(0, CELL_TABLE_SIZE), record.units, withQ)
    );
    return parts;
  }

  /** A null band of the record. */
  type NullBand = NonNullable<IAnalysisRecord['summary']['evidence']>['null_bands'][number];

  /**
   * One order's histogram as bars over the recorded edges, with the range and the zero line,
   * and the order's null band (surrogate 2.5–97.5 %) shaded behind the bars when recorded.
   */
  function orderHistogram(histogram: IOrderHistogram, units: string, band: NullBand | undefined): HTMLElement {
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
    svg.setAttribute(
      'aria-label',
      `Order ${histogram.order}: ${plural(total, 'multiplet')}, co-information from ${formatValue(low)} to ${formatValue(high)} ${units}` +
        (band ? `; null band ${nullBandText(band)}` : '')
    );
    if (band) {
      // clamped to the drawn range: a band wider than the data still shows where it covers
      const from = x(Math.max(low, Math.min(high, band.low)));
      const to = x(Math.max(low, Math.min(high, band.high)));
      const shade = document.createElementNS(SVG, 'rect');
      shade.setAttribute('x', String(from));
      shade.setAttribute('width', String(Math.max(1, to - from)));
      shade.setAttribute('y', '0');
      shade.setAttribute('height', String(height));
      shade.setAttribute('class', 'pd-AnalysisCell-band');
      const tip = document.createElementNS(SVG, 'title');
      tip.textContent = `Null band (2.5–97.5 % of surrogates): ${nullBandText(band)} ${units}`;
      shade.append(tip);
      svg.append(shade);
    }
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
    const caption = textElement('figcaption', 'pd-AnalysisCell-caption', `Order ${histogram.order} · ${plural(total, 'multiplet')}`);
    if (band) {
      caption.append(textElement('span', 'pd-AnalysisCell-bandText', `null band ${nullBandText(band)} ${units}`));
    }
    figure.append(svg, axis, caption);
    return figure;
  }

  /** A table of multiplets with their measures; with `withQ`, q and p follow co-information. */
  function table(title: string, rows: readonly IMultipletSummary[], units: string, withQ: boolean): HTMLElement {
    if (rows.length === 0) {
      return textElement('p', 'pd-AnalysisCell-note', `${title}: none.`);
    }
    const node = textElement('table', 'pd-AnalysisCell-table');
    node.append(textElement('caption', '', `${title}, ${units}`));
    const head = textElement('tr', '');
    const names = ['multiplet', 'order', 'co-information', ...(withQ ? ['q', 'p'] : []), 'O-information', 'total correlation', 'dual total correlation'];
    for (const name of names) {
      const cell = textElement('th', '', name);
      cell.scope = 'col';
      head.append(cell);
    }
    const thead = textElement('thead', '');
    thead.append(head);
    const tbody = textElement('tbody', '');
    for (const row of rows) {
      const line = textElement('tr', isInadequate(row) ? 'jp-mod-inadequate' : '');
      const multiplet = textElement('td', 'pd-AnalysisCell-names', row.columns.join(' · '));
      if (isInadequate(row)) {
        const mark = textElement('span', 'pd-AnalysisCell-mark', ` ${INADEQUATE_MARK}`);
        mark.title = `Adequacy ${formatValue(row.adequacy as number)}: fewer rows than possible joint cells; the estimates are biased.`;
        multiplet.append(mark);
      }
      line.append(
        multiplet,
        textElement('td', 'pd-AnalysisCell-number', String(row.order)),
        textElement('td', 'pd-AnalysisCell-number', formatValue(row.co_information)),
        ...(withQ
          ? [
              textElement('td', 'pd-AnalysisCell-number', formatProbability(row.q_value)),
              textElement('td', 'pd-AnalysisCell-number', formatProbability(row.p_value))
            ]
          : []),
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
