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

import { formatCount, formatValue } from '../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../translation';
import {
  formatProbability,
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
import { ChartView } from '../panel/charts/chart';
import { histogramFigure } from '../panel/charts/histogram';
import { textElement } from '../panel/dom';
import { exportFileName } from '../panel/results/export';
import { scanOriginText } from '../panel/records/origin';
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
  /** Create a renderer reading records from the notebook `resolve()` returns; `translator` translates its strings. */
  constructor(resolve: () => IRecordNotebook | null, translator?: ITranslator) {
    super();
    this.addClass('pd-AnalysisCell');
    this._resolve = resolve;
    this._translator = translator;
    this._trans = translationBundle(translator);
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
    this._disposeCharts();
    super.dispose();
  }

  protected onAfterAttach(): void {
    this._attachCharts();
  }

  private _draw(): void {
    this._disposeCharts();
    const found = lookupAnalysisCell(this._payload, this._notebook?.metadata ?? null, this._trans);
    if (found.kind === 'message') {
      const message = textElement('p', `pd-AnalysisCell-message jp-mod-${found.level}`, found.text);
      message.setAttribute('role', found.level === 'error' ? 'alert' : 'status');
      this.node.replaceChildren(message);
      return;
    }
    this.node.replaceChildren(...Private.analysis(found.analysis, this._charts, this._trans, this._translator));
    this._attachCharts();
  }

  /** Charts are widgets of their own, attached into their places once this output is in the page. */
  private _attachCharts(): void {
    if (!this.isAttached) {
      return;
    }
    for (const { chart, host } of this._charts) {
      if (!chart.isAttached && host.isConnected) {
        Widget.attach(chart, host);
      }
    }
  }

  private _disposeCharts(): void {
    for (const { chart } of this._charts) {
      chart.dispose();
    }
    this._charts = [];
  }

  private _charts: Private.IPlacedChart[] = [];

  private readonly _resolve: () => IRecordNotebook | null;
  private readonly _translator: ITranslator | undefined;
  private readonly _trans: TranslationBundle;
  private _notebook: IRecordNotebook | null = null;
  private _payload: unknown = undefined;
}

/**
 * A renderer factory whose renderers read records from the notebook `resolve()` returns, in the
 * language of the rendermime registry's translator (else `translator`'s).
 */
export function createAnalysisRendererFactory(resolve: () => IRecordNotebook | null, translator?: ITranslator): IRenderMime.IRendererFactory {
  return {
    // the payload is a record id and everything drawn is text: nothing can run
    safe: true,
    mimeTypes: [ANALYSIS_MIME_TYPE],
    defaultRank: 50,
    createRenderer: options => new AnalysisCellRenderer(resolve, options.translator ?? translator)
  };
}

namespace Private {
  /** A chart and the element it goes into. */
  export interface IPlacedChart {
    chart: ChartView;
    host: HTMLElement;
  }

  /** A paragraph of `text`, or nothing without it. */
  export function optional(text: string | null, className: string): HTMLElement[] {
    return text === null ? [] : [textElement('p', className, text)];
  }

