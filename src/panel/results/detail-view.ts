/**
 * The multiplet detail view: below the tables, beside the conditioning chain, it follows the
 * selected row (mouse or arrow keys) and shows that multiplet's measures and evidence, and what
 * makes it synergistic or redundant — the joint contingency table of a pair as a heat map, a
 * triplet's pair within each level of a conditioning column side by side (with a picker of that
 * column), or the co-information of a larger multiplet's sub-multiplets by order. Every table
 * is also written out as an HTML table for screen readers. Names and values go in through
 * `textContent` only, and into plotly escaped.
 */
import { Panel, Widget } from '@lumino/widgets';

import { ChartView, plotlyText } from '../charts/chart';
import type { IChartColors, IFigure } from '../charts/chart';
import { textElement, uniqueId } from '../dom';
import { formatFixed } from '../../engine/text';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { DetailModel, IDetailMeasure, IDetailTable, IMultipletDetail, ISubMultiplets, ITripletTables } from './detail-model';
import { exportFileName, provenanceLine } from './export';
import { formatAdequacy, formatCount, formatValue } from './format';
import type { ResultsModel } from './model';

/** Shows a {@link DetailModel}. */
export class DetailView extends Panel {
  /** Create the view of `options.model`. */
  constructor(options: DetailView.IOptions) {
    super();
    this.addClass('pd-Detail');
    const trans = (this._trans = translationBundle(options.translator));
    this._model = options.model;
    this._results = options.results;
    const headingId = uniqueId('pd-detail-title');
    this.node.setAttribute('role', 'region');
    this.node.setAttribute('aria-labelledby', headingId);
    const top = new Widget({ node: textElement('div', 'pd-Detail-header') });
    const heading = textElement('h3', 'pd-Detail-title', trans.__('Multiplet detail'));
    heading.id = headingId;
    this._subject = textElement('p', 'pd-Detail-subject');
    this._subject.setAttribute('aria-live', 'polite');
    this._measures = textElement('dl', 'pd-Detail-measures');
    this._measures.setAttribute('aria-label', trans.__('Measures of the selected multiplet'));
    this._evidenceTitle = textElement('h4', 'pd-Detail-subtitle', trans.__('Evidence'));
    this._evidence = textElement('dl', 'pd-Detail-measures pd-Detail-evidence');
    this._evidence.setAttribute('aria-label', trans.__('Evidence of the selected multiplet'));
    this._tablesTitle = textElement('h4', 'pd-Detail-subtitle');
    this._explain = textElement('p', 'pd-Detail-note');
    this._note = textElement('p', 'pd-Detail-message');
    this._note.setAttribute('role', 'note');
    this._caution = textElement('p', 'pd-Detail-caution');
    this._caution.setAttribute('role', 'note');

    const pickerId = uniqueId('pd-detail-conditioning');
    this._picker = textElement('div', 'pd-Detail-picker');
    const pickerLabel = textElement('label', 'pd-Detail-pickerLabel', trans.__('Condition on'));
    pickerLabel.htmlFor = pickerId;
    this._select = textElement('select', 'pd-Detail-select jp-mod-styled');
    this._select.id = pickerId;
    this._select.addEventListener('change', () => {
      const tables = this._model.detail?.tables;
      const value = this._select.value;
      this._model.setConditioning(tables?.kind === 'triplet' && value === tables.defaultConditioning ? null : value);
    });
    this._reason = textElement('p', 'pd-Detail-reason');
    this._picker.append(pickerLabel, this._select);
    this._flip = textElement('div', 'pd-Detail-flip');
    this._flip.setAttribute('role', 'group');
    this._flip.setAttribute('aria-label', trans.__('What each conditional table shows'));
    top.node.append(
      heading,
      this._subject,
      this._measures,
      this._evidenceTitle,
      this._evidence,
      this._tablesTitle,
      this._explain,
      this._note,
      this._picker,
      this._reason,
      this._flip,
      this._caution
    );

    this._tablesChart = new ChartView({
      label: trans.__('Contingency tables of the selected multiplet as heat maps; the counts are listed as tables below'),
      translator: options.translator,
      filename: 'polyadic-contingency',
      height: DetailView.TABLE_HEIGHT,
      exportAs: () => {
        const source = this._results.exportSource;
        const detail = this._model.detail;
        return {
          title: detail === null ? trans.__('Contingency tables') : trans.__('Contingency tables of %1', detail.columns.join(', ')),
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: '',
          yTitle: '',
          filename: exportFileName(source ?? {}, 'contingency')
        };
      }
    });
    this._textTables = new Widget({ node: textElement('details', 'pd-Detail-text') });
    this._subChart = new ChartView({
      label: trans.__('Co-information of the sub-multiplets by order; they are listed below'),
      translator: options.translator,
      filename: 'polyadic-sub-multiplets',
      height: 220,
      exportAs: () => {
        const source = this._results.exportSource;
        const detail = this._model.detail;
        return {
          title: detail === null ? trans.__('Sub-multiplets') : trans.__('Sub-multiplets of %1', detail.columns.join(', ')),
          subtitle: source === null ? '' : provenanceLine(source),
          xTitle: trans.__('order'),
          yTitle: trans.__('co-information (%1)', detail?.units ?? ''),
          filename: exportFileName(source ?? {}, 'sub-multiplets')
        };
      }
    });
    this._subList = new Widget({ node: textElement('div', 'pd-Detail-subList') });
    this.addWidget(top);
    this.addWidget(this._tablesChart);
    this.addWidget(this._textTables);
    this.addWidget(this._subChart);
    this.addWidget(this._subList);
    // Widget.dispose clears the signal connections this view receives
    this._model.changed.connect(this._update, this);
    this._update();
  }

