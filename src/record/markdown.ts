/**
 * The text/markdown fallback of a analysis cell: the record's top multiplets as tables,
 * for renderers without Polyadic (GitHub, nbviewer, a plain Jupyter). Column names and labels
 * come from untrusted data, so every one is escaped (see {@link escapeMarkdown}).
 *
 * With evidence recorded, the tables show q and p beside co-information, a line says what the
 * q-values were computed over and what they control, another gives the null band per order,
 * and multiplets with adequacy below 1 are marked. What is drawn from the summary alone
 * ({@link markdownBody}) is written the same, character for character, by polyadic/show.py.
 */

import { formatCount, formatFixed, plural, wordFor } from '../engine/text';
import { formatValue as formatSignificant } from '../engine/text';
import type { IAnalysisRecord, IMultipletSummary, IResultSummary } from './types';

/** Decimals of the values in the tables. */
export const MARKDOWN_DECIMALS = 4;

/**
 * Text made inert in Markdown: every ASCII punctuation character is backslash-escaped (CommonMark
 * lets any of them be escaped, so `|` cannot end a table cell, `<` cannot open HTML, `$` cannot
 * open math, `*`, `_`, `[` cannot format), and line breaks and other control characters become
 * spaces so a cell stays one line.
 */
export function escapeMarkdown(text: string): string {
  return (
    text
      // eslint-disable-next-line no-control-regex
      .replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g, ' ')
      .replace(/[!-/:-@[-`{-~]/g, c => `\\${c}`)
  );
}

/** A value with {@link MARKDOWN_DECIMALS} decimals and a true minus sign for negatives. */
export function formatValue(value: number): string {
  return formatFixed(value, MARKDOWN_DECIMALS);
}

/** The mark after the names of a multiplet whose adequacy is below 1. */
export const INADEQUATE_MARK = '†';

/** What a table shows for a value that was not computed for a multiplet. */
export const NOT_COMPUTED = '—';

/** The markdown fallback of a record's analysis. */
export function markdownSummary(analysis: IAnalysisRecord): string {
  const { summary } = analysis;
  const lines = [
    `**Polyadic analysis ${escapeMarkdown(analysis.id)}: ${escapeMarkdown(analysis.label)}**`,
    '',
    `Frame ${escapeMarkdown(analysis.source.frame)}, ${formatCount(summary.rows_used)} of ${plural(analysis.source.rows, 'row')} used, ` +
      `${plural(analysis.columns.length, 'column')}, ${plural(summary.multiplet_count, 'multiplet')} up to order ${analysis.max_order}, ` +
      `${escapeMarkdown(analysis.estimator)} estimator, values in ${analysis.units}. ` +
      'Co-information sign (Bell 2003): negative means synergy dominates, positive redundancy.' +
      (analysis.statistics && analysis.statistics.surrogates > 0 ? ` ${surrogateSentence(analysis.statistics)}` : ''),
    '',
    ...markdownBody(summary),
    ...robustnessLines(analysis)
  ];
  return lines.join('\n') + '\n';
}

/**
 * The recorded robustness check, when there is one: a sentence with the variants and the count
 * of robust multiplets, and a table of the followed multiplets with their verdicts.
 */
export function robustnessLines(analysis: IAnalysisRecord): string[] {
  const block = analysis.robustness;
  if (!block) {
    return [];
  }
  const verdicts = block.results.verdicts;
  const robust = verdicts.filter(verdict => verdict.robust).length;
  const lines = [
    '',
    `Robustness across ${plural(block.settings.variants.length, 'variant')} (${block.settings.variants.map(escapeMarkdown).join(' · ')}): ` +
      `${formatCount(robust)} of ${formatCount(verdicts.length)} followed multiplets robust (the top ${block.settings.top} of each table under the base or any variant; ` +
      `robust = the table's sign under the base and every variant, and in the top ${block.settings.top} under at least 80 % of the variants).`
  ];
  if (verdicts.length > 0) {
    lines.push('', '| multiplet | table | verdict |', '| --- | --- | --- |');
    for (const verdict of verdicts) {
      lines.push(`| ${verdict.columns.map(escapeMarkdown).join(', ')} | ${verdict.table} | ${escapeMarkdown(verdict.verdict)} |`);
    }
  }
  return lines;
}

/** How the p-values were drawn: "p from 500 surrogates (…), seed 42, two-sided." */
export function surrogateSentence(statistics: NonNullable<IAnalysisRecord['statistics']>): string {
  const tail =
    statistics.tail === 'two'
      ? 'two-sided'
      : statistics.tail === 'synergy'
        ? 'one-sided toward synergy (negative)'
        : 'one-sided toward redundancy (positive)';
  return (
    `p from ${plural(statistics.surrogates, 'surrogate')} (each column shuffled on its own, which destroys all dependence), ` +
    `seed ${statistics.seed}, ${tail}.`
  );
}

/**
 * What the fallback draws from the summary alone: the lines on the evidence (what was tested,
 * the null bands, the adequacy mark), each a paragraph, then the synergy and redundancy tables.
 * polyadic/show.py writes the same lines for the same summary.
 */
export function markdownBody(summary: IResultSummary): string[] {
  const tested = Boolean(summary.evidence?.families.co_information);
  const lines: string[] = [];
  for (const line of evidenceLines(summary)) {
    lines.push(line, '');
  }
  lines.push(...multipletTable('Synergy (most negative co-information)', summary.synergy, tested));
  lines.push('');
  lines.push(...multipletTable('Redundancy (most positive co-information)', summary.redundancy, tested));
  return lines;
}

/** The sentences on the evidence of a summary (none without evidence and without inadequate multiplets). */
export function evidenceLines(summary: IResultSummary): string[] {
  return [testedLine(summary), nullBandLine(summary), inadequateLine(summary)].filter((line): line is string => line !== null);
}

/** What the q-values were computed over and what they control, or null without them. */
export function testedLine(summary: IResultSummary): string | null {
  const family = summary.evidence?.families.co_information;
  if (!family) {
    return null;
  }
  return (
    `Benjamini–Hochberg q over ${plural(family.count, 'multiplet')} of ${ordersText(family.orders)}; ` +
    'q controls the expected share of false discoveries among those called, not the chance that any one is false.'
  );
}

/** The null band of one order as text: "−0.0010 to 0.0020". */
export function nullBandText(band: { low: number; high: number }): string {
  return `${formatValue(band.low)} to ${formatValue(band.high)}`;
}

/** The null band of every order in one sentence, or null without surrogates. */
export function nullBandLine(summary: IResultSummary): string | null {
  const bands = summary.evidence?.null_bands ?? [];
  if (bands.length === 0) {
    return null;
  }
  const listed = bands.map(band => `order ${band.order} ${nullBandText(band)}`).join('; ');
  return `Null band of co-information (2.5–97.5 % of surrogates): ${listed}.`;
}

/** What the adequacy mark means (and how many multiplets are below 1), or null when none is. */
export function inadequateLine(summary: IResultSummary): string | null {
  const marked = [...summary.synergy, ...summary.redundancy].some(isInadequate);
  const inadequate = summary.inadequate_count ?? 0;
  if (!marked && inadequate === 0) {
    return null;
  }
  const count =
    summary.inadequate_count === undefined
      ? ''
      : ` In all, ${plural(inadequate, 'multiplet')} of order 2 and above ${wordFor(inadequate, 'has', 'have')} adequacy below 1.`;
  return (
    `${INADEQUATE_MARK} adequacy below 1: fewer rows than possible joint cells, so the estimates are biased ` +
    `(a rule of thumb, common practice).${count}`
  );
}

/** "order 3", "orders 2–4", "orders 2, 4". */
export function ordersText(orders: readonly number[]): string {
  if (orders.length === 1) {
    return `order ${orders[0]}`;
  }
  const contiguous = orders.every((order, i) => i === 0 || order === orders[i - 1] + 1);
  return contiguous && orders.length > 0 ? `orders ${orders[0]}–${orders[orders.length - 1]}` : `orders ${orders.join(', ')}`;
}

/** Whether a multiplet's recorded adequacy is below 1. */
export function isInadequate(row: IMultipletSummary): boolean {
  return typeof row.adequacy === 'number' && row.adequacy < 1;
}

/** A p- or q-value as the tables show it (significant digits, so a small one stays readable). */
export function formatProbability(value: number | null | undefined): string {
  return typeof value === 'number' ? formatSignificant(value) : NOT_COMPUTED;
}

/**
 * One table of multiplets, or a line saying there are none. With `tested`, q and p follow
 * co-information. A multiplet with adequacy below 1 has {@link INADEQUATE_MARK} after its names.
 */
export function multipletTable(title: string, rows: readonly IMultipletSummary[], tested = false): string[] {
  if (rows.length === 0) {
    return [`*${title}: none.*`];
  }
  const out = tested
    ? [
        `| ${title} | order | co-information | q | p | O-information | total correlation | dual total correlation |`,
        '|---|---:|---:|---:|---:|---:|---:|---:|'
      ]
    : [
        `| ${title} | order | co-information | O-information | total correlation | dual total correlation |`,
        '|---|---:|---:|---:|---:|---:|'
      ];
  for (const row of rows) {
    const names = row.columns.map(escapeMarkdown).join(' · ') + (isInadequate(row) ? ` ${INADEQUATE_MARK}` : '');
    const evidence = tested ? ` ${formatProbability(row.q_value)} | ${formatProbability(row.p_value)} |` : '';
    out.push(
      `| ${names} | ${row.order} | ${formatValue(row.co_information)} |${evidence} ${formatValue(row.o_information)} | ` +
        `${formatValue(row.total_correlation)} | ${formatValue(row.dual_total_correlation)} |`
    );
  }
  return out;
}