  /** The parts of a drawn analysis; its charts are added to `charts`, to be attached into their hosts. */
  export function analysis(record: IAnalysisRecord, charts: IPlacedChart[], trans: TranslationBundle, translator?: ITranslator): HTMLElement[] {
    const counted = (count: number, one: string, many: string): string => trans._n(one, many, count, formatCount(count));
    const head = textElement('div', 'pd-AnalysisCell-head');
    head.append(
      textElement('h3', 'pd-AnalysisCell-title', record.label),
      textElement(
        'p',
        'pd-AnalysisCell-meta',
        trans.__(
          '%1 · %2 of %3 · %4 · %5 up to order %6 · %7 · %8 · %9',
          record.source.frame,
          formatCount(record.summary.rows_used),
          counted(record.source.rows, '%2 row', '%2 rows'),
          counted(record.columns.length, '%2 column', '%2 columns'),
          counted(record.summary.multiplet_count, '%2 multiplet', '%2 multiplets'),
          record.max_order,
          record.estimator,
          record.units,
          record.id
        )
      ),
      ...Private.optional(scanOriginText(record, trans), 'pd-AnalysisCell-origin'),
      textElement(
        'p',
        'pd-AnalysisCell-sign',
        trans.__('Co-information sign (Bell 2003): negative means synergy dominates, positive means redundancy dominates.')
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
      row.setAttribute('aria-label', trans.__('Order histograms of co-information'));
      for (const histogram of histograms) {
        row.append(orderHistogram(record, histogram, bands.get(histogram.order), charts, trans, translator));
      }
      parts.push(row);
    } else {
      parts.push(
        textElement('p', 'pd-AnalysisCell-note', trans.__('The record holds no order histograms (the run kept only its top multiplets).'))
      );
      const bandLine = nullBandLine(summary);
      if (bandLine) {
        parts.push(textElement('p', 'pd-AnalysisCell-evidence', bandLine));
      }
    }
    const withQ = Boolean(summary.evidence?.families.co_information);
    parts.push(
      table(trans.__('Synergy (most negative co-information)'), summary.synergy.slice(0, CELL_TABLE_SIZE), record.units, withQ, trans),
      table(trans.__('Redundancy (most positive co-information)'), summary.redundancy.slice(0, CELL_TABLE_SIZE), record.units, withQ, trans)
    );
    return parts;
  }

  /** A null band of the record. */
  type NullBand = NonNullable<IAnalysisRecord['summary']['evidence']>['null_bands'][number];

  /**
   * One order's histogram (the chart module's figure, as in the results view: the same
   * colours, log counts, the order's null band shaded when recorded), with PNG and SVG export.
   */
  function orderHistogram(
    record: IAnalysisRecord,
    histogram: IOrderHistogram,
    band: NullBand | undefined,
    charts: IPlacedChart[],
    trans: TranslationBundle,
    translator?: ITranslator
  ): HTMLElement {
    const figure = textElement('figure', 'pd-AnalysisCell-histogram');
    const units = record.units;
    const { edges, counts } = histogram;
    const low = edges[0];
    const high = edges[edges.length - 1];
    const total = counts.reduce((sum, count) => sum + count, 0);
    const multiplets = trans._n('%2 multiplet', '%2 multiplets', total, formatCount(total));
    const chart = new ChartView({
      label:
        trans.__('Order %1 histogram: %2, co-information from %3 to %4 %5', histogram.order, multiplets, formatValue(low), formatValue(high), units) +
        (band ? trans.__('; null band %1', nullBandText(band)) : ''),
      translator,
      filename: `polyadic-order-${histogram.order}-histogram`,
      height: 150,
      exportAs: () => ({
        title: trans.__('%1: order %2 histogram of co-information (%3)', record.label, histogram.order, multiplets),
        subtitle: trans.__(
          '%1 · record %2 · %3 · %4 · %5',
          record.source.frame,
          record.id,
          trans._n('%2 row', '%2 rows', record.summary.rows_used, formatCount(record.summary.rows_used)),
          record.estimator,
          units
        ),
        xTitle: trans.__('co-information (%1): < 0 synergy-dominated, > 0 redundancy-dominated', units),
        yTitle: trans.__('multiplets'),
        filename: exportFileName({ frame: record.source.frame, recordId: record.id }, `order-${histogram.order}-histogram`)
      })
    });
    chart.addClass('pd-AnalysisCell-plot');
    chart.setFigure(colors => histogramFigure({ edges, counts, band: band ?? null }, colors, { formatEdge: formatValue, trans }));
    const host = textElement('div', 'pd-AnalysisCell-chart');
    charts.push({ chart, host });
    const caption = textElement('figcaption', 'pd-AnalysisCell-caption', trans.__('Order %1 · %2', histogram.order, multiplets));
    if (band) {
      caption.append(textElement('span', 'pd-AnalysisCell-bandText', trans.__('null band %1 %2', nullBandText(band), units)));
    }
    figure.append(host, caption);
    return figure;
  }

  /** A table of multiplets with their measures; with `withQ`, q and p follow co-information. */
  function table(title: string, rows: readonly IMultipletSummary[], units: string, withQ: boolean, trans: TranslationBundle): HTMLElement {
    if (rows.length === 0) {
      return textElement('p', 'pd-AnalysisCell-note', trans.__('%1: none.', title));
    }
    const node = textElement('table', 'pd-AnalysisCell-table');
    node.append(textElement('caption', '', trans.__('%1, %2', title, units)));
    const head = textElement('tr', '');
    const names = [
      trans.__('multiplet'),
      trans.__('order'),
      trans.__('co-information'),
      ...(withQ ? ['q', 'p'] : []),
      trans.__('O-information'),
      trans.__('total correlation'),
      trans.__('dual total correlation')
    ];
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
        mark.title = trans.__('Adequacy %1: fewer rows than possible joint cells; the estimates are biased.', formatValue(row.adequacy as number));
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