  /** The model shown. */
  get model(): DetailModel {
    return this._model;
  }


  private _update(): void {
    const trans = this._trans;
    const detail = this._model.detail;
    const tables = detail?.tables ?? null;
    const subs = detail?.subMultiplets ?? null;
    this._measures.hidden = detail === null;
    this._evidenceTitle.hidden = this._evidence.hidden = detail === null || detail.evidence.length === 0;
    this._tablesTitle.hidden = detail === null;
    this._picker.hidden = this._reason.hidden = tables?.kind !== 'triplet';
    this._tablesChart.setHidden(tables === null);
    this._textTables.setHidden(tables === null);
    this._subChart.setHidden(subs === null || subs.orders.length === 0);
    this._subList.setHidden(subs === null);
    const note = detail?.tablesNote ?? detail?.subMultipletsNote ?? null;
    this._note.textContent = note ?? '';
    this._note.hidden = note === null;
    this._explain.textContent = '';
    this._flip.replaceChildren();
    this._caution.textContent = '';
    this._caution.hidden = true;
    this._explain.hidden = true;
    if (detail === null) {
      this._subject.textContent = trans.__(
        'Select a row of the synergy or redundancy table (click it, or move with the arrow keys) to see its measures and what makes it synergistic or redundant.'
      );
      this._measures.replaceChildren();
      this._evidence.replaceChildren();
      return;
    }
    this._subject.textContent = trans.__('%1 (order %2)', detail.columns.join(', '), detail.order);
    this._measures.replaceChildren(...Private.measureNodes(detail.measures, trans));
    this._evidence.replaceChildren(...Private.measureNodes(detail.evidence, trans));
    this._tablesTitle.textContent =
      detail.order === 2
        ? trans.__('Joint contingency table')
        : detail.order === 3
          ? trans.__('Conditional contingency tables')
          : trans.__('Sub-multiplets by order');
    if (tables?.kind === 'pair') {
      this._showPair(detail, tables.table);
    } else if (tables?.kind === 'triplet') {
      this._showTriplet(detail, tables);
    }
    if (subs !== null) {
      this._showSubMultiplets(detail, subs);
    }
    this._explain.hidden = this._explain.textContent === '';
  }

  private _showPair(detail: IMultipletDetail, table: IDetailTable): void {
    this._explain.textContent = this._trans.__(
      'Rows of each pair of bins of %1 (down) and %2 (across). Their mutual information from these counts is %3 %4: ' +
        'counts in proportion to the row and column totals (independence) mean none, counts piled on a few cells mean much.',
      table.rowColumn,
      table.columnColumn,
      formatValue(table.mutualInformation),
      detail.units
    );
    this._setCaution([table]);
    this._tablesChart.plotNode.style.height = `${DetailView.TABLE_HEIGHT}px`;
    this._tablesChart.setFigure(colors => Private.heatmaps([table], colors, this._trans));
    this._setTextTables([table]);
  }

