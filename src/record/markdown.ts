/**
 * The text/markdown fallback of a analysis cell: the record's top multiplets as tables,
 * for renderers without Polyadic (GitHub, nbviewer, a plain Jupyter). Column names and labels
 * come from untrusted data, so every one is escaped (see {@link escapeMarkdown}).
 */

import { formatCount, plural } from '../engine/text';
import type { IAnalysisRecord, IMultipletSummary } from './types';

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
  const text = value.toFixed(MARKDOWN_DECIMALS);
  return text.startsWith('-') ? `−${text.slice(1)}` : text;
}

/** The markdown fallback of a record's analysis. */
export function markdownSummary(analysis: IAnalysisRecord): string {
  const { summary } = analysis;
  const lines = [
    `**Polyadic analysis ${escapeMarkdown(analysis.id)}: ${escapeMarkdown(analysis.label)}**`,
    '',
    `Frame ${escapeMarkdown(analysis.source.frame)}, ${formatCount(summary.rows_used)} of ${plural(analysis.source.rows, 'row')} used, ` +
      `${plural(analysis.columns.length, 'column')}, ${plural(summary.multiplet_count, 'multiplet')} up to order ${analysis.max_order}, ` +
      `${escapeMarkdown(analysis.estimator)} estimator, values in ${analysis.units}. ` +
      'Co-information sign (Bell 2003): negative means synergy dominates, positive redundancy.',
    ''
  ];
  lines.push(...multipletTable('Synergy (most negative co-information)', summary.synergy));
  lines.push('');
  lines.push(...multipletTable('Redundancy (most positive co-information)', summary.redundancy));
  return lines.join('\n') + '\n';
}

/** One table of multiplets, or a line saying there are none. */
export function multipletTable(title: string, rows: readonly IMultipletSummary[]): string[] {
  if (rows.length === 0) {
    return [`*${title}: none.*`];
  }
  const out = [
    `| ${title} | order | co-information | O-information | total correlation | dual total correlation |`,
    '|---|---:|---:|---:|---:|---:|'
  ];
  for (const row of rows) {
    const names = row.columns.map(escapeMarkdown).join(' · ');
    out.push(
      `| ${names} | ${row.order} | ${formatValue(row.co_information)} | ${formatValue(row.o_information)} | ` +
        `${formatValue(row.total_correlation)} | ${formatValue(row.dual_total_correlation)} |`
    );
  }
  return out;
}