  private _showTriplet(detail: IMultipletDetail, tables: ITripletTables): void {
    const trans = this._trans;
    const rowsText = (rows: number): string => trans._n('%2 row', '%2 rows', rows, formatCount(rows));
    const choice = tables.choices.find(c => c.column === tables.conditioning)!;
    const [first] = tables.levels;
    this._explain.textContent = trans.__(
      'Rows of %1 (down) and %2 (across) within each level of %3, side by side. For an XOR-like synergy the pair ' +
        'looks unrelated pooled but is sharply related within each level, differently in each: the tables flip.',
      first.rowColumn,
      first.columnColumn,
      tables.conditioning
    );
    this._select.replaceChildren(
      ...tables.choices.map(c => {
        const option = textElement('option', '', trans.__('%1 (%2)', c.column, trans._n('%2 level', '%2 levels', c.levels, formatCount(c.levels))));
        option.value = c.column;
        return option;
      })
    );
    this._select.value = tables.conditioning;
    const units = detail.units;
    this._reason.textContent =
      tables.chosenBy === 'default'
        ? trans.__(
            'Conditioned on %1 by default: pooled over it, the other two columns share the least mutual information of ' +
              'the three choices (%2 %3), so what their tables show within its levels is the interaction.',
            tables.conditioning,
            formatValue(choice.pooledMutualInformation),
            units
          )
        : trans.__(
            'Conditioned on %1, as picked (pooled over it, the other two share %2 %3); the default is %4.',
            tables.conditioning,
            formatValue(choice.pooledMutualInformation),
            units,
            tables.defaultConditioning
          );
    const items = tables.levels.map(level => {
      const cell = level.overRepresented;
      const text =
        cell === null
          ? trans.__('%1 = %2: no rows.', level.level!.column, level.level!.label)
          : trans.__(
              '%1 = %2 (%3): mutual information %4 %5; most over-represented %6 %7 with %8 %9, %10, %11\u00d7 independence.',
              level.level!.column,
              level.level!.label,
              rowsText(level.total),
              formatValue(level.mutualInformation),
              units,
              level.rowColumn,
              cell.rowLabel,
              level.columnColumn,
              cell.columnLabel,
              rowsText(cell.count),
              formatFixed(cell.ratio, 2)
            );
      return textElement('li', 'pd-Detail-level', text);
    });
    const list = textElement('ul', 'pd-Detail-levels');
    list.append(...items);
    const verdict = textElement(
      'p',
      tables.flips ? 'pd-Detail-verdict jp-mod-flips' : 'pd-Detail-verdict',
      (tables.flips
        ? trans.__('The tables flip: the most over-represented cell moves from level to level, and within the levels the pair shares more than pooled, ')
        : trans.__('The tables do not flip: the most over-represented cell stays put, or within the levels the pair shares little more than pooled, ')) +
        trans.__(
          '%1 %2 on average against %3 %2 (a flip needs more than chance alone gives in tables this size, by a chi-square rule of thumb; the row’s evidence, when tested, says more).',
          formatValue(tables.conditionalMutualInformation),
          units,
          formatValue(tables.pooled.mutualInformation)
        )
    );
    this._flip.replaceChildren(verdict, list);
    this._setCaution([...tables.levels, tables.pooled]);
    const rowsOfPanels = Math.ceil(tables.levels.length / DetailView.PANELS_PER_ROW);
    this._tablesChart.plotNode.style.height = `${DetailView.TABLE_HEIGHT * rowsOfPanels}px`;
    this._tablesChart.setFigure(colors => Private.heatmaps(tables.levels, colors, trans, DetailView.TABLE_HEIGHT * rowsOfPanels));
    this._setTextTables([...tables.levels, tables.pooled], tables.conditioning);
  }

  private _showSubMultiplets(detail: IMultipletDetail, subs: ISubMultiplets): void {
    const trans = this._trans;
    this._explain.textContent = trans.__(
      'Co-information of every sub-multiplet of %1, order by order, in %2 (negative: synergy-dominated, positive: redundancy-dominated); %3.',
      trans._n('%2 column', '%2 columns', detail.columns.length, formatCount(detail.columns.length)),
      detail.units,
      subs.source === 'result' ? trans.__('from the result\u2019s own rows') : trans.__('from the run\u2019s binned codes')
    );
    this._subChart.setFigure(colors => Private.subFigure(subs, detail.units, colors, trans));
    const blocks: HTMLElement[] = [];
    for (const { order, members } of subs.orders) {
      const sorted = [...members].sort((a, b) => a.value - b.value);
      const shown = sorted.length > DetailView.LISTED_PER_ORDER ? [...sorted.slice(0, DetailView.LISTED_PER_ORDER / 2), ...sorted.slice(-DetailView.LISTED_PER_ORDER / 2)] : sorted;
      const title = textElement(
        'h5',
        'pd-Detail-orderTitle',
        trans.__('Order %1: %2', order, trans._n('%2 sub-multiplet', '%2 sub-multiplets', members.length, formatCount(members.length))) +
          (shown.length < sorted.length ? trans.__(', the %1 most negative and most positive listed', DetailView.LISTED_PER_ORDER / 2) : '')
      );
      const list = textElement('ol', 'pd-Detail-subs');
      for (const member of shown) {
        const item = textElement('li', 'pd-Detail-sub');
        item.dataset.value = String(member.value);
        item.append(textElement('span', 'pd-Detail-subName', member.columns.join(', ')), textElement('span', 'pd-Number', `: ${formatValue(member.value)}`));
        list.append(item);
      }
      blocks.push(title, list);
    }
    this._subList.node.replaceChildren(...blocks);
  }

  /** The usual caution when the tables hold few rows per cell. */
  private _setCaution(tables: IDetailTable[]): void {
    const sparse = tables.filter(table => table.rowsPerCell < DetailView.FEW_PER_CELL);
    if (sparse.length > 0) {
      this._caution.textContent = this._trans._n(
        '%2 table has fewer than %3 rows per cell on average (a common rule of thumb for contingency tables): their patterns may be noise.',
        '%2 tables have fewer than %3 rows per cell on average (a common rule of thumb for contingency tables): their patterns may be noise.',
        sparse.length,
        formatCount(sparse.length),
        DetailView.FEW_PER_CELL
      );
      this._caution.hidden = false;
    }
  }

  /** The tables as HTML tables; a table without a level is pooled over `pooledOver`, when given. */
  private _setTextTables(tables: IDetailTable[], pooledOver?: string): void {
    const node = this._textTables.node;
    const summary = textElement('summary', 'pd-Detail-textSummary', tables.length === 1 ? this._trans.__('Counts as a table') : this._trans.__('Counts as tables'));
    node.replaceChildren(summary, ...tables.map(table => Private.textTable(table, this._trans, pooledOver)));
  }

  private readonly _model: DetailModel;
  private readonly _trans: TranslationBundle;
  private readonly _results: ResultsModel;
  private readonly _subject: HTMLParagraphElement;
  private readonly _measures: HTMLDListElement;
  private readonly _evidenceTitle: HTMLHeadingElement;
  private readonly _evidence: HTMLDListElement;
  private readonly _tablesTitle: HTMLHeadingElement;
  private readonly _explain: HTMLParagraphElement;
  private readonly _note: HTMLParagraphElement;
  private readonly _caution: HTMLParagraphElement;
  private readonly _picker: HTMLDivElement;
  private readonly _select: HTMLSelectElement;
  private readonly _reason: HTMLParagraphElement;
  private readonly _flip: HTMLDivElement;
  private readonly _tablesChart: ChartView;
  private readonly _textTables: Widget;
  private readonly _subChart: ChartView;
  private readonly _subList: Widget;
}

/** The statics of {@link DetailView}. */
export namespace DetailView {
  /** Options of a {@link DetailView}. */
  export interface IOptions {
    model: DetailModel;
    /** The results model, for the export's provenance line. */
    results: ResultsModel;
    /** Translates the view's strings. */
    translator?: ITranslator;
  }

  /** Height of one row of heat maps, in CSS pixels. */
  export const TABLE_HEIGHT = 240;

  /** Conditional tables side by side before the next row of them. */
  export const PANELS_PER_ROW = 4;

  /** Sub-multiplets listed per order (half the most negative, half the most positive). */
  export const LISTED_PER_ORDER = 10;

  /** Rows per cell below which a table carries the caution. */
  export const FEW_PER_CELL = 5;
}

namespace Private {
  /** A `dt`/`dd` pair per measure; intervals as "low to high". */
  export function measureNodes(measures: IDetailMeasure[], trans: TranslationBundle): HTMLElement[] {
    const nodes: HTMLElement[] = [];
    for (const measure of measures) {
      const term = textElement('dt', 'pd-Detail-term', trans.__(measure.label));
      term.title = trans.__(measure.title);
      const value = textElement('dd', 'pd-Detail-value pd-Number', valueText(measure, trans));
      value.dataset.key = measure.key;
      if (measure.value !== null) {
        value.dataset.value = String(measure.value);
      }
      nodes.push(term, value);
    }
    return nodes;
  }

  function valueText(measure: IDetailMeasure, trans: TranslationBundle): string {
    const format = (v: number | null): string =>
      v === null || Number.isNaN(v)
        ? trans.__('not computed')
        : measure.key === 'adequacy'
          ? formatAdequacy(v)
          : measure.key === 'p_surrogates'
            ? formatCount(v)
            : formatValue(v);
    const text = measure.high !== undefined ? trans.__('%1 to %2', format(measure.value), format(measure.high)) : format(measure.value);
    return measure.unit === '' || measure.value === null ? text : `${text} ${measure.unit}`;
  }

  /** A contingency table as an HTML table: caption, column labels, a row per bin, row totals. */
  export function textTable(table: IDetailTable, trans: TranslationBundle, pooledOver?: string): HTMLTableElement {
    const node = textElement('table', 'pd-Table pd-Detail-table');
    const where = table.level
      ? trans.__(', where %1 = %2', table.level.column, table.level.label)
      : pooledOver !== undefined
        ? trans.__(', pooled over every level of %1', pooledOver)
        : '';
    node.append(
      textElement(
        'caption',
        'pd-Detail-caption',
        trans.__(
          '%1 (rows) by %2 (columns)%3: %4',
          table.rowColumn,
          table.columnColumn,
          where,
          trans._n('%2 row', '%2 rows', table.total, formatCount(table.total))
        )
      )
    );
    const head = textElement('tr', '');
    const corner = textElement('th', '', `${table.rowColumn} \\ ${table.columnColumn}`);
    corner.scope = 'col';
    head.append(corner);
    for (const label of table.columnLabels) {
      const cell = textElement('th', '', label);
      cell.scope = 'col';
      head.append(cell);
    }
    const totalHead = textElement('th', '', trans.__('All'));
    totalHead.scope = 'col';
    head.append(totalHead);
    const thead = textElement('thead', '');
    thead.append(head);
    const body = textElement('tbody', '');
    table.counts.forEach((counts, i) => {
      const row = textElement('tr', '');
      const label = textElement('th', '', table.rowLabels[i]);
      label.scope = 'row';
      row.append(label, ...counts.map(n => textElement('td', 'pd-Number', formatCount(n))));
      row.append(textElement('td', 'pd-Number', formatCount(counts.reduce((a, b) => a + b, 0))));
      body.append(row);
    });
    node.append(thead, body);
    return node;
  }

  /** Heat maps of counts on one colour scale, up to DetailView.PANELS_PER_ROW side by side. */
  export function heatmaps(tables: IDetailTable[], colors: IChartColors, trans: TranslationBundle, height?: number): IFigure {
    const perRow = Math.min(tables.length, DetailView.PANELS_PER_ROW);
    const rows = Math.ceil(tables.length / perRow);
    const zmax = Math.max(1, ...tables.map(t => Math.max(...t.counts.map(r => Math.max(...r)))));
    const layout: Record<string, unknown> = {
      margin: { l: 56, r: 8, t: tables.length > 1 ? 28 : 12, b: 48 },
      annotations: [] as unknown[]
    };
    if (height !== undefined) {
      layout.height = height;
    }
    if (tables.length > 1) {
      layout.grid = { rows, columns: perRow, pattern: 'independent', xgap: 0.12, ygap: 0.3 };
    }
    const data = tables.map((table, n) => {
      const suffix = n === 0 ? '' : String(n + 1);
      // bins by position, labelled by ticks: shortened labels may coincide, positions never do
      const axis = (labels: string[]) => ({
        tickmode: 'array',
        tickvals: labels.map((_l, i) => i),
        ticktext: labels.map(label => plotlyText(short(label))),
        color: colors.muted,
        automargin: true,
        showgrid: false,
        zeroline: false,
        tickfont: { size: 10 }
      });
      layout[`xaxis${suffix}`] = { ...axis(table.columnLabels), title: { text: plotlyText(short(table.columnColumn)), font: { size: 10 } } };
      layout[`yaxis${suffix}`] = {
        ...axis(table.rowLabels),
        autorange: 'reversed',
        title: { text: n % perRow === 0 ? plotlyText(short(table.rowColumn)) : '', font: { size: 10 } }
      };
      if (table.level) {
        (layout.annotations as unknown[]).push({
          text: plotlyText(`${short(table.level.column)} = ${short(table.level.label)}`),
          xref: `x${suffix} domain`,
          yref: `y${suffix} domain`,
          x: 0.5,
          y: 1,
          yanchor: 'bottom',
          showarrow: false,
          font: { color: colors.text, size: 11 }
        });
      }
      return {
        type: 'heatmap',
        x: table.columnLabels.map((_l, j) => j),
        y: table.rowLabels.map((_l, i) => i),
        z: table.counts,
        customdata: table.rowLabels.map(row => table.columnLabels.map(column => plotlyText(`${row} \u00b7 ${column}`))),
        zmin: 0,
        zmax,
        xaxis: `x${suffix}`,
        yaxis: `y${suffix}`,
        // neutral ink, not the synergy or redundancy colour: counts have no sign
        colorscale: [
          [0, colors.background],
          [1, colors.text]
        ],
        showscale: n === 0,
        colorbar: { title: { text: trans.__('rows') }, thickness: 10, tickfont: { color: colors.muted } },
        // no text colour: plotly picks one that contrasts with each cell
        texttemplate: '%{z}',
        xgap: 1,
        ygap: 1,
        hovertemplate: `${trans.__('%{customdata}: %{z} rows')}<extra></extra>`
      };
    });
    return { data: data as unknown as IFigure['data'], layout: layout as IFigure['layout'] };
  }

  /** One dot per sub-multiplet at its order, spread sideways within the order, coloured by sign. */
  export function subFigure(subs: ISubMultiplets, units: string, colors: IChartColors, trans: TranslationBundle): IFigure {
    const x: number[] = [];
    const y: number[] = [];
    const names: string[][] = [];
    for (const { order, members } of subs.orders) {
      members.forEach((member, i) => {
        x.push(order + (members.length > 1 ? (i / (members.length - 1) - 0.5) * 0.6 : 0));
        y.push(member.value);
        names.push([plotlyText(member.columns.join(' \u00b7 ')), formatValue(member.value)]);
      });
    }
    return {
      data: [
        {
          type: 'scatter',
          mode: 'markers',
          x,
          y,
          marker: { color: y.map(v => (v < 0 ? colors.synergy : colors.redundancy)), size: 7 },
          customdata: names,
          hovertemplate: '%{customdata[0]}<br>%{customdata[1]}<extra></extra>'
        } as unknown as IFigure['data'][number]
      ],
      layout: {
        xaxis: {
          tickmode: 'array',
          tickvals: subs.orders.map(o => o.order),
          ticktext: subs.orders.map(o => trans.__('order %1', o.order)),
          color: colors.muted,
          gridcolor: colors.grid,
          zeroline: false
        },
        yaxis: { title: { text: plotlyText(units) }, color: colors.muted, gridcolor: colors.grid, zerolinecolor: colors.muted, automargin: true },
        margin: { l: 48, r: 8, t: 12, b: 36 }
      } as IFigure['layout']
    };
  }

  /** A name shortened for a tick label (the text tables have it whole). */
  function short(name: string): string {
    return name.length > 18 ? name.slice(0, 17) + '\u2026' : name;
  }
}
